package quality

import (
	"context"
	"testing"
)

// TestEmbeddedModelOnHeldOutSample judges the embedded model on the
// vendored sample in testdata/triage: 40 held-out pages of the project's
// synthetic corpus (rendered by cmd/corpus from public-domain running
// text, recognised by Tesseract 5.3.0 through recto ocr, never used for
// fitting), spread evenly over measured CER from 0 to 140 % (CER exceeds
// 100 % when the engine reads more noise than the page has text). The targets
// are those of the project: Spearman ≥ 0.9; recall of pages above 10 % CER
// ≥ 0.95 with precision ≥ 0.85; clean pages (CER < 1 %) accepted ≥ 95 %.
func TestEmbeddedModelOnHeldOutSample(t *testing.T) {
	samples, problems, err := LoadSamples(context.Background(), "../testdata/triage/ocr", "../testdata/triage/truth", nil, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range problems {
		t.Error(p)
	}
	if len(samples) != 40 {
		t.Fatalf("%d samples, want 40", len(samples))
	}
	e := Evaluate(DefaultModel(), samples, Thresholds{})
	t.Logf("held-out sample: %d pages (+%d with empty truth), Spearman %.3f, MAE %.4f, rescan TP %d FP %d FN %d, precision %.3f, recall %.3f, clean %d accepted %.3f, decisions %v",
		e.Pages, e.EmptyTruth, e.Spearman, e.MAE, e.TruePos, e.FalsePos, e.FalseNeg, e.Precision, e.Recall, e.Clean, e.CleanAccepted, e.Decisions)
	if e.TruePos+e.FalseNeg < 5 || e.Clean < 5 {
		t.Fatalf("sample too one-sided: %d pages above 10%%, %d clean", e.TruePos+e.FalseNeg, e.Clean)
	}
	met, lines := Targets{}.Check(e)
	for _, l := range lines {
		t.Log(l)
	}
	if !met {
		t.Error("the embedded model misses a target on the held-out sample")
	}
	if e.EmptyTruth > 0 && e.EmptyAsBlank != e.EmptyTruth {
		t.Errorf("%d pages with empty ground truth, only %d decided blank or picture", e.EmptyTruth, e.EmptyAsBlank)
	}
}
