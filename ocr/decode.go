package ocr

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"image"
	"image/gif"
	"image/jpeg"
	"image/png"
	"io"
	"os"
	"strings"

	"golang.org/x/image/bmp"
	"golang.org/x/image/tiff"
	"golang.org/x/image/webp"
)

// DefaultMaxPixels is the largest image, in pixels, that DecodeFile accepts
// when DecodeOptions.MaxPixels is 0: about an A3 page at 600 dpi.
const DefaultMaxPixels = 40_000_000

// Errors that DecodeFile wraps in a *DecodeError; test with errors.Is.
var (
	// ErrEmptyFile is returned for a file of zero bytes.
	ErrEmptyFile = errors.New("empty file")
	// ErrNotImage is returned when the file does not start like any
	// supported image format.
	ErrNotImage = errors.New("not an image in a supported format (TIFF, PNG, JPEG, BMP, GIF, WebP, JPEG 2000, PNM, PDF)")
	// ErrMalformed is returned when the file claims a supported format but
	// is truncated or corrupt.
	ErrMalformed = errors.New("malformed image")
	// ErrUnsupported is returned when the file is a valid image of a
	// variant this build cannot decode (for example 4-bit TIFF or JPEG
	// 2000 in a pure-Go build, JPEG arithmetic coding).
	ErrUnsupported = errors.New("unsupported image variant")
	// ErrTooLarge is returned, before any pixel is decoded, when the header
	// declares more pixels than DecodeOptions.MaxPixels.
	ErrTooLarge = errors.New("image too large")
)

// DecodeError reports why a page image could not be decoded.
type DecodeError struct {
	File string // path as given by the caller
	Page int    // page number in a multi-page file, from 1; 0 for a single image
	Kind error  // one of ErrEmptyFile, ErrNotImage, ErrMalformed, ErrUnsupported, ErrTooLarge, or nil for an I/O error
	Err  error  // the underlying cause, may be nil
}

func (e *DecodeError) Error() string {
	where := fmt.Sprintf("%q", e.File)
	if e.Page > 0 {
		where += fmt.Sprintf(" page %d", e.Page)
	}
	switch {
	case e.Kind == nil:
		return fmt.Sprintf("ocr: %s: %v", where, e.Err)
	case e.Err == nil:
		return fmt.Sprintf("ocr: %s: %v", where, e.Kind)
	default:
		return fmt.Sprintf("ocr: %s: %v: %v", where, e.Kind, e.Err)
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
	Format string  // "tiff", "png", "jpeg", "bmp", "gif", "webp", "jp2", "pnm" or "pdf"

	// Pages is the number of pages in the file: more than 1 only for a
	// multi-page TIFF or a PDF, of which DecodeFile decodes the first page
	// only (and adds a warning); OpenPages reads every page.
	Pages int

	// Page is the number of this page in its file, from 1.
	Page int

	// Warnings are things the caller may want to tell the user, such as
	// pages that were skipped. They never mean the image is unusable.
	Warnings []string
}

// DecodeFile reads and decodes a page image: TIFF (uncompressed, LZW,
// Deflate, PackBits, CCITT G3/G4, strips or tiles), PNG, JPEG (baseline
// and progressive), BMP, GIF and WebP in every build; greyscale, RGB,
// palette and 1-bit images. With an extra decoder registered (the engine
// build registers Leptonica's, package recto/ocr/lept) it also reads what
// those decoders refuse: 2- and 4-bit grey TIFF, CCITT G3 with End-of-Line
// codes, JPEG inside TIFF, JPEG 2000 (.jp2, .j2k) and PNM. The resolution
// comes from the TIFF XResolution/ResolutionUnit tags, the PNG pHYs chunk,
// the JPEG JFIF header or its EXIF resolution, the BMP header and the JPEG
// 2000 resolution box, when present.
//
// The dimensions are read from the header first and images larger than
// o.MaxPixels are refused before any pixel memory is allocated. Of a
// multi-page TIFF or a PDF only the first page is decoded and
// Decoded.Warnings says so; OpenPages reads every page.
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
	var head [8]byte
	if n, _ := io.ReadFull(f, head[:]); n >= 5 && string(head[:5]) == "%PDF-" {
		f.Close()
		return decodeFirstPDFPage(path, o)
	}
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		return nil, &DecodeError{File: path, Err: err}
	}
	// No real page needs more than 8 bytes a pixel in the file; refuse
	// absurd files before reading them into memory.
	if limit := int64(maxPixels)*8 + 1<<20; fi.Size() > limit {
		return nil, &DecodeError{File: path, Kind: ErrTooLarge,
			Err: fmt.Errorf("file is %d bytes, more than %d bytes for %d pixels (a multi-page TIFF is read page by page with OpenPages)", fi.Size(), limit, maxPixels)}
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

// ExtraDecoder decodes image variants that the pure-Go decoders refuse.
// Package recto/ocr/lept registers Leptonica's readers with
// RegisterExtraDecoder when it is built with cgo; pure-Go builds have none.
// The caller has checked the pixel count on the file's header before
// calling either method.
type ExtraDecoder interface {
	// Name names the library, e.g. "Leptonica 1.82.0".
	Name() string
	// Decode decodes the single-image file held in data (for a TIFF, its
	// first page). The image is *image.Gray, *image.RGBA or *image.NRGBA.
	Decode(data []byte) (image.Image, error)
	// DecodeTIFFPage decodes page (from 0) of the TIFF file at path,
	// reading that page only.
	DecodeTIFFPage(path string, page int) (image.Image, error)
}

var extraDecoder ExtraDecoder

// RegisterExtraDecoder makes DecodeFile and OpenPages fall back on d for
// variants the pure-Go decoders refuse. Call it from an init function,
// before any decoding; the last registration wins.
func RegisterExtraDecoder(d ExtraDecoder) { extraDecoder = d }

// ExtraDecoderName returns the name of the registered extra decoder, or ""
// when there is none (a pure-Go build).
func ExtraDecoderName() string {
	if extraDecoder == nil {
		return ""
	}
	return extraDecoder.Name()
}

// errNoGoDecoder marks formats that only an extra decoder reads.
var errNoGoDecoder = errors.New("no pure-Go decoder")

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
		cfg  image.Config
		err  error
		ifds []tiffIFD
	)
	switch format {
	case "tiff":
		ifds, err = readTIFFIFDs(bytes.NewReader(data), int64(len(data)))
		if err == nil {
			cfg.Width, cfg.Height = ifds[0].width, ifds[0].height
		}
	case "png":
		cfg, err = png.DecodeConfig(bytes.NewReader(data))
	case "jpeg":
		cfg, err = jpeg.DecodeConfig(bytes.NewReader(data))
	case "bmp":
		cfg, err = bmp.DecodeConfig(bytes.NewReader(data))
	case "gif":
		cfg, err = gif.DecodeConfig(bytes.NewReader(data))
	case "webp":
		cfg, err = webp.DecodeConfig(bytes.NewReader(data))
	case "pnm":
		cfg, err = pnmConfig(data)
	case "jp2":
		cfg, err = jp2Config(data)
	}
	if err != nil {
		return nil, classify(format, err)
	}
	if err := checkSize(format, cfg.Width, cfg.Height, maxPixels); err != nil {
		return nil, err
	}
	var img image.Image
	switch format {
	case "tiff":
		if c := ifds[0].compression; c == 6 || c == 7 {
			// x/image/tiff reads no JPEG-in-TIFF.
			err = tiff.UnsupportedError(fmt.Sprintf("compression value %d", c))
		} else {
			img, err = tiff.Decode(bytes.NewReader(data))
			if err == nil {
				img = ccittPolarity(img, &ifds[0])
			}
		}
	case "png":
		img, err = png.Decode(bytes.NewReader(data))
	case "jpeg":
		img, err = jpeg.Decode(bytes.NewReader(data))
	case "bmp":
		img, err = bmp.Decode(bytes.NewReader(data))
	case "gif":
		img, err = gif.Decode(bytes.NewReader(data))
	case "webp":
		img, err = webp.Decode(bytes.NewReader(data))
	default:
		err = errNoGoDecoder
	}
	if err != nil {
		var first *tiffIFD
		if ifds != nil {
			first = &ifds[0]
		}
		derr := goError(format, first, err)
		if !errors.Is(derr, ErrUnsupported) {
			return nil, derr
		}
		if extraDecoder == nil {
			return nil, derr
		}
		img, err = extraDecoder.Decode(data)
		if err != nil {
			return nil, &DecodeError{Kind: ErrMalformed, Err: fmt.Errorf("%s: %s: %w", format, extraDecoder.Name(), err)}
		}
		if b := img.Bounds(); b.Dx() != cfg.Width || b.Dy() != cfg.Height {
			return nil, &DecodeError{Kind: ErrMalformed, Err: fmt.Errorf("%s: %s decoded %d×%d pixels, the header says %d×%d",
				format, extraDecoder.Name(), b.Dx(), b.Dy(), cfg.Width, cfg.Height)}
		}
	}
	d := &Decoded{Image: img, Format: format, Pages: 1, Page: 1}
	switch format {
	case "tiff":
		d.DPI, d.Pages = ifds[0].dpi, len(ifds)
		if d.Pages > 1 {
			d.Warnings = append(d.Warnings, fmt.Sprintf("multi-page TIFF with %d pages: only the first page is used (OpenPages reads them all)", d.Pages))
		}
	case "png":
		d.DPI = pngDPI(data)
	case "jpeg":
		d.DPI = jfifDPI(data)
		if d.DPI == 0 {
			d.DPI = exifDPI(data)
		}
	case "bmp":
		d.DPI = bmpDPI(data)
	case "jp2":
		d.DPI = jp2DPI(data)
	}
	return d, nil
}

// checkSize refuses zero-size images and images over the pixel limit.
func checkSize(format string, w, h, maxPixels int) error {
	if w <= 0 || h <= 0 {
		return &DecodeError{Kind: ErrMalformed, Err: fmt.Errorf("%s: zero-size image %d×%d", format, w, h)}
	}
	if int64(w)*int64(h) > int64(maxPixels) {
		return &DecodeError{Kind: ErrTooLarge,
			Err: fmt.Errorf("%d×%d pixels is more than the limit of %d", w, h, maxPixels)}
	}
	return nil
}

// goError turns a pure-Go decoder's error into a *DecodeError; an
// unsupported variant is named, with what reads it.
func goError(format string, ifd *tiffIFD, err error) error {
	if format == "tiff" && ifd != nil && ifd.compression == 3 && strings.HasPrefix(err.Error(), "ccitt:") {
		// golang.org/x/image/ccitt (v0.48) reads Group 3 data
		// without End-of-Line codes only; libtiff and fax
		// software write EOLs, often byte-aligned (T4Options
		// bit 2), which it rejects as "missing End-of-Line".
		err = fmt.Errorf("tiff: CCITT Group 3 with End-of-Line codes (%v)", err)
		return unsupported(err)
	}
	if errors.Is(err, errNoGoDecoder) {
		return unsupported(fmt.Errorf("%s", variantName(format, ifd)))
	}
	derr := classify(format, err)
	if errors.Is(derr, ErrUnsupported) {
		return unsupported(fmt.Errorf("%s (%v)", variantName(format, ifd), err))
	}
	return derr
}

// unsupported wraps err as ErrUnsupported and, in a build without an extra
// decoder, says which build reads it.
func unsupported(err error) error {
	if extraDecoder == nil {
		err = fmt.Errorf("%w; this build has no Leptonica decoder: the engine build (cgo) reads 2- and 4-bit grey TIFF, CCITT G3 with End-of-Line codes, JPEG in TIFF, JPEG 2000 and PNM", err)
	}
	return &DecodeError{Kind: ErrUnsupported, Err: err}
}

// variantName describes the kind of image for an unsupported-variant error.
func variantName(format string, ifd *tiffIFD) string {
	switch format {
	case "jp2":
		return "JPEG 2000"
	case "pnm":
		return "PNM (Netpbm)"
	case "tiff":
		if ifd == nil {
			return "TIFF"
		}
		switch {
		case ifd.compression == 6:
			return "TIFF with old-style JPEG compression"
		case ifd.compression == 7:
			return "TIFF with JPEG compression"
		case ifd.bps != 1 && ifd.bps != 8 && ifd.bps != 16:
			return fmt.Sprintf("%d-bit TIFF", ifd.bps)
		}
		return fmt.Sprintf("TIFF (compression %d, %d bits, %d samples)", ifd.compression, ifd.bps, ifd.spp)
	}
	return format
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
	case bytes.HasPrefix(data, []byte("GIF87a")), bytes.HasPrefix(data, []byte("GIF89a")):
		return "gif"
	case len(data) >= 12 && string(data[:4]) == "RIFF" && string(data[8:12]) == "WEBP":
		return "webp"
	case bytes.HasPrefix(data, []byte("\x00\x00\x00\x0cjP  \r\n\x87\n")), bytes.HasPrefix(data, []byte("\xff\x4f\xff\x51")):
		return "jp2"
	case len(data) >= 3 && data[0] == 'P' && data[1] >= '1' && data[1] <= '6' && isPNMSpace(data[2]):
		return "pnm"
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
	seg := jpegSegment(data, 0xe0, "JFIF\x00")
	if len(seg) < 12 {
		return 0
	}
	x := float64(binary.BigEndian.Uint16(seg[8:10]))
	switch seg[7] { // units
	case 1:
		return x
	case 2:
		return x * 2.54
	}
	return 0 // aspect ratio only
}

// jpegSegment returns the payload of the first marker segment of a JPEG
// file that has the given marker and starts with prefix, before the start
// of scan (ITU-T T.81, 1992, annex B); nil when there is none.
func jpegSegment(data []byte, marker byte, prefix string) []byte {
	if len(data) < 2 {
		return nil
	}
	p := data[2:]
	for len(p) >= 4 && p[0] == 0xff {
		m := p[1]
		if m == 0xd8 || (m >= 0xd0 && m <= 0xd7) || m == 0x01 {
			p = p[2:]
			continue
		}
		n := int(binary.BigEndian.Uint16(p[2:4]))
		if n < 2 || n+2 > len(p) || m == 0xda { // start of scan: no more headers
			return nil
		}
		seg := p[4 : 2+n]
		if m == marker && len(seg) >= len(prefix) && string(seg[:len(prefix)]) == prefix {
			return seg
		}
		p = p[2+n:]
	}
	return nil
}
