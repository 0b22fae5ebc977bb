//go:build cgo && !notesseract

package lept

/*
#cgo pkg-config: lept
#include <stdlib.h>
#include <leptonica/allheaders.h>

// recto_norm turns any Pix into an 8-bpp grey or 32-bpp RGB(A) Pix that
// the caller destroys: colormaps are removed (grey stays grey), 1-, 2-, 4-
// and 16-bpp images go to 8 bpp with pixConvertTo8 (1 bpp: black is 0,
// white 255; 2 and 4 bpp scaled to 0-255; 16 bpp: the high byte).
static PIX *recto_norm(PIX *p) {
	PIX *q;
	if (pixGetColormap(p) != NULL) {
		q = pixRemoveColormap(p, REMOVE_CMAP_BASED_ON_SRC);
	} else {
		q = pixClone(p);
	}
	if (q == NULL) return NULL;
	l_int32 d = pixGetDepth(q);
	if (d == 8 || d == 32) return q;
	PIX *r = pixConvertTo8(q, 0);
	pixDestroy(&q);
	return r;
}

// recto_copy8 copies an 8-bpp Pix into dst (w*h bytes, rows packed).
static void recto_copy8(PIX *p, unsigned char *dst) {
	l_int32 w = pixGetWidth(p), h = pixGetHeight(p), wpl = pixGetWpl(p);
	l_uint32 *data = pixGetData(p);
	for (l_int32 y = 0; y < h; y++) {
		l_uint32 *line = data + y * wpl;
		unsigned char *out = dst + (size_t)y * w;
		for (l_int32 x = 0; x < w; x++) out[x] = GET_DATA_BYTE(line, x);
	}
}

// recto_copy32 copies a 32-bpp Pix into dst as RGBA bytes (w*h*4);
// alpha is 255 unless the Pix has 4 samples per pixel.
static void recto_copy32(PIX *p, unsigned char *dst) {
	l_int32 w = pixGetWidth(p), h = pixGetHeight(p), wpl = pixGetWpl(p);
	int alpha = pixGetSpp(p) == 4;
	l_uint32 *data = pixGetData(p);
	for (l_int32 y = 0; y < h; y++) {
		l_uint32 *line = data + y * wpl;
		unsigned char *out = dst + (size_t)y * w * 4;
		for (l_int32 x = 0; x < w; x++) {
			l_uint32 v = line[x];
			out[4*x] = (v >> L_RED_SHIFT) & 0xff;
			out[4*x+1] = (v >> L_GREEN_SHIFT) & 0xff;
			out[4*x+2] = (v >> L_BLUE_SHIFT) & 0xff;
			out[4*x+3] = alpha ? (v >> L_ALPHA_SHIFT) & 0xff : 255;
		}
	}
}
*/
import "C"

import (
	"errors"
	"image"
	"strings"
	"unsafe"

	"recto/ocr"
)

func init() {
	// Leptonica reports every failure on stderr; errors come back as
	// Go errors instead.
	C.setMsgSeverity(C.L_SEVERITY_NONE)
	ocr.RegisterExtraDecoder(decoder{name: version()})
}

// Available reports whether this build decodes through Leptonica.
func Available() bool { return true }

func version() string {
	v := C.getLeptonicaVersion()
	if v == nil {
		return "Leptonica"
	}
	defer C.free(unsafe.Pointer(v))
	return "Leptonica " + strings.TrimPrefix(C.GoString(v), "leptonica-")
}

type decoder struct{ name string }

func (d decoder) Name() string { return d.name }

func (d decoder) Decode(data []byte) (image.Image, error) {
	if len(data) == 0 {
		return nil, errors.New("no data")
	}
	p := C.pixReadMem((*C.l_uint8)(unsafe.Pointer(&data[0])), C.size_t(len(data)))
	if p == nil {
		return nil, errors.New("pixReadMem could not read the image")
	}
	defer C.pixDestroy(&p)
	return toImage(p)
}

func (d decoder) DecodeTIFFPage(path string, page int) (image.Image, error) {
	cs := C.CString(path)
	defer C.free(unsafe.Pointer(cs))
	p := C.pixReadTiff(cs, C.l_int32(page))
	if p == nil {
		return nil, errors.New("pixReadTiff could not read the page")
	}
	defer C.pixDestroy(&p)
	return toImage(p)
}

// toImage copies p into a new *image.Gray (1- to 16-bpp and grey colormap
// images) or *image.RGBA / *image.NRGBA (colour, with alpha).
func toImage(p *C.PIX) (image.Image, error) {
	q := C.recto_norm(p)
	if q == nil {
		return nil, errors.New("Leptonica could not convert the image")
	}
	defer C.pixDestroy(&q)
	w, h := int(C.pixGetWidth(q)), int(C.pixGetHeight(q))
	if w <= 0 || h <= 0 {
		return nil, errors.New("empty image")
	}
	r := image.Rect(0, 0, w, h)
	if C.pixGetDepth(q) == 8 {
		g := image.NewGray(r)
		C.recto_copy8(q, (*C.uchar)(unsafe.Pointer(&g.Pix[0])))
		return g, nil
	}
	if C.pixGetSpp(q) == 4 {
		n := image.NewNRGBA(r)
		C.recto_copy32(q, (*C.uchar)(unsafe.Pointer(&n.Pix[0])))
		return n, nil
	}
	c := image.NewRGBA(r)
	C.recto_copy32(q, (*C.uchar)(unsafe.Pointer(&c.Pix[0])))
	return c, nil
}
