package ocr

import (
	"image"
	"testing"
)

// FuzzPrepare builds a small greyscale image from arbitrary bytes (first
// byte: width; next three: options) and prepares it. Prepare must not panic,
// must return a 0/255 image unless binarisation is "none", and ToOriginal
// must map any box inside the original image.
func FuzzPrepare(f *testing.F) {
	f.Add([]byte{40, 0, 0, 0, 255, 255, 0, 0, 255, 30, 30, 200})
	f.Add([]byte{1, 1, 1, 1, 0})
	f.Add(make([]byte, 3000))
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) < 5 || len(data) > 1<<16 {
			return
		}
		w := int(data[0]) + 1
		o := PrepOptions{
			Denoise:  Mode(data[1] % 3),
			Deskew:   Mode(data[2] % 3),
			Cleanup:  Mode(data[3] % 3),
			Binarize: []string{"", "auto", "otsu", "sauvola", "none"}[int(data[4])%5],
			MaxSkew:  float64(data[1] % 50),
		}
		pix := data[5:]
		h := len(pix) / w
		if h == 0 {
			return
		}
		g := image.NewGray(image.Rect(0, 0, w, h))
		copy(g.Pix, pix)
		p, err := Prepare(g, o)
		if err != nil {
			t.Fatal(err)
		}
		if p.Binarization != "none" {
			for _, v := range p.Image.Pix {
				if v != 0 && v != 255 {
					t.Fatalf("binarised image has level %d", v)
				}
			}
		}
		b := p.ToOriginal(Box{X: -5, Y: -5, W: p.Image.Rect.Dx() + 10, H: p.Image.Rect.Dy() + 10})
		if b.X < 0 || b.Y < 0 || b.X+b.W > w || b.Y+b.H > h || b.W < 0 || b.H < 0 {
			t.Fatalf("ToOriginal gave %v outside %d×%d", b, w, h)
		}
	})
}
