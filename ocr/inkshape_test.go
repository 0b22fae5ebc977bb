package ocr

import (
	"image"
	"math"
	"math/rand/v2"
	"testing"

	"golang.org/x/image/font"
	"golang.org/x/image/font/opentype"
)

// TestMeasureInkXHeight draws pageText in Go Regular at 11 points and
// several resolutions and checks the measured x-height against the
// x-height the font itself declares (its OS/2 sxHeight, read through
// x/image/font's Metrics), scaled to the resolution: within a pixel or 6 %
// (round letters overshoot the x-height by a few per cent above and below,
// common practice in type design; anti-aliasing and Otsu's threshold may
// add or take a row).
// It also checks the line pitch against the drawn one and that the page
// looks like text.
func TestMeasureInkXHeight(t *testing.T) {
	for _, dpi := range []float64{75, 100, 150, 300} {
		face, err := opentype.NewFace(pageFace, &opentype.FaceOptions{Size: 11, DPI: dpi, Hinting: font.HintingNone})
		if err != nil {
			t.Fatal(err)
		}
		want := float64(face.Metrics().XHeight) / 64
		face.Close()
		g := drawPage(t, int(6*dpi), int(6*dpi), dpi, pageText, 235, 30)
		s := measureInk(g, otsu(histogram(g)))
		pitch := math.Round(11 * 1.5 * dpi / 72) // drawPage's line spacing
		t.Logf("%g dpi: x-height %.2f (font %.2f), pitch %.0f (drawn %.0f), %d lines, %d of %d marks on lines, text ink %.2f",
			dpi, s.XHeight, want, s.LinePitch, pitch, s.Lines, s.LineMarks, s.Letters, s.TextInk)
		if math.Abs(s.XHeight-want) > max(1, 0.06*want) {
			t.Errorf("%g dpi: x-height %.2f, the font's is %.2f", dpi, s.XHeight, want)
		}
		if math.Abs(s.LinePitch-pitch) > 1 {
			t.Errorf("%g dpi: line pitch %.0f, drawn %.0f", dpi, s.LinePitch, pitch)
		}
		if !s.LooksLikeText() {
			t.Errorf("%g dpi: a page of text does not look like text: %+v", dpi, s)
		}
	}
}

// TestInkShapeNotText: ink that is not text does not look like text:
// random blobs of many sizes (a thresholded photograph's texture), one
// large dark area, and noise.
func TestInkShapeNotText(t *testing.T) {
	g := speckled(t, 800, 800, 3000, 7)
	if s := measureInk(g, 128); s.LooksLikeText() {
		t.Errorf("scattered blobs look like text: %+v", s)
	}
	blank := drawPage(t, 600, 600, 150, "", 235, 30)
	if s := measureInk(blank, otsu(histogram(blank))); s.LooksLikeText() || s.Lines != 0 {
		t.Errorf("an empty page looks like text: %+v", s)
	}
}

// TestChooseDPI checks the rules of chooseDPI on measured pages: the
// 11-point page drawn at 100 dpi measures about 120 dpi (Go Regular's
// x-height is larger than the 10-point norm), so a 100 dpi tag fits it, a
// 300 or 600 dpi tag does not, and a 72 dpi tag does; at 300 dpi (about
// 380 measured) neither a 72 nor a 150 dpi tag fits, a 200 dpi one does,
// and a 1,200 dpi tag is kept (both at least LowDPI).
func TestChooseDPI(t *testing.T) {
	low := drawPage(t, 600, 800, 100, pageText, 235, 30)
	high := drawPage(t, 1800, 2400, 300, pageText, 235, 30)
	ls, hs := measureInk(low, otsu(histogram(low))), measureInk(high, otsu(histogram(high)))
	for _, c := range []struct {
		s          InkShape
		tag, given float64
		from       string
		lo, hi     float64
	}{
		{ls, 100, 0, DPIFromTag, 100, 100},
		{ls, 72, 0, DPIFromTag, 72, 72},
		{ls, 300, 0, DPIFromEstimate, 100, 140},
		{ls, 600, 0, DPIFromEstimate, 100, 140},
		{ls, 0, 0, DPIFromEstimate, 100, 140},
		{ls, 0, 200, DPIFromOption, 200, 200},
		{hs, 72, 0, DPIFromEstimate, 300, 420},
		{hs, 150, 0, DPIFromEstimate, 300, 420},
		{hs, 200, 0, DPIFromTag, 200, 200},
		{hs, 1200, 0, DPIFromTag, 1200, 1200}, // both at least LowDPI: the tag stays
		{InkShape{}, 0, 0, DPIDefault, 0, 0},
		{InkShape{}, 72, 0, DPIFromTag, 72, 72},
	} {
		got, from, detail := chooseDPI(c.tag, c.given, c.s, 0)
		if from != c.from || got < c.lo || got > c.hi {
			t.Errorf("tag %g, option %g, x-height %.1f: %g dpi from %s (%s); want %s, %g-%g", c.tag, c.given, c.s.XHeight, got, from, detail, c.from, c.lo, c.hi)
		}
	}
}

// speckled returns a white w×h page with n dark discs of random radius
// (1-20 pixels) at random places: the texture a photograph leaves after a
// threshold, in sizes that follow no x-height.
func speckled(t *testing.T, w, h, n int, seed uint64) *image.Gray {
	t.Helper()
	g := image.NewGray(image.Rect(0, 0, w, h))
	for i := range g.Pix {
		g.Pix[i] = 240
	}
	r := rand.New(rand.NewPCG(seed, 1))
	for range n {
		cx, cy, rad := r.IntN(w), r.IntN(h), 1+r.IntN(20)
		for y := max(0, cy-rad); y < min(h, cy+rad+1); y++ {
			for x := max(0, cx-rad); x < min(w, cx+rad+1); x++ {
				if (x-cx)*(x-cx)+(y-cy)*(y-cy) <= rad*rad {
					g.Pix[y*g.Stride+x] = 20
				}
			}
		}
	}
	return g
}
