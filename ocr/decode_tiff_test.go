package ocr

import (
	"bytes"
	"context"
	"encoding/binary"
	"image"
	"os"
	"path/filepath"
	"testing"
)

// withBlackIsZero returns a copy of the TIFF file data whose first IFD says
// PhotometricInterpretation 1 (BlackIsZero) and, when twoPages, a second
// IFD appended that shares the first one's strips: page 1 as the file had
// it, page 2 with BlackIsZero.
func withBlackIsZero(t *testing.T, data []byte, twoPages bool) []byte {
	t.Helper()
	out := bytes.Clone(data)
	var bo interface {
		binary.ByteOrder
		binary.AppendByteOrder
	} = binary.LittleEndian
	if out[0] == 'M' {
		bo = binary.BigEndian
	}
	ifd := int(bo.Uint32(out[4:8]))
	n := int(bo.Uint16(out[ifd:]))
	entries := out[ifd+2 : ifd+2+12*n]
	if twoPages {
		second := len(out)
		out = bo.AppendUint16(out, uint16(n))
		out = append(out, entries...)
		out = bo.AppendUint32(out, 0)
		bo.PutUint32(out[ifd+2+12*n:], uint32(second))
		entries = out[second+2 : second+2+12*n]
	}
	for i := 0; i < n; i++ {
		e := entries[12*i:]
		if bo.Uint16(e[0:2]) == 262 {
			if bo.Uint16(e[2:4]) != 3 || bo.Uint16(e[8:10]) != 0 {
				t.Fatalf("fixture: PhotometricInterpretation is not SHORT 0 (WhiteIsZero)")
			}
			bo.PutUint16(e[8:10], 1)
			return out
		}
	}
	t.Fatal("fixture: no PhotometricInterpretation tag")
	return nil
}

// reversed reports how many pixels of a and b are not each other's
// reverse (white in one where the other is black).
func reversed(t *testing.T, a, b image.Image) (bad, dark int) {
	t.Helper()
	if a.Bounds() != b.Bounds() {
		t.Fatalf("sizes differ: %v and %v", a.Bounds(), b.Bounds())
	}
	r := a.Bounds()
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			va, _, _, _ := a.At(x, y).RGBA()
			vb, _, _, _ := b.At(x, y).RGBA()
			if va < 0x8000 {
				dark++
			}
			if (va < 0x8000) == (vb < 0x8000) {
				bad++
			}
		}
	}
	return bad, dark
}

// TestCCITTBlackIsZero: a CCITT Group 4 page whose PhotometricInterpretation
// is BlackIsZero shows with white and black reversed. TIFF 6.0 (Adobe 1992),
// section 11 (CCITT Bilevel Encodings): "if the PhotometricInterpretation
// is BlackIsZero, the TIFF reader must reverse the meaning of white and
// black when displaying and printing the image". The fixture is
// tesseract's testing/12.tif (WhiteIsZero, dark print on white) with only
// that tag changed; golang.org/x/image/tiff v0.48 alone decodes both alike.
// Checked through DecodeFile and through OpenPages' page-by-page reader.
func TestCCITTBlackIsZero(t *testing.T) {
	data, err := os.ReadFile(prepData + "tess-12-g4.tif")
	if err != nil {
		t.Fatal(err)
	}
	white, err := decodeBytes(data, DecodeOptions{}.maxPixels())
	if err != nil {
		t.Fatal(err)
	}
	black, err := decodeBytes(withBlackIsZero(t, data, false), DecodeOptions{}.maxPixels())
	if err != nil {
		t.Fatal(err)
	}
	bad, dark := reversed(t, white.Image, black.Image)
	px := white.Image.Bounds().Dx() * white.Image.Bounds().Dy()
	if dark == 0 || dark > px/2 {
		t.Fatalf("the WhiteIsZero fixture has %d of %d pixels dark: not dark print on white", dark, px)
	}
	if bad != 0 {
		t.Errorf("DecodeFile: %d of %d pixels of the BlackIsZero page are not reversed", bad, px)
	}

	path := filepath.Join(t.TempDir(), "two-pages.tif")
	if err := os.WriteFile(path, withBlackIsZero(t, data, true), 0o644); err != nil {
		t.Fatal(err)
	}
	pf, err := OpenPages(context.Background(), path, DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	if pf.Pages() != 2 {
		t.Fatalf("%d pages, want 2", pf.Pages())
	}
	p1, err := pf.Page(context.Background(), 1)
	if err != nil {
		t.Fatal(err)
	}
	p2, err := pf.Page(context.Background(), 2)
	if err != nil {
		t.Fatal(err)
	}
	if bad, _ := reversed(t, white.Image, p1.Image); bad != px {
		t.Errorf("OpenPages page 1 (WhiteIsZero): %d of %d pixels reversed, want none", px-bad, px)
	}
	if bad, _ := reversed(t, white.Image, p2.Image); bad != 0 {
		t.Errorf("OpenPages page 2 (BlackIsZero): %d of %d pixels are not reversed", bad, px)
	}
}
