//go:build cgo

// Package leptref calls Leptonica (D. Bloomberg, leptonica.org, BSD-2) through
// cgo so that tests of package ocr can check their results against an
// independent, widely used implementation. It is used only by tests and
// needs libleptonica-dev; it has no files without cgo.
package leptref

/*
#cgo pkg-config: lept
#include <leptonica/allheaders.h>
*/
import "C"

import (
	"errors"
	"image"
)

// pix copies g into a new 8-bpp Leptonica image; the caller destroys it.
func pix(g *image.Gray) (*C.PIX, error) {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	p := C.pixCreate(C.l_int32(w), C.l_int32(h), 8)
	if p == nil {
		return nil, errors.New("leptref: pixCreate failed")
	}
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			v := g.Pix[g.PixOffset(g.Rect.Min.X+x, g.Rect.Min.Y+y)]
			C.pixSetPixel(p, C.l_int32(x), C.l_int32(y), C.l_uint32(v))
		}
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
