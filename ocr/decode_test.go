package ocr

import (
	"bytes"
	"encoding/binary"
	"errors"
	"hash/crc32"
	"image"
	"image/jpeg"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

const prepData = "../testdata/prep/"

// TestDecodeFormats decodes the vendored fixtures. The expected sizes and
// resolutions are those ImageMagick 6 `identify -format "%w %h %x %U"`
// reports for the same files (an independent reader); see
// testdata/SOURCES.md for where each file comes from.
func TestDecodeFormats(t *testing.T) {
	for _, tc := range []struct {
		file   string
		format string
		w, h   int
		dpi    float64
		pages  int
	}{
		{"tess-12-g4.tif", "tiff", 48, 29, 300, 1},                 // CCITT G4, WhiteIsZero
		{"tess-hellogoogle-deflate.tif", "tiff", 400, 200, 300, 1}, // Deflate 1-bit, 118.11 px/cm
		{"tess-phototestrot-lzw.tif", "tiff", 480, 640, 200, 1},    // LZW RGB
		{"gray-lzw-200dpi.tif", "tiff", 200, 150, 200, 1},          // LZW grey
		{"multipage.tif", "tiff", 50, 38, 0, 2},                    // two pages, no resolution tag (identify assumes 72)
		{"gray-300dpi.png", "png", 200, 150, 118.11 * 2.54, 1},     // pHYs in pixels per metre
		{"palette.png", "png", 200, 150, 0, 1},
		{"bilevel.png", "png", 200, 150, 0, 1}, // 1-bit grey
		{"w91frag-crop.png", "png", 400, 300, 0, 1},
		{"rgb-300dpi.jpg", "jpeg", 200, 150, 300, 1},
		{"lept-binding-45dpi.jpg", "jpeg", 722, 482, 45, 1},
		{"progressive.jpg", "jpeg", 200, 150, 0, 1}, // JFIF aspect ratio only
	} {
		t.Run(tc.file, func(t *testing.T) {
			d, err := DecodeFile(prepData+tc.file, DecodeOptions{})
			if err != nil {
				t.Fatal(err)
			}
			b := d.Image.Bounds()
			if d.Format != tc.format || b.Dx() != tc.w || b.Dy() != tc.h || d.Pages != tc.pages {
				t.Errorf("got %s %d×%d %d pages, want %s %d×%d %d pages", d.Format, b.Dx(), b.Dy(), d.Pages, tc.format, tc.w, tc.h, tc.pages)
			}
			if math.Abs(d.DPI-tc.dpi) > 0.05 {
				t.Errorf("DPI %.3f, want %.3f", d.DPI, tc.dpi)
			}
			if (d.Pages > 1) != (len(d.Warnings) > 0) {
				t.Errorf("pages %d, warnings %q", d.Pages, d.Warnings)
			}
			// Every fixture is a page with ink and paper.
			g := toGray(d.Image)
			h := histogram(g)
			if h[0]+h[255] == g.Rect.Dx()*g.Rect.Dy() && (h[0] == 0 || h[255] == 0) {
				t.Errorf("decoded image is a single colour")
			}
		})
	}
}

// TestDecodeG3MatchesReference wraps the CCITT Group 3 fixture of
// golang.org/x/image/ccitt (bw-gopher.ccitt_group3) in a TIFF and checks
// the decoded page pixel for pixel against that package's reference PNG.
func TestDecodeG3MatchesReference(t *testing.T) {
	raw, err := os.ReadFile(prepData + "bw-gopher.ccitt_group3")
	if err != nil {
		t.Fatal(err)
	}
	want := loadGray(t, prepData+"bw-gopher.png")
	data := buildTIFF(153, 55, []ifdEntry{
		{258, 3, []uint32{1}},  // BitsPerSample
		{259, 3, []uint32{3}},  // Compression: CCITT T.4 (Group 3)
		{262, 3, []uint32{0}},  // PhotometricInterpretation: WhiteIsZero
		{278, 3, []uint32{55}}, // RowsPerStrip
		{292, 4, []uint32{0}},  // T4Options: 1-D, no fill bits
	}, raw, nil)
	path := filepath.Join(t.TempDir(), "g3.tif")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	d, err := DecodeFile(path, DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	got := toGray(d.Image)
	diff := 0
	for i := range got.Pix {
		if got.Pix[i] != want.Pix[i] {
			diff++
		}
	}
	if diff != 0 {
		t.Errorf("%d of %d pixels differ from the reference", diff, len(got.Pix))
	}
}

// ifdEntry is a TIFF tag with SHORT (3) or LONG (4) values.
type ifdEntry struct {
	tag, typ uint16
	vals     []uint32
}

// buildTIFF writes a little-endian one-strip TIFF (TIFF 6.0, Adobe 1992)
// with the given tags plus ImageWidth, ImageLength, StripOffsets and
// StripByteCounts; next, when not nil, is appended as a second IFD's data
// to make a two-page file of the same shape.
func buildTIFF(w, h int, entries []ifdEntry, strip []byte, next []byte) []byte {
	page := func(buf *bytes.Buffer, data []byte, last bool) {
		all := append([]ifdEntry{{256, 4, []uint32{uint32(w)}}, {257, 4, []uint32{uint32(h)}}}, entries...)
		stripAt := uint32(buf.Len())
		buf.Write(data)
		if buf.Len()%2 == 1 {
			buf.WriteByte(0)
		}
		all = append(all, ifdEntry{273, 4, []uint32{stripAt}}, ifdEntry{279, 4, []uint32{uint32(len(data))}})
		// Sort by tag as TIFF requires.
		for i := range all {
			for j := i + 1; j < len(all); j++ {
				if all[j].tag < all[i].tag {
					all[i], all[j] = all[j], all[i]
				}
			}
		}
		ifdAt := uint32(buf.Len())
		le := binary.LittleEndian
		b := make([]byte, 2+12*len(all)+4)
		le.PutUint16(b, uint16(len(all)))
		for i, e := range all {
			p := b[2+12*i:]
			le.PutUint16(p[0:], e.tag)
			le.PutUint16(p[2:], e.typ)
			le.PutUint32(p[4:], 1)
			if e.typ == 3 {
				le.PutUint16(p[8:], uint16(e.vals[0]))
			} else {
				le.PutUint32(p[8:], e.vals[0])
			}
		}
		if !last {
			le.PutUint32(b[len(b)-4:], ifdAt+uint32(len(b))) // next IFD follows its strip
		}
		buf.Write(b)
		// Patch the pointer that leads here.
		out := buf.Bytes()
		if ifdAt > 0 && out[4] == 0 && out[5] == 0 && out[6] == 0 && out[7] == 0 {
			le.PutUint32(out[4:], ifdAt)
		}
	}
	var buf bytes.Buffer
	buf.WriteString("II*\x00\x00\x00\x00\x00")
	page(&buf, strip, next == nil)
	if next != nil {
		// The first IFD's next pointer points just past itself, where
		// the second page's strip begins; write the strip and then
		// its IFD there, and repoint to the IFD.
		le := binary.LittleEndian
		out := buf.Bytes()
		nextPtrAt := len(out) - 4
		stripAt := uint32(buf.Len())
		buf.Write(next)
		if buf.Len()%2 == 1 {
			buf.WriteByte(0)
		}
		all := append([]ifdEntry{{256, 4, []uint32{uint32(w)}}, {257, 4, []uint32{uint32(h)}}}, entries...)
		all = append(all, ifdEntry{273, 4, []uint32{stripAt}}, ifdEntry{279, 4, []uint32{uint32(len(next))}})
		for i := range all {
			for j := i + 1; j < len(all); j++ {
				if all[j].tag < all[i].tag {
					all[i], all[j] = all[j], all[i]
				}
			}
		}
		ifdAt := uint32(buf.Len())
		b := make([]byte, 2+12*len(all)+4)
		le.PutUint16(b, uint16(len(all)))
		for i, e := range all {
			p := b[2+12*i:]
			le.PutUint16(p[0:], e.tag)
			le.PutUint16(p[2:], e.typ)
			le.PutUint32(p[4:], 1)
			if e.typ == 3 {
				le.PutUint16(p[8:], uint16(e.vals[0]))
			} else {
				le.PutUint32(p[8:], e.vals[0])
			}
		}
		buf.Write(b)
		le.PutUint32(buf.Bytes()[nextPtrAt:], ifdAt)
	}
	return buf.Bytes()
}

// pngChunk returns a PNG chunk with its CRC (PNG specification, W3C 2003, 5.3).
func pngChunk(typ string, data []byte) []byte {
	b := binary.BigEndian.AppendUint32(nil, uint32(len(data)))
	b = append(b, typ...)
	b = append(b, data...)
	return binary.BigEndian.AppendUint32(b, crc32.ChecksumIEEE(b[4:]))
}

func encodePNG(tb testing.TB, img image.Image) []byte {
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		tb.Fatal(err)
	}
	return buf.Bytes()
}

// TestDecodeErrors is the error table over broken files: each gets one
// error of the right kind that names the file, and no image.
func TestDecodeErrors(t *testing.T) {
	small := image.NewGray(image.Rect(0, 0, 64, 48))
	for i := range small.Pix {
		small.Pix[i] = uint8(i * 7)
	}
	goodPNG := encodePNG(t, small)
	var jb bytes.Buffer
	if err := jpeg.Encode(&jb, small, nil); err != nil {
		t.Fatal(err)
	}
	goodJPEG := jb.Bytes()
	corruptPNG := bytes.Clone(goodPNG)
	corruptPNG[len(corruptPNG)-20] ^= 0xff // inside IDAT: checksum fails
	ihdr := func(w, h uint32) []byte {
		d := binary.BigEndian.AppendUint32(nil, w)
		d = binary.BigEndian.AppendUint32(d, h)
		d = append(d, 8, 0, 0, 0, 0) // 8-bit grey
		b := append([]byte("\x89PNG\r\n\x1a\n"), pngChunk("IHDR", d)...)
		return append(b, pngChunk("IDAT", []byte{0x78, 0x9c, 0x03, 0x00})...)
	}
	fourBit, err := os.ReadFile(prepData + "gray-4bit.tif")
	if err != nil {
		t.Fatal(err)
	}
	g3EOL, err := os.ReadFile(prepData + "bilevel-g3.tif")
	if err != nil {
		t.Fatal(err)
	}
	hugeTIFF := buildTIFF(100_000, 100_000, []ifdEntry{{258, 3, []uint32{8}}, {262, 3, []uint32{1}}}, []byte{0}, nil)
	dir := t.TempDir()
	for _, tc := range []struct {
		name string
		data []byte
		kind error
		msg  string
	}{
		{"empty.png", nil, ErrEmptyFile, "empty file"},
		{"notes.txt", []byte("Minutes of the Marrowby council, 1907\n"), ErrNotImage, "not an image"},
		{"truncated.png", goodPNG[:len(goodPNG)/2], ErrMalformed, "truncated"},
		{"corrupt.png", corruptPNG, ErrMalformed, "malformed"},
		{"truncated.jpg", goodJPEG[:len(goodJPEG)/2], ErrMalformed, "malformed"},
		{"header-only.jpg", goodJPEG[:4], ErrMalformed, "malformed"},
		{"bad-ifd.tif", []byte("II*\x00\xff\xff\xff\x00"), ErrMalformed, "malformed"},
		{"huge.png", ihdr(100_000, 100_000), ErrTooLarge, "too large"},
		{"huge.tif", hugeTIFF, ErrTooLarge, "too large"},
		{"zero-width.png", ihdr(0, 10), ErrMalformed, "malformed"},
		// Valid variants the pure-Go decoders refuse; the engine build
		// reads them through Leptonica (recto/ocr/lept, whose tests check
		// the pixels).
		{"four-bit.tif", fourBit, ErrUnsupported, "4-bit TIFF"},
		// Valid G3 as libtiff writes it (EOL codes, fill bits): a
		// limitation of golang.org/x/image/ccitt, reported as unsupported.
		{"libtiff-g3.tif", g3EOL, ErrUnsupported, "Group 3"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, tc.name)
			if err := os.WriteFile(path, tc.data, 0o644); err != nil {
				t.Fatal(err)
			}
			d, err := DecodeFile(path, DecodeOptions{})
			if tc.kind == ErrUnsupported && ExtraDecoderName() != "" {
				// This test binary links the engine, and with it Leptonica.
				if err != nil {
					t.Fatalf("%s did not read it: %v", ExtraDecoderName(), err)
				}
				return
			}
			if tc.kind == ErrUnsupported && !strings.Contains(err.Error(), "engine build") {
				t.Errorf("error %q does not say which build reads the file", err)
			}
			if d != nil {
				t.Errorf("image returned with the error")
			}
			if err == nil {
				t.Fatal("no error")
			}
			if !errors.Is(err, tc.kind) {
				t.Errorf("error %q is not %v", err, tc.kind)
			}
			if !strings.Contains(err.Error(), `"`+path+`"`) || !strings.Contains(err.Error(), tc.msg) {
				t.Errorf("error %q does not name the file and say %q", err, tc.msg)
			}
			var de *DecodeError
			if !errors.As(err, &de) || de.File != path {
				t.Errorf("error %#v is not a *DecodeError for the file", err)
			}
		})
	}
	t.Run("missing", func(t *testing.T) {
		path := filepath.Join(dir, "no-such-page.tif")
		_, err := DecodeFile(path, DecodeOptions{})
		if !errors.Is(err, os.ErrNotExist) || !strings.Contains(err.Error(), `"`+path+`"`) {
			t.Errorf("error %v", err)
		}
	})
	t.Run("directory", func(t *testing.T) {
		_, err := DecodeFile(dir, DecodeOptions{})
		if err == nil || !strings.Contains(err.Error(), "directory") {
			t.Errorf("error %v", err)
		}
	})
	t.Run("limit", func(t *testing.T) {
		path := filepath.Join(dir, "small.png")
		if err := os.WriteFile(path, goodPNG, 0o644); err != nil {
			t.Fatal(err)
		}
		if _, err := DecodeFile(path, DecodeOptions{MaxPixels: 64*48 - 1}); !errors.Is(err, ErrTooLarge) {
			t.Errorf("one pixel over the limit: %v", err)
		}
		if _, err := DecodeFile(path, DecodeOptions{MaxPixels: 64 * 48}); err != nil {
			t.Errorf("at the limit: %v", err)
		}
	})
}

// TestDecodeRefusesBeforeAllocating checks that a small file claiming
// 100,000 × 100,000 pixels is refused without allocating the image (10 GB).
func TestDecodeRefusesBeforeAllocating(t *testing.T) {
	d := binary.BigEndian.AppendUint32(nil, 100_000)
	d = binary.BigEndian.AppendUint32(d, 100_000)
	d = append(d, 8, 2, 0, 0, 0) // 8-bit RGB
	data := append([]byte("\x89PNG\r\n\x1a\n"), pngChunk("IHDR", d)...)
	path := filepath.Join(t.TempDir(), "claims-10-gigapixels.png")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	_, err := DecodeFile(path, DecodeOptions{})
	runtime.ReadMemStats(&after)
	if !errors.Is(err, ErrTooLarge) {
		t.Fatalf("error %v, want ErrTooLarge", err)
	}
	if n := after.TotalAlloc - before.TotalAlloc; n > 1<<20 {
		t.Errorf("allocated %d bytes refusing the file", n)
	}
}
