// Package estimate gives ocr.Process's self-check (ocr.Options.PredictCER)
// the project's ground-truth-free quality estimate: the predicted CER that
// package quality's triage gives a page record. It lives apart from
// package ocr because package quality reads ocr's records.
package estimate

import (
	"recto/lexicon"
	"recto/ocr"
	"recto/quality"
)

// PredictCER returns the quality estimate of a page's reading as the run's
// triage makes it: quality.TriageRecord with the default thresholds, model
// m (nil: quality.DefaultModel) and lexicon lex (nil: the page's language
// has no lexicon). A reading of text-shaped ink that yields almost no
// words is estimated at 1 (a failed reading, see quality.Triage).
func PredictCER(m *quality.Model, lex *lexicon.Lexicon) ocr.PredictCER {
	return func(rec *ocr.Record) float64 {
		return quality.TriageRecord(rec, lex, m, quality.Thresholds{}).PredictedCER
	}
}
