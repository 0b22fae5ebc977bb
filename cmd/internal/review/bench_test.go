package review

// Benchmarks for the speed targets of #13 on a synthetic run of 2,000
// pages: overview under 300 ms, a page view under 200 ms once its images
// exist, a decision stored under 20 ms, thumbnails at least 20 pages/s on
// 2 cores, the server under 200 MB.
//
//	go test ./cmd/internal/review -run '^$' -bench . -benchtime 20x

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"testing"
	"time"

	"recto/cmd/internal/run"
	"recto/cmd/internal/run/ledger"
	"recto/ocr"
	"recto/ocr/par"
	"recto/ocr/synth"
)

const benchPages = 2000

var (
	benchOnce sync.Once
	benchDir  string
	benchRels []string
	benchErr  error
)

// benchRun writes, once per test binary, a run folder of 2,000 pages in 20
// titles: ledger rows with a page record of 320 words (boxes and
// confidences) and text for each, a change list of 12 changes for every
// third page, ground truth counts for every other page.
func benchRun(b *testing.B) (string, []string) {
	b.Helper()
	benchOnce.Do(func() {
		dir, err := os.MkdirTemp("", "recto-review-bench-")
		if err != nil {
			benchErr = err
			return
		}
		benchDir = dir
		coll := filepath.Join(dir, "coll")
		out := filepath.Join(dir, "run")
		os.MkdirAll(coll, 0o755)
		l, err := ledger.Open(filepath.Join(out, ledger.FileName))
		if err != nil {
			benchErr = err
			return
		}
		defer l.Close()
		l.SetMeta(context.Background(), "collection", coll)
		words := make([]ocr.Word, 320)
		for i := range words {
			words[i] = ocr.Word{Text: fmt.Sprintf("harbour%d", i%17), Conf: 0.5 + float64(i%50)/100,
				Box: ocr.Box{X: 200 + 180*(i%12), Y: 300 + 90*(i/12), W: 150, H: 40}, Line: i / 12, Par: i / 60}
		}
		var rows []ledger.Page
		for i := range benchPages {
			title := fmt.Sprintf("gazette-%02d", i%20)
			rel := fmt.Sprintf("%s/p%04d.tif", title, i)
			stem := "ocr/" + rel
			rec := ocr.Record{Version: ocr.RecordVersion, Source: filepath.Join(coll, rel), Width: 2480, Height: 3508, Words: words}
			data, _ := json.Marshal(rec)
			mustFile(filepath.Join(out, stem+".json"), data)
			mustFile(filepath.Join(out, stem+".txt"), []byte(rec.Text()))
			p := ledger.Page{Rel: rel, Title: title, Page: strings.TrimSuffix(rel, ".tif"), Source: filepath.Join(coll, rel),
				SHA256: fmt.Sprintf("%064x", i), Size: 1, Config: "c", State: ledger.StateDone,
				Decision: []string{"accept", "correct", "rescan"}[i%3], PredictedCER: float64(i%97) / 300,
				Reasons: []string{"predicted CER", "lexicon hits"}, MeanConf: 0.8, Words: len(words),
				Outputs: []string{stem + ".txt", stem + ".alto.xml", stem + ".json"}, Done: time.Unix(0, 0)}
			if i%3 == 1 {
				var buf bytes.Buffer
				enc := json.NewEncoder(&buf)
				for k := range 12 {
					enc.Encode(run.ChangeLine{Title: title, Page: p.Page, Line: k + 1, Column: 1, Before: "harbour0", After: "harbour", Score: 4})
				}
				name := "corrected/" + rel + ".changes.jsonl"
				mustFile(filepath.Join(out, name), buf.Bytes())
				p.Outputs = append(p.Outputs, name)
				p.Corrections = 12
			}
			if i%2 == 0 {
				p.HasTruth, p.RefChars, p.CharErrs, p.CharErrsAf = true, 2000, i%200, i%150
			}
			rows = append(rows, p)
			benchRels = append(benchRels, rel)
		}
		benchErr = l.PutAll(context.Background(), rows)
		benchDir = out
	})
	if benchErr != nil {
		b.Fatal(benchErr)
	}
	return benchDir, benchRels
}

func mustFile(name string, data []byte) {
	os.MkdirAll(filepath.Dir(name), 0o755)
	os.WriteFile(name, data, 0o644)
}

func benchServer(b *testing.B) (*Server, *httptest.Server, *http.Client, []string) {
	dir, rels := benchRun(b)
	s, ts, c := testServer(b, Options{Dir: dir})
	return s, ts, c, rels
}

func fetch(b *testing.B, c *http.Client, u string) int {
	res, err := c.Get(u)
	if err != nil {
		b.Fatal(err)
	}
	n, _ := io.Copy(io.Discard, res.Body)
	res.Body.Close()
	if res.StatusCode != 200 {
		b.Fatalf("GET %s: %s", u, res.Status)
	}
	return int(n)
}

// BenchmarkOverview serves the whole overview of 2,000 pages (every
// card), and the rescan filter sorted by predicted CER.
func BenchmarkOverview(b *testing.B) {
	_, ts, c, _ := benchServer(b)
	for _, v := range []struct{ name, u string }{{"all", "/"}, {"rescan-by-predicted", "/?decision=rescan&sort=predicted"}} {
		u := v.u
		b.Run(v.name, func(b *testing.B) {
			size := 0
			for b.Loop() {
				size = fetch(b, c, ts.URL+u)
			}
			b.ReportMetric(float64(b.Elapsed().Milliseconds())/float64(b.N), "ms/overview")
			b.ReportMetric(float64(size)/1e3, "kB")
		})
	}
}

// BenchmarkPageView serves page views (320 words, 12 corrections on a
// third of them) of 50 pages in turn, each with its page image from the
// cache (an A4 page at 300 dpi shown 2000 pixels wide, as the server makes
// it of a TIFF): the HTML and the image, what the browser asks for.
func BenchmarkPageView(b *testing.B) {
	s, ts, c, rels := benchServer(b)
	view := a4View(b)
	for _, rel := range rels[:50] {
		row, _, _ := s.page(context.Background(), rel)
		mustFile(row.Source, []byte("II*\x00")) // the source must exist in the collection; its image is cached
		s.imgs.store("pages", imageKey(row.Rel, row.SHA256), view)
	}
	i := 0
	for b.Loop() {
		rel := url.QueryEscape(rels[i%50])
		fetch(b, c, ts.URL+"/page?p="+rel+"&decision=rescan")
		fetch(b, c, ts.URL+"/image?p="+rel)
		i++
	}
	b.ReportMetric(float64(b.Elapsed().Microseconds())/1e3/float64(b.N), "ms/page")
	b.ReportMetric(float64(len(view))/1e3, "kB-image")
}

// a4 writes one rendered A4 page at 300 dpi (2480 × 3508) as a PNG file.
func a4(b *testing.B, name, text string) {
	p, _, err := synth.Render(strings.Repeat(text, 60), synth.Layout{})
	if err != nil {
		b.Fatal(err)
	}
	var buf bytes.Buffer
	if err := synth.WritePNG(&buf, p.Image, 300); err != nil {
		b.Fatal(err)
	}
	mustFile(name, buf.Bytes())
}

// a4View is the page image the server makes of an A4 page.
func a4View(b *testing.B) []byte {
	name := filepath.Join(b.TempDir(), "a4.png")
	a4(b, name, "The harbour master of Wrenmouth reported that the northern quay was mended. ")
	view, err := makeImage(context.Background(), pageSource{Rel: name, Path: name}, ViewWidth)
	if err != nil {
		b.Fatal(err)
	}
	return view
}

// BenchmarkDecision stores decisions (a committed, synced transaction
// each, through the HTTP handler).
func BenchmarkDecision(b *testing.B) {
	s, ts, c, rels := benchServer(b)
	i := 0
	for b.Loop() {
		res := post(b, c, s, ts.URL+"/decide", url.Values{"p": {rels[i%len(rels)]}, "decision": {"rescan"}, "note": {"bench"}})
		io.Copy(io.Discard, res.Body)
		res.Body.Close()
		if res.StatusCode != 200 {
			b.Fatal(res.Status)
		}
		i++
	}
	b.ReportMetric(float64(b.Elapsed().Microseconds())/1e3/float64(b.N), "ms/decision")
}

// BenchmarkThumbnails makes thumbnails of A4 pages at 300 dpi (2480 ×
// 3508, rendered text, PNG), GOMAXPROCS at a time, as the server's
// background pass does; /views also makes the 2000-pixel page image that
// a source the browser cannot show (TIFF, PDF, ...) needs, in the pass's
// second phase.
func BenchmarkThumbnails(b *testing.B) {
	dir := b.TempDir()
	var srcs []pageSource
	for i := range 4 {
		name := filepath.Join(dir, fmt.Sprintf("p%d.png", i))
		a4(b, name, fmt.Sprintf("The harbour master of Wrenmouth reported on page %d that the northern quay was mended. ", i))
		srcs = append(srcs, pageSource{Rel: name, SHA256: fmt.Sprint(i), Path: name})
	}
	workers := runtime.GOMAXPROCS(0)
	for _, c := range []struct {
		name  string
		width int
	}{{"thumbs", ThumbWidth}, {"views", ViewWidth}} {
		b.Run(c.name, func(b *testing.B) {
			pages := 0
			cpu0 := cpuSeconds()
			for b.Loop() {
				err := par.EachErr(context.Background(), len(srcs), workers, func(_, i int) error {
					_, err := makeImage(context.Background(), srcs[i], c.width)
					return err
				})
				if err != nil {
					b.Fatal(err)
				}
				pages += len(srcs)
			}
			b.ReportMetric(float64(pages)/b.Elapsed().Seconds(), "pages/s")
			if cpu := cpuSeconds() - cpu0; cpu > 0 {
				// what 2 idle cores would make: twice the pages per CPU-second
				b.ReportMetric(2*float64(pages)/cpu, "pages/s-2-idle-cores")
			}
			b.ReportMetric(float64(workers), "workers")
			var m runtime.MemStats
			runtime.ReadMemStats(&m)
			b.ReportMetric(float64(m.Sys)/(1<<20), "MB-sys")
		})
	}
}

// BenchmarkServerMemory reports the memory the Go runtime holds from the
// system (MemStats.Sys, the whole test process's, client included) after
// the server has served the overview and the view of every tenth of the
// 2,000 pages, b.N times.
func BenchmarkServerMemory(b *testing.B) {
	s, ts, c, rels := benchServer(b)
	for b.Loop() {
		fetch(b, c, ts.URL+"/")
		for i, rel := range rels {
			if i%10 == 0 {
				fetch(b, c, ts.URL+"/page?p="+url.QueryEscape(rel))
			}
		}
	}
	_ = s
	var m runtime.MemStats
	runtime.ReadMemStats(&m)
	b.ReportMetric(float64(m.Sys)/(1<<20), "MB-sys")
	b.ReportMetric(float64(m.HeapInuse)/(1<<20), "MB-heap")
}
