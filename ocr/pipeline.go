package ocr

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"image"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"time"
)

// Process prepares src (unless o.NoPrepare), recognises it with eng and
// returns the page record with word boxes mapped back to src's pixels
// (origin at src's top left). dpi is the resolution src's file declares; 0
// or less means the file has none. The resolution used for the page and
// handed to the engine is decided from that tag, o.DPI and the size of the
// text itself (see PrepOptions.DPI and EstimateDPI), without preparation
// too; the record keeps the tag, the estimate and the choice. The prepared
// image is returned only when o.KeepImage is set. A page that preparation
// finds blank is not handed to the engine and gets a record without words.
//
// A page found turned by 90°, 180° or 270° is read upright (see
// processOriented).
//
// The record's Source and SHA256 are left empty; ProcessFile fills them.
func Process(ctx context.Context, eng Engine, src image.Image, dpi float64, o Options) (*Record, *image.Gray, error) {
	return processOriented(ctx, eng, src, dpi, o)
}

// process is Process without orientation detection.
func process(ctx context.Context, eng Engine, src image.Image, dpi float64, o Options) (*Record, *image.Gray, error) {
	if err := ctx.Err(); err != nil {
		return nil, nil, err
	}
	sb := src.Bounds()
	if sb.Empty() {
		return nil, nil, errors.New("ocr: empty image")
	}
	tag := max(dpi, 0)
	rec := &Record{
		Version:   RecordVersion,
		Lang:      o.Lang,
		Width:     sb.Dx(),
		Height:    sb.Dy(),
		TaggedDPI: tag,
		TimingsMS: map[string]float64{},
		Words:     []Word{},
	}
	if d, ok := eng.(EngineDescriber); ok {
		info := d.Describe()
		rec.Engine = &info
	}

	var p *Prepared
	if o.NoPrepare {
		t := time.Now()
		g := toGray(src)
		p = &Prepared{Image: g, Binarization: "none", Scale: 1, ToOriginal: func(b Box) Box { return b }}
		rec.TimingsMS["gray"] = ms(time.Since(t))
		// No preparation, but the engine is still told the page's
		// resolution, decided as for a prepared page.
		t = time.Now()
		p.Ink = measureInk(g, otsu(histogram(g)))
		p.EstimatedDPI, _ = EstimateDPI(p.Ink)
		p.PageDPI, p.DPISource, _ = chooseDPI(tag, max(o.DPI, 0), p.Ink, 0)
		p.DPI = p.PageDPI
		rec.TimingsMS["resolution"] = ms(time.Since(t))
	} else {
		var err error
		po := o.Prep
		if po.DPI <= 0 {
			po.DPI = tag
		}
		if po.UntaggedDPI <= 0 {
			po.UntaggedDPI = max(o.DPI, 0)
		}
		p, err = Prepare(src, po)
		if err != nil {
			return nil, nil, err
		}
		for _, s := range p.Steps {
			rec.TimingsMS[s.Name] += ms(s.Duration)
		}
	}
	// The resolution of the page itself, and of the image the engine reads
	// (preparation may have enlarged the page).
	dpi = p.PageDPI
	if dpi <= 0 {
		dpi = o.dpi()
	}
	edpi := dpi
	if p.DPI > 0 {
		edpi = p.DPI
	}
	rec.DPI, rec.DPISource, rec.EstimatedDPI = dpi, p.DPISource, p.EstimatedDPI
	ink := p.Ink
	rec.Ink = &ink
	rec.Skew = p.Skew
	rec.SkewEstimate, rec.SkewConfidence, rec.SkewMeasuredOn = p.SkewEstimate, p.SkewConfidence, p.SkewMeasuredOn
	rec.Binarization = p.Binarization
	rec.Threshold = p.Threshold
	rec.Noise = p.Noise
	rec.Blank = p.Blank

	if !p.Blank {
		t := time.Now()
		words, err := eng.Recognize(ctx, p.Image, int(math.Round(edpi)))
		rec.TimingsMS["engine"] = ms(time.Since(t))
		if err != nil {
			return nil, nil, err
		}
		toOrig := p.ToOriginal
		if toOrig == nil {
			toOrig = func(b Box) Box { return b }
		}
		rec.Words, rec.MeanConfidence = placeWords(words, toOrig, rec.Width, rec.Height)
		if !o.NoPrepare && o.SelfCheck != Off {
			kept, err := selfCheck(ctx, eng, src, tag, rec, o)
			if err != nil {
				return nil, nil, err
			}
			if kept != nil {
				p = &Prepared{Image: kept, Binarization: "none"}
			}
		}
	}
	if !o.KeepImage {
		return rec, nil, nil
	}
	return rec, p.Image, nil
}

// clip keeps b inside a w×h page.
func clip(b Box, w, h int) Box {
	x0, y0 := max(0, b.X), max(0, b.Y)
	x1, y1 := min(w, b.X+b.W), min(h, b.Y+b.H)
	return Box{X: x0, Y: y0, W: max(0, x1-x0), H: max(0, y1-y0)}
}

func ms(d time.Duration) float64 { return float64(d.Microseconds()) / 1000 }

// ProcessFile decodes the page image at path, processes it and fills the
// record's Source (path as given), SHA256 (of the file's bytes), the
// decoder's Warnings and the "decode" timing. Errors name the file. The file is only read.
func ProcessFile(ctx context.Context, eng Engine, path string, o Options) (*Record, *image.Gray, error) {
	if err := ctx.Err(); err != nil {
		return nil, nil, err
	}
	sum, err := hashFile(path)
	if err != nil {
		return nil, nil, err
	}
	t := time.Now()
	d, err := DecodeFile(path, DecodeOptions{MaxPixels: o.maxPixels()})
	decode := time.Since(t)
	if err != nil {
		return nil, nil, nameFile(path, err)
	}
	rec, prepared, err := Process(ctx, eng, d.Image, d.DPI, o)
	if err != nil {
		if ctx.Err() != nil {
			return nil, nil, err
		}
		return nil, nil, nameFile(path, err)
	}
	rec.Source = path
	rec.SHA256 = sum
	rec.Warnings = d.Warnings
	rec.TimingsMS["decode"] = ms(decode)
	return rec, prepared, nil
}

// ProcessFilePage is ProcessFile for page n (from 1) of a multi-page file
// (OpenPages: a multi-page TIFF page by page, a PDF through poppler); n 0
// is ProcessFile. Only page n is decoded, so memory does not grow with the
// file's pages. sum is the file's SHA-256 in hex when the caller has it
// ("" to compute it). The record names the page (FilePage, FilePages); an
// error names the file and the page.
func ProcessFilePage(ctx context.Context, eng Engine, path string, n int, sum string, o Options) (*Record, *image.Gray, error) {
	if n == 0 {
		return ProcessFile(ctx, eng, path, o)
	}
	if err := ctx.Err(); err != nil {
		return nil, nil, err
	}
	if sum == "" {
		var err error
		if sum, err = hashFile(path); err != nil {
			return nil, nil, err
		}
	}
	t := time.Now()
	pf, err := OpenPages(ctx, path, DecodeOptions{MaxPixels: o.maxPixels()})
	if err != nil {
		return nil, nil, err
	}
	defer pf.Close()
	d, err := pf.Page(ctx, n)
	decode := time.Since(t)
	if err != nil {
		return nil, nil, err
	}
	rec, prepared, err := Process(ctx, eng, d.Image, d.DPI, o)
	if err != nil {
		if ctx.Err() != nil {
			return nil, nil, err
		}
		return nil, nil, fmt.Errorf("%w (page %d of %q)", err, n, path)
	}
	rec.Source, rec.SHA256 = path, sum
	rec.FilePage, rec.FilePages = n, pf.Pages()
	rec.Warnings = d.Warnings
	rec.TimingsMS["decode"] = ms(decode)
	return rec, prepared, nil
}

// CountPages returns the number of pages of the page file at path, reading
// only headers (OpenPages): more than 1 for a multi-page TIFF or a PDF of
// several pages, 1 for anything else, including a file that cannot be
// opened as pages (it fails when it is processed, naming the problem).
func CountPages(ctx context.Context, path string) int {
	ext := strings.ToLower(filepath.Ext(path))
	if ext != ".tif" && ext != ".tiff" && ext != ".pdf" {
		return 1
	}
	pf, err := OpenPages(ctx, path, DecodeOptions{})
	if err != nil {
		return 1
	}
	defer pf.Close()
	return pf.Pages()
}

func hashFile(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", fmt.Errorf("ocr: %w", err) // *PathError names the file
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("ocr: %w", err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// nameFile makes sure err names path, without naming it twice.
func nameFile(path string, err error) error {
	// A DecodeError or PathError already names the file, quoted (so with
	// escapes when the name holds quotes or bytes that are not UTF-8).
	if msg := err.Error(); strings.Contains(msg, path) || strings.Contains(msg, fmt.Sprintf("%q", path)) {
		return err
	}
	return fmt.Errorf("ocr: %q: %w", path, err)
}
