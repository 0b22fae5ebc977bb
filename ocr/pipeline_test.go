package ocr_test

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"image"
	"image/color"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
)

// page returns a w×h white greyscale page with four lines of dark
// word-sized bars, enough ink for the preparation not to call it blank.
func page(w, h int) *image.Gray {
	g := image.NewGray(image.Rect(0, 0, w, h))
	for i := range g.Pix {
		g.Pix[i] = 255
	}
	lh := max(3, h/12)
	for line := range 4 {
		y0 := h/6 + line*2*lh
		for x := w / 8; x < w*7/8; x++ {
			if (x/6)%4 == 3 { // gaps between words
				continue
			}
			for y := y0; y < y0+lh && y < h; y++ {
				g.SetGray(x, y, color.Gray{Y: 20})
			}
		}
	}
	return g
}

func TestProcessNoPrepare(t *testing.T) {
	eng := &ocrtest.Engine{Words: []ocr.Word{
		{Text: "Quay", Conf: 0.9, Box: ocr.Box{X: 10, Y: 10, W: 40, H: 12}},
		{Text: "street", Conf: 0.5, Box: ocr.Box{X: 60, Y: 10, W: 80, H: 12}},
		{Text: "edge", Conf: 0.7, Box: ocr.Box{X: 180, Y: 90, W: 50, H: 30}, Line: 1}, // runs off the page
	}}
	src := page(200, 100)
	rec, img, err := ocr.Process(context.Background(), eng, src, 0, ocr.Options{NoPrepare: true, DPI: 150})
	if err != nil {
		t.Fatal(err)
	}
	if img != nil {
		t.Error("prepared image returned without KeepImage")
	}
	if rec.Width != 200 || rec.Height != 100 || rec.DPI != 150 || rec.Version != ocr.RecordVersion {
		t.Errorf("record size/dpi/version = %d×%d %g v%d", rec.Width, rec.Height, rec.DPI, rec.Version)
	}
	if got := eng.DPIs(); len(got) != 1 || got[0] != 150 {
		t.Errorf("engine called with dpi %v, want [150]", got)
	}
	if want := (0.9 + 0.5 + 0.7) / 3; abs(rec.MeanConfidence-want) > 1e-9 {
		t.Errorf("mean confidence %g, want %g", rec.MeanConfidence, want)
	}
	if b := rec.Words[2].Box; b != (ocr.Box{X: 180, Y: 90, W: 20, H: 10}) {
		t.Errorf("box off the page not clipped: %+v", b)
	}
	if rec.Binarization != "none" {
		t.Errorf("binarization %q without preparation, want none", rec.Binarization)
	}
	if _, ok := rec.TimingsMS["engine"]; !ok {
		t.Errorf("no engine timing in %v", rec.TimingsMS)
	}
	if got, want := rec.Text(), "Quay street\nedge\n"; got != want {
		t.Errorf("text %q, want %q", got, want)
	}
}

func TestProcessDefaultsAndKeepImage(t *testing.T) {
	eng := &ocrtest.Engine{}
	rec, img, err := ocr.Process(context.Background(), eng, page(120, 80), 0, ocr.Options{KeepImage: true})
	if err != nil {
		t.Fatal(err)
	}
	if rec.DPI != ocr.DefaultDPI {
		t.Errorf("untagged image: dpi %g, want %d", rec.DPI, ocr.DefaultDPI)
	}
	if img == nil {
		t.Fatal("KeepImage set but no prepared image")
	}
	if rec.Words == nil || len(rec.Words) != 0 || rec.MeanConfidence != 0 {
		t.Errorf("no words: got %v, mean %g; want an empty list and 0", rec.Words, rec.MeanConfidence)
	}
	// A tagged resolution wins over Options.DPI.
	rec, _, err = ocr.Process(context.Background(), eng, page(120, 80), 400, ocr.Options{DPI: 200})
	if err != nil || rec.DPI != 400 {
		t.Errorf("tagged 400 dpi: got %v, %v", rec, err)
	}
}

func TestProcessErrors(t *testing.T) {
	boom := errors.New("engine exploded")
	eng := &ocrtest.Engine{Func: func(context.Context, *image.Gray, int) ([]ocr.Word, error) { return nil, boom }}
	rec, img, err := ocr.Process(context.Background(), eng, page(120, 80), 0, ocr.Options{})
	if !errors.Is(err, boom) || rec != nil || img != nil {
		t.Errorf("engine failure: got %v, %v, %v", rec, img, err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, _, err := ocr.Process(ctx, &ocrtest.Engine{}, page(120, 80), 0, ocr.Options{}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled context: err %v", err)
	}
	if _, _, err := ocr.Process(context.Background(), &ocrtest.Engine{}, image.NewGray(image.Rect(0, 0, 0, 0)), 0, ocr.Options{}); err == nil {
		t.Error("empty image accepted")
	}
}

func TestProcessFile(t *testing.T) {
	path := ocrtest.PageFile(t, page(160, 90))
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(data)
	rec, _, err := ocr.ProcessFile(context.Background(), &ocrtest.Engine{}, path, ocr.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if rec.Source != path || rec.SHA256 != hex.EncodeToString(sum[:]) {
		t.Errorf("source %q sha %s; want %q %x", rec.Source, rec.SHA256, path, sum)
	}
	if _, ok := rec.TimingsMS["decode"]; !ok {
		t.Errorf("no decode timing in %v", rec.TimingsMS)
	}
	after, _ := os.ReadFile(path)
	if !bytes.Equal(after, data) {
		t.Error("the input file changed")
	}
}

// TestProcessFileBadInput: every kind of broken input gets an error that
// names the file, and no record.
func TestProcessFileBadInput(t *testing.T) {
	dir := t.TempDir()
	var good bytes.Buffer
	png.Encode(&good, page(64, 64))
	write := func(name string, data []byte) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	cases := []struct {
		name string
		path string
		opts ocr.Options
	}{
		{"zero bytes", write("empty.png", nil), ocr.Options{}},
		{"truncated PNG", write("cut.png", good.Bytes()[:good.Len()/2]), ocr.Options{}},
		{"text file", write("notes.tif", []byte("shelf mark 12/B, box 3\n")), ocr.Options{}},
		{"over the pixel limit", write("big.png", good.Bytes()), ocr.Options{MaxPixels: 64*64 - 1}},
		{"missing file", filepath.Join(dir, "absent.png"), ocr.Options{}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rec, img, err := ocr.ProcessFile(context.Background(), &ocrtest.Engine{}, c.path, c.opts)
			if err == nil || rec != nil || img != nil {
				t.Fatalf("got %v, %v, %v; want only an error", rec, img, err)
			}
			if !strings.Contains(err.Error(), c.path) {
				t.Errorf("error %q does not name the file", err)
			}
		})
	}
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
