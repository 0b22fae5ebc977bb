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
// triage makes it: quality.Triage with the default thresholds, model m
// (nil: quality.DefaultModel), on the record's features
// (quality.PageFeatures) with lexicon lex. lex nil means the page's
// language has no lexicon: the features are computed with
// lexicon.AcceptAll and marked NoLexicon, so the lexicon features carry no
// evidence. A reading of text-shaped ink that yields almost no words is
// estimated at 1 (a failed reading, see quality.Triage).
func PredictCER(m *quality.Model, lex *lexicon.Lexicon) ocr.PredictCER {
	return func(rec *ocr.Record) float64 {
		var f quality.Features
		if lex == nil {
			f = quality.PageFeatures(rec, lexicon.AcceptAll())
			f.NoLexicon = true
		} else {
			f = quality.PageFeatures(rec, lex)
		}
		return quality.Triage(f, m, quality.Thresholds{}).PredictedCER
	}
}
