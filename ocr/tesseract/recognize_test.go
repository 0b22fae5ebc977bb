//go:build cgo && !notesseract

package tesseract

import (
	"bytes"
	"context"
	"fmt"
	"image"
	"os"
	"strings"
	"testing"

	"github.com/otiai10/gosseract/v2"

	"recto/ocr"
)

func TestAppendPGM(t *testing.T) {
	// Netpbm's format: "P5", width, height, maxval separated by white
	// space, one white-space byte, then rows of bytes (Poskanzer, pgm(5)).
	g := image.NewGray(image.Rect(0, 0, 4, 3))
	for i := range g.Pix {
		g.Pix[i] = byte(i * 20)
	}
	sub := g.SubImage(image.Rect(1, 1, 3, 3)).(*image.Gray)
	got := appendPGM(nil, sub)
	want := append([]byte("P5\n2 2\n255\n"), 100, 120, 180, 200)
	if !bytes.Equal(got, want) {
		t.Errorf("appendPGM(sub-image) = %q, want %q", got, want)
	}
}

func TestWordsFromBoxes(t *testing.T) {
	bb := func(x, y, block, par, line int, w string, conf float64) gosseract.BoundingBox {
		return gosseract.BoundingBox{Box: image.Rect(x, y, x+10, y+5), Word: w, Confidence: conf,
			BlockNum: block, ParNum: par, LineNum: line}
	}
	in := []gosseract.BoundingBox{
		bb(0, 0, 1, 1, 1, "Harbour", 96),
		bb(20, 0, 1, 1, 1, "dues", 90),
		bb(0, 10, 1, 1, 2, "paid", 50),
		bb(0, 30, 1, 2, 1, "Next", 80), // new paragraph: line numbers restart
		bb(9, 30, 1, 2, 1, " ", 0),     // empty word dropped
		bb(0, 50, 2, 1, 1, "Col", 101), // new block; confidence clamped
		bb(0, 60, 2, 1, 2, "two", 70),
	}
	got := wordsFromBoxes(in, image.Pt(100, 200))
	want := []ocr.Word{
		{Text: "Harbour", Conf: 0.96, Box: ocr.Box{X: 100, Y: 200, W: 10, H: 5}, Block: 0, Par: 0, Line: 0},
		{Text: "dues", Conf: 0.90, Box: ocr.Box{X: 120, Y: 200, W: 10, H: 5}, Block: 0, Par: 0, Line: 0},
		{Text: "paid", Conf: 0.50, Box: ocr.Box{X: 100, Y: 210, W: 10, H: 5}, Block: 0, Par: 0, Line: 1},
		{Text: "Next", Conf: 0.80, Box: ocr.Box{X: 100, Y: 230, W: 10, H: 5}, Block: 0, Par: 1, Line: 2},
		{Text: "Col", Conf: 1, Box: ocr.Box{X: 100, Y: 250, W: 10, H: 5}, Block: 1, Par: 2, Line: 3},
		{Text: "two", Conf: 0.70, Box: ocr.Box{X: 100, Y: 260, W: 10, H: 5}, Block: 1, Par: 2, Line: 4},
	}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("wordsFromBoxes:\n got %v\nwant %v", got, want)
	}
}

func TestLanguages(t *testing.T) {
	engineOrSkip(t, Config{})
	langs, err := Languages()
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, l := range langs {
		found = found || l == "eng"
		if l == "osd" {
			t.Error("Languages lists osd, which is not a recognition language")
		}
	}
	if !found {
		t.Errorf("Languages() = %v, want eng among them", langs)
	}
	_, err = New(Config{Lang: "eng+qqq"})
	if err == nil || !strings.Contains(err.Error(), "tesseract-ocr-qqq") {
		t.Errorf("New(eng+qqq) = %v, want an error naming tesseract-ocr-qqq", err)
	}
}

// TestPhototest recognises a real scan from Tesseract's own test set and
// compares it with its exact transcription (testdata/engine/SOURCES.md).
func TestPhototest(t *testing.T) {
	e := engineOrSkip(t, Config{})
	rec, _, err := ocr.ProcessFile(context.Background(), e, "../../testdata/engine/phototest.tif", ocr.Options{})
	if err != nil {
		t.Fatal(err)
	}
	want, err := os.ReadFile("../../testdata/engine/phototest.txt")
	if err != nil {
		t.Fatal(err)
	}
	got := rec.Text()
	cer := cer(normSpace(string(want)), normSpace(got))
	t.Logf("phototest: %d words, mean confidence %.2f, CER %.4f", len(rec.Words), rec.MeanConfidence, cer)
	// A clean 12-point page; Tesseract 5 reads it almost perfectly, so a
	// few percent leaves room for engine versions (common practice).
	if cer > 0.03 {
		t.Errorf("CER %.4f over 0.03; text:\n%s", cer, got)
	}
	if rec.MeanConfidence < 0.8 {
		t.Errorf("mean confidence %.2f on a clean page", rec.MeanConfidence)
	}
	for _, w := range rec.Words {
		b := w.Box
		if b.X < 0 || b.Y < 0 || b.W <= 0 || b.H <= 0 || b.X+b.W > rec.Width || b.Y+b.H > rec.Height {
			t.Errorf("word %q box %+v outside the %dx%d page", w.Text, b, rec.Width, rec.Height)
		}
	}
	// The first word of phototest.tif, "This", lies in the top left
	// quarter of the 640x480 page.
	if first := rec.Words[0]; first.Text != "This" || first.Box.X > 320 || first.Box.Y > 240 {
		t.Errorf("first word %+v, want \"This\" in the top left quarter", first)
	}
}

// TestBlankPage: a white page gives no words and no error.
func TestBlankPage(t *testing.T) {
	e := engineOrSkip(t, Config{})
	g := image.NewGray(image.Rect(0, 0, 300, 200))
	for i := range g.Pix {
		g.Pix[i] = 255
	}
	words, err := e.Recognize(context.Background(), g, 300)
	if err != nil || len(words) != 0 {
		t.Errorf("blank page: %d words, err %v; want none", len(words), err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := e.Recognize(ctx, g, 300); err == nil {
		t.Error("Recognize with a cancelled context returned no error")
	}
}

func normSpace(s string) string { return strings.Join(strings.Fields(s), " ") }

// cer is the character error rate: Levenshtein distance over runes divided
// by the reference length (Levenshtein 1966; the usual definition of CER).
// Local until the quality package lands.
func cer(ref, hyp string) float64 {
	r, h := []rune(ref), []rune(hyp)
	if len(r) == 0 {
		if len(h) == 0 {
			return 0
		}
		return 1
	}
	prev := make([]int, len(h)+1)
	cur := make([]int, len(h)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(r); i++ {
		cur[0] = i
		for j := 1; j <= len(h); j++ {
			sub := prev[j-1]
			if r[i-1] != h[j-1] {
				sub++
			}
			cur[j] = min(sub, prev[j]+1, cur[j-1]+1)
		}
		prev, cur = cur, prev
	}
	return float64(prev[len(h)]) / float64(len(r))
}
