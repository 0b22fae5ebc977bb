package ocr

import (
	"context"
	"errors"
	"image"
)

// ErrEngineUnavailable is returned by engine constructors (tesseract.New)
// when recto was built without the recognition engine: without cgo, or with
// the notesseract build tag.
var ErrEngineUnavailable = errors.New("ocr: recognition engine unavailable (recto was built without cgo or with the notesseract tag)")

// Engine recognises the text of one prepared page.
//
// Recognize returns the words of img in reading order, with boxes in img's
// pixels, Block and Line numbered from 0 across the page, and Conf in
// [0, 1]. dpi is the resolution of img in dots per inch. A page without
// text gives no words and no error.
//
// An Engine is used by one goroutine at a time; batch mode creates one per
// worker. Close releases the engine's resources; the Engine is unusable
// afterwards.
type Engine interface {
	Recognize(ctx context.Context, img *image.Gray, dpi int) ([]Word, error)
	Close() error
}

// DefaultDPI is the resolution assumed for an image without a resolution
// tag when Options.DPI is zero and the page holds too little text to
// estimate its resolution from (see EstimateDPI).
const DefaultDPI = 300

// Options configure Process and ProcessFile. The zero value prepares every
// page with the automatic choices and assumes 300 dpi for untagged images.
type Options struct {
	Prep      PrepOptions // preparation switches; ignored when NoPrepare is set
	NoPrepare bool        // hand the greyscale page to the engine unchanged
	DPI       float64     // resolution for images without a tag, dots per inch, used as given; 0 means estimated from the text, else DefaultDPI
	MaxPixels int         // refuse larger images; 0 means DefaultMaxPixels
	KeepImage bool        // also return the prepared image
	Lang      string      // the engine's language list, recorded in each Record ("nor", "eng+deu"); "" records none

	// Orient is orientation detection, for engines that have it
	// (Orienter): Auto when the page's first reading looks poor, On
	// before every reading, Off never (see processOriented).
	Orient Mode

	// SelfCheck is the self-check of a prepared page (selfCheck): Auto
	// reads the original page too when the prepared page's reading looks
	// poor by the engine's confidences, On always, Off never. Ignored with
	// NoPrepare.
	SelfCheck Mode

	// PredictCER, when set, is the quality estimate the self-check records
	// for both readings (Reading.PreparedPredictedCER and
	// OriginalPredictedCER) and uses to choose between readings with as
	// many confidently read words. Package ocr/estimate makes one from
	// package quality's model.
	PredictCER PredictCER
}

func (o Options) dpi() float64 {
	if o.DPI > 0 {
		return o.DPI
	}
	return DefaultDPI
}

func (o Options) maxPixels() int {
	if o.MaxPixels > 0 {
		return o.MaxPixels
	}
	return DefaultMaxPixels
}
