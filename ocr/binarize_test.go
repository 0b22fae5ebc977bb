package ocr

import (
	"image"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"testing"
)

// naiveOtsu is the textbook form of Otsu's criterion: for every split k,
// compute each class's weight, mean and variance from scratch and keep the
// k with the smallest within-class variance ω0σ0² + ω1σ1² (equivalent to
// the largest between-class variance; Otsu 1979, eq. 11-12).
func naiveOtsu(h *[256]int) (int, float64) {
	best, bestK, lastK := math.Inf(1), -1, -1
	var total float64
	for _, c := range h {
		total += float64(c)
	}
	for k := 0; k < 255; k++ {
		var w0, w1, m0, m1 float64
		for i, c := range h {
			if i <= k {
				w0 += float64(c)
				m0 += float64(i * c)
			} else {
				w1 += float64(c)
				m1 += float64(i * c)
			}
		}
		if w0 == 0 || w1 == 0 {
			continue
		}
		m0 /= w0
		m1 /= w1
		var v0, v1 float64
		for i, c := range h {
			d0, d1 := float64(i)-m0, float64(i)-m1
			if i <= k {
				v0 += d0 * d0 * float64(c)
			} else {
				v1 += d1 * d1 * float64(c)
			}
		}
		within := (v0 + v1) / total
		switch {
		case within < best-1e-9:
			best, bestK, lastK = within, k, k
		case within <= best+1e-9 && lastK == k-1:
			lastK = k // a tie continuing the first best run
		}
	}
	// Ties (empty levels between the classes) are broken at the middle of
	// the run, as otsu documents.
	return (bestK + lastK) / 2, best
}

// TestOtsuWorkedExample checks the worked example of A. Greensted, "Otsu
// Thresholding", The Lab Book Pages (labbookpages.co.uk, 2010): a 6×6 image
// with grey levels 0-5 and histogram 8, 7, 2, 6, 9, 4, whose best split puts
// levels 0-2 in the background class and 3-5 in the foreground, with
// within-class variance 0.4909. The histogram, the split and the variance
// are quoted from memory of that page; the variance is recomputed here by
// the textbook formula, which would not match a misremembered histogram.
func TestOtsuWorkedExample(t *testing.T) {
	var h [256]int
	copy(h[:], []int{8, 7, 2, 6, 9, 4})
	if got := otsu(&h); got != 2 {
		t.Errorf("otsu = %d, want 2 (levels 0-2 form the first class)", got)
	}
	k, within := naiveOtsu(&h)
	if k != 2 || math.Abs(within-0.4909) > 0.00005 {
		t.Errorf("naive within-class variance: split %d variance %.4f, want split 2 variance 0.4909", k, within)
	}
}

// TestOtsuMatchesNaive checks the one-pass implementation against the
// from-scratch one on random histograms (the pattern of image/png's
// paeth_test.go).
func TestOtsuMatchesNaive(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 7))
	for i := 0; i < 300; i++ {
		var h [256]int
		// Two bumps plus sparse clutter, like a page's histogram.
		a, b := r.IntN(128), 128+r.IntN(128)
		for j := 0; j < 2000; j++ {
			h[clampInt(a+int(r.NormFloat64()*12))]++
			h[clampInt(b+int(r.NormFloat64()*8))] += 3
		}
		for j := 0; j < 20; j++ {
			h[r.IntN(256)]++
		}
		got := otsu(&h)
		want, _ := naiveOtsu(&h)
		if got != want {
			t.Fatalf("histogram %d: otsu = %d, naive = %d", i, got, want)
		}
	}
}

func clampInt(v int) int { return min(255, max(0, v)) }

func TestOtsuEdgeCases(t *testing.T) {
	var empty [256]int
	if got := otsu(&empty); got != 0 {
		t.Errorf("empty histogram: %d, want 0", got)
	}
	var one [256]int
	one[200] = 50
	if got := otsu(&one); got != 200 {
		t.Errorf("single level 200: %d, want 200", got)
	}
	// Two levels with an empty gap: every split in the gap ties; the
	// middle of the gap is returned.
	var two [256]int
	two[40], two[220] = 10, 90
	if got := otsu(&two); got != 129 {
		t.Errorf("levels 40 and 220: %d, want 129", got)
	}
}

// naiveSauvola computes Sauvola's threshold at every pixel from its window
// directly (Sauvola and Pietikäinen 2000), windows clipped at the edges.
func naiveSauvola(g *image.Gray, win int) *image.Gray {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	out := image.NewGray(g.Rect)
	r := win / 2
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			var n, s, sq float64
			for yy := max(0, y-r); yy < min(h, y+r+1); yy++ {
				for xx := max(0, x-r); xx < min(w, x+r+1); xx++ {
					v := float64(g.Pix[yy*g.Stride+xx])
					n++
					s += v
					sq += v * v
				}
			}
			m := s / n
			sd := math.Sqrt(math.Max(0, sq/n-m*m))
			if float64(g.Pix[y*g.Stride+x]) > m*(1+sauvolaK*(sd/sauvolaR-1)) {
				out.Pix[y*out.Stride+x] = 255
			}
		}
	}
	return out
}

func TestSauvolaMatchesNaive(t *testing.T) {
	g := loadGray(t, "../testdata/prep/lucasta-crop.png")
	g = g.SubImage(image.Rect(0, 0, 160, 120)).(*image.Gray)
	g = toGray(g)
	want := naiveSauvola(g, 15)
	got := image.NewGray(g.Rect)
	var it integral
	sauvola(got, g, 15, &it)
	diff := 0
	for i := range got.Pix {
		if got.Pix[i] != want.Pix[i] {
			diff++
		}
	}
	// Only a pixel exactly on its threshold could differ by rounding.
	if diff > 2 {
		t.Errorf("%d of %d pixels differ from the direct computation", diff, len(got.Pix))
	}
}

// TestIntegralWraps checks that uint32 summed-area tables give exact window
// sums on an image whose total exceeds 2³².
func TestIntegralWraps(t *testing.T) {
	g := image.NewGray(image.Rect(0, 0, 5000, 4000)) // 20 M pixels × 255 > 2³²
	for i := range g.Pix {
		g.Pix[i] = 255
	}
	var it integral
	x0, y0, x1, y1 := 4900, 3900, 4949, 3949
	it.reset(g, y1-y0)
	for i := 0; i < y0; i += 1000 {
		it.row(i) // march down in steps, as sauvola does row by row
	}
	bot, _ := it.row(y1)
	top, _ := it.row(y0)
	s := bot[x1] - bot[x0] - top[x1] + top[x0]
	if want := uint32(49 * 49 * 255); s != want {
		t.Errorf("window sum %d, want %d", s, want)
	}
}

func loadGray(tb testing.TB, path string) *image.Gray {
	tb.Helper()
	f, err := os.Open(path)
	if err != nil {
		tb.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		tb.Fatal(err)
	}
	return toGray(img)
}

// TestHistogramCounts: the four-table histogram counts every pixel once,
// as a plain count does (common practice), on rows whose width is not a
// multiple of four and on a sub-image whose stride is wider than its rows.
func TestHistogramCounts(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, w := range []int{1, 3, 4, 7, 250} {
		g := image.NewGray(image.Rect(0, 0, w, 9))
		for i := range g.Pix {
			g.Pix[i] = uint8(rng.IntN(256))
		}
		for _, img := range []*image.Gray{g, g.SubImage(image.Rect(w/3, 2, w, 7)).(*image.Gray)} {
			var want [256]int
			for y := img.Rect.Min.Y; y < img.Rect.Max.Y; y++ {
				for x := img.Rect.Min.X; x < img.Rect.Max.X; x++ {
					want[img.GrayAt(x, y).Y]++
				}
			}
			if got := histogram(img); *got != want {
				t.Errorf("%v: histogram differs from a plain count", img.Rect)
			}
		}
	}
}
