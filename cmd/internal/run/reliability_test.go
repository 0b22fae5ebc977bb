package run

import (
	"crypto/sha256"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"strconv"
	"strings"
	"sync/atomic"
	"syscall"
	"testing"
	"unicode/utf8"

	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/runtest"
	"recto/ocr"
	"recto/quality"
)

// The reliability suite (#16): awkward deliveries run again and again into
// one folder, and faults at the writes, each followed by a check of the
// invariants a run folder must keep.
//
// In CI it runs at a small size (a dozen pages, three rounds, a second or
// two with the test engine). The large size is one command:
//
//	RECTO_RELIABILITY_PAGES=2000 RECTO_RELIABILITY_ROUNDS=6 RECTO_RELIABILITY_SEED=7 \
//	  go test ./cmd/internal/run -run TestReliability -count=1 -timeout 60m -v
func TestReliabilityAwkwardDeliveries(t *testing.T) {
	pages, rounds, seed := envInt("RECTO_RELIABILITY_PAGES", 12), envInt("RECTO_RELIABILITY_ROUNDS", 3), envInt("RECTO_RELIABILITY_SEED", 1)
	if testing.Short() {
		pages, rounds = min(pages, 8), min(rounds, 2)
	}
	d := runtest.NewDelivery(t, uint64(seed), pages)
	out := filepath.Join(t.TempDir(), "out")
	for round := range rounds + 1 {
		if round > 0 {
			var did []string
			for range max(1, pages/100) { // about 4 % of the pages change per round
				did = append(did, d.Change(t)...)
			}
			t.Logf("round %d: %d changes, first %s", round, len(did), strings.Join(did[:min(len(did), 4)], "; "))
		}
		before := snapshot(t, d.Coll, d.Truth)
		_, stderr, err := runTest(t, Options{Collection: d.Coll, Out: out, Truth: d.Truth, Jobs: 2, Correct: 0.2, Rescan: 0.9})
		var pe *partialError
		var se *SetupError
		if err != nil && !errors.As(err, &pe) && !errors.As(err, &se) {
			t.Fatalf("round %d: %v\n%s", round, err, stderr)
		}
		if after := snapshot(t, d.Coll, d.Truth); !sameSnapshot(t, before, after) {
			t.Errorf("round %d: the run changed its input", round)
		}
		checkInvariants(t, d.Coll, d.Truth, out)
		if t.Failed() {
			t.Fatalf("round %d failed; stderr:\n%s", round, stderr)
		}
	}
}

func envInt(name string, def int) int {
	if v, err := strconv.Atoi(os.Getenv(name)); err == nil && v > 0 {
		return v
	}
	return def
}

// snapshot records every entry under the folders: type, content hash of
// files, target of symlinks.
func snapshot(t testing.TB, dirs ...string) map[string]string {
	t.Helper()
	m := map[string]string{}
	for _, dir := range dirs {
		filepath.WalkDir(dir, func(p string, e fs.DirEntry, err error) error {
			if err != nil {
				m[p] = "error " + err.Error()
				return nil
			}
			switch {
			case e.Type()&fs.ModeSymlink != 0:
				target, _ := os.Readlink(p)
				m[p] = "link " + target
			case e.IsDir():
				m[p] = "dir"
			default:
				data, err := os.ReadFile(p)
				if err != nil {
					t.Fatal(err)
				}
				fi, _ := e.Info()
				m[p] = fmt.Sprintf("file %x %v", sha256.Sum256(data), fi.Mode())
			}
			return nil
		})
	}
	return m
}

func sameSnapshot(t testing.TB, a, b map[string]string) bool {
	same := true
	for k, v := range a {
		if b[k] != v {
			t.Errorf("input %q: was %s, now %q", k, v, b[k])
			same = false
		}
	}
	for k := range b {
		if _, ok := a[k]; !ok {
			t.Errorf("input folder gained %q", k)
			same = false
		}
	}
	return same
}

// inputs lists the page images under coll as a person would count them:
// every file or symlink with a page extension, hidden entries aside,
// symlinked folders not followed.
func inputs(t testing.TB, coll string) map[string]bool {
	t.Helper()
	in := map[string]bool{}
	filepath.WalkDir(coll, func(p string, e fs.DirEntry, err error) error {
		if err != nil || p == coll {
			return nil
		}
		if strings.HasPrefix(e.Name(), ".") {
			if e.IsDir() {
				return fs.SkipDir
			}
			return nil
		}
		if !e.IsDir() && ocr.IsPageFile(e.Name()) {
			rel, _ := filepath.Rel(coll, p)
			in[filepath.ToSlash(rel)] = true
		}
		return nil
	})
	return in
}

// checkInvariants checks a run folder against its collection:
//   - every input has exactly one row, and no row that is not gone lacks
//     an input;
//   - every output file belongs to exactly one row, and every output a
//     done row lists exists;
//   - figures recomputed from the output files and the ground truth equal
//     the ledger's, and the ledger's sums equal titles.csv and pages.csv.
func checkInvariants(t *testing.T, coll, truth, out string) {
	t.Helper()
	in := inputs(t, coll)
	rows := ledgerRows(t, out)
	live := map[string]ledger.Page{}
	owner := map[string]string{}
	for _, r := range rows {
		for _, o := range r.Outputs {
			if other, ok := owner[o]; ok {
				t.Errorf("output %q listed by %q and %q", o, other, r.Rel)
			}
			owner[o] = r.Rel
		}
		if r.State == ledger.StateGone {
			if in[r.Rel] {
				t.Errorf("%q is in the collection but marked gone", r.Rel)
			}
			continue
		}
		live[r.Rel] = r
		if !in[r.Rel] {
			t.Errorf("row %q (%s) has no image in the collection", r.Rel, r.State)
		}
		if r.State == ledger.StateDone {
			for _, o := range r.Outputs {
				if _, err := os.Stat(filepath.Join(out, filepath.FromSlash(o))); err != nil {
					t.Errorf("%q: listed output missing: %v", r.Rel, err)
				}
			}
		}
	}
	for rel := range in {
		if _, ok := live[rel]; !ok {
			t.Errorf("input %q has no row", rel)
		}
	}
	for _, sub := range []string{ocrDir, correctedDir} {
		filepath.WalkDir(filepath.Join(out, sub), func(p string, e fs.DirEntry, err error) error {
			if err != nil || e.IsDir() {
				return nil
			}
			rel, _ := filepath.Rel(out, p)
			if filepath.ToSlash(rel) == correctedDir+"/"+ChangesFile {
				return nil // the run's change list, joined from the pages' own (changes.go)
			}
			if _, ok := owner[filepath.ToSlash(rel)]; !ok {
				t.Errorf("output file %q belongs to no row", rel)
			}
			return nil
		})
	}

	// Figures from the files.
	type sums struct{ pages, failed, chars, errsAfter int }
	by := map[string]*sums{}
	for _, r := range live {
		s := by[EscapeName(r.Title)]
		if s == nil {
			s = &sums{}
			by[EscapeName(r.Title)] = s
		}
		s.pages++
		if r.State != ledger.StateDone {
			s.failed++
			continue
		}
		if !r.HasTruth {
			continue
		}
		s.chars += r.RefChars
		s.errsAfter += r.CharErrsAf
		ref, err := os.ReadFile(filepath.Join(truth, filepath.FromSlash(strings.TrimSuffix(r.Rel, path.Ext(r.Rel)))+".txt"))
		if err != nil || !utf8.Valid(ref) {
			continue // another encoding: how it is read is the truth reader's business
		}
		hyp, err := os.ReadFile(filepath.Join(out, filepath.FromSlash(finalText(r))))
		if err != nil {
			t.Errorf("%q: %v", r.Rel, err)
			continue
		}
		c := quality.Compare(string(ref), string(hyp), quality.NormOptions{})
		if c.Chars != r.RefChars || c.CharErrors != r.CharErrsAf {
			t.Errorf("%q: from the files %d/%d char errors, ledger %d/%d", r.Rel, c.CharErrors, c.Chars, r.CharErrsAf, r.RefChars)
		}
	}
	titles := readCSV(t, filepath.Join(out, reportDir, "titles.csv"))
	col := map[string]int{}
	for i, h := range titles[0] {
		col[h] = i
	}
	for _, need := range []string{"title", "pages", "failed", "chars", "char_errors_after"} {
		if _, ok := col[need]; !ok {
			t.Fatalf("titles.csv has no column %q: %q", need, titles[0])
		}
	}
	seen := 0
	for _, rec := range titles[1:] {
		name := strings.TrimPrefix(rec[col["title"]], "'")
		s, ok := by[name]
		if !ok {
			if name != "(all)" && name != "all" {
				t.Errorf("titles.csv has title %q the collection has not", name)
			}
			continue
		}
		seen++
		atoi := func(c string) int { n, _ := strconv.Atoi(rec[col[c]]); return n }
		if atoi("pages") != s.pages || atoi("failed") != s.failed {
			t.Errorf("titles.csv %q: %s pages %s failed, recomputed %d and %d", name, rec[col["pages"]], rec[col["failed"]], s.pages, s.failed)
		}
		if s.chars > 0 && (atoi("chars") != s.chars || atoi("char_errors_after") != s.errsAfter) {
			t.Errorf("titles.csv %q: %s chars %s errors after, recomputed %d and %d", name, rec[col["chars"]], rec[col["char_errors_after"]], s.chars, s.errsAfter)
		}
	}
	if seen != len(by) {
		t.Errorf("titles.csv lists %d of the %d titles", seen, len(by))
	}
	if n := len(readCSV(t, filepath.Join(out, reportDir, "pages.csv"))) - 1; n != len(in) {
		t.Errorf("pages.csv has %d rows for %d inputs", n, len(in))
	}
}

// TestFaultsAtTheWrites: a full disk, a failing rename, and a stop between
// the outputs' rename and the ledger commit; after a resume without the
// fault, outputs and ledger agree, and equal those of a run without faults.
func TestFaultsAtTheWrites(t *testing.T) {
	coll, truth := testCollection(t, 2, 5, false)
	clean := filepath.Join(t.TempDir(), "clean")
	o := Options{Collection: coll, Truth: truth, Jobs: 2, Correct: 0.2, Rescan: 1}
	o.Out = clean
	if _, se, err := runTest(t, o); err != nil {
		t.Fatal(err, se)
	}
	var n atomic.Int64
	for _, c := range []struct {
		name   string
		write  func(dir, stem string) error
		commit func([]ledger.Page) error
		want   string // in the first run's error
	}{
		{name: "full disk", want: "disk is full", write: func(dir, stem string) error {
			if n.Add(1)%3 == 0 {
				return &fs.PathError{Op: "write", Path: filepath.Join(dir, stem+ocr.SuffixText), Err: syscall.ENOSPC}
			}
			return nil
		}},
		{name: "failing rename", want: "input/output error", write: func(dir, stem string) error {
			if n.Add(1)%4 == 1 {
				return &os.LinkError{Op: "rename", Old: filepath.Join(dir, ".tmp"), New: filepath.Join(dir, stem+ocr.SuffixALTO), Err: syscall.EIO}
			}
			return nil
		}},
		{name: "stop before commit", want: "stopped before the commit", commit: func(ps []ledger.Page) error {
			if n.Add(int64(len(ps))) > 3 {
				return errors.New("stopped before the commit")
			}
			return nil
		}},
	} {
		t.Run(c.name, func(t *testing.T) {
			n.Store(0)
			testFaults.write, testFaults.commit = c.write, c.commit
			o.Out = filepath.Join(filepath.Dir(clean), strings.ReplaceAll(c.name, " ", "-")) // beside clean: same relative links
			_, stderr, err := runTest(t, o)
			testFaults.write, testFaults.commit = nil, nil
			if err == nil || !strings.Contains(err.Error()+stderr, c.want) {
				t.Fatalf("faulty run: err = %v, want one saying %q\n%s", err, c.want, stderr)
			}
			if _, stderr, err := runTest(t, o); err != nil {
				t.Fatalf("resume: %v\n%s", err, stderr)
			}
			checkInvariants(t, coll, truth, o.Out)
			sameRun(t, clean, o.Out)
		})
	}
}
