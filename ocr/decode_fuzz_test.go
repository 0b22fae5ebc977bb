package ocr

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzDecode feeds arbitrary bytes to the decoder (with a 1-megapixel
// limit to keep each run small) and, when an image comes out, prepares it.
// Neither may panic; a failure must be a *DecodeError with no image.
// Seeds are the small fixtures of testdata/prep.
func FuzzDecode(f *testing.F) {
	for _, name := range []string{"tess-12-g4.tif", "tess-hellogoogle-deflate.tif", "bilevel.png", "palette.png", "progressive.jpg", "multipage.tif", "bw-gopher.png"} {
		data, err := os.ReadFile(filepath.Join(prepData, name))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	f.Add([]byte("II*\x00\x08\x00\x00\x00"))
	f.Add([]byte("\x89PNG\r\n\x1a\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) > 1<<16 {
			return
		}
		d, err := decodeBytes(data, 1<<20)
		if err != nil {
			if d != nil {
				t.Fatal("image returned with an error")
			}
			if _, ok := err.(*DecodeError); !ok {
				t.Fatalf("error %T is not a *DecodeError: %v", err, err)
			}
			return
		}
		if b := d.Image.Bounds(); b.Dx()*b.Dy() > 1<<20 {
			t.Fatalf("%v is over the pixel limit", b)
		}
		if _, err := Prepare(d.Image, PrepOptions{}); err != nil && d.Image.Bounds().Dx() > 0 && d.Image.Bounds().Dy() > 0 {
			t.Fatalf("Prepare: %v", err)
		}
	})
}
