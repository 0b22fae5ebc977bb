package run

import (
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"image"
	"os"
	"path"
	"path/filepath"
	"strings"
	"testing"

	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/runtest"
	"recto/ocr/synth"
)

// writePage writes a PNG page whose pixels are unique to seed, and the
// words the test engine reads on it.
func writePage(t testing.TB, name string, seed int, words string) {
	t.Helper()
	img := image.NewGray(image.Rect(0, 0, 60+seed%50, 80+seed/50))
	for i := range img.Pix {
		img.Pix[i] = uint8(200 + (i*13+seed)%50)
	}
	var buf bytes.Buffer
	if err := synth.WritePNG(&buf, img, 150); err != nil {
		t.Fatal(err)
	}
	mustWrite(t, name, buf.Bytes())
	mustWrite(t, name+runtest.FakeSuffix, []byte(words))
}

func readCSV(t testing.TB, name string) [][]string {
	t.Helper()
	f, err := os.Open(name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.FieldsPerRecord = -1
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return recs
}

// TestOutputNamesUnique is defect 1 of #16: p1.tif, p1.png and p1.tif.png
// in one folder each keep their own text, whatever the scheduling.
func TestOutputNamesUnique(t *testing.T) {
	coll := filepath.Join(t.TempDir(), "coll")
	names := []string{"p1.tif", "p1.png", "p1.tif.png", "p1"}
	for i, n := range names[:3] {
		writePage(t, filepath.Join(coll, "T", n), i, fmt.Sprintf("words of page %s only", n))
	}
	for _, jobs := range []int{1, 2} {
		out := filepath.Join(t.TempDir(), "out")
		if _, se, err := runTest(t, Options{Collection: coll, Out: out, Jobs: jobs}); err != nil {
			t.Fatal(err, se)
		}
		seen := map[string]string{}
		for _, r := range ledgerRows(t, out) {
			for _, o := range r.Outputs {
				if other, ok := seen[o]; ok {
					t.Errorf("output %s of both %s and %s", o, other, r.Rel)
				}
				seen[o] = r.Rel
			}
			txt, err := os.ReadFile(filepath.Join(out, filepath.FromSlash(finalText(r))))
			if err != nil {
				t.Fatal(err)
			}
			if want := "page " + filepath.Base(r.Rel) + " only"; !strings.Contains(string(txt), want) {
				t.Errorf("jobs %d: text of %s is %q, want its own words (%q)", jobs, r.Rel, txt, want)
			}
		}
		if len(seen) != 9 {
			t.Errorf("%d output files, want 9 (3 pages × 3)", len(seen))
		}
	}
}

// TestOutputNameClashesFound: where the file system makes two names one,
// both pages fail, as set-up problems naming each other, before any write.
func TestOutputNameClashesFound(t *testing.T) {
	pages := []pageJob{{Rel: "T/P1.png"}, {Rel: "T/p1.png"}, {Rel: "T/p2.png"}, {Rel: "T/p2.png.txt/x.png"}, {Rel: "T/" + strings.Repeat("n", 250) + ".png"}}
	bad := checkNames(pages, true)
	for _, rel := range []string{"T/P1.png", "T/p1.png", "T/p2.png", pages[4].Rel} {
		if bad[rel] == "" {
			t.Errorf("%s: no clash found", rel)
		}
	}
	if !strings.Contains(bad["T/P1.png"], "T/p1.png") || !strings.Contains(bad["T/P1.png"], "case") {
		t.Errorf("message %q does not name the other image and the cause", bad["T/P1.png"])
	}
	if bad := checkNames(pages[:2], false); len(bad) != 0 {
		t.Errorf("case-sensitive folder: clashes %v", bad)
	}
}

// TestGonePagesLeftOut is defect 3: pages deleted or renamed between runs
// are marked gone, listed once, and left out of the reports; another
// collection is refused unless --new-collection is given.
func TestGonePagesLeftOut(t *testing.T) {
	coll := filepath.Join(t.TempDir(), "coll")
	for i := range 4 {
		writePage(t, filepath.Join(coll, "T", fmt.Sprintf("p%d.png", i)), i, fmt.Sprintf("page %d", i))
	}
	out := filepath.Join(t.TempDir(), "out")
	if _, se, err := runTest(t, Options{Collection: coll, Out: out}); err != nil {
		t.Fatal(err, se)
	}
	os.Remove(filepath.Join(coll, "T", "p0.png"))
	os.Rename(filepath.Join(coll, "T", "p1.png"), filepath.Join(coll, "T", "q1.png"))
	os.Rename(filepath.Join(coll, "T", "p1.png"+runtest.FakeSuffix), filepath.Join(coll, "T", "q1.png"+runtest.FakeSuffix))
	_, stderr, err := runTest(t, Options{Collection: coll, Out: out})
	if err != nil {
		t.Fatal(err, stderr)
	}
	if !strings.Contains(stderr, "2 pages of the ledger are no longer in the collection") || !strings.Contains(stderr, "T/p0.png") || !strings.Contains(stderr, "T/p1.png") {
		t.Errorf("gone pages not listed:\n%s", stderr)
	}
	pages := readCSV(t, filepath.Join(out, reportDir, "pages.csv"))
	if len(pages) != 1+3 {
		t.Errorf("pages.csv has %d rows, want 3 (the collection's pages)", len(pages)-1)
	}
	titles := readCSV(t, filepath.Join(out, reportDir, "titles.csv"))
	if titles[1][1] != "3" {
		t.Errorf("titles.csv counts %s pages, want 3", titles[1][1])
	}
	states := map[string]ledger.State{}
	for _, r := range ledgerRows(t, out) {
		states[r.Rel] = r.State
	}
	if states["T/p0.png"] != ledger.StateGone || states["T/p1.png"] != ledger.StateGone || states["T/q1.png"] != ledger.StateDone {
		t.Errorf("states %v", states)
	}
	// Listed once: a third run says nothing about them.
	if _, stderr, _ := runTest(t, Options{Collection: coll, Out: out}); strings.Contains(stderr, "no longer") {
		t.Errorf("gone pages listed again:\n%s", stderr)
	}

	// Another collection into the same folder is refused...
	other := filepath.Join(t.TempDir(), "other")
	writePage(t, filepath.Join(other, "U", "a.png"), 9, "other")
	_, _, err = runTest(t, Options{Collection: other, Out: out})
	var ue *usageError
	if !errors.As(err, &ue) || !strings.Contains(err.Error(), "--new-collection") {
		t.Fatalf("another collection: err = %v, want a usage error naming --new-collection", err)
	}
	// ... unless asked for; then only its page is reported.
	if _, se, err := runTest(t, Options{Collection: other, Out: out, NewCollection: true}); err != nil {
		t.Fatal(err, se)
	}
	if pages := readCSV(t, filepath.Join(out, reportDir, "pages.csv")); len(pages) != 2 {
		t.Errorf("pages.csv after --new-collection has %d rows, want 1", len(pages)-1)
	}
}

// TestSetupFailuresNotRescan is defect 5: only problems of the image go to
// rescan.csv; a page over the pixel limit and a ground-truth path that is a
// folder are set-up failures, listed with the fix, exit status 1.
func TestSetupFailuresNotRescan(t *testing.T) {
	coll := filepath.Join(t.TempDir(), "coll")
	truth := filepath.Join(t.TempDir(), "truth")
	writePage(t, filepath.Join(coll, "T", "big.png"), 49, "a big page") // 109×80 = 8,720 pixels
	writePage(t, filepath.Join(coll, "T", "ok.png"), 2, "fine")
	writePage(t, filepath.Join(coll, "T", "gt.png"), 3, "page with a folder for truth")
	mustWrite(t, filepath.Join(coll, "T", "broken.png"), []byte("\x89PNG\r\n\x1a\n\x00\x00"))
	if err := os.MkdirAll(filepath.Join(truth, "T", "gt.txt"), 0o755); err != nil {
		t.Fatal(err)
	}
	mustWrite(t, filepath.Join(truth, "T", "ok.txt"), []byte("fine"))
	out := filepath.Join(t.TempDir(), "out")
	_, stderr, err := runTest(t, Options{Collection: coll, Out: out, Truth: truth, MaxPixels: 6_000})
	var se *SetupError
	if !errors.As(err, &se) || se.Setup != 2 || se.Image != 1 {
		t.Fatalf("err = %v, want a set-up error for 2 pages and 1 on the rescan list\n%s", err, stderr)
	}
	rescan, _ := os.ReadFile(filepath.Join(out, reportDir, "rescan.csv"))
	if !bytes.Contains(rescan, []byte("broken.png")) || bytes.Contains(rescan, []byte("big.png")) || bytes.Contains(rescan, []byte("gt.png")) {
		t.Errorf("rescan.csv:\n%s", rescan)
	}
	fails := readCSV(t, filepath.Join(out, reportDir, "failures.csv"))
	got := map[string]string{}
	for _, r := range fails[1:] {
		got[path.Base(r[2])] = r[3] // title, page, image, error
	}
	if !strings.Contains(got["big.png"], "--max-pixels") || got["gt.png"] == "" || len(got) != 2 {
		t.Errorf("failures.csv: %v", got)
	}
	// Raising the limit reads the big page.
	os.RemoveAll(filepath.Join(truth, "T", "gt.txt"))
	_, stderr, err = runTest(t, Options{Collection: coll, Out: out, Truth: truth, MaxPixels: 10_000})
	var pe *partialError
	if !errors.As(err, &pe) || pe.Failed != 1 {
		t.Errorf("err = %v, want partial with the one broken scan\n%s", err, stderr)
	}
}

// TestWarningsReachStderrAndReports was defect 6: the decoder's warning
// about a multi-page TIFF reached neither stderr nor warnings.csv. The
// run now reads every page of such a file, so there is no warning left.
func TestWarningsReachStderrAndReports(t *testing.T) {
	coll := filepath.Join(t.TempDir(), "coll")
	// testdata/prep/multipage.tif: two pages, see testdata/prep/SOURCES.md.
	data, err := os.ReadFile(filepath.Join("..", "..", "..", "testdata", "prep", "multipage.tif"))
	if err != nil {
		t.Fatal(err)
	}
	mustWrite(t, filepath.Join(coll, "T", "two.tif"), data)
	writePage(t, filepath.Join(coll, "T", "one.png"), 1, "one")
	out := filepath.Join(t.TempDir(), "out")
	_, stderr, err := runTest(t, Options{Collection: coll, Out: out})
	if err != nil {
		t.Fatal(err, stderr)
	}
	// Since issue 11 part 2 the run reads every page of a multi-page TIFF
	// (T/two/p0001, T/two/p0002), so the decoder has nothing to warn about
	// here: no "only the first page" line, and warnings.csv is its header.
	if strings.Contains(stderr, "only the first page") {
		t.Errorf("stderr warns about a page left out:\n%s", stderr)
	}
	pages := readCSV(t, filepath.Join(out, reportDir, "pages.csv"))
	var names []string
	for _, r := range pages[1:] {
		names = append(names, r[1])
	}
	if strings.Join(names, " ") != "T/one T/two/p0001 T/two/p0002" {
		t.Errorf("pages %q, want T/one and the two pages of two.tif", names)
	}
	w := readCSV(t, filepath.Join(out, reportDir, "warnings.csv"))
	if len(w) != 1 || strings.Join(w[0], ",") != "title,page,image,warning" {
		t.Errorf("warnings.csv: %q", w)
	}
}

// TestNonUTF8NamesEscaped is defect 7: two Latin-1 names stay apart in the
// reports, escaped visibly and reversibly, and the links use the real bytes.
func TestNonUTF8NamesEscaped(t *testing.T) {
	coll := filepath.Join(t.TempDir(), "coll")
	a, b := "latin1-\xe9.png", "latin1-\xe8.png" // é and è in ISO 8859-1
	writePage(t, filepath.Join(coll, "T", a), 1, "first")
	writePage(t, filepath.Join(coll, "T", b), 2, "second")
	if _, err := os.Stat(filepath.Join(coll, "T", a)); err != nil {
		t.Skip("this file system does not take non-UTF-8 names:", err)
	}
	out := filepath.Join(t.TempDir(), "out")
	if _, se, err := runTest(t, Options{Collection: coll, Out: out}); err != nil {
		t.Fatal(err, se)
	}
	pages, _ := os.ReadFile(filepath.Join(out, reportDir, "pages.csv"))
	for _, want := range []string{`latin1-\xe9.png`, `latin1-\xe8.png`} {
		if !bytes.Contains(pages, []byte(want)) {
			t.Errorf("pages.csv lacks %s:\n%s", want, pages)
		}
	}
	if bytes.ContainsRune(pages, '\uFFFD') {
		t.Error("pages.csv replaced bytes by U+FFFD")
	}
	for _, r := range ledgerRows(t, out) {
		if _, err := os.Stat(filepath.Join(out, filepath.FromSlash(finalText(r)))); err != nil {
			t.Errorf("output of %q: %v", r.Rel, err)
		}
	}
}

// TestEscapeNameReversible: EscapeName is one to one and UnescapeName
// reverses it.
func TestEscapeNameReversible(t *testing.T) {
	for _, s := range []string{"plain.tif", "latin1-\xe9.tif", `latin1-\xe9.tif`, "a\\b", "new\nline", "tab\t", "\u0085nel", "é.tif", "\xff\xfe", "x\u200by", "\uFFFD"} {
		e := EscapeName(s)
		back, err := UnescapeName(e)
		if err != nil || back != s {
			t.Errorf("%q -> %q -> %q, %v", s, e, back, err)
		}
		if strings.ContainsRune(e, '\uFFFD') && s != "\uFFFD" {
			t.Errorf("%q -> %q holds U+FFFD", s, e)
		}
	}
	if EscapeName("latin1-\xe9.tif") == EscapeName(`latin1-\xe9.tif`) {
		t.Error("a byte and its written escape look the same")
	}
}

func FuzzEscapeName(f *testing.F) {
	for _, s := range []string{"a", "\xe9", `\x41`, "\\", "\n"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		back, err := UnescapeName(EscapeName(s))
		if err != nil || back != s {
			t.Fatalf("%q -> %q -> %q, %v", s, EscapeName(s), back, err)
		}
	})
}

// TestMergeRefusesIncompleteShards is defect 4: a merge that lacks a
// shard, holds one twice, or holds shards of different settings fails
// with exit status 3 naming what is wrong, writes nothing, and with
// AllowPartial merges and says the report is partial.
func TestMergeRefusesIncompleteShards(t *testing.T) {
	coll, _ := testCollection(t, 2, 3, false)
	base := t.TempDir()
	shardRun := func(out, sh string, correct float64) {
		t.Helper()
		if _, se, err := runTest(t, Options{Collection: coll, Out: out, Shard: sh, Correct: correct, Rescan: 1}); err != nil {
			t.Fatal(err, se)
		}
	}
	missing := filepath.Join(base, "missing")
	shardRun(missing, "0/3", 0.99)
	shardRun(missing, "2/3", 0.99)
	twice := filepath.Join(base, "twice")
	other := filepath.Join(base, "other")
	for i := range 3 {
		shardRun(twice, fmt.Sprintf("%d/3", i), 0.99)
	}
	shardRun(other, "1/3", 0.99)
	mixed := filepath.Join(base, "mixed")
	shardRun(mixed, "0/2", 0.99)
	shardRun(mixed, "1/2", 0.5)

	for _, c := range []struct {
		dirs []string
		out  string
		want string
	}{
		{[]string{missing}, "", "shard 1/3 missing"},
		{[]string{twice, other}, filepath.Join(base, "m2"), "shard 1/3 is held twice"},
		{[]string{mixed}, "", "different settings"},
	} {
		_, stderr, err := runMergeTest(t, MergeOptions{Dirs: c.dirs, Out: c.out})
		var pe *partialError
		if !errors.As(err, &pe) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("merge %v: err = %v, want exit 3 saying %q\n%s", c.dirs, err, c.want, stderr)
		}
		dst := c.out
		if dst == "" {
			dst = c.dirs[0]
		}
		if _, err := os.Stat(filepath.Join(dst, ledger.FileName)); err == nil {
			t.Errorf("merge %v wrote a merged ledger though refused", c.dirs)
		}
	}
	sum, stderr, err := runMergeTest(t, MergeOptions{Dirs: []string{missing}, AllowPartial: true})
	if err != nil || !strings.Contains(sum.Partial, "1/3 missing") || !strings.Contains(stderr, "partial") {
		t.Fatalf("allowed partial merge: %v, %q\n%s", err, sum.Partial, stderr)
	}
	html, _ := os.ReadFile(filepath.Join(missing, reportDir, "report.html"))
	if !bytes.Contains(html, []byte("Partial report")) || !bytes.Contains(html, []byte("1/3 missing")) {
		t.Error("report.html does not say it is partial")
	}
	// Rebuilding the report keeps saying so.
	os.Remove(filepath.Join(missing, reportDir, "report.html"))
	if _, err := Report(context.Background(), missing); err != nil {
		t.Fatal(err)
	}
	if html, _ := os.ReadFile(filepath.Join(missing, reportDir, "report.html")); !bytes.Contains(html, []byte("Partial report")) {
		t.Error("rebuilt report.html does not say it is partial")
	}
}

// TestFindImagesStemsUnique (#16 defect 1 for recto ocr and the page key):
// p1.tif, p1.png and p1.tif.png get three different stems.
func TestFindImagesStemsUnique(t *testing.T) {
	dir := t.TempDir()
	for i, n := range []string{"p1.tif", "p1.png", "p1.tif.png", "p2.png"} {
		writePage(t, filepath.Join(dir, "T", n), i, "w")
	}
	imgs, _, err := FindImages(dir, "")
	if err != nil {
		t.Fatal(err)
	}
	seen := map[string]string{}
	for _, im := range imgs {
		if other, ok := seen[im.Stem]; ok {
			t.Errorf("%s and %s share the stem %s", other, im.Rel, im.Stem)
		}
		seen[im.Stem] = im.Rel
	}
	if len(seen) != 4 || seen["T/p2"] != "T/p2.png" {
		t.Errorf("stems %v", seen)
	}
}
