package ocr

import (
	"fmt"
	"math"
)

// Resolution from the text itself.
//
// Tesseract's documentation ("Improving the quality of the output",
// section Rescaling; from memory) says the engine works best when the
// x-height of the text is about 20 pixels or more, as it is for 10-point
// type at 300 dpi; accuracy drops below 10 points at 300 dpi, and under an
// x-height of about 10 pixels there is little chance of accurate results
// (under about 8, most text is removed as noise). recto turns the
// measured x-height into a resolution with that correspondence: the
// resolution at which the page's text would be 10-point type, 15 dpi per
// pixel of x-height. For body text of 9-11 points that is within about
// 15 % of the scan's true resolution; for the large type of early printed
// books it reads high (a page at 150 dpi set in 14-point type measures
// about 200 dpi), which is what the preparation and the engine need: the
// estimate says how large the letters are in pixels.
const (
	// dpiPerXHeight: 300 dpi / 20 pixels of x-height (Tesseract's
	// guidance above).
	dpiPerXHeight = 15.0

	// An estimate is trusted only from a page whose ink looks like text
	// (InkShape.LooksLikeText) with at least estimateMinLines lines and
	// estimateMinMarks marks on them (a few words of a heading or a
	// caption can be in any size), measured before denoising.
	estimateMinLines = 5
	estimateMinMarks = 100

	// tagMisfit: a resolution tag more than this factor away from a
	// trusted estimate, one of the two below LowDPI, does not fit the page
	// (an A4 page tagged 72 dpi by an editor, a 600 dpi tag on type
	// scanned at 100 dpi) and the estimate is used instead. On the real
	// scans with a known resolution the estimate stays within this factor
	// (TestEstimateDPIRealPages). When both are at least LowDPI the tag is
	// kept whatever the estimate: no preparation decision depends on the
	// difference, and the engine is told what the file says, as the plain
	// engine is (a title page in 36-point type is not a 1,000 dpi scan).
	tagMisfit = 2.0

	// minEstimate and maxEstimate bound the estimates reported.
	minEstimate = 50
	maxEstimate = 1200
)

// scannerDPI are the nominal resolutions scanners offer (common practice).
// An estimate within snapFraction of one is taken to be it: pages are
// scanned at those, and the engine's reading moves with the resolution it
// is told (breviar.38.150.jpg: 59 confident words told 143 dpi, 66 told
// 150, without preparation).
var scannerDPI = []float64{75, 100, 150, 200, 300, 400, 600, 1200}

const snapFraction = 0.125

// EstimateDPI returns the resolution at which the text of s would be
// 10-point type, rounded to whole dots per inch or to a nominal scanner
// resolution within 12.5 % (scannerDPI), and whether s holds enough text
// for the estimate to be trusted. It returns 0, false when no x-height was
// measured.
func EstimateDPI(s InkShape) (float64, bool) {
	if s.XHeight <= 0 {
		return 0, false
	}
	dpi := math.Round(min(max(dpiPerXHeight*s.XHeight, minEstimate), maxEstimate))
	for _, n := range scannerDPI {
		if math.Abs(dpi/n-1) <= snapFraction {
			dpi = n
			break
		}
	}
	ok := s.LooksLikeText() && s.Lines >= estimateMinLines && s.LineMarks >= estimateMinMarks && !s.Denoised
	return dpi, ok
}

// Where the resolution used for a page came from (Record.DPISource).
const (
	DPIFromTag      = "tag"      // the file's resolution tag, which fits the text
	DPIFromOption   = "option"   // no tag: the resolution the user gave for untagged files (--dpi), used as given
	DPIFromEstimate = "estimate" // estimated from the text: no tag, or a tag that does not fit
	DPIDefault      = "default"  // no tag, no option, no trusted estimate: Options.DPI's default (DefaultDPI)
)

// chooseDPI decides the resolution of a page from its tag (0 when the file
// has none), the user's resolution for untagged files (0 when not given)
// and the text's own estimate: a tag that fits a trusted estimate (see
// tagMisfit), or any tag when there is no trusted estimate, is used; a tag
// that does not fit gives way to the estimate; without a tag
// the user's resolution is used as given, else the trusted estimate, else
// fallback (DPIDefault). It returns the resolution, its source (one of the
// DPIFrom constants) and a sentence for the preparation steps.
func chooseDPI(tag, untagged float64, s InkShape, fallback float64) (float64, string, string) {
	est, ok := EstimateDPI(s)
	fits := !ok || (tag <= tagMisfit*est && tag*tagMisfit >= est) || (tag >= LowDPI && est >= LowDPI)
	switch {
	case tag > 0 && fits:
		return tag, DPIFromTag, fmt.Sprintf("%.0f dpi from the file (estimate from the text: %s)", tag, estimateDetail(est, ok, s))
	case tag > 0:
		return est, DPIFromEstimate, fmt.Sprintf("the file's %.0f dpi does not fit the text: %.0f dpi estimated from it (x-height %.1f px)", tag, est, s.XHeight)
	case untagged > 0:
		return untagged, DPIFromOption, fmt.Sprintf("no resolution in the file: %.0f dpi as given (estimate from the text: %s)", untagged, estimateDetail(est, ok, s))
	case ok:
		return est, DPIFromEstimate, fmt.Sprintf("no resolution in the file: %.0f dpi estimated from the text (x-height %.1f px)", est, s.XHeight)
	}
	return fallback, DPIDefault, fmt.Sprintf("no resolution in the file and too little text to estimate it (estimate: %s)", estimateDetail(est, ok, s))
}

func estimateDetail(est float64, ok bool, s InkShape) string {
	switch {
	case est == 0:
		return "none"
	case !ok:
		return fmt.Sprintf("%.0f dpi, not trusted: %d lines of text-like ink", est, s.Lines)
	}
	return fmt.Sprintf("%.0f dpi, x-height %.1f px", est, s.XHeight)
}
