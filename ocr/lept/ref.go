//go:build cgo && !notesseract

package lept

/*
#include <stdlib.h>
#include <leptonica/allheaders.h>
*/
import "C"

import (
	"errors"
	"unsafe"
)

// refPixels reads the file at path (page from 0 for a TIFF) with
// Leptonica's own reader and conversion, independently of toImage: pixRead
// or pixReadTiff, pixConvertTo8 (grey) or pixConvertTo32 (colour), then
// pixGetPixel for every pixel. It returns w, h and packed grey bytes or RGB
// triples. Tests compare the decoder against it.
func refPixels(path string, page int, colour bool) (int, int, []byte, error) {
	cs := C.CString(path)
	defer C.free(unsafe.Pointer(cs))
	var p *C.PIX
	if page > 0 {
		p = C.pixReadTiff(cs, C.l_int32(page))
	} else {
		p = C.pixRead(cs)
	}
	if p == nil {
		return 0, 0, nil, errors.New("pixRead failed")
	}
	defer C.pixDestroy(&p)
	if C.pixGetColormap(p) != nil {
		r := C.pixRemoveColormap(p, C.REMOVE_CMAP_BASED_ON_SRC)
		if r == nil {
			return 0, 0, nil, errors.New("pixRemoveColormap failed")
		}
		C.pixDestroy(&p)
		p = r
	}
	var q *C.PIX
	if colour {
		q = C.pixConvertTo32(p)
	} else {
		q = C.pixConvertTo8(p, 0)
	}
	if q == nil {
		return 0, 0, nil, errors.New("pixConvertTo failed")
	}
	defer C.pixDestroy(&q)
	w, h := int(C.pixGetWidth(q)), int(C.pixGetHeight(q))
	var out []byte
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			var v C.l_uint32
			C.pixGetPixel(q, C.l_int32(x), C.l_int32(y), &v)
			if colour {
				var r, g, b C.l_int32
				C.extractRGBValues(v, &r, &g, &b)
				out = append(out, byte(r), byte(g), byte(b))
			} else {
				out = append(out, byte(v))
			}
		}
	}
	return w, h, out, nil
}
