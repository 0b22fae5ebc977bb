package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"errors"
	"fmt"
	"image"
	"image/color"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"recto/cmd/internal/progress"
	"recto/cmd/internal/run/runtest"
	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/ocr/tesseract"
)

// fakeEngine installs the fake engine and an installed-language list for
// the duration of a test.
func fakeEngine(t *testing.T, langs ...string) *[]*ocrtest.Engine {
	t.Helper()
	var made []*ocrtest.Engine
	oldNew, oldLangs := newEngine, tessLanguages
	newEngine = func(cfg tesseract.Config) (ocr.Engine, error) {
		e := &ocrtest.Engine{Words: []ocr.Word{
			{Text: "Quayside", Conf: 0.9, Box: ocr.Box{X: 2, Y: 2, W: 20, H: 8}},
			{Text: "ledger", Conf: 0.8, Box: ocr.Box{X: 25, Y: 2, W: 20, H: 8}},
		}}
		made = append(made, e)
		return e, nil
	}
	tessLanguages = func() ([]string, error) { return langs, nil }
	t.Cleanup(func() { newEngine, tessLanguages = oldNew, oldLangs })
	return &made
}

// testPage is a small page with four lines of word-sized bars: enough ink
// for the preparation to send it to the engine.
func testPage() *image.Gray {
	g := image.NewGray(image.Rect(0, 0, 120, 80))
	for i := range g.Pix {
		g.Pix[i] = 250
	}
	for line := range 4 {
		for y := 12 + line*14; y < 19+line*14; y++ {
			for x := 15; x < 105; x++ {
				if (x/6)%4 != 3 {
					g.SetGray(x, y, color.Gray{Y: 10})
				}
			}
		}
	}
	return g
}

// snapshot hashes every file under dir, to prove the input is untouched.
func snapshot(t *testing.T, dir string) map[string][32]byte {
	m := map[string][32]byte{}
	filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			b, _ := os.ReadFile(p)
			m[p] = sha256.Sum256(b)
		}
		return nil
	})
	return m
}

func files(t *testing.T, dir string) []string {
	var out []string
	filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			r, _ := filepath.Rel(dir, p)
			out = append(out, filepath.ToSlash(r))
		}
		return nil
	})
	sort.Strings(out)
	return out
}

func TestOCRTree(t *testing.T) {
	made := fakeEngine(t, "eng")
	in := filepath.Join(t.TempDir(), "scans")
	ocrtest.WritePNG(t, filepath.Join(in, "box1", "p0001.png"), testPage())
	ocrtest.WritePNG(t, filepath.Join(in, "box1", "p0002.PNG"), testPage())
	ocrtest.WritePNG(t, filepath.Join(in, "box2", "same.png"), testPage())
	ocrtest.WritePNG(t, filepath.Join(in, "box2", "same.tif"), testPage()) // a PNG under a .tif name: decoded by content
	ocrtest.WritePNG(t, filepath.Join(in, ".hidden", "x.png"), testPage())
	os.WriteFile(filepath.Join(in, "box1", "empty.tif"), nil, 0o644)
	os.WriteFile(filepath.Join(in, "box1", "notes.jpg"), []byte("catalogue notes"), 0o644)
	os.WriteFile(filepath.Join(in, "box1", "p0001.gt.txt"), []byte("ground truth"), 0o644)
	before := snapshot(t, in)

	out := filepath.Join(t.TempDir(), "text")
	stdout, stderr, err := runRecto(t, "ocr", in, "--out", out, "--jobs", "2")
	var pe *partialError
	if !errors.As(err, &pe) || pe.Failed != 2 || pe.Total != 6 {
		t.Fatalf("err = %v, want a partial error, 2 of 6 pages failed; stderr:\n%s", err, stderr)
	}
	if stdout != "" {
		t.Errorf("stdout %q, want nothing (outputs are files)", stdout)
	}
	for _, name := range []string{"empty.tif", "notes.jpg"} {
		n := strings.Count(stderr, filepath.Join(in, "box1", name))
		if n != 1 {
			t.Errorf("stderr names %s %d times, want once:\n%s", name, n, stderr)
		}
	}
	want := []string{
		"box1/p0001.alto.xml", "box1/p0001.json", "box1/p0001.txt",
		"box1/p0002.alto.xml", "box1/p0002.json", "box1/p0002.txt",
		"box2/same.png.alto.xml", "box2/same.png.json", "box2/same.png.txt",
		"box2/same.tif.alto.xml", "box2/same.tif.json", "box2/same.tif.txt",
		"failures.tsv",
	}
	if got := files(t, out); strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("outputs:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
	tsv, _ := os.ReadFile(filepath.Join(out, "failures.tsv"))
	lines := strings.Split(strings.TrimSpace(string(tsv)), "\n")
	if len(lines) != 3 || lines[0] != "title\tpage\timage\terror" || !strings.HasPrefix(lines[1], "box1\tbox1/empty\t"+filepath.Join(in, "box1", "empty.tif")+"\t") {
		t.Errorf("failures.tsv:\n%s", tsv)
	}
	txt, _ := os.ReadFile(filepath.Join(out, "box1", "p0001.txt"))
	if string(txt) != "Quayside ledger\n" {
		t.Errorf("text %q", txt)
	}
	rec, err := ocr.ReadRecord(filepath.Join(out, "box1", "p0001.json"))
	if err != nil || rec.Source != filepath.Join(in, "box1", "p0001.png") || rec.Width != 120 {
		t.Errorf("record %+v, %v", rec, err)
	}
	if len(*made) != 2 {
		t.Errorf("%d engines for --jobs 2", len(*made))
	}
	after := snapshot(t, in)
	if len(after) != len(before) {
		t.Errorf("files under IN changed: %d before, %d after", len(before), len(after))
	}
	for p, h := range before {
		if after[p] != h {
			t.Errorf("%s was modified", p)
		}
	}
}

func TestOCROutInsideIn(t *testing.T) {
	fakeEngine(t, "eng")
	in := t.TempDir()
	ocrtest.WritePNG(t, filepath.Join(in, "p1.png"), testPage())
	out := filepath.Join(in, "ocr-out")
	if _, stderr, err := runRecto(t, "ocr", in, "--out", out, "-q"); err != nil {
		t.Fatalf("first run: %v\n%s", err, stderr)
	}
	// The second run must not pick up the first run's outputs (or a
	// prepared image) as pages.
	ocrtest.WritePNG(t, filepath.Join(out, "p1.prepared.png"), testPage())
	_, stderr, err := runRecto(t, "ocr", in, "--out", out)
	if err != nil {
		t.Fatalf("second run: %v\n%s", err, stderr)
	}
	if !strings.Contains(stderr, "1/1 pages") {
		t.Errorf("second run saw more than the one page:\n%s", stderr)
	}
	_, _, err = runRecto(t, "ocr", in, "--out", in)
	var ue *usageError
	if !errors.As(err, &ue) {
		t.Errorf("--out equal to IN: err %v, want a usage error", err)
	}
}

func TestOCRSingleFileAndQuiet(t *testing.T) {
	fakeEngine(t, "eng")
	p := ocrtest.PageFile(t, testPage())
	out := t.TempDir()
	_, stderr, err := runRecto(t, "ocr", p, "--out", out, "--quiet", "--keep-images", "--deskew", "off", "--binarize", "otsu")
	if err != nil {
		t.Fatal(err)
	}
	if stderr != "" {
		t.Errorf("--quiet wrote %q", stderr)
	}
	got := strings.Join(files(t, out), " ")
	if got != "failures.tsv page.alto.xml page.json page.prepared.png page.txt" {
		t.Errorf("outputs %s", got)
	}
}

func TestOCRUsage(t *testing.T) {
	fakeEngine(t, "eng", "fra")
	p := ocrtest.PageFile(t, testPage())
	out := t.TempDir()
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"missing language", []string{"--lang", "eng+deu"}, "tesseract-ocr-deu"},
		{"bad deskew", []string{"--deskew", "sometimes"}, "--deskew"},
		{"bad binarize", []string{"--binarize", "niblack"}, "--binarize"},
		{"negative jobs", []string{"--jobs", "-1"}, "--jobs"},
		{"psm out of range", []string{"--psm", "14"}, "--psm"},
		{"dpi out of range", []string{"--dpi", "5"}, "--dpi"},
		{"unknown flag", []string{"--colour"}, "colour"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, _, err := runRecto(t, append([]string{"ocr", p, "--out", out}, c.args...)...)
			var ue *usageError
			if !errors.As(err, &ue) || !strings.Contains(err.Error(), c.want) {
				t.Errorf("err = %v, want a usage error mentioning %q", err, c.want)
			}
		})
	}
	if _, _, err := runRecto(t, "ocr", p, "--out", out, "--lang", "eng+fra"); err != nil {
		t.Errorf("installed eng+fra refused: %v", err)
	}
	if _, _, err := runRecto(t, "ocr", p); err == nil {
		t.Error("missing --out accepted")
	}
	if _, _, err := runRecto(t, "ocr", filepath.Join(out, "absent"), "--out", out); err == nil || !strings.Contains(err.Error(), "absent") {
		t.Errorf("missing IN: %v", err)
	}
	empty := t.TempDir()
	if _, _, err := runRecto(t, "ocr", empty, "--out", out); err == nil || !strings.Contains(err.Error(), "no page files") {
		t.Errorf("empty IN: %v", err)
	}
}

func TestOCRAllFail(t *testing.T) {
	fakeEngine(t, "eng")
	in := t.TempDir()
	os.WriteFile(filepath.Join(in, "a.png"), []byte("x"), 0o644)
	_, _, err := runRecto(t, "ocr", in, "--out", t.TempDir(), "-q")
	var pe *partialError
	if err == nil || errors.As(err, &pe) || !strings.Contains(err.Error(), "all 1 pages failed") {
		t.Errorf("err = %v, want a plain failure (exit 1)", err)
	}
}

func TestOCRProgressLines(t *testing.T) {
	fakeEngine(t, "eng")
	old := progress.PlainEvery
	progress.PlainEvery = 0 // a line per page
	t.Cleanup(func() { progress.PlainEvery = old })
	in := t.TempDir()
	for _, n := range []string{"a.png", "b.png", "c.png"} {
		ocrtest.WritePNG(t, filepath.Join(in, n), testPage())
	}
	_, stderr, err := runRecto(t, "ocr", in, "--out", t.TempDir(), "--jobs", "1")
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"recto ocr: 1/3 pages", "recto ocr: 3/3 pages"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, stderr)
		}
	}
	if strings.Contains(stderr, "\r") {
		t.Errorf("status redraws written to a non-terminal:\n%q", stderr)
	}
}

func TestOCRInterrupted(t *testing.T) {
	fakeEngine(t, "eng")
	in := t.TempDir()
	ocrtest.WritePNG(t, filepath.Join(in, "a.png"), testPage())
	out := t.TempDir()
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	root := newRootCommand()
	root.SetOut(new(bytes.Buffer))
	root.SetErr(new(bytes.Buffer))
	root.SetArgs([]string{"ocr", in, "--out", out})
	err := root.ExecuteContext(ctx)
	if !errors.Is(err, context.Canceled) {
		t.Errorf("err = %v, want context.Canceled (exit 130)", err)
	}
	if _, err := os.Stat(filepath.Join(out, "failures.tsv")); err != nil {
		t.Errorf("failures list not written on interruption: %v", err)
	}
}

// TestOCRMultiPageFixture: the two-page fixture (testdata/prep, page sizes
// from ImageMagick's identify: 50×38 and 100×75) gives two pages, vol1/p0001
// and vol1/p0002, each its own size, and no warning about pages left out.
func TestOCRMultiPageFixture(t *testing.T) {
	fakeEngine(t, "eng")
	src, err := os.ReadFile("../../testdata/prep/multipage.tif")
	if err != nil {
		t.Fatal(err)
	}
	in := t.TempDir()
	os.WriteFile(filepath.Join(in, "vol1.tif"), src, 0o644)
	out := t.TempDir()
	_, stderr, err := runRecto(t, "ocr", in, "--out", out, "-q")
	if err != nil {
		t.Fatalf("%v\n%s", err, stderr)
	}
	if strings.Contains(stderr, "only the first page") {
		t.Errorf("stderr warns about pages left out:\n%s", stderr)
	}
	for k, want := range [][2]int{{50, 38}, {100, 75}} {
		rec, err := ocr.ReadRecord(filepath.Join(out, "vol1", fmt.Sprintf("p%04d.json", k+1)))
		if err != nil || rec.Width != want[0] || rec.Height != want[1] || rec.FilePage != k+1 || len(rec.Warnings) != 0 {
			t.Errorf("page %d: %v, %+v; want %d×%d", k+1, err, rec, want[0], want[1])
		}
	}
}

// TestOCRMultiPageTIFF: every page of a multi-page TIFF is a page, named
// reel-07/p0001... (issue 11 part 2), its record saying which page it is.
func TestOCRMultiPageTIFF(t *testing.T) {
	fakeEngine(t, "eng")
	in, out := t.TempDir(), filepath.Join(t.TempDir(), "out")
	runtest.MultiPageTIFF(t, filepath.Join(in, "box", "reel-07.tif"), []*image.Gray{testPage(), testPage(), testPage()})
	if _, stderr, err := runRecto(t, "-q", "ocr", in, "-o", out, "--no-prepare"); err != nil {
		t.Fatalf("%v\n%s", err, stderr)
	}
	for k := 1; k <= 3; k++ {
		rec, err := ocr.ReadRecord(filepath.Join(out, "box", "reel-07", fmt.Sprintf("p%04d.json", k)))
		if err != nil || rec.FilePage != k || rec.FilePages != 3 || len(rec.Words) == 0 {
			t.Errorf("page %d: %v, %+v", k, err, rec)
		}
	}
}
