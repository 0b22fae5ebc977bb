//go:build cgo && !notesseract

package tesseract

import (
	"context"
	"path/filepath"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/ocr/synth"
)

// selfCheckCost sums, over a collection, how often the self-check read a
// page a second time and the engine time of the readings: first is the
// "engine" timing of each page (its one reading, or for a page turned
// upright the upright reading), second the rest: the self-check's second
// reading, orientation detection and the readings before a page was
// turned ("engine_original", "orientation", "engine_unturned").
type selfCheckCost struct {
	pages, second, turned int
	first, secondMS       float64
	orientMS              float64
}

func (c *selfCheckCost) add(rec *ocr.Record) {
	c.pages++
	c.first += rec.TimingsMS["engine"]
	if rec.Reading != nil {
		c.second++
	}
	if rec.Orientation != nil && rec.Orientation.Decided && rec.Orientation.Degrees != 0 {
		c.turned++
	}
	c.secondMS += rec.TimingsMS["engine_original"] + rec.TimingsMS["orientation"] + rec.TimingsMS["engine_unturned"]
	c.orientMS += rec.TimingsMS["orientation"]
}

func (c *selfCheckCost) plus(d selfCheckCost) selfCheckCost {
	return selfCheckCost{c.pages + d.pages, c.second + d.second, c.turned + d.turned, c.first + d.first, c.secondMS + d.secondMS, c.orientMS + d.orientMS}
}

func (c *selfCheckCost) report(b *testing.B, prefix string) {
	if c.pages == 0 || c.first == 0 {
		return
	}
	b.ReportMetric(100*float64(c.second)/float64(c.pages), prefix+"_second_%")
	b.ReportMetric(100*c.secondMS/c.first, prefix+"_extra_engine_%")
	b.ReportMetric(100*c.orientMS/c.first, prefix+"_orientation_%")
	b.ReportMetric(float64(c.turned), prefix+"_turned")
}

// BenchmarkSelfCheck measures how often the self-check (issue 10 part 4:
// the original page read too when the prepared page's reading looks poor)
// reads a page twice and what the second reading costs in engine time,
// relative to the first readings' engine time, on the demo collection
// (25 synthetic pages, 4 of them clean; ocr/synth), on its clean pages and
// its degraded pages apart, on a collection four fifths clean (the issue's
// target, under 15 % more engine time, computed from the two) and on the
// real pages (the 4 transcribed Tesseract pages and the 31 Leptonica pages
// of TestLeptonicaPagesConfidentWords). One iteration reads 60 pages: run
// with -benchtime=1x.
func BenchmarkSelfCheck(b *testing.B) {
	e := engineOrSkip(b, Config{})
	dir := ocrtest.RealPages(b)
	ctx := context.Background()
	for i := 0; i < b.N; i++ {
		var clean, degraded, real selfCheckCost
		for _, t := range synth.Demo() {
			for pi := range t.Pages {
				p, err := t.Page(pi)
				if err != nil {
					b.Fatal(err)
				}
				rec, _, err := ocr.Process(ctx, e, p.Image, p.DPI, ocr.Options{})
				if err != nil {
					b.Fatal(err)
				}
				if rec.Blank {
					continue
				}
				if t.Kinds[pi].Name == "clean" {
					clean.add(rec)
				} else {
					degraded.add(rec)
				}
			}
		}
		var pages []string
		for _, p := range []string{"phototest", "eurotext", "8087_054.3B", "8071_093.3B"} {
			pages = append(pages, filepath.Join(dir, "tesseract", p+".tif"))
		}
		for _, p := range leptonicaTextPages {
			pages = append(pages, filepath.Join(dir, "leptonica", p))
		}
		for _, p := range pages {
			rec, _, err := ocr.ProcessFile(ctx, e, p, ocr.Options{})
			if err != nil {
				b.Fatal(err)
			}
			real.add(rec)
		}
		demo := clean.plus(degraded)
		demo.report(b, "demo")
		clean.report(b, "demo_clean")
		degraded.report(b, "demo_degraded")
		real.report(b, "real")
		// Four fifths clean pages, one fifth degraded, each page kind at
		// its own mean engine time per page.
		if clean.pages > 0 && degraded.pages > 0 {
			first := 0.8*clean.first/float64(clean.pages) + 0.2*degraded.first/float64(degraded.pages)
			second := 0.8*clean.secondMS/float64(clean.pages) + 0.2*degraded.secondMS/float64(degraded.pages)
			b.ReportMetric(100*second/first, "clean80_extra_engine_%")
		}
	}
}
