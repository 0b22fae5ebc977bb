package ocr

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
)

// PDF pages are read with Debian's poppler-utils, one page per call:
// pdfinfo counts the pages and gives each page's size and rotation,
// pdfimages lists and extracts the images of a page, pdftoppm renders a
// page. Poppler is chosen over a Go library from the module proxy because it
// both extracts embedded images and renders pages that are not one scan
// (vector text, several images, JBIG2 and JPX filters), it streams by page
// (-f/-l), so a PDF of thousands of pages is never loaded whole, and a
// crash on a broken PDF stays in its own process.

// PDFRenderDPI is the resolution at which a PDF page that is not one
// embedded scan is rendered.
const PDFRenderDPI = 300

// ErrNoPoppler is returned for PDF input when poppler-utils is not installed.
var ErrNoPoppler = errors.New("reading PDF needs poppler-utils (pdfinfo, pdfimages, pdftoppm); on Debian: apt-get install poppler-utils")

type pdfFile struct {
	path  string
	pages int
}

// poppler runs one of poppler's tools and returns its standard output; a
// failure carries the last line of its standard error.
func poppler(ctx context.Context, tool string, args ...string) ([]byte, error) {
	bin, err := exec.LookPath(tool)
	if err != nil {
		return nil, ErrNoPoppler
	}
	cmd := exec.CommandContext(ctx, bin, args...)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	cmd.Env = append(os.Environ(), "LC_ALL=C")
	if err := cmd.Run(); err != nil {
		if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		msg := lastLine(stderr.String())
		if msg == "" {
			msg = err.Error()
		}
		return nil, fmt.Errorf("%s: %s", tool, msg)
	}
	if msg := damagedData(stderr.String()); msg != "" {
		return nil, fmt.Errorf("%s: the page's image data is damaged: %s", tool, msg)
	}
	return stdout.Bytes(), nil
}

// damagedData returns the first error poppler reported while decoding an
// image's compressed data, or "". Poppler then still writes an image and
// exits 0, with a garbled page (a Flate stream overwritten in the middle
// gives "Syntax Error (102322): Bad uncompressed block length in flate
// stream"), which must not be read as if it were the scan. Other syntax
// errors (a damaged cross-reference table that poppler rebuilds) leave the
// pixels intact and are let pass. The decoders' messages name their filter
// (poppler's Stream.cc: flate, DCT, CCITTFax, LZW; JBIG2Stream, JPXStream).
func damagedData(stderr string) string {
	for line := range strings.Lines(stderr) {
		line = strings.TrimSpace(line)
		if !strings.HasPrefix(line, "Syntax Error") {
			continue
		}
		l := strings.ToLower(line)
		for _, f := range []string{"flate", "dct", "ccitt", "lzw", "jbig2", "jpx", "jpeg"} {
			if strings.Contains(l, f) {
				return line
			}
		}
	}
	return ""
}

func lastLine(s string) string {
	lines := strings.Split(strings.TrimSpace(s), "\n")
	return strings.TrimSpace(lines[len(lines)-1])
}

// openPDF counts the pages of a PDF with pdfinfo.
func openPDF(ctx context.Context, path string) (*pdfFile, error) {
	out, err := poppler(ctx, "pdfinfo", "--", path)
	if err != nil {
		if errors.Is(err, ErrNoPoppler) {
			return nil, &DecodeError{File: path, Kind: ErrUnsupported, Err: err}
		}
		if ctx.Err() != nil {
			return nil, err
		}
		if strings.Contains(err.Error(), "Incorrect password") {
			return nil, &DecodeError{File: path, Kind: ErrUnsupported, Err: errors.New("pdf: encrypted, and a password is needed to open it")}
		}
		return nil, &DecodeError{File: path, Kind: ErrMalformed, Err: fmt.Errorf("pdf: %w", err)}
	}
	pages := 0
	for _, line := range strings.Split(string(out), "\n") {
		if v, ok := strings.CutPrefix(line, "Pages:"); ok {
			pages, _ = strconv.Atoi(strings.TrimSpace(v))
		}
	}
	if pages < 1 {
		return nil, &DecodeError{File: path, Kind: ErrMalformed, Err: errors.New("pdf: no pages")}
	}
	return &pdfFile{path: path, pages: pages}, nil
}

// pdfPageInfo is a page's size in points and its /Rotate.
type pdfPageInfo struct {
	w, h float64
	rot  int
}

func (f *pdfFile) info(ctx context.Context, n int) (pdfPageInfo, error) {
	var pi pdfPageInfo
	s := strconv.Itoa(n)
	out, err := poppler(ctx, "pdfinfo", "-f", s, "-l", s, "--", f.path)
	if err != nil {
		return pi, err
	}
	found := false
	for _, line := range strings.Split(string(out), "\n") {
		fields := strings.Fields(line)
		if len(fields) < 4 || fields[0] != "Page" || fields[1] != s {
			continue
		}
		switch fields[2] {
		case "size:": // Page    2 size:  614.4 x 792 pts
			if len(fields) >= 6 {
				pi.w, _ = strconv.ParseFloat(fields[3], 64)
				pi.h, _ = strconv.ParseFloat(fields[5], 64)
				found = pi.w > 0 && pi.h > 0
			}
		case "rot:":
			pi.rot, _ = strconv.Atoi(fields[3])
		}
	}
	if !found {
		return pi, errors.New("pdfinfo gave no page size")
	}
	return pi, nil
}

// pdfImage is one row of `pdfimages -list`.
type pdfImage struct {
	typ           string // image, mask, smask, stencil
	width, height int
}

func (f *pdfFile) images(ctx context.Context, n int) ([]pdfImage, error) {
	s := strconv.Itoa(n)
	out, err := poppler(ctx, "pdfimages", "-list", "-f", s, "-l", s, "--", f.path)
	if err != nil {
		return nil, err
	}
	var imgs []pdfImage
	rows := false
	for _, line := range strings.Split(string(out), "\n") {
		if strings.HasPrefix(line, "----") {
			rows = true
			continue
		}
		fields := strings.Fields(line)
		if !rows || len(fields) < 5 {
			continue
		}
		w, _ := strconv.Atoi(fields[3])
		h, _ := strconv.Atoi(fields[4])
		imgs = append(imgs, pdfImage{typ: fields[2], width: w, height: h})
	}
	return imgs, nil
}

// page decodes page n: when the page is one embedded image covering the
// page (and the page is not rotated), that image at its own resolution;
// otherwise the page rendered at PDFRenderDPI. The pixel limit is checked
// on the listed image size or the page size before anything is decoded.
func (f *pdfFile) page(ctx context.Context, n, maxPixels int) (*Decoded, error) {
	pi, err := f.info(ctx, n)
	if err != nil {
		return nil, pdfErr(ctx, err)
	}
	imgs, err := f.images(ctx, n)
	if err != nil {
		return nil, pdfErr(ctx, err)
	}
	tmp, err := os.MkdirTemp("", "recto-pdf-")
	if err != nil {
		return nil, &DecodeError{Err: err}
	}
	defer os.RemoveAll(tmp)
	s := strconv.Itoa(n)
	if len(imgs) == 1 && imgs[0].typ == "image" && pi.rot%360 == 0 && covers(imgs[0], pi) {
		im := imgs[0]
		if err := checkSize("pdf", im.width, im.height, maxPixels); err != nil {
			return nil, err
		}
		if _, err := poppler(ctx, "pdfimages", "-png", "-f", s, "-l", s, "--", f.path, filepath.Join(tmp, "i")); err != nil {
			return nil, pdfErr(ctx, err)
		}
		d, err := decodeOnly(tmp, maxPixels)
		if err != nil {
			return nil, err
		}
		d.DPI = math.Round(float64(im.width)*72/pi.w*100) / 100
		d.Format = "pdf"
		return d, nil
	}
	w, h := pi.w, pi.h
	if pi.rot%180 != 0 {
		w, h = h, w
	}
	pw, ph := int(math.Ceil(w/72*PDFRenderDPI)), int(math.Ceil(h/72*PDFRenderDPI))
	if err := checkSize("pdf", pw, ph, maxPixels); err != nil {
		return nil, err
	}
	if _, err := poppler(ctx, "pdftoppm", "-r", strconv.Itoa(PDFRenderDPI), "-f", s, "-l", s, "-singlefile", "-png", "--", f.path, filepath.Join(tmp, "r")); err != nil {
		return nil, pdfErr(ctx, err)
	}
	d, err := decodeOnly(tmp, maxPixels)
	if err != nil {
		return nil, err
	}
	d.DPI, d.Format = PDFRenderDPI, "pdf"
	return d, nil
}

// covers reports whether an image drawn on the page fills it (within 3 %
// in each direction, at the same resolution both ways): then the page is
// that scan.
func covers(im pdfImage, pi pdfPageInfo) bool {
	if im.width <= 0 || im.height <= 0 {
		return false
	}
	// The listed x-ppi and y-ppi are rounded; the page's aspect ratio
	// must match the image's.
	ar := (float64(im.width) / float64(im.height)) / (pi.w / pi.h)
	return ar > 0.97 && ar < 1.03
}

// decodeOnly decodes the one file poppler wrote into dir.
func decodeOnly(dir string, maxPixels int) (*Decoded, error) {
	files, err := filepath.Glob(filepath.Join(dir, "*"))
	if err != nil || len(files) != 1 {
		return nil, &DecodeError{Kind: ErrMalformed, Err: fmt.Errorf("pdf: poppler wrote %d files for the page", len(files))}
	}
	data, err := os.ReadFile(files[0])
	if err != nil {
		return nil, &DecodeError{Err: err}
	}
	d, err := decodeBytes(data, maxPixels)
	if err != nil {
		return nil, err
	}
	d.Warnings = nil
	return d, nil
}

func pdfErr(ctx context.Context, err error) error {
	if ctx.Err() != nil {
		return ctx.Err()
	}
	if errors.Is(err, ErrNoPoppler) {
		return &DecodeError{Kind: ErrUnsupported, Err: err}
	}
	return &DecodeError{Kind: ErrMalformed, Err: fmt.Errorf("pdf: %w", err)}
}

// decodeFirstPDFPage is DecodeFile for a PDF: the first page, with a
// warning when there are more.
func decodeFirstPDFPage(path string, o DecodeOptions) (*Decoded, error) {
	ctx := context.Background()
	pf, err := OpenPages(ctx, path, o)
	if err != nil {
		return nil, err
	}
	defer pf.Close()
	d, err := pf.Page(ctx, 1)
	if err != nil {
		return nil, err
	}
	if pf.Pages() > 1 {
		d.Warnings = append(d.Warnings, fmt.Sprintf("PDF with %d pages: only the first page is used (OpenPages reads them all)", pf.Pages()))
	}
	return d, nil
}
