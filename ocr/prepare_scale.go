package ocr

import (
	"image"
	"math"
)

// Low-resolution pages.
const (
	// LowDPI is the resolution below which automatic preparation treats a
	// page as low-resolution: an evenly lit page is deskewed and denoised
	// but not binarised (the engine thresholds it itself), an unevenly lit
	// one is enlarged to TargetDPI before Sauvola's method. On synthetic
	// pages at 100-150 dpi, Otsu's threshold at the page's own resolution
	// cost characters the plain engine read ("warden." read as "warden,";
	// worn type), and Sauvola's method at the page's own resolution did
	// too, on an A4 page; the treatment above was never worse than the
	// plain engine (docs/dev-prep.md, TestLowResolutionTreatments). At 200
	// dpi no treatment lost a character on clean type.
	LowDPI = 200.0

	// TargetDPI is the resolution low-resolution pages are enlarged to:
	// the resolution Tesseract's models are tuned for (common practice).
	TargetDPI = 300.0

	// maxUpscaledPixels bounds the enlarged page (a little over A3 at
	// 300 dpi). A page that would grow beyond it is larger in pixels than
	// any real page at low resolution, so its resolution tag is more likely
	// wrong (72 dpi written by a camera or an editor); it is prepared as a
	// page at 300 dpi would be.
	maxUpscaledPixels = 20_000_000
)

// upscaleFactor returns the factor that brings a page of w×h pixels at dpi
// to TargetDPI, or 1 when the page is not a low-resolution page: unknown
// resolution, at least LowDPI, or a doubtful tag.
func upscaleFactor(w, h int, dpi float64) float64 {
	if dpi <= 0 || dpi >= LowDPI {
		return 1
	}
	s := TargetDPI / dpi
	if float64(w)*s*float64(h)*s > maxUpscaledPixels {
		return 1
	}
	return s
}

// catmullRom is the Catmull-Rom cubic (Keys 1981, a = -0.5) at distance x.
func catmullRom(x float64) float64 {
	x = math.Abs(x)
	switch {
	case x < 1:
		return 1.5*x*x*x - 2.5*x*x + 1
	case x < 2:
		return -0.5*x*x*x + 2.5*x*x - 4*x + 2
	}
	return 0
}

// taps holds, for each output position, the first of four source
// positions and their weights.
type taps struct {
	first []int
	w     [][4]float32
}

// cubicTaps computes the taps that map n source samples to m (m ≥ n):
// output sample i is centred at source coordinate (i+0.5)·n/m − 0.5; source
// positions beyond the ends repeat the edge sample.
func cubicTaps(n, m int) taps {
	t := taps{first: make([]int, m), w: make([][4]float32, m)}
	for i := range m {
		u := (float64(i)+0.5)*float64(n)/float64(m) - 0.5
		f := int(math.Floor(u))
		t.first[i] = f - 1
		var sum float64
		var w [4]float64
		for k := range 4 {
			w[k] = catmullRom(u - float64(f-1+k))
			sum += w[k]
		}
		for k := range 4 {
			t.w[i][k] = float32(w[k] / sum)
		}
	}
	return t
}

// upscale enlarges src by factor s (> 1) with a separable Catmull-Rom
// cubic, rows first. The result is rounded and clamped to 0-255.
func upscale(src *image.Gray, s float64) *image.Gray {
	w, h := src.Rect.Dx(), src.Rect.Dy()
	nw, nh := int(math.Round(float64(w)*s)), int(math.Round(float64(h)*s))
	tx, ty := cubicTaps(w, nw), cubicTaps(h, nh)
	mid := make([]float32, nw*h) // rows enlarged, columns not yet
	for y := range h {
		row := src.Pix[(y)*src.Stride : (y)*src.Stride+w]
		out := mid[y*nw : (y+1)*nw]
		for x := range nw {
			f := tx.first[x]
			wt := &tx.w[x]
			var v float32
			for k := range 4 {
				v += wt[k] * float32(row[min(max(f+k, 0), w-1)])
			}
			out[x] = v
		}
	}
	dst := image.NewGray(image.Rect(0, 0, nw, nh))
	for y := range nh {
		f := ty.first[y]
		wt := &ty.w[y]
		var r [4][]float32
		for k := range 4 {
			sy := min(max(f+k, 0), h-1)
			r[k] = mid[sy*nw : (sy+1)*nw]
		}
		out := dst.Pix[y*dst.Stride : y*dst.Stride+nw]
		for x := range nw {
			v := wt[0]*r[0][x] + wt[1]*r[1][x] + wt[2]*r[2][x] + wt[3]*r[3][x]
			out[x] = uint8(min(max(v+0.5, 0), 255))
		}
	}
	return dst
}

// scaleBoxDown maps a box of a page enlarged by s back to the page's own
// pixels: the smallest box holding it.
func scaleBoxDown(b Box, s float64) Box {
	x0 := int(math.Floor(float64(b.X)/s + 1e-6))
	y0 := int(math.Floor(float64(b.Y)/s + 1e-6))
	x1 := int(math.Ceil(float64(b.X+b.W)/s - 1e-6))
	y1 := int(math.Ceil(float64(b.Y+b.H)/s - 1e-6))
	return Box{X: x0, Y: y0, W: max(0, x1-x0), H: max(0, y1-y0)}
}
