package run

import (
	"bytes"
	"context"
	"encoding/xml"
	"errors"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/runtest"
)

var (
	testCollection = runtest.Collection
	mustWrite      = runtest.MustWrite
	ledgerRows     = runtest.LedgerRows
	sameRun        = runtest.SameRun
	reportFiles    = runtest.ReportFiles
)

type envMap map[string]string

func (m envMap) get(k string) string { return m[k] }

func runMergeTest(t testing.TB, o MergeOptions) (MergeSummary, string, error) {
	t.Helper()
	var stderr bytes.Buffer
	o.Stderr = &stderr
	sum, err := Merge(context.Background(), o)
	return sum, stderr.String(), err
}

// runTest runs o with the test engine on o.Collection's .fake.txt files and
// returns the summary, what was written to stderr and the error.
func runTest(t testing.TB, o Options) (Summary, string, error) {
	t.Helper()
	var stderr bytes.Buffer
	o.Stderr = &stderr
	if o.NewEngine == nil {
		o.NewEngine, o.NoPrepare = runtest.Engine(o.Collection, 0), true
	}
	if o.Getenv == nil {
		o.Getenv = func(string) string { return "" }
	}
	sum, err := Run(context.Background(), o)
	return sum, stderr.String(), err
}

func TestRunBadFilesCompleteWithPartial(t *testing.T) {
	coll, truth := testCollection(t, 2, 4, true)
	out := filepath.Join(t.TempDir(), "out")
	_, stderr, err := runTest(t, Options{Collection: coll, Out: out, Truth: truth})
	var pe *partialError
	if !errors.As(err, &pe) || pe.Failed != 3 || pe.Total != 11 {
		t.Fatalf("err = %v, want partial: 3 of 11 pages failed\n%s", err, stderr)
	}
	for _, name := range []string{"truncated.png", "empty.tif", "letter.jpg"} {
		if !strings.Contains(stderr, name) {
			t.Errorf("stderr does not name %q:\n%s", name, stderr)
		}
	}
	rows := ledgerRows(t, out)
	done := 0
	for _, r := range rows {
		if r.State == ledger.StateDone {
			done++
			for _, o := range r.Outputs {
				if _, err := os.Stat(filepath.Join(out, o)); err != nil {
					t.Errorf("output %s of %s: %v", o, r.Rel, err)
				}
			}
		} else if !strings.Contains(r.Error, r.Page) {
			t.Errorf("error of %s does not name the file: %q", r.Rel, r.Error)
		}
	}
	if done != 8 {
		t.Errorf("%d pages done, want 8", done)
	}
	rescan, _ := os.ReadFile(filepath.Join(out, reportDir, "rescan.csv"))
	for _, name := range []string{"truncated.png", "empty.tif", "letter.jpg"} {
		if !bytes.Contains(rescan, []byte(name)) {
			t.Errorf("rescan.csv does not list %s", name)
		}
	}
	// Nothing in the collection was changed or added.
	if _, err := os.Stat(filepath.Join(coll, "ledger.db")); err == nil {
		t.Error("the run wrote into the collection")
	}
}

func TestRunResumeSkipsAndRedoesChanged(t *testing.T) {
	coll, truth := testCollection(t, 1, 4, false)
	out := filepath.Join(t.TempDir(), "out")
	if _, se, err := runTest(t, Options{Collection: coll, Out: out, Truth: truth}); err != nil {
		t.Fatal(err, se)
	}
	first := ledgerRows(t, out)
	_, stderr, err := runTest(t, Options{Collection: coll, Out: out, Truth: truth})
	if err != nil || !strings.Contains(stderr, "(4 already done)") {
		t.Fatalf("rerun: %v\n%s", err, stderr)
	}
	// Change one image: only it is redone.
	img := image.NewGray(image.Rect(0, 0, 40, 40))
	img.Set(3, 3, color.Gray{0})
	var buf bytes.Buffer
	png.Encode(&buf, img)
	mustWrite(t, filepath.Join(coll, "Title A", "p001.png"), buf.Bytes())
	_, stderr, err = runTest(t, Options{Collection: coll, Out: out, Truth: truth})
	if err != nil || !strings.Contains(stderr, "(3 already done)") {
		t.Fatalf("rerun after change: %v\n%s", err, stderr)
	}
	second := ledgerRows(t, out)
	for i := range first {
		changed := first[i].SHA256 != second[i].SHA256
		if changed != (first[i].Rel == "Title A/p001.png") {
			t.Errorf("%s: hash changed = %v", first[i].Rel, changed)
		}
		if !changed && !first[i].Done.Equal(second[i].Done) {
			t.Errorf("%s was redone though unchanged", first[i].Rel)
		}
	}
	// Changed settings redo every page.
	_, stderr, err = runTest(t, Options{Collection: coll, Out: out, Truth: truth, Correct: 0.01})
	if err != nil || strings.Contains(stderr, "already done") {
		t.Errorf("rerun with new settings: %v\n%s", err, stderr)
	}
}

func TestRunSecondRunRefused(t *testing.T) {
	coll, _ := testCollection(t, 1, 2, false)
	out := filepath.Join(t.TempDir(), "out")
	l, err := ledger.Open(filepath.Join(out, ledger.FileName)) // as a running run would
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	_, _, err = runTest(t, Options{Collection: coll, Out: out})
	if !errors.Is(err, ledger.ErrLocked) || !strings.Contains(err.Error(), "another run") {
		t.Errorf("err = %v, want a clear ErrLocked", err)
	}
}

func TestRunUnwritableOutFailsBeforeWork(t *testing.T) {
	coll, _ := testCollection(t, 1, 2, false)
	file := filepath.Join(t.TempDir(), "plain-file")
	mustWrite(t, file, []byte("x"))
	out := filepath.Join(file, "out") // a folder inside a file cannot exist
	_, stderr, err := runTest(t, Options{Collection: coll, Out: out})
	if err == nil || !strings.Contains(err.Error(), "output folder") || !strings.Contains(err.Error(), out) {
		t.Fatalf("err = %v, want a clear output-folder error naming %q", err, out)
	}
	if strings.Contains(stderr, "page images") {
		t.Errorf("work started before the check:\n%s", stderr)
	}
	if os.Geteuid() != 0 { // root ignores permission bits
		ro := filepath.Join(t.TempDir(), "ro")
		os.Mkdir(ro, 0o555)
		if _, _, err := runTest(t, Options{Collection: coll, Out: ro}); err == nil || !strings.Contains(err.Error(), "not writable") {
			t.Errorf("read-only folder: err = %v", err)
		}
	}
}

func TestRunUsageErrors(t *testing.T) {
	coll, _ := testCollection(t, 1, 1, false)
	for _, o := range []Options{
		{Collection: coll},
		{Out: "x"},
		{Collection: coll, Out: "x", Shard: "3/3"},
		{Collection: coll, Out: "x", Rescan: 1.5},
		{Collection: coll, Out: "x", Correct: 0.5, Rescan: 0.2},
		{Collection: coll, Out: "x", Jobs: -1},
	} {
		_, _, err := runTest(t, o)
		var ue *usageError
		if !errors.As(err, &ue) {
			t.Errorf("%+v: err = %v, want a usage error", o, err)
		}
	}
}

// TestShardsMergeEqualsSingleRun: three shards into one folder, merged,
// give the same ledger rows and byte-identical reports as one run; so do
// three shards in separate folders merged with --out.
func TestShardsMergeEqualsSingleRun(t *testing.T) {
	coll, truth := testCollection(t, 2, 3, true)
	base := t.TempDir()
	single := filepath.Join(base, "single")
	if _, _, err := runTest(t, Options{Collection: coll, Out: single, Truth: truth, Correct: 0.001, Rescan: 1}); err == nil {
		t.Fatal("want partial failure from the broken files")
	}
	shared := filepath.Join(base, "shared")
	for i := range 3 {
		runTest(t, Options{Collection: coll, Out: shared, Truth: truth, Correct: 0.001, Rescan: 1, Shard: fmt.Sprintf("%d/3", i)})
	}
	if _, se, err := runMergeTest(t, MergeOptions{Dirs: []string{shared}}); err != nil {
		t.Fatal(err, se)
	}
	sameRun(t, single, shared)
	corrected := 0
	for _, r := range ledgerRows(t, single) {
		if r.Decision == "correct" {
			corrected++
		}
	}
	if corrected == 0 {
		t.Error("no page went through correction: the comparison does not cover it")
	}

	// Shard index from a Slurm array environment, separate folders.
	var dirs []string
	for i := 1; i <= 3; i++ {
		env := envMap{"SLURM_ARRAY_TASK_ID": fmt.Sprint(i), "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_COUNT": "3"}
		d := filepath.Join(base, fmt.Sprintf("node%d", i))
		runTest(t, Options{Collection: coll, Out: d, Truth: truth, Correct: 0.001, Rescan: 1, Getenv: env.get})
		dirs = append(dirs, d)
	}
	merged := filepath.Join(base, "merged")
	if _, se, err := runMergeTest(t, MergeOptions{Dirs: dirs, Out: merged}); err != nil {
		t.Fatal(err, se)
	}
	sameRun(t, single, merged)
}

// TestHostileTextStaysValid: OCR text with markup, control characters and
// characters XML forbids leaves the ALTO and JSON outputs well-formed and
// the HTML report escaped (the report package checks the HTML in detail).
func TestHostileTextStaysValid(t *testing.T) {
	coll, _ := testCollection(t, 1, 1, false)
	hostile := "<script>alert(1)</script> ]]> &amp; \x01\x08\x1b \uFFFE\uFFFF \xff <!-- x --> \"quoted\"\n"
	plain := strings.Repeat("tbe harbour and tbe fcrry wcre opcn to evcry sbip in the bay\n", 6)
	mustWrite(t, filepath.Join(coll, "Title A", "p000.png.fake.txt"), []byte(hostile+plain+hostile))
	out := filepath.Join(t.TempDir(), "out")
	if _, se, err := runTest(t, Options{Collection: coll, Out: out, Correct: 0.001, Rescan: 1}); err != nil {
		t.Fatal(err, se)
	}
	if r := ledgerRows(t, out)[0]; r.Decision != "correct" {
		t.Fatalf("hostile page decided %q (%v), want correct", r.Decision, r.Reasons)
	}
	for _, sub := range []string{ocrDir, correctedDir} {
		data, err := os.ReadFile(filepath.Join(out, sub, "Title A", "p000.png.alto.xml"))
		if err != nil {
			t.Fatal(err)
		}
		d := xml.NewDecoder(bytes.NewReader(data))
		for {
			_, err := d.Token()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("%s ALTO not well-formed: %v", sub, err)
			}
		}
	}
	page, _ := os.ReadFile(filepath.Join(out, reportDir, "report.html"))
	if bytes.Contains(page, []byte("<script>alert")) || bytes.Contains(page, []byte("\x01")) {
		t.Error("report.html carries the hostile text unescaped")
	}
	if !bytes.Contains(page, []byte("&lt;script&gt;alert(1)&lt;/script&gt;")) {
		t.Error("report.html does not show the hostile text (escaped) among the worst pages")
	}
}

func TestReportRebuildsIdentically(t *testing.T) {
	coll, truth := testCollection(t, 2, 3, true)
	out := filepath.Join(t.TempDir(), "out")
	runTest(t, Options{Collection: coll, Out: out, Truth: truth})
	before := map[string][]byte{}
	for _, f := range reportFiles {
		before[f], _ = os.ReadFile(filepath.Join(out, reportDir, f))
		os.Remove(filepath.Join(out, reportDir, f))
	}
	page, err := Report(context.Background(), out)
	if err != nil || page != filepath.Join(out, reportDir, "report.html") {
		t.Fatalf("report: %v, page %q", err, page)
	}
	for _, f := range reportFiles {
		after, _ := os.ReadFile(filepath.Join(out, reportDir, f))
		if !bytes.Equal(before[f], after) {
			t.Errorf("%s differs after 'recto report'", f)
		}
	}
	if _, err := Report(context.Background(), t.TempDir()); err == nil || !strings.Contains(err.Error(), "not a run folder") {
		t.Errorf("report on an empty folder: %v", err)
	}
}
