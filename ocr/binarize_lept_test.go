//go:build cgo

package ocr

import (
	"testing"

	"recto/ocr/internal/leptref"
)

// The real scans are crops of w91frag.jpg and lucasta-frag.jpg from
// Leptonica 1.82.0's prog/ directory (see testdata/SOURCES.md).
var leptScans = []string{"../testdata/prep/w91frag-crop.png", "../testdata/prep/lucasta-crop.png"}

// TestOtsuAgreesWithLeptonica checks our Otsu threshold against Leptonica's
// (D. Bloomberg, Leptonica 1.82, pixOtsuAdaptiveThreshold with one tile and
// scorefract 0). Leptonica's threshold is the first level of the light
// class, ours the last level of the dark class, so ours + 1 is compared;
// they may differ by one level where float rounding breaks a near tie.
func TestOtsuAgreesWithLeptonica(t *testing.T) {
	for _, path := range leptScans {
		g := loadGray(t, path)
		want, err := leptref.OtsuThreshold(g)
		if err != nil {
			t.Fatal(err)
		}
		got := otsu(histogram(g)) + 1
		t.Logf("%s: ours+1 = %d, Leptonica = %d", path, got, want)
		if d := got - want; d < -1 || d > 1 {
			t.Errorf("%s: threshold %d, Leptonica %d", path, got, want)
		}
	}
}

// TestSauvolaAgreesWithLeptonica compares our Sauvola binarisation with
// Leptonica's pixSauvolaBinarize (same window and k, R = 128) away from the
// image edges, where the two treat the window differently (we clip it,
// Leptonica mirrors the image). Leptonica rounds the local mean and the
// threshold to integers, so a few pixels near their threshold differ.
func TestSauvolaAgreesWithLeptonica(t *testing.T) {
	for _, path := range leptScans {
		g := loadGray(t, path)
		const half = 12
		want, err := leptref.Sauvola(g, half, sauvolaK)
		if err != nil {
			t.Fatal(err)
		}
		got := toGray(g)
		var it integral
		sauvola(got, g, 2*half+1, &it)
		w, h := g.Rect.Dx(), g.Rect.Dy()
		var diff, ink, n int
		for y := half + 1; y < h-half-1; y++ {
			for x := half + 1; x < w-half-1; x++ {
				a, b := got.Pix[y*got.Stride+x], want.Pix[y*want.Stride+x]
				n++
				if a == 0 || b == 0 {
					ink++
				}
				if a != b {
					diff++
				}
			}
		}
		t.Logf("%s: %d of %d interior pixels differ; %d ink in either", path, diff, n, ink)
		if float64(diff) > 0.02*float64(ink) {
			t.Errorf("%s: %d pixels differ from Leptonica, more than 2%% of the %d ink pixels", path, diff, ink)
		}
	}
}
