package report

import (
	"fmt"
	"testing"

	"recto/quality"
)

func benchPages(n int) []Page {
	pages := make([]Page, n)
	decisions := []string{"accept", "accept", "accept", "correct", "rescan", "blank"}
	for i := range pages {
		p := Page{Rel: fmt.Sprintf("title-%03d/page-%05d.tif", i%100, i), Title: fmt.Sprintf("title-%03d", i%100),
			Page: fmt.Sprintf("page-%05d.tif", i), Decision: decisions[i%len(decisions)], PredictedCER: float64(i%97) / 300,
			Reasons: []string{"many words not in the lexicon"}, Image: "../../scans/x.tif", Text: "../ocr/x.txt"}
		if i%10 == 0 {
			p.HasTruth, p.RefChars, p.CharErrs, p.CharErrsAfter = true, 2000, i%150, i%120
			p.RefWords, p.WordErrs, p.WordErrsAfter = 350, i%40, i%30
		}
		pages[i] = p
	}
	return pages
}

// BenchmarkWrite10k builds every report for 10,000 pages in 100 titles,
// 1,000 with ground truth, with quality.BootstrapCER intervals (2,000 resamples).
func BenchmarkWrite10k(b *testing.B) {
	pages := benchPages(10000)
	ci := func(errs, chars []int) (float64, float64, bool) { // as recto wires it
		pages := make([]quality.Counts, len(errs))
		for i := range errs {
			pages[i] = quality.Counts{Chars: chars[i], CharErrors: errs[i]}
		}
		return quality.BootstrapCER(pages, 0, 0)
	}
	dir := b.TempDir()
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if err := Write(dir, pages, Options{Interval: ci}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/10k-pages")
}
