package run

import (
	"context"
	"path/filepath"
	"testing"

	"recto/cmd/internal/run/runtest"
)

// BenchmarkRunOverhead runs the whole job on 60 pages with the test engine
// (no recognition time, no preparation): what the run itself costs per
// page — walk, hashing, decoding, writing outputs, triage, scoring, the
// ledger and the reports — from a fresh run folder each time. Pages are not
// corrected (the corrector's build would dominate; BenchmarkCorrectPage
// times correction).
func BenchmarkRunOverhead(b *testing.B) {
	coll, truth := runtest.Collection(b, 3, 20, false)
	o := Options{Collection: coll, Truth: truth, Correct: 1, Rescan: 1, NewEngine: runtest.Engine(coll, 0), NoPrepare: true, Quiet: true}
	var pages int
	for i := 0; b.Loop(); i++ {
		o.Out = filepath.Join(b.TempDir(), "run")
		sum, err := Run(context.Background(), o)
		if err != nil {
			b.Fatal(err)
		}
		pages += sum.Done
	}
	b.ReportMetric(float64(pages)/b.Elapsed().Seconds(), "pages/s")
	b.ReportMetric(b.Elapsed().Seconds()*1000/float64(pages), "ms/page")
}
