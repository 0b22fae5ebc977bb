package main

import (
	"context"
	"errors"
	"testing"

	"recto/ocr"
	"recto/ocr/synth"
	"recto/ocr/tesseract"
	"recto/quality"
)

// TestLevelEndsWithEngine checks the two ends of synth.Level against an
// outside reader, Tesseract 5 through recto's OCR: severity 0 is read
// almost perfectly and severity 1 is unreadable (CER of at least 0.5).
func TestLevelEndsWithEngine(t *testing.T) {
	if testing.Short() {
		t.Skip("engine recognition skipped in -short mode")
	}
	eng, err := tesseract.New(tesseract.Config{})
	switch {
	case errors.Is(err, ocr.ErrEngineUnavailable):
		t.Skip("engine test skipped: built without cgo or with the notesseract tag")
	case err != nil:
		t.Skipf("engine test skipped: Tesseract or its English data is not usable here: %v", err)
	}
	defer eng.Close()
	ps := testPassages(t)
	page, _, err := synth.Render(ps[0].Text, synth.Layout{WidthMM: pageWidthMM, HeightMM: pageHeightMM, MarginMM: marginMM})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		t       float64
		seed    uint64
		lo, hi  float64 // accepted CER range
		comment string
	}{
		{0, 1, 0, 0.02, "clean"},
		{1, 1, 0.5, 100, "unreadable"},
		{1, 2, 0.5, 100, "unreadable"},
	} {
		p := synth.Degrade(page, synth.Level(tc.t, tc.seed))
		rec, _, err := ocr.Process(context.Background(), eng, p.Image, p.DPI, ocr.Options{})
		if err != nil {
			t.Fatal(err)
		}
		cer, _ := quality.Compare(p.Truth, rec.Text(), quality.NormOptions{}).CER()
		t.Logf("Level(%g, %d): CER %.3f", tc.t, tc.seed, cer)
		if cer < tc.lo || cer > tc.hi {
			t.Errorf("Level(%g, %d) (%s): CER %.3f outside [%g, %g]", tc.t, tc.seed, tc.comment, cer, tc.lo, tc.hi)
		}
	}
}
