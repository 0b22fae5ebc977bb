package main

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

	"recto/ocr/ledger"
	"recto/ocr/synth"
)

// testCollection writes a small collection: titles of fake-engine pages
// (each with the text the test engine will "recognise" beside it), ground
// truth for some, and optionally broken files. It returns collection and
// truth folders.
func testCollection(t testing.TB, titles, perTitle int, broken bool) (string, string) {
	t.Helper()
	dir := t.TempDir()
	coll, truth := filepath.Join(dir, "coll"), filepath.Join(dir, "truth")
	for ti := range titles {
		title := fmt.Sprintf("Title %c", 'A'+ti)
		for p := range perTitle {
			rel := filepath.Join(title, fmt.Sprintf("p%03d.png", p))
			// An A4 page at 75 dpi (recorded in the file): page-sized, so
			// that triage's text-density feature is realistic, yet small.
			img := image.NewGray(image.Rect(0, 0, 620+p, 877+ti))
			for i := range img.Pix {
				img.Pix[i] = uint8(255 - (i*7+p)%40)
			}
			var buf bytes.Buffer
			if err := synth.WritePNG(&buf, img, 75); err != nil {
				t.Fatal(err)
			}
			mustWrite(t, filepath.Join(coll, rel), buf.Bytes())
			ref := fmt.Sprintf("Harbour notes of Wrenmouth, page %d.\nThe ferry to Lantern Isle ran %d times.\n", p, p*3+ti) +
				strings.Repeat("The harbour master reported that the northern quay was mended before the winter storms came in from the sea.\n", 6)
			hyp := strings.NewReplacer("rn", "m", "of", "o f", "the", "tbe", "ere", "cre").Replace(ref)
			if p%3 == 0 {
				hyp = strings.ReplaceAll(hyp, "e", "c") // a bad page
			}
			mustWrite(t, filepath.Join(coll, rel)+".fake.txt", []byte(hyp))
			if p%2 == 0 {
				mustWrite(t, filepath.Join(truth, strings.TrimSuffix(rel, ".png")+".txt"), []byte(ref))
			}
		}
	}
	if broken {
		mustWrite(t, filepath.Join(coll, "Title A", "truncated.png"), []byte("\x89PNG\r\n\x1a\n\x00\x00"))
		mustWrite(t, filepath.Join(coll, "Title A", "empty.tif"), nil)
		mustWrite(t, filepath.Join(coll, "Title B", "letter.jpg"), []byte("Dear reader, this is not a JPEG."))
		mustWrite(t, filepath.Join(coll, "Title B", "notes.txt"), []byte("not a page image: ignored"))
	}
	return coll, truth
}

func mustWrite(t testing.TB, name string, data []byte) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(name), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(name, data, 0o644); err != nil {
		t.Fatal(err)
	}
}

func ledgerRows(t testing.TB, dir string) []ledger.Page {
	t.Helper()
	l, err := ledger.OpenReadOnly(filepath.Join(dir, ledger.FileName))
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	rows, err := l.Pages(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

var reportFiles = []string{"titles.csv", "titles.json", "pages.csv", "rescan.csv", "report.html"}

// sameRun compares two run folders: ledger rows (results, not timings)
// and every report file, byte for byte.
func sameRun(t *testing.T, a, b string) {
	t.Helper()
	ra, rb := ledgerRows(t, a), ledgerRows(t, b)
	if len(ra) != len(rb) {
		t.Fatalf("ledgers have %d and %d rows", len(ra), len(rb))
	}
	for i := range ra {
		ra[i].Source, rb[i].Source = "", "" // different collection copies may differ
		if !ra[i].Same(rb[i]) {
			t.Errorf("row %d differs:\n%+v\n%+v", i, ra[i], rb[i])
		}
	}
	for _, f := range reportFiles {
		x, err1 := os.ReadFile(filepath.Join(a, reportDir, f))
		y, err2 := os.ReadFile(filepath.Join(b, reportDir, f))
		if err1 != nil || err2 != nil {
			t.Fatalf("%s: %v %v", f, err1, err2)
		}
		if !bytes.Equal(x, y) {
			t.Errorf("report %s differs", f)
		}
	}
}

func TestRunBadFilesCompleteWithPartial(t *testing.T) {
	t.Setenv("RECTO_FAKE_ENGINE", "1")
	coll, truth := testCollection(t, 2, 4, true)
	out := filepath.Join(t.TempDir(), "out")
	_, stderr, err := runRecto(t, "run", coll, "--out", out, "--truth", truth)
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
	t.Setenv("RECTO_FAKE_ENGINE", "1")
	coll, truth := testCollection(t, 1, 4, false)
	out := filepath.Join(t.TempDir(), "out")
	if _, se, err := runRecto(t, "run", coll, "--out", out, "--truth", truth); err != nil {
		t.Fatal(err, se)
	}
	first := ledgerRows(t, out)
	_, stderr, err := runRecto(t, "run", coll, "--out", out, "--truth", truth)
	if err != nil || !strings.Contains(stderr, "(4 already done)") {
		t.Fatalf("rerun: %v\n%s", err, stderr)
	}
	// Change one image: only it is redone.
	img := image.NewGray(image.Rect(0, 0, 40, 40))
	img.Set(3, 3, color.Gray{0})
	var buf bytes.Buffer
	png.Encode(&buf, img)
	mustWrite(t, filepath.Join(coll, "Title A", "p001.png"), buf.Bytes())
	_, stderr, err = runRecto(t, "run", coll, "--out", out, "--truth", truth)
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
	_, stderr, err = runRecto(t, "run", coll, "--out", out, "--truth", truth, "--correct", "0.01")
	if err != nil || strings.Contains(stderr, "already done") {
		t.Errorf("rerun with new settings: %v\n%s", err, stderr)
	}
}

func TestRunSecondRunRefused(t *testing.T) {
	t.Setenv("RECTO_FAKE_ENGINE", "1")
	coll, _ := testCollection(t, 1, 2, false)
	out := filepath.Join(t.TempDir(), "out")
	l, err := ledger.Open(filepath.Join(out, ledger.FileName)) // as a running run would
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	_, _, err = runRecto(t, "run", coll, "--out", out)
	if !errors.Is(err, ledger.ErrLocked) || !strings.Contains(err.Error(), "another run") {
		t.Errorf("err = %v, want a clear ErrLocked", err)
	}
}

func TestRunUnwritableOutFailsBeforeWork(t *testing.T) {
	t.Setenv("RECTO_FAKE_ENGINE", "1")
	coll, _ := testCollection(t, 1, 2, false)
	file := filepath.Join(t.TempDir(), "plain-file")
	mustWrite(t, file, []byte("x"))
	out := filepath.Join(file, "out") // a folder inside a file cannot exist
	_, stderr, err := runRecto(t, "run", coll, "--out", out)
	if err == nil || !strings.Contains(err.Error(), "output folder") || !strings.Contains(err.Error(), out) {
		t.Fatalf("err = %v, want a clear output-folder error naming %q", err, out)
	}
	if strings.Contains(stderr, "page images") {
		t.Errorf("work started before the check:\n%s", stderr)
	}
	if os.Geteuid() != 0 { // root ignores permission bits
		ro := filepath.Join(t.TempDir(), "ro")
		os.Mkdir(ro, 0o555)
		if _, _, err := runRecto(t, "run", coll, "--out", ro); err == nil || !strings.Contains(err.Error(), "not writable") {
			t.Errorf("read-only folder: err = %v", err)
		}
	}
}

func TestRunUsageErrors(t *testing.T) {
	coll, _ := testCollection(t, 1, 1, false)
	for _, args := range [][]string{
		{"run", coll},
		{"run", coll, "--out", "x", "--shard", "3/3"},
		{"run", coll, "--out", "x", "--rescan", "1.5"},
		{"run", coll, "--out", "x", "--correct", "0.5", "--rescan", "0.2"},
		{"run", coll, "--out", "x", "--jobs", "-1"},
	} {
		_, _, err := runRecto(t, args...)
		var ue *usageError
		if !errors.As(err, &ue) {
			t.Errorf("%q: err = %v, want a usage error", args, err)
		}
	}
}

// TestShardsMergeEqualsSingleRun: three shards into one folder, merged,
// give the same ledger rows and byte-identical reports as one run; so do
// three shards in separate folders merged with --out.
func TestShardsMergeEqualsSingleRun(t *testing.T) {
	t.Setenv("RECTO_FAKE_ENGINE", "1")
	coll, truth := testCollection(t, 2, 3, true)
	base := t.TempDir()
	single := filepath.Join(base, "single")
	if _, _, err := runRecto(t, "run", coll, "--out", single, "--truth", truth, "--correct", "0.001", "--rescan", "1"); err == nil {
		t.Fatal("want partial failure from the broken files")
	}
	shared := filepath.Join(base, "shared")
	for i := range 3 {
		runRecto(t, "run", coll, "--out", shared, "--truth", truth, "--correct", "0.001", "--rescan", "1", "--shard", fmt.Sprintf("%d/3", i))
	}
	if _, se, err := runRecto(t, "merge", shared); err != nil {
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
		t.Setenv("SLURM_ARRAY_TASK_ID", fmt.Sprint(i))
		t.Setenv("SLURM_ARRAY_TASK_MIN", "1")
		t.Setenv("SLURM_ARRAY_TASK_COUNT", "3")
		d := filepath.Join(base, fmt.Sprintf("node%d", i))
		runRecto(t, "run", coll, "--out", d, "--truth", truth, "--correct", "0.001", "--rescan", "1")
		dirs = append(dirs, d)
	}
	merged := filepath.Join(base, "merged")
	if _, se, err := runRecto(t, append([]string{"merge", "--out", merged}, dirs...)...); err != nil {
		t.Fatal(err, se)
	}
	sameRun(t, single, merged)
}

// TestHostileTextStaysValid: OCR text with markup, control characters and
// characters XML forbids leaves the ALTO and JSON outputs well-formed and
// the HTML report escaped (the report package checks the HTML in detail).
func TestHostileTextStaysValid(t *testing.T) {
	t.Setenv("RECTO_FAKE_ENGINE", "1")
	coll, _ := testCollection(t, 1, 1, false)
	hostile := "<script>alert(1)</script> ]]> &amp; \x01\x08\x1b \uFFFE\uFFFF \xff <!-- x --> \"quoted\"\n"
	plain := strings.Repeat("tbe harbour and tbe fcrry wcre opcn to evcry sbip in the bay\n", 6)
	mustWrite(t, filepath.Join(coll, "Title A", "p000.png.fake.txt"), []byte(hostile+plain+hostile))
	out := filepath.Join(t.TempDir(), "out")
	if _, se, err := runRecto(t, "run", coll, "--out", out, "--correct", "0.001", "--rescan", "1"); err != nil {
		t.Fatal(err, se)
	}
	if r := ledgerRows(t, out)[0]; r.Decision != "correct" {
		t.Fatalf("hostile page decided %q (%v), want correct", r.Decision, r.Reasons)
	}
	for _, sub := range []string{ocrDir, correctedDir} {
		data, err := os.ReadFile(filepath.Join(out, sub, "Title A", "p000.alto.xml"))
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
	t.Setenv("RECTO_FAKE_ENGINE", "1")
	coll, truth := testCollection(t, 2, 3, true)
	out := filepath.Join(t.TempDir(), "out")
	runRecto(t, "run", coll, "--out", out, "--truth", truth)
	before := map[string][]byte{}
	for _, f := range reportFiles {
		before[f], _ = os.ReadFile(filepath.Join(out, reportDir, f))
		os.Remove(filepath.Join(out, reportDir, f))
	}
	stdout, _, err := runRecto(t, "report", out)
	if err != nil || !strings.HasSuffix(strings.TrimSpace(stdout), "report.html") {
		t.Fatalf("report: %v, stdout %q", err, stdout)
	}
	for _, f := range reportFiles {
		after, _ := os.ReadFile(filepath.Join(out, reportDir, f))
		if !bytes.Equal(before[f], after) {
			t.Errorf("%s differs after 'recto report'", f)
		}
	}
	if _, _, err := runRecto(t, "report", t.TempDir()); err == nil || !strings.Contains(err.Error(), "not a run folder") {
		t.Errorf("report on an empty folder: %v", err)
	}
}
