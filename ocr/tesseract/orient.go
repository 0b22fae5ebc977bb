//go:build cgo && !notesseract

package tesseract

/*
#cgo LDFLAGS: -ltesseract
#include <stdlib.h>
#include <tesseract/capi.h>

// recto_osd_new returns a Tesseract client initialised with the
// orientation and script detection data (osd.traineddata), or NULL.
static TessBaseAPI *recto_osd_new(const char *datapath) {
	TessBaseAPI *h = TessBaseAPICreate();
	if (h == NULL) return NULL;
	if (TessBaseAPIInit3(h, datapath, "osd") != 0) {
		TessBaseAPIDelete(h);
		return NULL;
	}
	TessBaseAPISetVariable(h, "debug_file", "/dev/null");
	return h;
}

// recto_osd runs orientation detection on an 8-bit grey image. It returns
// 0 when the engine could not decide.
static int recto_osd(TessBaseAPI *h, const unsigned char *pix, int w, int hgt, int bpl, int dpi, int *deg, float *conf) {
	TessBaseAPISetImage(h, pix, w, hgt, 1, bpl);
	TessBaseAPISetSourceResolution(h, dpi);
	const char *script = NULL;
	float sconf = 0;
	// The script name points into the engine's own character set
	// (Tesseract 5.3, baseapi.cpp): it is not to be freed, whatever
	// capi.h says.
	BOOL ok = TessBaseAPIDetectOrientationScript(h, deg, conf, &script, &sconf);
	TessBaseAPIClear(h);
	return ok;
}
*/
import "C"

import (
	"context"
	"errors"
	"image"
	"runtime"
	"unsafe"

	"recto/ocr"
)

// osdClient is a second Tesseract client, initialised with the orientation
// and script detection data, made on first use.
type osdClient struct {
	h *C.TessBaseAPI
}

func (o *osdClient) close() {
	if o != nil && o.h != nil {
		C.TessBaseAPIEnd(o.h)
		C.TessBaseAPIDelete(o.h)
		o.h = nil
	}
}

// Orientation implements ocr.Orienter with Tesseract's orientation and
// script detection (TessBaseAPIDetectOrientationScript, osd.traineddata,
// Debian package tesseract-ocr-osd). deg is how far the page is turned
// counter-clockwise as seen (0, 90, 180 or 270): turning it clockwise by
// deg makes it upright. conf is the engine's orientation confidence;
// ok is false when the engine could not decide (too little text).
func (e *engine) Orientation(ctx context.Context, img *image.Gray, dpi int) (deg int, conf float64, ok bool, err error) {
	if e.client == nil {
		return 0, 0, false, errors.New("tesseract: engine is closed")
	}
	if err := ctx.Err(); err != nil {
		return 0, 0, false, err
	}
	r := img.Bounds()
	if r.Dx() < 1 || r.Dy() < 1 {
		return 0, 0, false, nil
	}
	if e.osd == nil {
		var dp *C.char
		if e.dataDir != "" {
			dp = C.CString(e.dataDir)
			defer C.free(unsafe.Pointer(dp))
		}
		h := C.recto_osd_new(dp)
		if h == nil {
			return 0, 0, false, errors.New("tesseract: the orientation data (osd.traineddata; Debian: tesseract-ocr-osd) is not usable")
		}
		e.osd = &osdClient{h: h}
	}
	if dpi < 70 || dpi > 2400 {
		dpi = ocr.DefaultDPI
	}
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	if threadsLimited {
		ompSerial()
	}
	off := img.PixOffset(r.Min.X, r.Min.Y)
	var d C.int
	var c C.float
	if C.recto_osd(e.osd.h, (*C.uchar)(unsafe.Pointer(&img.Pix[off])), C.int(r.Dx()), C.int(r.Dy()), C.int(img.Stride), C.int(dpi), &d, &c) == 0 {
		return 0, 0, false, nil
	}
	return int(d), float64(c), true, nil
}
