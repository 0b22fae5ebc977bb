package ocr

import (
	"image"
	"testing"

	"github.com/disintegration/imaging"
)

// TestTurnMatchesImaging compares turnCCW with imaging.Rotate90, Rotate180
// and Rotate270 (github.com/disintegration/imaging, an outside
// implementation; its angles are counter-clockwise) pixel for pixel on an
// image with no symmetry, and checks that unturnBox takes every pixel's
// one-pixel box in the turned image back to that pixel's place.
func TestTurnMatchesImaging(t *testing.T) {
	const w, h = 7, 4
	g := image.NewGray(image.Rect(0, 0, w, h))
	for i := range g.Pix {
		g.Pix[i] = uint8(3*i + 1)
	}
	refs := []func(image.Image) *image.NRGBA{nil, imaging.Rotate90, imaging.Rotate180, imaging.Rotate270}
	for q := 1; q < 4; q++ {
		got := turnCCW(g, q)
		ref := refs[q](g)
		if got.Rect.Dx() != ref.Rect.Dx() || got.Rect.Dy() != ref.Rect.Dy() {
			t.Fatalf("q=%d: %v, imaging %v", q, got.Rect, ref.Rect)
		}
		for y := 0; y < got.Rect.Dy(); y++ {
			for x := 0; x < got.Rect.Dx(); x++ {
				v := got.Pix[y*got.Stride+x]
				if r := ref.Pix[y*ref.Stride+4*x]; v != r {
					t.Fatalf("q=%d: (%d,%d) = %d, imaging %d", q, x, y, v, r)
				}
				b := unturnBox(Box{X: x, Y: y, W: 1, H: 1}, q, w, h)
				if b.W != 1 || b.H != 1 || g.Pix[b.Y*g.Stride+b.X] != v {
					t.Fatalf("q=%d: box of (%d,%d) maps to %+v", q, x, y, b)
				}
			}
		}
		// A wider box keeps its area and stays on the page.
		b := unturnBox(Box{X: 1, Y: 0, W: 2, H: 3}, q, w, h)
		if b.W*b.H != 6 || b.X < 0 || b.Y < 0 || b.X+b.W > w || b.Y+b.H > h {
			t.Errorf("q=%d: 2×3 box maps to %+v", q, b)
		}
	}
}
