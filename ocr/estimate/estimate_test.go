package estimate_test

import (
	"testing"

	"recto/lexicon"
	"recto/ocr"
	"recto/ocr/estimate"
	"recto/quality"
)

// TestPredictCERIsTriagesEstimate: the self-check's estimate of a reading
// is the predicted CER the run's triage gives the same record, with the
// lexicon or, for a language without one, with the lexicon features left
// out; a reading of text-shaped ink with no word is a failed reading (1).
func TestPredictCERIsTriagesEstimate(t *testing.T) {
	rec := &ocr.Record{Width: 2480, Height: 3508, DPI: 300, Noise: 4, Words: []ocr.Word{
		{Text: "The", Conf: 0.96, Box: ocr.Box{X: 200, Y: 300, W: 60, H: 30}},
		{Text: "harbour", Conf: 0.93, Box: ocr.Box{X: 280, Y: 300, W: 150, H: 30}},
		{Text: "bqard", Conf: 0.41, Box: ocr.Box{X: 450, Y: 300, W: 110, H: 30}},
		{Text: "met", Conf: 0.95, Box: ocr.Box{X: 580, Y: 300, W: 60, H: 30}, Line: 0},
	}}
	lex := lexicon.Default()
	want := quality.Triage(quality.PageFeatures(rec, lex), nil, quality.Thresholds{}).PredictedCER
	if got := estimate.PredictCER(nil, lex)(rec); got != want || got <= 0 || got >= 1 {
		t.Errorf("estimate %v, triage's %v", got, want)
	}
	f := quality.PageFeatures(rec, lexicon.AcceptAll())
	f.NoLexicon = true
	if got, want := estimate.PredictCER(nil, nil)(rec), quality.Triage(f, nil, quality.Thresholds{}).PredictedCER; got != want {
		t.Errorf("without a lexicon: estimate %v, triage's %v", got, want)
	}
	failed := &ocr.Record{Width: 2480, Height: 3508, DPI: 300, Words: []ocr.Word{},
		Ink: &ocr.InkShape{Lines: 40, LineMarks: 3000, Letters: 3200, TextInk: 0.9, XHeight: 20}}
	if !failed.Ink.LooksLikeText() {
		t.Fatalf("test ink %+v does not look like text; the failed-reading case needs ink that does", failed.Ink)
	}
	if got := estimate.PredictCER(nil, lex)(failed); got != 1 {
		t.Errorf("failed reading of text-shaped ink: estimate %v, want 1", got)
	}
}
