//go:build cgo

// Package leptref calls Leptonica (D. Bloomberg, leptonica.org, BSD-2) through
// cgo so that tests of package ocr can check their results against an
// independent, widely used implementation. It is used only by tests and
// needs libleptonica-dev; it has no files without cgo.
package leptref

/*
#cgo pkg-config: lept
#include <leptonica/allheaders.h>

// fill copies w×h 8-bit pixels (stride bytes per row) into an 8-bpp pix.
static void fill(PIX *p, const unsigned char *src, int w, int h, int stride) {
	l_uint32 *data = pixGetData(p);
	l_int32 wpl = pixGetWpl(p);
	for (int y = 0; y < h; y++) {
		l_uint32 *line = data + y * wpl;
		const unsigned char *row = src + (size_t)y * stride;
		for (int x = 0; x < w; x++) SET_DATA_BYTE(line, x, row[x]);
	}
}
*/
import "C"

import (
	"errors"
	"image"
	"unsafe"
)

// pix copies g into a new 8-bpp Leptonica image; the caller destroys it.
func pix(g *image.Gray) (*C.PIX, error) {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	p := C.pixCreate(C.l_int32(w), C.l_int32(h), 8)
	if p == nil {
		return nil, errors.New("leptref: pixCreate failed")
	}
	if w > 0 && h > 0 {
		off := g.PixOffset(g.Rect.Min.X, g.Rect.Min.Y)
		C.fill(p, (*C.uchar)(unsafe.Pointer(&g.Pix[off])), C.int(w), C.int(h), C.int(g.Stride))
	}
	return p, nil
}

// OtsuThreshold returns Leptonica's global Otsu threshold for g:
// pixOtsuAdaptiveThreshold with one tile covering the image and scorefract
// 0 (the unmodified Otsu criterion). Leptonica's threshold is the first
// level of the light class: pixels below it are foreground.
func OtsuThreshold(g *image.Gray) (int, error) {
	p, err := pix(g)
	if err != nil {
		return 0, err
	}
	defer C.pixDestroy(&p)
	w, h := g.Rect.Dx(), g.Rect.Dy()
	var th *C.PIX
	sx, sy := C.l_int32(max(16, w+1)), C.l_int32(max(16, h+1))
	if C.pixOtsuAdaptiveThreshold(p, sx, sy, 0, 0, 0, &th, nil) != 0 {
		return 0, errors.New("leptref: pixOtsuAdaptiveThreshold failed")
	}
	defer C.pixDestroy(&th)
	var v C.l_uint32
	if C.pixGetPixel(th, 0, 0, &v) != 0 {
		return 0, errors.New("leptref: pixGetPixel failed")
	}
	return int(v), nil
}

// Sauvola binarises g with Leptonica's pixSauvolaBinarize: a window of
// (2·half+1)² pixels, factor k, R = 128, the image extended by a mirrored
// border. The result is 0 for foreground (ink) and 255 for background.
func Sauvola(g *image.Gray, half int, k float64) (*image.Gray, error) {
	p, err := pix(g)
	if err != nil {
		return nil, err
	}
	defer C.pixDestroy(&p)
	var d *C.PIX
	if C.pixSauvolaBinarize(p, C.l_int32(half), C.l_float32(k), 1, nil, nil, nil, &d) != 0 {
		return nil, errors.New("leptref: pixSauvolaBinarize failed")
	}
	defer C.pixDestroy(&d)
	w, h := g.Rect.Dx(), g.Rect.Dy()
	out := image.NewGray(image.Rect(0, 0, w, h))
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			var v C.l_uint32
			C.pixGetPixel(d, C.l_int32(x), C.l_int32(y), &v)
			if v == 0 {
				out.Pix[y*out.Stride+x] = 255
			}
		}
	}
	return out, nil
}

// FindSkew returns Leptonica's skew estimate for g: g is binarised at a
// fixed threshold (pixels below thresh are ink; Leptonica's pixDeskew uses
// 130) and measured by pixFindSkew, which sweeps ±7° at 4× reduction and
// refines by interval halving at 2× reduction. deg is the page's skew,
// counter-clockwise positive as the page is seen, recto's convention
// (Leptonica documents its angle as the clockwise rotation that deskews
// the page: the same number); conf is Leptonica's confidence,
// the ratio of the best to the worst score (0 when the measurement is not
// valid; pixDeskew rotates only from 3.0). ok is false when Leptonica
// reports the measurement invalid (for example no ink).
func FindSkew(g *image.Gray, thresh int) (deg, conf float64, ok bool, err error) {
	p, err := pix(g)
	if err != nil {
		return 0, 0, false, err
	}
	defer C.pixDestroy(&p)
	b := C.pixConvertTo1(p, C.l_int32(thresh))
	if b == nil {
		return 0, 0, false, errors.New("leptref: pixConvertTo1 failed")
	}
	defer C.pixDestroy(&b)
	var a, c C.l_float32
	if C.pixFindSkew(b, &a, &c) != 0 {
		return 0, float64(c), false, nil
	}
	return float64(a), float64(c), true, nil
}
