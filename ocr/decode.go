package ocr

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"image"
	"image/jpeg"
	"image/png"
	"io"
	"os"
	"strings"

	"golang.org/x/image/bmp"
	"golang.org/x/image/tiff"
)

// DefaultMaxPixels is the largest image, in pixels, that DecodeFile accepts
// when DecodeOptions.MaxPixels is 0: about an A3 page at 600 dpi.
const DefaultMaxPixels = 40_000_000

// Errors that DecodeFile wraps in a *DecodeError; test with errors.Is.
var (
	// ErrEmptyFile is returned for a file of zero bytes.
	ErrEmptyFile = errors.New("empty file")
	// ErrNotImage is returned when the file does not start like any
	// supported image format (TIFF, PNG, JPEG, BMP).
	ErrNotImage = errors.New("not an image in a supported format (TIFF, PNG, JPEG, BMP)")
	// ErrMalformed is returned when the file claims a supported format but
	// is truncated or corrupt.
	ErrMalformed = errors.New("malformed image")
	// ErrUnsupported is returned when the file is a valid image of a
	// variant this build cannot decode (for example 4-bit TIFF, JPEG
	// arithmetic coding, old-style TIFF JPEG compression).
	ErrUnsupported = errors.New("unsupported image variant")
	// ErrTooLarge is returned, before any pixel is decoded, when the header
	// declares more pixels than DecodeOptions.MaxPixels.
	ErrTooLarge = errors.New("image too large")
)

// DecodeError reports why a page image could not be decoded.
type DecodeError struct {
	File string // path as given by the caller
	Kind error  // one of ErrEmptyFile, ErrNotImage, ErrMalformed, ErrUnsupported, ErrTooLarge, or nil for an I/O error
	Err  error  // the underlying cause, may be nil
}

func (e *DecodeError) Error() string {
	switch {
	case e.Kind == nil:
		return fmt.Sprintf("ocr: %q: %v", e.File, e.Err)
	case e.Err == nil:
		return fmt.Sprintf("ocr: %q: %v", e.File, e.Kind)
	default:
		return fmt.Sprintf("ocr: %q: %v: %v", e.File, e.Kind, e.Err)
	}
}

// Unwrap returns the kind and the cause, so errors.Is works with both.
func (e *DecodeError) Unwrap() []error {
	var errs []error
	if e.Kind != nil {
		errs = append(errs, e.Kind)
	}
	if e.Err != nil {
		errs = append(errs, e.Err)
	}
	return errs
}

// DecodeOptions configures DecodeFile. The zero value is ready to use.
type DecodeOptions struct {
	MaxPixels int // largest width×height accepted; 0 means DefaultMaxPixels
}

// Decoded is a decoded page image.
type Decoded struct {
	Image  image.Image
	DPI    float64 // horizontal resolution, dots per inch; 0 when the file has no resolution tag
	Format string  // "tiff", "png", "jpeg" or "bmp"

	// Pages is the number of images in the file: more than 1 only for a
	// multi-page TIFF, of which only the first page is decoded (and a
	// warning is added).
	Pages int

	// Warnings are things the caller may want to tell the user, such as
	// pages that were skipped. They never mean the image is unusable.
	Warnings []string
}

// DecodeFile reads and decodes a page image: TIFF (uncompressed, LZW,
// Deflate, PackBits, CCITT G3/G4), PNG, JPEG (baseline and progressive) or
// BMP; greyscale, RGB, palette and 1-bit images. The resolution comes from
// the TIFF XResolution/ResolutionUnit tags, the PNG pHYs chunk or the JPEG
// JFIF header when present (EXIF resolution in JPEG is not read).
//
// The dimensions are read from the header first and images larger than
// o.MaxPixels are refused before any pixel memory is allocated. Of a
// multi-page TIFF only the first page is decoded and Decoded.Warnings says
// so.
//
// Every error is a *DecodeError naming the file; nil is returned with it.
func DecodeFile(path string, o DecodeOptions) (*Decoded, error) {
	maxPixels := o.MaxPixels
	if maxPixels <= 0 {
		maxPixels = DefaultMaxPixels
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, &DecodeError{File: path, Err: err}
	}
	defer f.Close()
	fi, err := f.Stat()
	if err != nil {
		return nil, &DecodeError{File: path, Err: err}
	}
	if fi.IsDir() {
		return nil, &DecodeError{File: path, Err: errors.New("is a directory")}
	}
	// No real page needs more than 8 bytes a pixel in the file; refuse
	// absurd files before reading them into memory.
	if limit := int64(maxPixels)*8 + 1<<20; fi.Size() > limit {
		return nil, &DecodeError{File: path, Kind: ErrTooLarge,
			Err: fmt.Errorf("file is %d bytes, more than %d bytes for %d pixels", fi.Size(), limit, maxPixels)}
	}
	data, err := io.ReadAll(f)
	if err != nil {
		return nil, &DecodeError{File: path, Err: err}
	}
	d, err := decodeBytes(data, maxPixels)
	if err != nil {
		var de *DecodeError
		if errors.As(err, &de) {
			de.File = path
			return nil, de
		}
		return nil, &DecodeError{File: path, Err: err}
	}
	return d, nil
}

// decodeBytes decodes an image held in memory; errors are *DecodeError
// without the file name.
func decodeBytes(data []byte, maxPixels int) (*Decoded, error) {
	if len(data) == 0 {
		return nil, &DecodeError{Kind: ErrEmptyFile}
	}
	format := sniff(data)
	if format == "" {
		return nil, &DecodeError{Kind: ErrNotImage}
	}
	var (
		cfg image.Config
		err error
	)
	switch format {
	case "tiff":
		cfg, err = tiff.DecodeConfig(bytes.NewReader(data))
	case "png":
		cfg, err = png.DecodeConfig(bytes.NewReader(data))
	case "jpeg":
		cfg, err = jpeg.DecodeConfig(bytes.NewReader(data))
	case "bmp":
		cfg, err = bmp.DecodeConfig(bytes.NewReader(data))
	}
	if err != nil {
		return nil, classify(format, err)
	}
	if cfg.Width <= 0 || cfg.Height <= 0 {
		return nil, &DecodeError{Kind: ErrMalformed, Err: fmt.Errorf("%s: zero-size image %d×%d", format, cfg.Width, cfg.Height)}
	}
	if int64(cfg.Width)*int64(cfg.Height) > int64(maxPixels) {
		return nil, &DecodeError{Kind: ErrTooLarge,
			Err: fmt.Errorf("%d×%d pixels is more than the limit of %d", cfg.Width, cfg.Height, maxPixels)}
	}
	var img image.Image
	switch format {
	case "tiff":
		img, err = tiff.Decode(bytes.NewReader(data))
	case "png":
		img, err = png.Decode(bytes.NewReader(data))
	case "jpeg":
		img, err = jpeg.Decode(bytes.NewReader(data))
	case "bmp":
		img, err = bmp.Decode(bytes.NewReader(data))
	}
	if err != nil {
		if format == "tiff" && strings.HasPrefix(err.Error(), "ccitt:") && tiffInfo(data).compression == 3 {
			// golang.org/x/image/ccitt (v0.48) reads Group 3 data
			// without End-of-Line codes only; libtiff and fax
			// software write EOLs, often byte-aligned (T4Options
			// bit 2), which it rejects as "missing End-of-Line".
			return nil, &DecodeError{Kind: ErrUnsupported,
				Err: fmt.Errorf("tiff: CCITT Group 3 with End-of-Line codes (%v)", err)}
		}
		return nil, classify(format, err)
	}
	d := &Decoded{Image: img, Format: format, Pages: 1}
	switch format {
	case "tiff":
		info := tiffInfo(data)
		d.DPI, d.Pages = info.dpi, info.pages
		if d.Pages > 1 {
			d.Warnings = append(d.Warnings, fmt.Sprintf("multi-page TIFF with %d pages: only the first page is used", d.Pages))
		}
	case "png":
		d.DPI = pngDPI(data)
	case "jpeg":
		d.DPI = jfifDPI(data)
	}
	return d, nil
}

// sniff names the format from the file's first bytes, or returns "".
func sniff(data []byte) string {
	switch {
	case bytes.HasPrefix(data, []byte("II*\x00")), bytes.HasPrefix(data, []byte("MM\x00*")):
		return "tiff"
	case bytes.HasPrefix(data, []byte("\x89PNG\r\n\x1a\n")):
		return "png"
	case bytes.HasPrefix(data, []byte("\xff\xd8")):
		return "jpeg"
	case bytes.HasPrefix(data, []byte("BM")) && len(data) >= 14:
		return "bmp"
	}
	return ""
}

// classify sorts a decoder's error into malformed or unsupported.
func classify(format string, err error) error {
	var (
		pf png.FormatError
		pu png.UnsupportedError
		jf jpeg.FormatError
		ju jpeg.UnsupportedError
		tf tiff.FormatError
		tu tiff.UnsupportedError
	)
	switch {
	case errors.Is(err, io.ErrUnexpectedEOF), errors.Is(err, io.EOF):
		return &DecodeError{Kind: ErrMalformed, Err: fmt.Errorf("%s: truncated", format)}
	case errors.As(err, &pu), errors.As(err, &ju), errors.As(err, &tu), errors.Is(err, bmp.ErrUnsupported):
		return &DecodeError{Kind: ErrUnsupported, Err: err}
	case errors.As(err, &pf), errors.As(err, &jf), errors.As(err, &tf):
		return &DecodeError{Kind: ErrMalformed, Err: err}
	}
	// Other decoder errors (zlib checksums, CCITT code errors, LZW) mean
	// corrupt data.
	return &DecodeError{Kind: ErrMalformed, Err: fmt.Errorf("%s: %w", format, err)}
}

// pngDPI reads the pHYs chunk (PNG specification, W3C 2003, section 11.3.5.3).
func pngDPI(data []byte) float64 {
	p := data[8:]
	for len(p) >= 12 {
		n := binary.BigEndian.Uint32(p[0:4])
		typ := string(p[4:8])
		if uint64(n)+12 > uint64(len(p)) {
			return 0
		}
		if typ == "pHYs" && n == 9 {
			x := binary.BigEndian.Uint32(p[8:12])
			if p[16] == 1 { // unit is the metre
				return float64(x) * 0.0254
			}
			return 0
		}
		if typ == "IDAT" || typ == "IEND" {
			return 0 // pHYs must come before IDAT
		}
		p = p[12+n:]
	}
	return 0
}

// jfifDPI reads the density of a JFIF APP0 segment (JPEG File Interchange
// Format 1.02, Hamilton 1992).
func jfifDPI(data []byte) float64 {
	p := data[2:]
	for len(p) >= 4 && p[0] == 0xff {
		marker := p[1]
		if marker == 0xd8 || (marker >= 0xd0 && marker <= 0xd7) || marker == 0x01 {
			p = p[2:]
			continue
		}
		n := int(binary.BigEndian.Uint16(p[2:4]))
		if n < 2 || n+2 > len(p) {
			return 0
		}
		seg := p[4 : 2+n]
		if marker == 0xe0 && len(seg) >= 12 && string(seg[:5]) == "JFIF\x00" {
			units := seg[7]
			x := float64(binary.BigEndian.Uint16(seg[8:10]))
			switch units {
			case 1:
				return x
			case 2:
				return x * 2.54
			}
			return 0 // aspect ratio only
		}
		if marker == 0xda { // start of scan: no more headers
			return 0
		}
		p = p[2+n:]
	}
	return 0
}

// tiffIFD is what tiffInfo reads from a TIFF file.
type tiffIFD struct {
	dpi         float64 // from XResolution and ResolutionUnit; 0 if absent or unit-less
	pages       int     // IFDs in the chain, at least 1
	compression int     // Compression tag of the first IFD (1 if absent)
	t4Options   int     // T4Options tag of the first IFD
}

// tiffInfo reads XResolution, ResolutionUnit, Compression and T4Options
// from the first IFD and counts the IFDs (pages), following TIFF 6.0 (Adobe
// 1992), sections 2, 8 and 11. Damaged or looping IFD chains stop the
// count; the decoder has already accepted (or judged) the first page.
func tiffInfo(data []byte) tiffIFD {
	info := tiffIFD{compression: 1}
	if len(data) < 8 {
		return tiffIFD{pages: 1}
	}
	var bo binary.ByteOrder = binary.LittleEndian
	if data[0] == 'M' {
		bo = binary.BigEndian
	}
	off := uint64(bo.Uint32(data[4:8]))
	seen := map[uint64]bool{}
	for off != 0 && off+2 <= uint64(len(data)) && !seen[off] && info.pages < 100000 {
		seen[off] = true
		n := uint64(bo.Uint16(data[off : off+2]))
		end := off + 2 + 12*n
		if end+4 > uint64(len(data)) {
			info.pages++
			break
		}
		if info.pages == 0 {
			var xres float64
			unit := uint16(2) // inch is the default
			for i := uint64(0); i < n; i++ {
				e := data[off+2+12*i : off+2+12*i+12]
				tag, typ := bo.Uint16(e[0:2]), bo.Uint16(e[2:4])
				short := func() int {
					if typ == 3 {
						return int(bo.Uint16(e[8:10]))
					}
					return int(bo.Uint32(e[8:12]))
				}
				switch tag {
				case 259: // Compression
					info.compression = short()
				case 282: // XResolution, RATIONAL
					if typ != 5 {
						continue
					}
					vo := uint64(bo.Uint32(e[8:12]))
					if vo+8 <= uint64(len(data)) {
						num, den := bo.Uint32(data[vo:vo+4]), bo.Uint32(data[vo+4:vo+8])
						if den != 0 {
							xres = float64(num) / float64(den)
						}
					}
				case 292: // T4Options
					info.t4Options = short()
				case 296: // ResolutionUnit
					unit = uint16(short())
				}
			}
			switch unit {
			case 2:
				info.dpi = xres
			case 3:
				info.dpi = xres * 2.54
			}
		}
		info.pages++
		off = uint64(bo.Uint32(data[end : end+4]))
	}
	if info.pages == 0 {
		info.pages = 1
	}
	return info
}
