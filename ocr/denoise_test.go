package ocr

import (
	"image"
	"math"
	"testing"
)

// naiveBoxMean is the mean over the (2r+1)² window clipped at the edges,
// computed directly.
func naiveBoxMean(g *image.Gray, r int) *image.Gray {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	out := image.NewGray(g.Rect)
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			sum, n := 0, 0
			for yy := max(0, y-r); yy < min(h, y+r+1); yy++ {
				for xx := max(0, x-r); xx < min(w, x+r+1); xx++ {
					sum += int(g.Pix[yy*g.Stride+xx])
					n++
				}
			}
			out.Pix[y*out.Stride+x] = uint8((sum + n/2) / n)
		}
	}
	return out
}

// TestBoxBlurMatchesNaive: the separable running-sum blur rounds after each
// pass, so it may differ from the direct window mean by one grey level.
func TestBoxBlurMatchesNaive(t *testing.T) {
	g := loadGray(t, "../testdata/prep/w91frag-crop.png")
	for _, r := range []int{1, 2, 3} {
		want := naiveBoxMean(g, r)
		got := toGray(g)
		boxBlur(got, r)
		for i := range got.Pix {
			if d := int(got.Pix[i]) - int(want.Pix[i]); d < -1 || d > 1 {
				t.Fatalf("r=%d pixel %d: %d, want %d", r, i, got.Pix[i], want.Pix[i])
			}
		}
	}
}

// TestNoiseEstimate adds normal noise of known standard deviation to a drawn
// page and checks the estimate (Immerkær 1996, with a median) within 15%.
// The page's paper is at 128 so that no noise is clipped at 0 or 255.
func TestNoiseEstimate(t *testing.T) {
	for _, sigma := range []float64{0, 3, 8, 15, 25} {
		g := drawPage(t, 1000, 1400, 150, pageText, 170, 80)
		addNoise(g, sigma, 9)
		got := estimateNoise(g)
		if math.Abs(got-sigma) > 0.15*sigma+0.3 {
			t.Errorf("σ %.0f: estimated %.2f", sigma, got)
		}
	}
}

// TestBoxBlurRounding checks the reciprocal division against integer
// rounding for every sum that can occur.
func TestBoxBlurRounding(t *testing.T) {
	for n := uint32(1); n <= 7; n++ {
		rc := (1<<16 + n - 1) / n
		for sum := uint32(0); sum <= 255*n; sum++ {
			got := (sum*rc + 1<<15) >> 16
			want := (2*sum + n) / (2 * n) // round half up
			if d := int(got) - int(want); d < -1 || d > 1 || got > 255 {
				t.Fatalf("n=%d sum=%d: %d, want %d", n, sum, got, want)
			}
		}
	}
}
