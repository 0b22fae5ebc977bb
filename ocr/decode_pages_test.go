package ocr

import (
	"bytes"
	"compress/zlib"
	"context"
	"encoding/binary"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestOpenPagesMultiPageTIFF reads both pages of the two-page fixture;
// sizes are ImageMagick's `identify` (50×38 and 100×75).
func TestOpenPagesMultiPageTIFF(t *testing.T) {
	ctx := context.Background()
	pf, err := OpenPages(ctx, prepData+"multipage.tif", DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	if pf.Pages() != 2 || pf.Format != "tiff" {
		t.Fatalf("%d pages of %s, want 2 of tiff", pf.Pages(), pf.Format)
	}
	for i, want := range [][2]int{{50, 38}, {100, 75}} {
		d, err := pf.Page(ctx, i+1)
		if err != nil {
			t.Fatal(err)
		}
		b := d.Image.Bounds()
		if b.Dx() != want[0] || b.Dy() != want[1] || d.Page != i+1 || d.Pages != 2 || len(d.Warnings) != 0 {
			t.Errorf("page %d: %v, page %d of %d, warnings %q; want %d×%d", i+1, b, d.Page, d.Pages, d.Warnings, want[0], want[1])
		}
	}
	if _, err := pf.Page(ctx, 3); err == nil || !strings.Contains(err.Error(), "no page 3") {
		t.Errorf("page 3 of 2: %v", err)
	}
	// A single image is one page.
	one, err := OpenPages(ctx, prepData+"gray-300dpi.png", DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer one.Close()
	d, err := one.Page(ctx, 1)
	if err != nil || one.Pages() != 1 || d.Page != 1 {
		t.Errorf("single image: %d pages, %v", one.Pages(), err)
	}
}

// TestOpenPagesCorruptPage builds a three-page Deflate TIFF whose second
// page holds bytes that are not zlib data (RFC 1950): pages 1 and 3 decode,
// page 2 fails alone with an error naming the file and the page.
func TestOpenPagesCorruptPage(t *testing.T) {
	w, h := 16, 4
	raw := bytes.Repeat([]byte{0, 255}, w*h/2)
	var z bytes.Buffer
	zw := zlib.NewWriter(&z)
	zw.Write(raw)
	zw.Close()
	entries := []ifdEntry{
		{258, 3, []uint32{8}}, {259, 3, []uint32{8}}, {262, 3, []uint32{1}}, {278, 3, []uint32{uint32(h)}},
	}
	two := buildTIFF(w, h, entries, z.Bytes(), []byte("this is not zlib data"))
	// Chain a third page: a copy of page 1's IFD, appended, linked from
	// page 2's IFD.
	data := appendIFDCopy(t, two)
	path := filepath.Join(t.TempDir(), "reel-07.tif")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	pf, err := OpenPages(ctx, path, DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	if pf.Pages() != 3 {
		t.Fatalf("%d pages, want 3", pf.Pages())
	}
	for n := 1; n <= 3; n++ {
		d, err := pf.Page(ctx, n)
		if n == 2 {
			var de *DecodeError
			if err == nil || !errors.As(err, &de) || de.Page != 2 || !errors.Is(err, ErrMalformed) ||
				!strings.Contains(err.Error(), `"`+path+`" page 2`) {
				t.Errorf("page 2: %v, want a malformed-image error naming the file and page 2", err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("page %d: %v", n, err)
		}
		if g := toGray(d.Image); !bytes.Equal(g.Pix, raw) {
			t.Errorf("page %d: pixels differ from what was written", n)
		}
	}
}

// appendIFDCopy appends a copy of the first IFD of a TIFF (its entries
// point at the same strip) and links the last IFD to it.
func appendIFDCopy(t *testing.T, data []byte) []byte {
	t.Helper()
	le := binary.LittleEndian
	first := int(le.Uint32(data[4:8]))
	n := int(le.Uint16(data[first:]))
	ifd := append([]byte(nil), data[first:first+2+12*n+4]...)
	le.PutUint32(ifd[2+12*n:], 0)
	// find the last IFD
	off := first
	for {
		m := int(le.Uint16(data[off:]))
		next := int(le.Uint32(data[off+2+12*m:]))
		if next == 0 {
			out := append([]byte(nil), data...)
			if len(out)%2 == 1 {
				out = append(out, 0)
			}
			le.PutUint32(out[off+2+12*m:], uint32(len(out)))
			return append(out, ifd...)
		}
		off = next
	}
}

func TestPageName(t *testing.T) {
	for _, tc := range []struct {
		name        string
		page, pages int
		want        string
	}{
		{"reel-07.tif", 3, 120, "reel-07/p0003"},
		{"box/reel-07.tif", 12, 12, "box/reel-07/p0012"},
		{"scan.png", 1, 1, "scan.png"},
		{"huge.pdf", 12345, 20000, "huge/p12345"},
	} {
		if got := PageName(tc.name, tc.page, tc.pages); got != tc.want {
			t.Errorf("PageName(%q, %d, %d) = %q, want %q", tc.name, tc.page, tc.pages, got, tc.want)
		}
	}
}

// TestResolutionTags checks the resolution readers on headers built from
// their specifications.
func TestResolutionTags(t *testing.T) {
	// BMP: BITMAPINFOHEADER biXPelsPerMeter at byte 38 (Microsoft,
	// "BITMAPINFOHEADER structure"); 11811 px/m = 299.9994 dpi.
	bmp := make([]byte, 54)
	copy(bmp, "BM")
	binary.LittleEndian.PutUint32(bmp[14:], 40)
	binary.LittleEndian.PutUint32(bmp[38:], 11811)
	if got := bmpDPI(bmp); math.Abs(got-300) > 0.01 {
		t.Errorf("BMP: %.3f dpi, want 300", got)
	}
	// JP2 res box with a resc box (ISO/IEC 15444-1:2019, I.5.3.7):
	// 11811 / 1 × 10^0 grid points per metre vertically and horizontally.
	resc := []byte{0, 0, 0, 18, 'r', 'e', 's', 'c', 0x2e, 0x23, 0, 1, 0x2e, 0x23, 0, 1, 0, 0}
	res := append([]byte{0, 0, 0, byte(8 + len(resc)), 'r', 'e', 's', ' '}, resc...)
	jp2h := append([]byte{0, 0, 0, byte(8 + len(res)), 'j', 'p', '2', 'h'}, res...)
	jp2 := append([]byte("\x00\x00\x00\x0cjP  \r\n\x87\n"), jp2h...)
	if got := jp2DPI(jp2); math.Abs(got-300) > 0.01 {
		t.Errorf("JP2: %.3f dpi, want 300", got)
	}
	// JPEG with an Exif APP1 holding XResolution 400/1 and ResolutionUnit
	// inch in IFD0 (JEITA CP-3451 Exif 2.3, 4.6.4), and no JFIF density.
	tiffHdr := []byte("II*\x00\x08\x00\x00\x00")
	ifd := make([]byte, 2+2*12+4)
	binary.LittleEndian.PutUint16(ifd, 2)
	e := ifd[2:]
	binary.LittleEndian.PutUint16(e[0:], 282)
	binary.LittleEndian.PutUint16(e[2:], 5)
	binary.LittleEndian.PutUint32(e[4:], 1)
	binary.LittleEndian.PutUint32(e[8:], uint32(8+len(ifd)))
	e = ifd[14:]
	binary.LittleEndian.PutUint16(e[0:], 296)
	binary.LittleEndian.PutUint16(e[2:], 3)
	binary.LittleEndian.PutUint32(e[4:], 1)
	binary.LittleEndian.PutUint16(e[8:], 2)
	rational := []byte{0x90, 1, 0, 0, 1, 0, 0, 0}
	exif := append(append(append([]byte("Exif\x00\x00"), tiffHdr...), ifd...), rational...)
	jpg := append([]byte{0xff, 0xd8, 0xff, 0xe1, byte((len(exif) + 2) >> 8), byte(len(exif) + 2)}, exif...)
	jpg = append(jpg, 0xff, 0xda, 0, 2)
	if got := exifDPI(jpg); got != 400 {
		t.Errorf("Exif: %.3f dpi, want 400", got)
	}
}
