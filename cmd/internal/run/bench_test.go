package run

import (
	"context"
	"fmt"
	"math/rand/v2"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"testing"

	"recto/cmd/internal/run/ledger"
	"recto/correct"
	"recto/lexicon"
	"recto/ocr"
)

// benchRecords makes n recognised pages of about 300 words drawn from the
// built-in lexicon, with OCR-like character errors on some pages, and the
// clean text as ground truth for every tenth page.
func benchRecords(n int) ([]*ocr.Record, []string) {
	words := lexicon.Default().Words()
	rng := rand.New(rand.NewPCG(1, 2))
	recs := make([]*ocr.Record, n)
	truth := make([]string, n)
	for i := range recs {
		r := &ocr.Record{Version: ocr.RecordVersion, Width: 2480, Height: 3508, DPI: 300}
		noise := float64(i%5) * 0.02
		var ref strings.Builder
		for k := range 300 {
			w := words[rng.IntN(len(words))]
			if k > 0 {
				if k%10 == 0 {
					ref.WriteByte('\n')
				} else {
					ref.WriteByte(' ')
				}
			}
			ref.WriteString(w)
			hyp := []rune(w)
			for j := range hyp {
				if rng.Float64() < noise {
					hyp[j] = rune('a' + rng.IntN(26))
				}
			}
			r.Words = append(r.Words, ocr.Word{Text: string(hyp), Conf: 0.95 - 3*noise*rng.Float64(), Line: k / 10,
				Box: ocr.Box{X: 100 + (k%10)*200, Y: 100 + (k/10)*90, W: 180, H: 60}})
			r.MeanConfidence += r.Words[k].Conf / 300
		}
		recs[i] = r
		if i%10 == 0 {
			truth[i] = ref.String()
		}
	}
	return recs, truth
}

// BenchmarkAfterRecognition10k runs everything a run does after the
// engine over 10,000 already-recognised pages on GOMAXPROCS workers: triage
// (features and model), correction of the pages marked "correct", scoring
// of the pages with ground truth before and after correction, one ledger
// commit per page, and every report. The corrector is built before the
// timer starts, as a run builds it once. Target for the whole: under 60 s
// on 2 cores.
func BenchmarkAfterRecognition10k(b *testing.B) {
	const n = 10000
	recs, truth := benchRecords(n)
	tk, err := newToolkit(Options{Lang: "eng"})
	if err != nil {
		b.Skipf("toolkit: %v", err)
	}
	tk.correct(recs[0]) // builds the corrector once, as a run does
	b.ResetTimer()
	for it := 0; it < b.N; it++ {
		dir := b.TempDir()
		l, err := ledger.Open(filepath.Join(dir, ledger.FileName))
		if err != nil {
			b.Fatal(err)
		}
		w := l.NewWriter(nil)
		idx := make(chan int)
		var wg sync.WaitGroup
		for range runtime.GOMAXPROCS(0) {
			wg.Add(1)
			go func() {
				defer wg.Done()
				for i := range idx {
					r := recs[i]
					row := ledger.Page{Rel: fmt.Sprintf("t%02d/p%05d.tif", i%40, i), Title: fmt.Sprintf("t%02d", i%40), State: ledger.StateDone}
					v := tk.triage(r)
					row.Decision, row.PredictedCER, row.Reasons = v.Decision, v.PredictedCER, v.Reasons
					final := r
					correctShare.Add(v.Decision == "correct")
					if v.Decision == "correct" {
						var ch []correct.Change
						final, ch = tk.correct(r)
						row.Corrections = len(ch)
					}
					if truth[i] != "" {
						c := tk.compare(truth[i], r.Text())
						a := c
						if final != r {
							a = tk.compare(truth[i], final.Text())
						}
						row.HasTruth, row.RefChars, row.CharErrs, row.CharErrsAf = true, c.Chars, c.CharErrors, a.CharErrors
						row.RefWords, row.WordErrs, row.WordErrsAf = c.Words, c.WordErrors, a.WordErrors
					}
					w.Put(row)
				}
			}()
		}
		for i := range n {
			idx <- i
		}
		close(idx)
		wg.Wait()
		if err := w.Close(); err != nil {
			b.Fatal(err)
		}
		rows, err := l.Pages(context.Background())
		if err != nil {
			b.Fatal(err)
		}
		if err := buildReports(filepath.Join(dir, reportDir), dir, "/bench", rows, nil, tk.interval, reportMeta{}); err != nil {
			b.Fatal(err)
		}
		l.Close()
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/10k-pages")
	b.ReportMetric(100*correctShare.Share(), "%-marked-correct")
}

// share counts how many of the pages seen had a property.
type share struct {
	mu     sync.Mutex
	n, yes int
}

func (s *share) Add(ok bool) {
	s.mu.Lock()
	s.n++
	if ok {
		s.yes++
	}
	s.mu.Unlock()
}

func (s *share) Share() float64 {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.n == 0 {
		return 0
	}
	return float64(s.yes) / float64(s.n)
}

var correctShare share

// BenchmarkCorrectPage corrects one 300-word page marked "correct" per
// iteration (the corrector already built); the per-page figure times the
// share of pages marked correct gives correction's part of a 10,000-page
// run, on one core.
func BenchmarkCorrectPage(b *testing.B) {
	recs, _ := benchRecords(200)
	tk, err := newToolkit(Options{Lang: "eng"})
	if err != nil {
		b.Skipf("toolkit: %v", err)
	}
	var pages []*ocr.Record
	for _, r := range recs {
		if tk.triage(r).Decision == "correct" {
			pages = append(pages, r)
		}
	}
	if len(pages) == 0 {
		b.Skip("no page marked correct")
	}
	tk.correct(pages[0]) // builds the corrector
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		tk.correct(pages[i%len(pages)])
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/page")
}
