package ocr

import (
	"context"
	"errors"
	"fmt"
	"image"
	"io"
	"os"
	"path/filepath"
	"strings"

	"golang.org/x/image/tiff"
)

// PageFile is an open page file: a single image (one page), a multi-page
// TIFF (one page per image file directory, thumbnails left out) or a PDF
// (one page per PDF page). Pages are decoded one at a time, on demand, so
// memory does not grow with the number of pages. A PageFile is used by one
// goroutine at a time.
type PageFile struct {
	Path   string // as given to OpenPages
	Format string // "tiff", "pdf", or the single image's format
	o      DecodeOptions
	n      int
	f      *os.File  // multi-page TIFF
	size   int64     // of f
	ifds   []tiffIFD // multi-page TIFF
	pdf    *pdfFile
}

// OpenPages opens the page file at path and counts its pages, reading only
// headers (TIFF directories, the PDF's page count). A single-image file has
// one page; the file is decoded by Page. Errors are *DecodeError naming the
// file. The file is only read.
func OpenPages(ctx context.Context, path string, o DecodeOptions) (*PageFile, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &DecodeError{File: path, Err: err}
	}
	fi, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, &DecodeError{File: path, Err: err}
	}
	if fi.IsDir() {
		f.Close()
		return nil, &DecodeError{File: path, Err: errors.New("is a directory")}
	}
	var head [8]byte
	n, _ := io.ReadFull(f, head[:])
	pf := &PageFile{Path: path, o: o, n: 1}
	switch {
	case n >= 5 && string(head[:5]) == "%PDF-":
		f.Close()
		pdf, err := openPDF(ctx, path)
		if err != nil {
			return nil, err
		}
		pf.Format, pf.pdf, pf.n = "pdf", pdf, pdf.pages
		return pf, nil
	case n == 8 && sniff(head[:]) == "tiff":
		ifds, err := readTIFFIFDs(f, fi.Size())
		if err != nil {
			f.Close()
			return nil, &DecodeError{File: path, Kind: ErrMalformed, Err: fmt.Errorf("tiff: %w", err)}
		}
		pf.Format = "tiff"
		if len(ifds) > 1 {
			pf.f, pf.size, pf.ifds, pf.n = f, fi.Size(), ifds, len(ifds)
			return pf, nil
		}
	default:
		pf.Format = sniff(head[:n])
	}
	f.Close()
	return pf, nil
}

// Pages returns the number of pages, at least 1.
func (p *PageFile) Pages() int { return p.n }

// Page decodes page n (from 1). A page that cannot be decoded gives a
// *DecodeError naming the file and, in a multi-page file, the page; the
// other pages are not affected. Decoded.Page and Decoded.Pages are set, and
// the pixel limit is checked on the page's own header before decoding.
func (p *PageFile) Page(ctx context.Context, n int) (*Decoded, error) {
	if n < 1 || n > p.n {
		return nil, &DecodeError{File: p.Path, Page: n, Err: fmt.Errorf("no page %d: the file has %d", n, p.n)}
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	var (
		d   *Decoded
		err error
	)
	switch {
	case p.pdf != nil:
		d, err = p.pdf.page(ctx, n, p.o.maxPixels())
	case p.ifds != nil:
		d, err = p.tiffPage(n)
	default:
		d, err = DecodeFile(p.Path, p.o)
		if err == nil && d.Pages > 1 {
			// The file changed since OpenPages: it was one page then.
			d.Warnings = nil
		}
	}
	if err != nil {
		var de *DecodeError
		if !errors.As(err, &de) {
			de = &DecodeError{Err: err}
		}
		de.File = p.Path
		if p.n > 1 {
			de.Page = n
		}
		return nil, de
	}
	d.Page, d.Pages = n, p.n
	return d, nil
}

// tiffPage decodes page n of a multi-page TIFF straight from the file.
func (p *PageFile) tiffPage(n int) (*Decoded, error) {
	ifd := p.ifds[n-1]
	if err := checkSize("tiff", ifd.width, ifd.height, p.o.maxPixels()); err != nil {
		return nil, err
	}
	r, err := newIFDAt(p.f, ifd.offset)
	if err != nil {
		return nil, &DecodeError{Kind: ErrMalformed, Err: err}
	}
	var img image.Image
	if ifd.compression == 6 || ifd.compression == 7 {
		err = tiff.UnsupportedError(fmt.Sprintf("compression value %d", ifd.compression))
	} else {
		img, err = decodeTIFFSafe(r)
		if err == nil {
			img = ccittPolarity(img, &ifd)
		}
	}
	if err != nil {
		derr := goError("tiff", &ifd, err)
		if !errors.Is(derr, ErrUnsupported) || extraDecoder == nil {
			return nil, derr
		}
		img, err = extraDecoder.DecodeTIFFPage(p.Path, n-1)
		if err != nil {
			return nil, &DecodeError{Kind: ErrMalformed, Err: fmt.Errorf("tiff: %s: %w", extraDecoder.Name(), err)}
		}
		if b := img.Bounds(); b.Dx() != ifd.width || b.Dy() != ifd.height {
			return nil, &DecodeError{Kind: ErrMalformed, Err: fmt.Errorf("tiff: %s decoded %d×%d pixels, the header says %d×%d",
				extraDecoder.Name(), b.Dx(), b.Dy(), ifd.width, ifd.height)}
		}
	}
	return &Decoded{Image: img, DPI: ifd.dpi, Format: "tiff"}, nil
}

// decodeTIFFSafe runs the pure-Go TIFF decoder, turning a panic on a
// damaged page into an error.
func decodeTIFFSafe(r *ifdAt) (img image.Image, err error) {
	defer func() {
		if v := recover(); v != nil {
			img, err = nil, fmt.Errorf("tiff: decoder failed: %v", v)
		}
	}()
	return tiff.Decode(r)
}

// Close releases the file.
func (p *PageFile) Close() error {
	if p.f != nil {
		err := p.f.Close()
		p.f = nil
		return err
	}
	return nil
}

// PageName names page n of a file with more than one page, for outputs,
// scores, reports and the ledger: the file's name without its suffix, a
// slash and "p" with the 1-based page number in at least four digits, so
// that page 3 of "reel-07.tif" is "reel-07/p0003" (and of "box/reel-07.tif"
// is "box/reel-07/p0003"). A single-image file (pages ≤ 1) keeps name
// unchanged.
func PageName(name string, page, pages int) string {
	if pages <= 1 {
		return name
	}
	stem := strings.TrimSuffix(name, filepath.Ext(name))
	return fmt.Sprintf("%s/p%04d", stem, page)
}

func (o DecodeOptions) maxPixels() int {
	if o.MaxPixels > 0 {
		return o.MaxPixels
	}
	return DefaultMaxPixels
}
