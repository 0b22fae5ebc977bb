package ocr

import (
	"image"
	"math"
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

// TestPrepareLowResolution checks the enlargement's decisions and that
// ToOriginal undoes it together with the rotation: every ink pixel of the
// prepared page must map back onto ink of the original page.
func TestPrepareLowResolution(t *testing.T) {
	const dpi = 120
	page := drawPage(t, 700, 420, dpi, pageText, 235, 30)
	for _, deg := range []float64{0, 3} {
		src := page
		if deg != 0 {
			src = skewed(page, deg)
		}
		p := mustPrepare(t, src, PrepOptions{DPI: dpi})
		if p.Scale != 2.5 || p.DPI != 300 || p.Binarization == "none" {
			t.Fatalf("%g°: scale %g, dpi %g, binarisation %s; want ×2.5 to 300 dpi, binarised", deg, p.Scale, p.DPI, p.Binarization)
		}
		if deg != 0 && math.Abs(p.Skew-deg) > 0.2 {
			t.Errorf("%g°: skew found %.2f°", deg, p.Skew)
		}
		if deg == 0 && (p.Image.Rect.Dx() != 1750 || p.Image.Rect.Dy() != 1050) {
			t.Errorf("prepared size %v, want 1750×1050", p.Image.Rect)
		}
		sb := src.Bounds()
		if b := p.ToOriginal(Box{X: -10, Y: -10, W: 1e5, H: 1e5}); b != (Box{W: sb.Dx(), H: sb.Dy()}) {
			t.Errorf("%g°: whole page maps to %+v", deg, b)
		}
		og := toGray(src)
		ink, off := 0, 0
		for y := 0; y < p.Image.Rect.Dy(); y++ {
			for x := 0; x < p.Image.Rect.Dx(); x++ {
				if p.Image.Pix[y*p.Image.Stride+x] != 0 {
					continue
				}
				ink++
				b := p.ToOriginal(Box{X: x, Y: y, W: 1, H: 1})
				if b.W < 1 || b.H < 1 || b.W > 3 || b.H > 3 {
					t.Fatalf("%g°: pixel (%d, %d) maps to %+v", deg, x, y, b)
				}
				if !darkNear(og, b, 1, 160) {
					off++
				}
			}
		}
		t.Logf("%g°: %d ink pixels, %d mapped away from ink", deg, ink, off)
		if ink == 0 || off > ink/100 {
			t.Errorf("%g°: %d of %d ink pixels map to no ink of the original", deg, off, ink)
		}
	}

	// Explicit binarisation, unknown or high resolution: not enlarged.
	for _, o := range []PrepOptions{{DPI: dpi, Binarize: "otsu"}, {DPI: dpi, Binarize: "none"}, {}, {DPI: 300}} {
		p := mustPrepare(t, page, o)
		if p.Scale != 1 || p.Image.Rect != page.Rect || p.DPI != o.DPI {
			t.Errorf("%+v: scale %g, dpi %g, size %v", o, p.Scale, p.DPI, p.Image.Rect)
		}
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
