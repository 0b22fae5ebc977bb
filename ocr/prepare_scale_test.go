package ocr

import (
	"context"
	"fmt"
	"image"
	"math"
	"strings"
	"testing"

	"github.com/disintegration/imaging"
)

// TestUpscaleMatchesImaging compares the enlargement with imaging.Resize
// and its CatmullRom filter (disintegration/imaging v1.6.2, an outside
// implementation of the same cubic, Keys 1981 with a = -0.5).
func TestUpscaleMatchesImaging(t *testing.T) {
	src := drawPage(t, 400, 160, 120, pageText, 235, 30)
	for _, s := range []float64{1.5, 2, 2.5, 3} {
		got := upscale(src, s)
		want := toGray(imaging.Resize(src, got.Rect.Dx(), got.Rect.Dy(), imaging.CatmullRom))
		if got.Rect != want.Rect {
			t.Fatalf("×%g: size %v, imaging %v", s, got.Rect, want.Rect)
		}
		var sum, worst float64
		for i := range got.Pix {
			d := math.Abs(float64(got.Pix[i]) - float64(want.Pix[i]))
			sum += d
			worst = math.Max(worst, d)
		}
		mean := sum / float64(len(got.Pix))
		t.Logf("×%g: mean |difference| %.3f, largest %.0f grey levels", s, mean, worst)
		if mean > 0.1 || worst > 1 {
			t.Errorf("×%g: mean |difference| %.3f (want ≤ 0.1), largest %.0f (want ≤ 1)", s, mean, worst)
		}
	}
}

func TestUpscaleFactor(t *testing.T) {
	for _, c := range []struct {
		name string
		w, h int
		dpi  float64
		want float64
	}{
		{"unknown", 1000, 1400, 0, 1},
		{"120 dpi A4", 992, 1403, 120, 2.5},
		{"100 dpi A4", 827, 1169, 100, 3},
		{"199 dpi", 1645, 2327, 199, 300.0 / 199},
		{"200 dpi", 1653, 2339, 200, 1},
		{"300 dpi", 2480, 3508, 300, 1},
		// A 300-dpi A4 scan tagged 72 dpi would grow to 145 million pixels.
		{"doubtful 72 dpi tag", 2480, 3508, 72, 1},
	} {
		if got := upscaleFactor(c.w, c.h, c.dpi); math.Abs(got-c.want) > 1e-9 {
			t.Errorf("%s: factor %g, want %g", c.name, got, c.want)
		}
	}
}

// TestPrepareLowResolution checks the treatment of low-resolution pages
// and that ToOriginal undoes the rotation and the enlargement: every ink
// pixel of the prepared page must map back onto ink of the original page.
func TestPrepareLowResolution(t *testing.T) {
	const dpi = 120
	page := drawPage(t, 700, 420, dpi, pageText, 235, 30)
	for _, c := range []struct {
		deg    float64
		uneven bool
	}{{0, false}, {3, false}, {0, true}, {3, true}} {
		name := fmt.Sprintf("%g°, uneven %v", c.deg, c.uneven)
		ref := page // the page before the light was dimmed: where the ink is
		if c.deg != 0 {
			ref = skewed(page, c.deg)
		}
		src := ref
		if c.uneven {
			src = toGray(ref)
			unevenLight(src, 0.3)
		}
		p := mustPrepare(t, src, PrepOptions{DPI: dpi})
		wantScale, wantDPI, wantBin := 1.0, 120.0, "none"
		if c.uneven {
			wantScale, wantDPI, wantBin = 2.5, 300, "sauvola"
		}
		if p.Scale != wantScale || p.DPI != wantDPI || p.Binarization != wantBin {
			t.Fatalf("%s: scale %g, dpi %g, binarisation %s; want %g, %g, %s", name, p.Scale, p.DPI, p.Binarization, wantScale, wantDPI, wantBin)
		}
		if c.deg != 0 && math.Abs(p.Skew-c.deg) > 0.2 {
			t.Errorf("%s: skew found %.2f°", name, p.Skew)
		}
		if c.deg == 0 && c.uneven && (p.Image.Rect.Dx() != 1750 || p.Image.Rect.Dy() != 1050) {
			t.Errorf("%s: prepared size %v, want 1750×1050", name, p.Image.Rect)
		}
		sb := src.Bounds()
		if b := p.ToOriginal(Box{X: -10, Y: -10, W: 1e5, H: 1e5}); b != (Box{W: sb.Dx(), H: sb.Dy()}) {
			t.Errorf("%s: whole page maps to %+v", name, b)
		}
		og := toGray(ref)
		ink, off := 0, 0
		for y := 0; y < p.Image.Rect.Dy(); y++ {
			for x := 0; x < p.Image.Rect.Dx(); x++ {
				if p.Image.Pix[y*p.Image.Stride+x] >= 100 {
					continue
				}
				b := p.ToOriginal(Box{X: x, Y: y, W: 1, H: 1})
				if b.W < 1 || b.H < 1 || b.W > 3 || b.H > 3 {
					t.Fatalf("%s: pixel (%d, %d) maps to %+v", name, x, y, b)
				}
				if b.X < 4 || b.Y < 4 || b.X+b.W > sb.Dx()-4 || b.Y+b.H > sb.Dy()-4 {
					continue // the edge of a turned, dimmed page: Sauvola marks the step from paper to the white fill
				}
				ink++
				if !darkNear(og, b, 1, 160) {
					off++
				}
			}
		}
		t.Logf("%s: %d ink pixels, %d mapped away from ink", name, ink, off)
		if ink == 0 || off > ink/100 {
			t.Errorf("%s: %d of %d ink pixels map to no ink of the original", name, off, ink)
		}
	}

	// Explicit binarisation, or high resolution: left as it is.
	for _, o := range []PrepOptions{{DPI: dpi, Binarize: "otsu"}, {DPI: dpi, Binarize: "sauvola"}, {DPI: 300}} {
		p := mustPrepare(t, page, o)
		// (An evenly lit, clean page goes to the engine in grey at any
		// resolution in auto mode; the scale step says whether the
		// low-resolution rule was the reason.)
		lowres := strings.Contains(step(p, "scale").Detail, "below")
		if p.Scale != 1 || (p.Skew == 0 && p.Image.Rect != page.Rect) || p.DPI != o.DPI || lowres ||
			(o.Binarize != "" && p.Binarization != o.Binarize) {
			t.Errorf("%+v: scale %g, dpi %g, size %v, binarisation %s (%s)", o, p.Scale, p.DPI, p.Image.Rect, p.Binarization, step(p, "scale").Detail)
		}
	}
	// Unknown resolution: estimated from the text, and the page is treated
	// as the low-resolution page it is. Go Regular at 11 points measures
	// as 10-point type at about 1.27 times the resolution (its x-height is
	// 0.53 of the body; 10-point type's 20 pixels at 300 dpi are 0.48).
	p := mustPrepare(t, page, PrepOptions{})
	if p.DPISource != DPIFromEstimate || p.PageDPI < 1.1*dpi || p.PageDPI > 1.45*dpi || !strings.Contains(step(p, "scale").Detail, "below") {
		t.Errorf("untagged: %g dpi from %s (%s; %s); want an estimate of 130-175", p.PageDPI, p.DPISource, step(p, "resolution").Detail, step(p, "scale").Detail)
	}
	// A tag that does not fit: a 300-dpi-sized page tagged 72 dpi is
	// prepared at the resolution estimated from its text, not enlarged.
	big := drawPage(t, 2480, 1754, 300, pageText, 235, 30)
	if p := mustPrepare(t, big, PrepOptions{DPI: 72}); p.Scale != 1 || p.DPISource != DPIFromEstimate || p.PageDPI < LowDPI {
		t.Errorf("A4 page tagged 72 dpi: scale %g, %g dpi from %s (%s); want 1, the estimate, at least %g dpi",
			p.Scale, p.PageDPI, p.DPISource, step(p, "resolution").Detail, LowDPI)
	}
}

// darkNear reports whether g has a pixel below level within d pixels of b.
func darkNear(g *image.Gray, b Box, d int, level uint8) bool {
	for y := max(0, b.Y-d); y < min(g.Rect.Dy(), b.Y+b.H+d); y++ {
		for x := max(0, b.X-d); x < min(g.Rect.Dx(), b.X+b.W+d); x++ {
			if g.Pix[y*g.Stride+x] < level {
				return true
			}
		}
	}
	return false
}

// dpiEngine records the resolution and size of the page it is given and
// returns one word covering a fixed box of it.
type dpiEngine struct {
	dpi  int
	size image.Rectangle
	box  Box
}

func (e *dpiEngine) Recognize(_ context.Context, img *image.Gray, dpi int) ([]Word, error) {
	e.dpi, e.size = dpi, img.Rect
	return []Word{{Text: "x", Conf: 1, Box: e.box}}, nil
}

func (e *dpiEngine) Close() error { return nil }

// TestProcessLowResolution checks the contract between Process and
// Prepare: the page's resolution reaches preparation, the engine is told
// the prepared page's resolution, and word boxes come back in the
// original's pixels.
func TestProcessLowResolution(t *testing.T) {
	page := drawPage(t, 700, 420, 120, pageText, 235, 30)
	uneven := toGray(page)
	unevenLight(uneven, 0.3)
	for _, c := range []struct {
		name    string
		img     *image.Gray
		dpi     float64
		opts    Options
		wantDPI int
		scale   int // the prepared page's size over the original's, ×2 (whole numbers only)
	}{
		{"120 dpi, even", page, 120, Options{}, 120, 2},
		{"120 dpi, uneven", uneven, 120, Options{}, 300, 5},
		{"untagged, uneven, -dpi 120", uneven, 0, Options{DPI: 120}, 300, 5},
		{"120 dpi, uneven, binarisation otsu", uneven, 120, Options{Prep: PrepOptions{Binarize: "otsu"}}, 120, 2},
	} {
		e := &dpiEngine{box: Box{X: 250, Y: 100, W: 50, H: 25}}
		rec, _, err := Process(context.Background(), e, c.img, c.dpi, c.opts)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		// A slight skew found on the page grows the canvas by a few pixels.
		if e.dpi != c.wantDPI || !near(e.size.Dx()*2, c.img.Rect.Dx()*c.scale, 8) || !near(e.size.Dy()*2, c.img.Rect.Dy()*c.scale, 8) {
			t.Errorf("%s: engine got %d dpi, %v; want %d dpi, size ×%g", c.name, e.dpi, e.size, c.wantDPI, float64(c.scale)/2)
		}
		want := e.box
		if c.scale == 5 {
			want = Box{X: 100, Y: 40, W: 20, H: 10}
		}
		if len(rec.Words) != 1 || !nearBox(rec.Words[0].Box, want, 2) {
			t.Errorf("%s: words %+v, want one at %+v", c.name, rec.Words, want)
		}
		wantRec := c.dpi
		if wantRec <= 0 {
			wantRec = c.opts.dpi()
		}
		if rec.DPI != wantRec {
			t.Errorf("%s: record dpi %g, want the page's %g", c.name, rec.DPI, wantRec)
		}
	}
}

// TestProcessUntaggedResolution: without a tag the record keeps the tag
// (none), the estimate and its use; with --dpi for untagged files the
// given resolution is used and the estimate still recorded; a page with
// too little text gets DefaultDPI. The engine is told the same.
func TestProcessUntaggedResolution(t *testing.T) {
	page := drawPage(t, 700, 420, 120, pageText, 235, 30)
	for _, c := range []struct {
		name     string
		img      *image.Gray
		opts     Options
		from     string
		lo, hi   float64
		estimate bool
	}{
		{"untagged", page, Options{}, DPIFromEstimate, 130, 175, true},
		{"untagged, no preparation", page, Options{NoPrepare: true}, DPIFromEstimate, 130, 175, true},
		{"untagged, -dpi 200", page, Options{DPI: 200}, DPIFromOption, 200, 200, true},
		// drawPage repeats the word on a few lines: an estimate, not trusted
		{"untagged, one word", drawPage(t, 700, 420, 120, "Marrowby", 235, 30), Options{}, DPIDefault, DefaultDPI, DefaultDPI, true},
	} {
		e := &dpiEngine{box: Box{X: 250, Y: 100, W: 50, H: 25}}
		rec, _, err := Process(context.Background(), e, c.img, 0, c.opts)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if rec.DPISource != c.from || rec.DPI < c.lo || rec.DPI > c.hi || rec.TaggedDPI != 0 || (rec.EstimatedDPI > 0) != c.estimate || rec.Ink == nil {
			t.Errorf("%s: record %g dpi from %s (tag %g, estimate %g, ink %v); want %s, %g-%g", c.name, rec.DPI, rec.DPISource, rec.TaggedDPI, rec.EstimatedDPI, rec.Ink, c.from, c.lo, c.hi)
		}
		if e.dpi != int(math.Round(rec.DPI)) { // evenly lit: not enlarged
			t.Errorf("%s: engine told %d dpi, record %g", c.name, e.dpi, rec.DPI)
		}
	}
}

func near(a, b, d int) bool { return a-b <= d && b-a <= d }

func nearBox(a, b Box, d int) bool {
	return near(a.X, b.X, d) && near(a.Y, b.Y, d) && near(a.X+a.W, b.X+b.W, d) && near(a.Y+a.H, b.Y+b.H, d)
}
