// Package runtest helps the tests of the batch run: a small collection of
// page images with the words a test engine "recognises" on each, that
// engine (an ocrtest.Engine), and comparisons of run folders. Only tests
// import it.
package runtest

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"fmt"
	"hash/fnv"
	"image"
	"image/draw"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"recto/cmd/internal/run/ledger"
	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/ocr/synth"
)

// FakeSuffix is appended to an image's name for the file that holds the
// words the test engine returns for it (one line of the file per text line).
const FakeSuffix = ".fake.txt"

// Collection writes a small collection: titles of pages (each with the text
// the test engine will "recognise" beside it), ground truth for some, and
// optionally broken files. It returns collection and truth folders.
func Collection(t testing.TB, titles, perTitle int, broken bool) (string, string) {
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
			MustWrite(t, filepath.Join(coll, rel), buf.Bytes())
			ref := fmt.Sprintf("Harbour notes of Wrenmouth, page %d.\nThe ferry to Lantern Isle ran %d times.\n", p, p*3+ti) +
				strings.Repeat("The harbour master reported that the northern quay was mended before the winter storms came in from the sea.\n", 6)
			hyp := strings.NewReplacer("rn", "m", "of", "o f", "the", "tbe", "ere", "cre").Replace(ref)
			if p%3 == 0 {
				hyp = strings.ReplaceAll(hyp, "e", "c") // a bad page
			}
			MustWrite(t, filepath.Join(coll, rel)+FakeSuffix, []byte(hyp))
			if p%2 == 0 {
				MustWrite(t, filepath.Join(truth, strings.TrimSuffix(rel, ".png")+".txt"), []byte(ref))
			}
		}
	}
	if broken {
		MustWrite(t, filepath.Join(coll, "Title A", "truncated.png"), []byte("\x89PNG\r\n\x1a\n\x00\x00"))
		MustWrite(t, filepath.Join(coll, "Title A", "empty.tif"), nil)
		MustWrite(t, filepath.Join(coll, "Title B", "letter.jpg"), []byte("Dear reader, this is not a JPEG."))
		MustWrite(t, filepath.Join(coll, "Title B", "notes.txt"), []byte("not a page image: ignored"))
	}
	return coll, truth
}

// MustWrite writes a file, creating its folder.
func MustWrite(t testing.TB, name string, data []byte) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(name), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(name, data, 0o644); err != nil {
		t.Fatal(err)
	}
}

// Engine returns a maker of test engines for the pages under coll: each
// engine returns, for an image whose pixels equal those of an image X
// under coll, the words of X.fake.txt (none for any other image), after
// waiting delay. The images must reach it unprepared (Options.NoPrepare)
// and be greyscale. The folder is read when each engine is made, so files
// changed before a run count.
func Engine(coll string, delay time.Duration) func() (ocr.Engine, error) {
	return func() (ocr.Engine, error) {
		words, err := scan(coll)
		if err != nil {
			return nil, err
		}
		return &ocrtest.Engine{Delay: delay, Func: func(_ context.Context, img *image.Gray, _ int) ([]ocr.Word, error) {
			return append([]ocr.Word(nil), words[pixelKey(img)]...), nil
		}}, nil
	}
}

// scan maps the pixels of every image with a .fake.txt beside it to its words.
func scan(coll string) (map[[32]byte][]ocr.Word, error) {
	out := map[[32]byte][]ocr.Word{}
	err := filepath.WalkDir(coll, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() || !strings.HasSuffix(p, FakeSuffix) {
			return err
		}
		dec, err := ocr.DecodeFile(strings.TrimSuffix(p, FakeSuffix), ocr.DecodeOptions{})
		if err != nil {
			return nil // a broken page: the run reports it
		}
		g, ok := dec.Image.(*image.Gray)
		if !ok {
			g = image.NewGray(dec.Image.Bounds())
			draw.Draw(g, g.Bounds(), dec.Image, dec.Image.Bounds().Min, draw.Src)
		}
		w, err := fakeWords(p)
		if err != nil {
			return err
		}
		out[pixelKey(g)] = w
		return nil
	})
	return out, err
}

func pixelKey(g *image.Gray) [32]byte {
	h := sha256.New()
	b := g.Bounds()
	fmt.Fprintf(h, "%d %d\n", b.Dx(), b.Dy())
	for y := b.Min.Y; y < b.Max.Y; y++ {
		i := g.PixOffset(b.Min.X, y)
		h.Write(g.Pix[i : i+b.Dx()])
	}
	var k [32]byte
	h.Sum(k[:0])
	return k
}

// fakeWords reads the test engine's words: one line of the file per text
// line, confidence a hash of the word in [0.6, 1).
func fakeWords(name string) ([]ocr.Word, error) {
	f, err := os.Open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var words []ocr.Word
	sc := bufio.NewScanner(f)
	for line := 0; sc.Scan(); line++ {
		for _, w := range strings.Fields(sc.Text()) {
			h := fnv.New32a()
			h.Write([]byte(w))
			words = append(words, ocr.Word{Text: w, Conf: 0.6 + 0.4*float64(h.Sum32()%1000)/1000, Line: line})
		}
	}
	return words, sc.Err()
}

// LedgerRows returns the rows of the ledger in the run folder dir.
func LedgerRows(t testing.TB, dir string) []ledger.Page {
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

// ReportFiles are the files of a run's report folder.
var ReportFiles = []string{"titles.csv", "titles.json", "pages.csv", "rescan.csv", "report.html"}

// varies matches the rows of report.html that differ between runs with the
// same results: the times the pages were recorded.
var varies = regexp.MustCompile(`<tr data-varies>.*</tr>`)

// SameRun compares two run folders: ledger rows (results, not timings)
// and every report file, byte for byte.
func SameRun(t *testing.T, a, b string) {
	t.Helper()
	ra, rb := LedgerRows(t, a), LedgerRows(t, b)
	if len(ra) != len(rb) {
		t.Fatalf("ledgers have %d and %d rows", len(ra), len(rb))
	}
	for i := range ra {
		ra[i].Source, rb[i].Source = "", "" // different collection copies may differ
		if !ra[i].Same(rb[i]) {
			t.Errorf("row %d differs:\n%+v\n%+v", i, ra[i], rb[i])
		}
	}
	for _, f := range ReportFiles {
		x, err1 := os.ReadFile(filepath.Join(a, "report", f))
		y, err2 := os.ReadFile(filepath.Join(b, "report", f))
		if err1 != nil || err2 != nil {
			t.Fatalf("%s: %v %v", f, err1, err2)
		}
		if f == "report.html" { // the times pages were recorded differ between runs
			x, y = varies.ReplaceAll(x, nil), varies.ReplaceAll(y, nil)
		}
		if !bytes.Equal(x, y) {
			t.Errorf("report %s differs", f)
		}
	}
}

// MultiPageTIFF writes the images as one multi-page TIFF: uncompressed
// 8-bit grey pages, one strip each, their image file directories chained
// (TIFF 6.0 specification, Adobe 1992, sections 2 and 8: header, IFD,
// NextIFD offset, the baseline grey-scale fields).
func MultiPageTIFF(t testing.TB, name string, pages []*image.Gray) {
	t.Helper()
	le := func(b []byte, v uint32, n int) []byte {
		for i := 0; i < n; i++ {
			b = append(b, byte(v>>(8*i)))
		}
		return b
	}
	buf := []byte("II*\x00")
	buf = le(buf, 8, 4) // first IFD offset, patched below
	next := 4           // where the offset of the next IFD goes
	for _, g := range pages {
		w, h := g.Rect.Dx(), g.Rect.Dy()
		strip := len(buf)
		for y := 0; y < h; y++ {
			buf = append(buf, g.Pix[y*g.Stride:y*g.Stride+w]...)
		}
		if len(buf)%2 == 1 {
			buf = append(buf, 0) // IFDs start on a word boundary
		}
		ifd := len(buf)
		buf[next], buf[next+1], buf[next+2], buf[next+3] = byte(ifd), byte(ifd>>8), byte(ifd>>16), byte(ifd>>24)
		entries := [][3]uint32{ // tag, type (3 SHORT, 4 LONG), value
			{256, 4, uint32(w)}, {257, 4, uint32(h)}, {258, 3, 8}, {259, 3, 1}, {262, 3, 1},
			{273, 4, uint32(strip)}, {277, 3, 1}, {278, 4, uint32(h)}, {279, 4, uint32(w * h)},
		}
		buf = le(buf, uint32(len(entries)), 2)
		for _, e := range entries {
			buf = le(buf, e[0], 2)
			buf = le(buf, e[1], 2)
			buf = le(buf, 1, 4)
			buf = le(buf, e[2], 4) // a SHORT sits in the first two bytes, little-endian
		}
		next = len(buf)
		buf = le(buf, 0, 4)
	}
	MustWrite(t, name, buf)
}
