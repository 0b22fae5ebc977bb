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

// words returns n words of five letters read with confidence conf.
func words(n int, conf float64) []ocr.Word {
	out := make([]ocr.Word, n)
	for i := range out {
		out[i] = ocr.Word{Text: "quays", Conf: conf, Line: i / 8}
	}
	return out
}

// TestSelfCheckChoice: which reading is kept (the real-scans issue, part
// 4): the original's only with more confident words than the prepared
// page's by more than a twentieth; with as many, the lower quality
// estimate (Options.PredictCER), which is recorded for both readings;
// the self-check always or never with SelfCheck On or Off.
func TestSelfCheckChoice(t *testing.T) {
	// A poor first reading: 20 confident words among 40.
	poor := append(words(20, 0.9), words(20, 0.3)...)
	cases := []struct {
		name      string
		mode      ocr.Mode
		first     []ocr.Word
		second    []ocr.Word
		estimate  bool
		calls     int
		kept      string
		estimates int
	}{
		{"21 against 20: within a twentieth, prepared kept", ocr.Auto, poor, words(21, 0.9), false, 2, "prepared", 0},
		{"22 against 20: original kept", ocr.Auto, poor, words(22, 0.9), false, 2, "original", 0},
		{"19 against 20: prepared kept", ocr.Auto, poor, words(19, 0.95), false, 2, "prepared", 0},
		{"as many, original estimated lower", ocr.Auto, poor, append(words(20, 0.9), words(1, 0.5)...), true, 2, "original", 2},
		{"as many, no estimate: more confident letters", ocr.Auto, poor, words(20, 0.9), false, 2, "prepared", 0},
		{"self-check off", ocr.Off, poor, words(40, 0.9), true, 1, "", 0},
		{"self-check on, good first reading", ocr.On, words(30, 0.95), append(words(30, 0.95), words(1, 0.5)...), true, 2, "original", 2},
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
			o := ocr.Options{SelfCheck: c.mode}
			var asked []int
			if c.estimate {
				// A stand-in estimate: the prepared page's reading (as
				// many words as the first) 0.30, the original's 0.05.
				o.PredictCER = func(r *ocr.Record) float64 {
					asked = append(asked, len(r.Words))
					if len(r.Words) == len(c.first) {
						return 0.30
					}
					return 0.05
				}
			}
			rec, _, err := ocr.Process(context.Background(), e, textPage(), 300, o)
			if err != nil {
				t.Fatal(err)
			}
			if e.Calls() != c.calls {
				t.Errorf("engine called %d times, want %d", e.Calls(), c.calls)
			}
			kept := ""
			if r := rec.Reading; r != nil {
				kept = r.Kept
				if r.Reason == "" {
					t.Error("no reason recorded for the second reading")
				}
				if c.estimate && (r.PreparedPredictedCER == nil || *r.PreparedPredictedCER != 0.30 || r.OriginalPredictedCER == nil || *r.OriginalPredictedCER != 0.05) {
					t.Errorf("estimates not recorded: %+v", r)
				}
			}
			if kept != c.kept {
				t.Errorf("kept %q, want %q (reading %+v)", kept, c.kept, rec.Reading)
			}
			if len(asked) != c.estimates || (len(asked) == 2 && (asked[0] != len(c.first) || asked[1] != len(c.second))) {
				t.Errorf("estimate asked about readings of %v words, want %d readings (prepared, then original)", asked, c.estimates)
			}
		})
	}
}
