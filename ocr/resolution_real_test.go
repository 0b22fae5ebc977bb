package ocr_test

import (
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
)

// knownDPI lists real scans of leptonlib 1.82.0's prog/ folder
// (testdata/realpages/SOURCES.md) whose resolution is known: from the
// file name, which in that folder ends in the scan's resolution
// (brev.14.75.jpg, lucasta.150.jpg; Leptonica's own naming, e.g. its
// regression tests scale lucasta.150.jpg as a 150 dpi page), or from a
// tag that the page's size confirms (a US letter page of 2,550 × 3,300
// pixels tagged 300 dpi).
var knownDPI = []struct {
	file string
	dpi  float64
}{
	{"brev.14.75.jpg", 75}, {"brev.20.75.jpg", 75}, {"brev.53.75.jpg", 75}, {"brev.56.75.jpg", 75},
	{"toc.99.tif", 75}, {"lapide.052.100.jpg", 100},
	{"breviar.38.150.jpg", 150}, {"lucasta.150.jpg", 150}, {"amoris.2.150.jpg", 150}, {"brothers.150.jpg", 150},
	{"words.15.tif", 150}, {"words.44.tif", 150}, {"zanotti-78.jpg", 150}, {"table.15.tif", 150},
	{"lucasta.1.300.tif", 300}, {"feyn.tif", 300}, {"pageseg1.tif", 300}, {"pageseg3.tif", 300},
	{"pageseg4.tif", 300}, {"patent.png", 300}, {"shearer.148.tif", 300}, {"scots-frag.tif", 300},
}

// prepareUntagged prepares a real page as if its file had no resolution
// tag (PrepOptions.DPI 0 is what a file re-encoded without one gives).
func prepareUntagged(t *testing.T, path string, tag float64) *ocr.Prepared {
	t.Helper()
	d, err := ocr.DecodeFile(path, ocr.DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	p, err := ocr.Prepare(d.Image, ocr.PrepOptions{DPI: tag})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// TestEstimateDPIRealPages strips the resolution of the real scans of
// known resolution and checks the estimate from the text: trusted on every
// page, within a factor of 2 of the true resolution on every page (so a
// true tag is never overruled, see chooseDPI), within 15 % on at least two
// thirds of them and with a median error of at most 15 %. The estimate is
// the resolution at which the text would be 10-point type (Tesseract's
// guidance: an x-height of about 20 pixels at 10 points and 300 dpi), so
// pages in larger type (the early printed books at 150 dpi) read high.
func TestEstimateDPIRealPages(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
	dir := filepath.Join(ocrtest.RealPages(t), "leptonica")
	var errs []float64
	within := 0
	var b strings.Builder
	for _, k := range knownDPI {
		p := prepareUntagged(t, filepath.Join(dir, k.file), 0)
		rel := p.PageDPI/k.dpi - 1
		fmt.Fprintf(&b, "| %s | %.0f | %.0f | %+.0f %% | %.1f | %.0f | %d |\n", k.file, k.dpi, p.PageDPI, 100*rel, p.Ink.XHeight, p.Ink.LinePitch, p.Ink.Lines)
		if p.DPISource != ocr.DPIFromEstimate {
			t.Errorf("%s: resolution from %s (%g dpi), want a trusted estimate; ink %+v", k.file, p.DPISource, p.PageDPI, p.Ink)
			continue
		}
		if p.PageDPI > 2*k.dpi || 2*p.PageDPI < k.dpi {
			t.Errorf("%s: estimate %.0f dpi, true %.0f: more than a factor of 2 off", k.file, p.PageDPI, k.dpi)
		}
		errs = append(errs, math.Abs(rel))
		if math.Abs(rel) <= 0.15 {
			within++
		}
	}
	t.Logf("| page | true dpi | estimate | error | x-height px | line pitch px | lines |\n|---|---|---|---|---|---|---|\n%s", b.String())
	sort.Float64s(errs)
	if len(errs) == 0 {
		t.Fatal("no estimates")
	}
	med := errs[len(errs)/2]
	t.Logf("%d of %d within 15 %%, median error %.1f %%", within, len(knownDPI), 100*med)
	if 3*within < 2*len(knownDPI) || med > 0.15 {
		t.Errorf("%d of %d estimates within 15 %% (want two thirds), median error %.1f %% (want at most 15 %%)", within, len(knownDPI), 100*med)
	}
}

// TestMisfitTagRealPages gives real scans a resolution tag that does not
// fit them, as the real-scans issue describes (an A4 page tagged 72 dpi, a
// 600 dpi tag on type scanned at 100-150 dpi): the estimate is used, within
// 15 % of the true resolution. Tags that fit are kept.
func TestMisfitTagRealPages(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
	dir := filepath.Join(ocrtest.RealPages(t), "leptonica")
	for _, c := range []struct {
		file      string
		tag, true float64
		from      string
	}{
		{"feyn.tif", 72, 300, ocr.DPIFromEstimate},
		{"pageseg1.tif", 72, 300, ocr.DPIFromEstimate},
		{"lucasta.150.jpg", 600, 150, ocr.DPIFromEstimate},
		{"brev.56.75.jpg", 600, 75, ocr.DPIFromEstimate},
		{"brev.56.75.jpg", 300, 75, ocr.DPIFromEstimate},
		{"feyn.tif", 300, 300, ocr.DPIFromTag},
		{"lucasta.150.jpg", 150, 150, ocr.DPIFromTag},
		{"amoris.2.150.jpg", 150, 150, ocr.DPIFromTag}, // large type: estimate 220, the tag still fits
	} {
		p := prepareUntagged(t, filepath.Join(dir, c.file), c.tag)
		t.Logf("%s tagged %g: %g dpi from %s (estimate %g)", c.file, c.tag, p.PageDPI, p.DPISource, p.EstimatedDPI)
		if p.DPISource != c.from || math.Abs(p.PageDPI/c.true-1) > 0.15 {
			t.Errorf("%s tagged %g dpi: %g dpi from %s; want %s, within 15 %% of %g", c.file, c.tag, p.PageDPI, p.DPISource, c.from, c.true)
		}
	}
}

// TestInkShapeRealPages: on real scans, the ink of pages of print looks
// like text (among them a newspaper page with large photographs, a table,
// a 75 dpi breviary and a faint page) and the ink of photographs,
// paintings, drawings and engravings does not.
func TestInkShapeRealPages(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
	dir := filepath.Join(ocrtest.RealPages(t), "leptonica")
	text := []string{"feyn.tif", "pageseg2.tif", "tribune-page-4x.png", "table.15.tif", "brev.56.75.jpg", "toc.99.tif",
		"lapide.052.100.jpg", "lighttext.jpg", "words.44.tif", "breviar.38.150.jpg", "cat.007.jpg", "zanotti-78.jpg"}
	pictures := []string{"juditharismax.jpg", "test24.jpg", "fish24.jpg", "tetons.jpg", "wet-day.jpg",
		"lion-page.00010.jpg", "lion-page.00016.jpg", "cavalerie.11.jpg", "dreyfus2.png", "warped_paper.jpg"}
	for _, set := range []struct {
		files []string
		want  bool
	}{{text, true}, {pictures, false}} {
		for _, f := range set.files {
			p := prepareUntagged(t, filepath.Join(dir, f), 0)
			s := p.Ink
			t.Logf("%-22s text-like %-5v %3d lines, %4d of %4d marks on lines, text ink %.2f, x-height %.1f", f, s.LooksLikeText(), s.Lines, s.LineMarks, s.Letters, s.TextInk, s.XHeight)
			if s.LooksLikeText() != set.want {
				t.Errorf("%s: looks like text %v, want %v (%+v)", f, s.LooksLikeText(), set.want, s)
			}
		}
	}
}

// longSequential is the reason long single-threaded checks give for
// skipping under -short: scripts/test runs the race detector with -short
// (it makes image work about ten times slower and finds nothing in code
// without goroutines), then the whole suite without it.
const longSequential = "long sequential image work: runs in the pass of scripts/test without -short and the race detector"
