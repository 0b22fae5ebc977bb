//go:build cgo && !notesseract

package tesseract

/*
#cgo LDFLAGS: -ltesseract
#include <dlfcn.h>
#include <stddef.h>
#include <tesseract/capi.h>

// recto_psm returns the page segmentation mode the engine behind h will
// use (h is gosseract's TessBaseAPI handle, a tesseract::TessBaseAPI*).
static int recto_psm(void *h) {
	return (int)TessBaseAPIGetPageSegMode((const TessBaseAPI *)h);
}

// recto_omp_serial turns off OpenMP parallel regions in the libgomp that
// Tesseract loaded, if any: with max-active-levels 0 every parallel region
// runs on one thread. It returns 1 when libgomp was found, 0 otherwise.
static int recto_omp_serial(void) {
	void *h = dlopen("libgomp.so.1", RTLD_LAZY | RTLD_NOLOAD);
	if (h == NULL) return 0;
	void (*set_levels)(int) = (void (*)(int))dlsym(h, "omp_set_max_active_levels");
	if (set_levels != NULL) set_levels(0);
	dlclose(h);
	return set_levels != NULL;
}
*/
import "C"

import (
	"context"
	"errors"
	"fmt"
	"image"
	"os"
	"path/filepath"
	"reflect"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"sync"
	"unsafe"

	"github.com/otiai10/gosseract/v2"

	"recto/ocr"
)

var (
	threadsOnce    sync.Once
	threadsLimited bool // OMP_THREAD_LIMIT was not set by the user
)

// limitThreads makes Tesseract run single-threaded in this process; see the
// package documentation. It must run before the first recognition.
func limitThreads() {
	threadsOnce.Do(func() {
		if os.Getenv("OMP_THREAD_LIMIT") != "" {
			return // the user's choice; libgomp has read it already
		}
		threadsLimited = true
		os.Setenv("OMP_THREAD_LIMIT", "1") // for child processes; libgomp has read its copy already
		C.recto_omp_serial()
	})
}

// ompSerial turns OpenMP parallel regions off (see recto_omp_serial).
func ompSerial() { C.recto_omp_serial() }

// engine is one Tesseract client.
type engine struct {
	client *gosseract.Client
	buf    []byte // PGM scratch, reused across pages
	dpi    int    // resolution last handed to the client
	psm    int    // page segmentation mode asked for
	langs  []string

	dataDir string     // Config.DataDir, for the orientation client
	osd     *osdClient // orientation detection (orient.go), nil until used
}

// Describe implements ocr.EngineDescriber: Tesseract's own version string
// and the settings that change its reading.
func (e *engine) Describe() ocr.EngineInfo {
	v := ""
	if e.client != nil {
		v = e.client.Version()
	}
	return ocr.EngineInfo{Name: "Tesseract", Version: v,
		Settings: "lang=" + strings.Join(e.langs, "+") + " psm=" + strconv.Itoa(e.psm) + " oem=default"}
}

// New returns an Engine with its own Tesseract client. It fails at once,
// with a *MissingLanguageError, when a requested language is not installed.
func New(cfg Config) (ocr.Engine, error) {
	limitThreads()
	have, err := languagesIn(cfg.DataDir)
	if err != nil {
		return nil, err
	}
	langs := ResolveScripts(cfg.langs(), have)
	if err := checkLangs(langs, have); err != nil {
		return nil, err
	}
	if cfg.PSM < 0 || cfg.PSM > 13 {
		return nil, fmt.Errorf("tesseract: page segmentation mode %d out of range 0-13", cfg.PSM)
	}
	c := gosseract.NewClient()
	c.Trim = false
	if cfg.DataDir != "" {
		if err := c.SetTessdataPrefix(cfg.DataDir); err != nil {
			c.Close()
			return nil, err
		}
	}
	c.SetLanguage(langs...)
	// The mode is set as a variable, which gosseract hands to Tesseract
	// after initialising it. gosseract's SetPageSegMode acts at once, on an
	// engine that Init later replaces, so the mode was lost and the
	// library's own default (6, a single block) was used instead of 3.
	psm := cfg.psm()
	c.SetVariable("tessedit_pageseg_mode", strconv.Itoa(psm))
	// Tesseract's diagnostics ("Empty page!!", resolution guesses) would
	// otherwise reach our stderr.
	c.SetVariable(gosseract.DEBUG_FILE, os.DevNull)
	return &engine{client: c, psm: psm, langs: langs, dataDir: cfg.DataDir}, nil
}

// Recognize implements ocr.Engine in one recognition pass.
func (e *engine) Recognize(ctx context.Context, img *image.Gray, dpi int) ([]ocr.Word, error) {
	if e.client == nil {
		return nil, errors.New("tesseract: engine is closed")
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	r := img.Bounds()
	if r.Dx() < 1 || r.Dy() < 1 {
		return nil, nil
	}
	// Tesseract accepts 70-2400 dpi (kMinCredibleResolution and
	// kMaxCredibleResolution, publictypes.h; from memory). A page
	// estimated below 70 dpi is read as at 70, the nearest the engine
	// takes, not as at 300.
	switch {
	case dpi <= 0:
		dpi = ocr.DefaultDPI
	case dpi < 70:
		dpi = 70
	case dpi > 2400:
		dpi = 2400
	}
	if dpi != e.dpi {
		// PGM carries no resolution; Tesseract takes it from this variable.
		e.client.SetVariable("user_defined_dpi", strconv.Itoa(dpi))
		e.dpi = dpi
	}
	e.buf = appendPGM(e.buf[:0], img)
	// OpenMP settings may be per OS thread: keep the goroutine on one
	// thread while switching parallel regions off and recognising.
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	if threadsLimited {
		C.recto_omp_serial()
	}
	if err := e.client.SetImageFromBytes(e.buf); err != nil {
		return nil, fmt.Errorf("tesseract: %w", err)
	}
	boxes, err := e.client.GetBoundingBoxesVerbose()
	if err != nil {
		return nil, fmt.Errorf("tesseract: %w", err)
	}
	if got := e.pageSegMode(); got != e.psm {
		// A guard, not expected to fire: the mode reached the engine or the
		// reading is not the one the user asked for.
		return nil, fmt.Errorf("tesseract: page segmentation mode %d was asked for, the engine used %d", e.psm, got)
	}
	return wordsFromBoxes(boxes, r.Min), nil
}

// pageSegMode asks the engine itself which page segmentation mode it
// uses. gosseract does not export its handle, so it is read from the
// client's unexported field; that field is a plain pointer to Tesseract's
// TessBaseAPI (gosseract v2.4.1, client.go).
func (e *engine) pageSegMode() int {
	f := reflect.ValueOf(e.client).Elem().FieldByName("api")
	if !f.IsValid() || f.Kind() != reflect.UnsafePointer {
		return -1 // a gosseract that changed its layout: the guard fails loudly
	}
	h := *(*unsafe.Pointer)(unsafe.Pointer(f.UnsafeAddr()))
	if h == nil {
		return -1
	}
	return int(C.recto_psm(h))
}

// Close implements ocr.Engine.
func (e *engine) Close() error {
	if e.client == nil {
		return nil
	}
	err := e.client.Close()
	e.client = nil
	e.osd.close()
	e.osd = nil
	return err
}

// wordsFromBoxes turns gosseract's word boxes (block, paragraph and line
// numbers from 1, restarting per block and paragraph) into ocr.Words with
// Block (one per Tesseract block), Par (one per Tesseract paragraph) and
// Line numbered from 0 across the page, in the engine's reading order; off
// shifts boxes back to img's bounds. Empty words are dropped.
func wordsFromBoxes(boxes []gosseract.BoundingBox, off image.Point) []ocr.Word {
	words := make([]ocr.Word, 0, len(boxes))
	block, par, line := -1, -1, -1
	prevBlock, prevPar, prevLine := 0, 0, 0
	for _, b := range boxes {
		text := strings.TrimSpace(b.Word)
		if text == "" {
			continue
		}
		switch {
		case b.BlockNum != prevBlock:
			block++
			par++
			line++
		case b.ParNum != prevPar:
			par++
			line++
		case b.LineNum != prevLine:
			line++
		}
		prevBlock, prevPar, prevLine = b.BlockNum, b.ParNum, b.LineNum
		conf := b.Confidence / 100
		conf = max(0, min(1, conf))
		words = append(words, ocr.Word{
			Text:  text,
			Conf:  conf,
			Box:   ocr.Box{X: b.Box.Min.X + off.X, Y: b.Box.Min.Y + off.Y, W: b.Box.Dx(), H: b.Box.Dy()},
			Block: block,
			Par:   par,
			Line:  line,
		})
	}
	return words
}

// appendPGM appends img as a binary PGM (P5, maxval 255) to dst.
func appendPGM(dst []byte, img *image.Gray) []byte {
	r := img.Bounds()
	w, h := r.Dx(), r.Dy()
	dst = fmt.Appendf(dst, "P5\n%d %d\n255\n", w, h)
	for y := r.Min.Y; y < r.Max.Y; y++ {
		i := img.PixOffset(r.Min.X, y)
		dst = append(dst, img.Pix[i:i+w]...)
	}
	return dst
}

var (
	langOnce  sync.Once
	langCache []string
	langErr   error
)

// Languages returns the languages installed in the default data directory
// (TESSDATA_PREFIX or Tesseract's compiled-in path), sorted, without "osd".
func Languages() ([]string, error) {
	return languagesIn("")
}

func languagesIn(dir string) ([]string, error) {
	if dir == "" {
		langOnce.Do(func() {
			langCache, langErr = gosseract.GetAvailableLanguages()
			langCache = cleanLangs(langCache)
		})
		return langCache, langErr
	}
	files, err := filepath.Glob(filepath.Join(dir, "*.traineddata"))
	if err != nil {
		return nil, fmt.Errorf("tesseract: %q: %w", dir, err)
	}
	var langs []string
	for _, f := range files {
		langs = append(langs, strings.TrimSuffix(filepath.Base(f), ".traineddata"))
	}
	langs = cleanLangs(langs)
	if len(langs) == 0 {
		return nil, fmt.Errorf("tesseract: no trained data (*.traineddata) in %q", dir)
	}
	return langs, nil
}

func cleanLangs(in []string) []string {
	var out []string
	for _, l := range in {
		if l != "osd" && l != "" {
			out = append(out, l)
		}
	}
	sort.Strings(out)
	return out
}
