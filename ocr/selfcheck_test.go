package ocr_test

import (
	"context"
	"image"
	"image/color"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
)

// textPage is a small grey page with a few dark bars, enough ink for
// preparation not to call it blank.
func textPage() *image.Gray {
	g := image.NewGray(image.Rect(0, 0, 400, 200))
	for i := range g.Pix {
		g.Pix[i] = 235
	}
	for y := 40; y < 160; y += 30 {
		for x := 30; x < 370; x++ {
			if (x/12)%3 != 0 {
				for dy := 0; dy < 10; dy++ {
					g.SetGray(x, y+dy, color.Gray{20})
				}
			}
		}
	}
	return g
}

// TestSelfCheckKeepsSurerReading: when the reading of the prepared page is
// poor by the engine's own confidences, the original page is read too and
// the reading with more confidently read letters is kept; a good first
// reading is not read again. The fake engine answers by call order, so the
// test controls which reading is the better one.
func TestSelfCheckKeepsSurerReading(t *testing.T) {
	poor := []ocr.Word{{Text: "~:;", Conf: 0.2}, {Text: "Pel1", Conf: 0.4}}
	good := []ocr.Word{{Text: "Pellingfold", Conf: 0.95, Box: ocr.Box{X: 5, Y: 6, W: 50, H: 10}}, {Text: "harbour", Conf: 0.9}}
	cases := []struct {
		name      string
		first     []ocr.Word
		second    []ocr.Word
		calls     int
		kept      string
		wantWords int
	}{
		{"good first reading: no second", good, nil, 1, "", 2},
		{"poor first, better original", poor, good, 2, "original", 2},
		{"poor first, original no better", poor, []ocr.Word{{Text: "x", Conf: 0.1}}, 2, "prepared", 2},
		{"nothing read, original better", nil, good, 2, "original", 2},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var n int
			e := &ocrtest.Engine{Func: func(ctx context.Context, img *image.Gray, dpi int) ([]ocr.Word, error) {
				n++
				if n == 1 {
					return append([]ocr.Word(nil), c.first...), nil
				}
				return append([]ocr.Word(nil), c.second...), nil
			}}
			rec, _, err := ocr.Process(context.Background(), e, textPage(), 300, ocr.Options{})
			if err != nil {
				t.Fatal(err)
			}
			if rec.Blank {
				t.Fatal("test page found blank")
			}
			if got := e.Calls(); got != c.calls {
				t.Errorf("engine called %d times, want %d", got, c.calls)
			}
			kept := ""
			if rec.Reading != nil {
				kept = rec.Reading.Kept
			}
			if kept != c.kept {
				t.Errorf("kept %q, want %q (reading %+v)", kept, c.kept, rec.Reading)
			}
			if len(rec.Words) != c.wantWords {
				t.Errorf("%d words kept, want %d", len(rec.Words), c.wantWords)
			}
			if kept == "original" && (rec.Binarization != "none" || rec.Skew != 0 || rec.Words[0].Box != good[0].Box) {
				t.Errorf("original reading kept but record says binarization %q skew %v box %v", rec.Binarization, rec.Skew, rec.Words[0].Box)
			}
		})
	}
	// --no-prepare reads once whatever the reading.
	e := &ocrtest.Engine{Words: poor}
	if _, _, err := ocr.Process(context.Background(), e, textPage(), 300, ocr.Options{NoPrepare: true}); err != nil {
		t.Fatal(err)
	}
	if e.Calls() != 1 {
		t.Errorf("NoPrepare: engine called %d times, want 1", e.Calls())
	}
}
