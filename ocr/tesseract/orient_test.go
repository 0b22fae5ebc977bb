//go:build cgo && !notesseract

package tesseract

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/quality"
)

// TestTurnedPagesReadUpright reads Tesseract 5.3.0's own test page
// phototest and the same page turned by 180°, left and right (the test
// data's phototest-rotated-180.png, -L.png and -R.png; issue 11 part 3
// measured CER 78-82 % on them, upright 0 %) with orientation detection
// Auto (when the first reading looks poor) and On (before every reading),
// beside the plain tesseract command. Each turned page must read within one
// point of the upright page's CER; wherever detection ran it must find the
// right angle, confidently; with On it must run on every page; and the
// word boxes, mapped back to the file's own pixels, must be the upright
// page's boxes turned the same way (within 3 pixels).
func TestTurnedPagesReadUpright(t *testing.T) {
	if testing.Short() {
		t.Skip("reads four real pages three times")
	}
	dir := filepath.Join(ocrtest.RealPages(t), "tesseract")
	truth, err := os.ReadFile(filepath.Join(dir, "phototest.txt"))
	if err != nil {
		t.Fatal(err)
	}
	e := engineOrSkip(t, Config{})
	ctx := context.Background()
	cer := func(text string) float64 {
		c, _ := quality.Compare(string(truth), text, quality.NormOptions{}).CER()
		return c
	}
	up, _, err := ocr.ProcessFile(ctx, e, filepath.Join(dir, "phototest.tif"), ocr.Options{Orient: ocr.Off})
	if err != nil {
		t.Fatal(err)
	}
	base := cer(up.Text())
	W, H := up.Width, up.Height
	for _, tc := range []struct {
		file string
		deg  int // clockwise turn of the text in the file
	}{
		{"phototest.tif", 0},
		{"phototest-rotated-180.png", 180},
		{"phototest-rotated-L.png", 270},
		{"phototest-rotated-R.png", 90},
	} {
		img := filepath.Join(dir, tc.file)
		plain := cer(ocrtest.PlainEngine(t, img))
		for _, mode := range []ocr.Mode{ocr.Auto, ocr.On} {
			rec, _, err := ocr.ProcessFile(ctx, e, img, ocr.Options{Orient: mode})
			if err != nil {
				t.Fatal(err)
			}
			c := cer(rec.Text())
			o := rec.Orientation
			t.Logf("%-26s mode %d: CER %.4f (plain engine %.4f, upright %.4f), orientation %+v, detection %.0f ms, engine %.0f ms (+%.0f ms before turning)",
				tc.file, mode, c, plain, base, o, rec.TimingsMS["orientation"], rec.TimingsMS["engine"], rec.TimingsMS["engine_unturned"])
			switch {
			case o == nil && mode == ocr.On:
				t.Errorf("%s: orientation not detected with On", tc.file)
			case o != nil && (!o.Decided || o.Degrees != tc.deg):
				t.Errorf("%s: orientation %+v, want %d° decided", tc.file, o, tc.deg)
			}
			if c > base+0.01 {
				t.Errorf("%s: CER %.4f, upright %.4f: more than a point worse", tc.file, c, base)
			}
			// The upright page's boxes turned clockwise by deg: the turned
			// file's pixels.
			q := (4 - tc.deg/90) % 4 // counter-clockwise quarter turns from upright to the file
			n, far := 0, 0
			for i, w := range rec.Words {
				if i >= len(up.Words) || up.Words[i].Text != w.Text {
					continue
				}
				want := turnBox(up.Words[i].Box, q, W, H)
				n++
				if abs(want.X-w.Box.X) > 3 || abs(want.Y-w.Box.Y) > 3 || abs(want.W-w.Box.W) > 3 || abs(want.H-w.Box.H) > 3 {
					far++
					if far <= 3 {
						t.Errorf("%s: %q at %+v, the upright box turned is %+v", tc.file, w.Text, w.Box, want)
					}
				}
			}
			if n < len(up.Words)/2 {
				t.Errorf("%s: only %d of %d words compared", tc.file, n, len(up.Words))
			}
		}
	}
}

// turnBox turns a box of a w×h page counter-clockwise by q quarter turns
// (written here from the geometry, apart from ocr's unturnBox).
func turnBox(b ocr.Box, q, w, h int) ocr.Box {
	for ; q > 0; q-- {
		// One counter-clockwise quarter turn: (x, y) → (y, w−x).
		b = ocr.Box{X: b.Y, Y: w - (b.X + b.W), W: b.H, H: b.W}
		w, h = h, w
	}
	return b
}

func abs(v int) int {
	if v < 0 {
		return -v
	}
	return v
}
