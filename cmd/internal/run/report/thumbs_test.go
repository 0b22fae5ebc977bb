package report

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"testing"
)

// TestShrinkGrayAverages checks the box filter against the definition
// (each target pixel the rounded mean of the source pixels it covers),
// worked by hand on a 4×2 image halved.
func TestShrinkGrayAverages(t *testing.T) {
	g := image.NewGray(image.Rect(0, 0, 4, 2))
	copy(g.Pix, []uint8{0, 10, 200, 255, 20, 30, 100, 0})
	got := shrinkGray(g, 2, 1)
	if want := []uint8{15, 139}; !bytes.Equal(got.Pix, want) { // (0+10+20+30)/4, (200+255+100+0)/4 = 138.75
		t.Errorf("halved: %v, want %v", got.Pix, want)
	}
	if s := Shrink(g, 4, 2); s != image.Image(g) {
		t.Errorf("an image at the target size was copied, not returned as it is")
	}
}

// TestThumbPNGColour: a colour page becomes a grey thumbnail that fits
// thumbW × thumbH with the page's proportions, its grey the area average
// of the page's luminance (a flat colour stays that colour's grey: Go's
// color.GrayModel, ITU-R BT.601 weights).
func TestThumbPNGColour(t *testing.T) {
	img := image.NewNRGBA(image.Rect(0, 0, 480, 1360))
	c := color.NRGBA{R: 200, G: 120, B: 40, A: 255}
	for i := 0; i < len(img.Pix); i += 4 {
		img.Pix[i], img.Pix[i+1], img.Pix[i+2], img.Pix[i+3] = c.R, c.G, c.B, c.A
	}
	data, err := thumbPNG(img)
	if err != nil {
		t.Fatal(err)
	}
	th, err := png.Decode(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	g, ok := th.(*image.Gray)
	if !ok {
		t.Fatalf("thumbnail is %T, want *image.Gray", th)
	}
	if b := g.Bounds(); b.Dx() != 48 || b.Dy() != thumbH { // 480×1360 at 0.1
		t.Errorf("thumbnail %v, want 48×%d", b, thumbH)
	}
	want := color.GrayModel.Convert(c).(color.Gray).Y
	for _, v := range g.Pix {
		if v != want {
			t.Fatalf("grey %d, want %d", v, want)
		}
	}
}
