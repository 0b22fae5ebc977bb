package ocr

import (
	"errors"
	"fmt"
	"image"
	"math"
	"time"
)

// Mode switches a preparation step: Auto lets a measurement decide, On
// forces the step, Off skips it.
type Mode int

const (
	Auto Mode = iota // decide from measurements (the zero value)
	On               // always run the step
	Off              // never run the step
)

func (m Mode) String() string {
	switch m {
	case Auto:
		return "auto"
	case On:
		return "on"
	case Off:
		return "off"
	}
	return fmt.Sprintf("Mode(%d)", int(m))
}

// PrepOptions configures Prepare. The zero value prepares with every
// decision left to measurements.
type PrepOptions struct {
	Denoise Mode // Auto: blur only when the estimated noise is at least DenoiseThreshold
	Deskew  Mode // Auto: rotate when a clear skew of at least MinSkew degrees is found
	Cleanup Mode // Auto and On: remove speckle and border ink after binarisation

	// Binarize is "" or "auto", "otsu", "sauvola" or "none" (the deskewed
	// greyscale page is handed over as is). Auto uses Sauvola's local
	// method when the measured background variation calls for it, Otsu's
	// method when the page needed denoising, and otherwise hands the
	// deskewed page over in grey (the engine thresholds it itself), with
	// dust whitened when clean-up finds enough of it.
	Binarize string

	MaxSkew float64 // largest skew searched either way, degrees; 0 means 15

	// DPI is the resolution the page's file declares, dots per inch; 0
	// means the file has none. It is checked against the resolution
	// estimated from the text (see EstimateDPI): a tag that does not fit
	// the text, or a missing one, gives way to a trusted estimate. With
	// automatic binarisation a page below LowDPI is not binarised when
	// evenly lit, and is enlarged to TargetDPI (Catmull-Rom cubic) before
	// Sauvola's method when unevenly lit; a page whose enlargement would
	// exceed 20 million pixels is treated as if at 300 dpi.
	DPI float64

	// UntaggedDPI is the resolution the user gave for pages whose file has
	// no tag (recto's --dpi); 0 means none. It is used as given, instead
	// of the estimate.
	UntaggedDPI float64
}

// Step records one preparation step.
type Step struct {
	Name     string        // "gray", "noise", "denoise", "measure", "resolution", "scale", "deskew", "binarize", "cleanup", "grey", "blank"
	Applied  bool          // false when the step measured and decided not to act, or was off
	Duration time.Duration // wall time of the step, measurement included
	Detail   string        // what was measured and decided, for people
}

// Prepared is a page made ready for the engine.
type Prepared struct {
	Image        *image.Gray // what the engine sees: 0/255 unless Binarization is "none"
	Skew         float64     // skew found and removed, degrees, counter-clockwise positive; 0 if not deskewed
	Binarization string      // "otsu", "sauvola" or "none"
	Threshold    int         // Otsu's threshold 0-255 (pixels at or below are ink) when Binarization is "otsu"
	Noise        float64     // estimated noise before denoising, standard deviation in grey levels
	Background   float64     // background variation: spread of the local paper level across the page, grey levels (0-255)
	Blank        bool        // no ink worth recognising was found; Image is then all white
	Scale        float64     // factor Image was enlarged by before deskewing (low-resolution, unevenly lit pages); 1 when it was not
	DPI          float64     // resolution of Image, dots per inch: PageDPI × Scale; 0 when unknown
	PageDPI      float64     // resolution decided for the page itself (tag, option or estimate, see DPISource); 0 when unknown
	DPISource    string      // where PageDPI came from: DPIFromTag, DPIFromOption, DPIFromEstimate or DPIDefault (PageDPI 0)
	EstimatedDPI float64     // resolution estimated from the text (EstimateDPI), trusted or not; 0 when no x-height was measured
	Ink          InkShape    // shape of the page's ink, measured before any enlargement
	Steps        []Step      // what ran, in order

	// SkewEstimate is the skew measured, rotated or not (degrees,
	// counter-clockwise positive); SkewConfidence the sharpness of its
	// peak (see skewEstimate.peak: 1 for a flat curve; the page is
	// rotated only from minSkewPeak and MinSkew); SkewMeasuredOn says
	// which ink: "text" (text-like components), "all ink", or "" when
	// not measured.
	SkewEstimate   float64
	SkewConfidence float64
	SkewMeasuredOn string

	// ToOriginal maps a box in Image's pixels back to the original image's
	// pixels (undoing the rotation and the enlargement), clipped to the
	// original image. A rotated or shrunk box maps to the smallest upright
	// box holding it.
	ToOriginal func(b Box) Box
}

// Decision thresholds; each is checked by tests on synthetic pages.
const (
	// DenoiseThreshold is the estimated noise, in grey levels, from which
	// Auto denoising blurs the page. Clean 8-bit scans measure 0-3.
	DenoiseThreshold = 6.0

	// denoiseTwice is the noise level from which two blur passes are used.
	denoiseTwice = 30.0

	// MinSkew is the smallest skew, in degrees, that Auto deskewing
	// corrects: below it an estimate is not confidently a skew, and
	// rotation's resampling costs more than it gains. Leptonica's
	// pixDeskew (D. Bloomberg, Leptonica 1.82, skew.c, MIN_DESKEW_ANGLE)
	// uses 0.1°; measured on the 39 real pages of
	// TestSkewAgreesWithLeptonica, recto's estimate is up to 0.16° from
	// zero on pages Leptonica finds straight (words.44 0.16° against
	// −0.06°, table.15 0.14° against −0.05°, 8087_054.3B −0.12° against
	// −0.05°), so a skew under 0.25° is within the two finders'
	// disagreement; the pages Leptonica finds skewed by 0.3° or more
	// measure 0.54° or more. At 0.25° a line 2,000 pixels long drifts by
	// 9 pixels, about half the x-height at 300 dpi, which the engine's
	// line finder follows (it fits each line's baseline with its own
	// slope: R. Smith, "An Overview of the Tesseract OCR Engine", ICDAR
	// 2007, from memory). On pages narrower than 229 pixels the bar is
	// higher: the skew must move the far end of a line across the page by
	// at least one pixel.
	MinSkew = 0.25

	// unevenFraction: Auto binarisation uses Sauvola when the background
	// variation exceeds this fraction of the contrast between the paper
	// and Otsu's threshold, i.e. when Otsu's single threshold would come
	// close to the paper in the darkest parts of the page.
	unevenFraction = 0.5
)

// ErrNoPixels is returned by Prepare for an image with no pixels.
var ErrNoPixels = errors.New("ocr: image has no pixels")

// Prepare turns a decoded page into the image the engine reads:
// greyscale; noise estimate, and a blur when the noise is high;
// the treatment of low-resolution pages (automatic binarisation only); skew
// estimate and rotation with white corners; binarisation by Otsu's method or
// Sauvola's local method; removal of speckle and border ink; the grey
// hand-over of evenly lit, low-noise pages (automatic binarisation only); and
// blank-page detection. src is not modified. Every step is timed and recorded in
// Prepared.Steps.
func Prepare(src image.Image, o PrepOptions) (*Prepared, error) {
	if src == nil || src.Bounds().Empty() {
		return nil, ErrNoPixels
	}
	method := o.Binarize
	switch method {
	case "", "auto", "otsu", "sauvola", "none":
	default:
		return nil, fmt.Errorf("ocr: unknown binarisation %q (want auto, otsu, sauvola or none)", o.Binarize)
	}
	for _, m := range []Mode{o.Denoise, o.Deskew, o.Cleanup} {
		if m < Auto || m > Off {
			return nil, fmt.Errorf("ocr: invalid mode %d", int(m))
		}
	}
	maxSkew := o.MaxSkew
	if maxSkew <= 0 {
		maxSkew = 15
	}
	maxSkew = min(maxSkew, 45)

	p := &Prepared{Scale: 1}
	W, H := src.Bounds().Dx(), src.Bounds().Dy()
	srcW, srcH := W, H
	t := time.Now()
	step := func(name string, applied bool, detail string, args ...any) {
		now := time.Now()
		p.Steps = append(p.Steps, Step{Name: name, Applied: applied, Duration: now.Sub(t), Detail: fmt.Sprintf(detail, args...)})
		t = now
	}

	g := toGray(src)
	hist := histogram(g)
	bilevel := isBilevel(hist)
	if bilevel {
		step("gray", true, "%d×%d greyscale, bilevel (two grey levels): not denoised, not binarised again", W, H)
	} else {
		step("gray", true, "%d×%d greyscale", W, H)
	}

	p.Noise = estimateNoise(g)
	step("noise", true, "estimated noise σ = %.1f grey levels", p.Noise)

	// The shape of the ink, from which the text's size is estimated, is
	// measured before denoising: on a 75 dpi page the blur joins the
	// letters and adds two pixels to their height. On a page noisy enough
	// to be denoised, whose ink does not look like text before the blur,
	// it is measured again after the blur and that measurement is kept
	// when it looks like text (noise of 38 grey levels at 100 dpi breaks
	// the ink into grains until blurred). Its x-height is not trusted for
	// the resolution: at 100 dpi the blur joins letters into words (13.8
	// pixels measured on type of 8).
	ink := measureInk(g, otsu(hist))
	denoise := o.Denoise == On || (o.Denoise == Auto && p.Noise >= DenoiseThreshold && !bilevel)
	if denoise {
		passes := denoisePasses(p.Noise)
		for i := 0; i < passes; i++ {
			boxBlur(g, 1)
		}
		step("denoise", true, "%d passes of a 3×3 box blur (noise %.1f)", passes, p.Noise)
	} else {
		step("denoise", false, "noise %.1f below %.0f", p.Noise, DenoiseThreshold)
	}

	// The text's own size decides the resolution when the file has no tag
	// or one that does not fit (see chooseDPI), before any decision that
	// depends on it.
	measuredAfter := ""
	if denoise && !ink.LooksLikeText() {
		if after := measureInk(g, otsu(histogram(g))); after.LooksLikeText() {
			after.Denoised = true
			ink, measuredAfter = after, ", measured after denoising"
		}
	}
	p.Ink = ink
	p.EstimatedDPI, _ = EstimateDPI(p.Ink)
	dpi, from, detail := chooseDPI(max(o.DPI, 0), max(o.UntaggedDPI, 0), p.Ink, 0)
	p.PageDPI, p.DPISource, p.DPI = dpi, from, dpi
	step("resolution", true, "%s; %d lines of text-like ink%s", detail, p.Ink.Lines, measuredAfter)

	// Analysis at reduced resolution: half size for skew and ink, and the
	// local paper level on tiles of a quarter-size page.
	g2 := half(g)
	if g2.Rect.Empty() {
		g2 = g
	}
	bg := measureBackground(g2)
	p.Background = bg.variation
	blank := bg.ink < minInk
	if blank {
		p.Blank = true
	}
	step("measure", true, "paper level %d, background variation %.0f, %d ink pixels at half size", bg.paper, bg.variation, bg.ink)

	auto := method == "" || method == "auto"
	if auto {
		// A bilevel scan was thresholded by the scanner: its two levels
		// are not re-thresholded (Otsu's threshold falls between them and
		// serves only clean-up; the page goes over in grey, see below).
		if !bilevel && bg.variation > unevenFraction*float64(bg.paper-bg.otsu) {
			method = "sauvola"
		} else {
			method = "otsu"
		}
	}

	// Low-resolution pages (see LowDPI): an evenly lit page is handed
	// over in grey, an unevenly lit one is enlarged before Sauvola's
	// method; both measured never worse than the plain engine, where
	// thresholding at the page's own resolution was.
	sc := upscaleFactor(W, H, dpi)
	// Skew is measured on the half-size page before any enlargement,
	// which adds nothing to it: on the enlarged brev.20.75 (75 dpi, ×4)
	// it measured 1.81° against Leptonica's 1.34°, unenlarged 1.28°.
	m2 := g2
	switch {
	case !auto || sc == 1 || blank:
		step("scale", false, "%s", scaleDetail(dpi, auto, blank))
	case method == "otsu":
		method = "none"
		step("scale", false, "%.0f dpi below %.0f, evenly lit: not enlarged, not binarised", dpi, LowDPI)
	default:
		g = upscale(g, sc)
		W, H = g.Rect.Dx(), g.Rect.Dy()
		p.Scale, p.DPI = sc, TargetDPI
		g2 = half(g)
		step("scale", true, "%.0f dpi below %.0f, unevenly lit: enlarged ×%.2f to %d×%d", dpi, LowDPI, sc, W, H)
	}

	rot := rotation{}
	rotated := false
	if o.Deskew != Off && !blank {
		// On an evenly lit page one level (Otsu's, of the half-size
		// page) separates ink from paper, at both sizes, and the final
		// stage of the search uses the full-size ink. Otherwise the
		// half-size page is binarised by Sauvola's method and the
		// search stays at half size.
		b2 := image.NewGray(m2.Rect)
		t := -1
		if method == "sauvola" {
			var it integral
			sauvola(b2, m2, sauvolaWindow(m2.Rect.Dx(), m2.Rect.Dy()), &it)
		} else {
			t = bg.otsu
			threshold(b2, m2, t)
		}
		est := findSkew(b2, g, t, maxSkew)
		deg, ok := est.deg, est.ok
		p.SkewEstimate, p.SkewConfidence = est.deg, est.peak
		if est.peak > 0 {
			p.SkewMeasuredOn = "all ink"
			if est.text {
				p.SkewMeasuredOn = "text"
			}
		}
		switch {
		case !ok:
			step("deskew", false, "no clear skew found (peak %.2f, under %.2f)", est.peak, minSkewPeak)
		case math.Abs(deg) < minSkew(W) && o.Deskew == Auto:
			step("deskew", false, "skew %.2f° below %.2f° (measured on %s, peak %.2f)", deg, minSkew(W), p.SkewMeasuredOn, est.peak)
		default:
			g = rotate(g, -deg)
			rot = newRotation(-deg, W, H)
			rotated = true
			p.Skew = deg
			step("deskew", true, "rotated by %.2f° (measured on %s, peak %.2f)", -deg, p.SkewMeasuredOn, est.peak)
		}
	} else if blank {
		step("deskew", false, "blank page")
	} else {
		step("deskew", false, "off")
	}

	// An evenly lit page that needed no denoising is handed to the engine
	// in grey (see greyWhenClean): it is binarised by Otsu's method only to
	// find the speckle and border ink that clean-up whitens in the grey page.
	var grey *image.Gray
	if auto && method == "otsu" && !denoise && !blank && greyWhenClean {
		grey = image.NewGray(g.Rect)
		copy(grey.Pix, g.Pix)
	}

	switch method {
	case "otsu":
		p.Threshold = otsu(histogram(g))
		threshold(g, g, p.Threshold)
		p.Binarization = "otsu"
		step("binarize", true, "Otsu threshold %d (background variation %.0f, paper %d)", p.Threshold, bg.variation, bg.paper)
	case "sauvola":
		var it integral
		win := sauvolaWindow(g.Rect.Dx(), g.Rect.Dy())
		sauvola(g, g, win, &it)
		p.Binarization = "sauvola"
		step("binarize", true, "Sauvola, %d-pixel window, k=%.2f (background variation %.0f, paper %d)", win, sauvolaK, bg.variation, bg.paper)
	case "none":
		p.Binarization = "none"
		step("binarize", false, "none requested")
	}

	if p.Binarization != "none" && o.Cleanup != Off && !blank {
		dust := 0.0
		if grey != nil {
			dust = dustFraction
		}
		res, _ := clean(g, nil, dust)
		switch {
		case res.specksKept:
			step("cleanup", res.borders > 0, "kept %d specks (%d px, ≤ %d px each: under %.0f%% of %d ink px, not dust); removed %d border regions (%d px)",
				res.specks, res.speckPixels, res.maxSpeck, 100*dust, res.speckPixels+res.inkPixels, res.borders, res.borderPixels)
		default:
			step("cleanup", res.specks+res.borders > 0, "removed %d specks (%d px, ≤ %d px each) and %d border regions (%d px)",
				res.specks, res.speckPixels, res.maxSpeck, res.borders, res.borderPixels)
		}
	} else {
		step("cleanup", false, "skipped")
	}

	if grey != nil {
		// Whiten in the grey page what clean-up removed: pixels Otsu made
		// ink that are paper after clean-up.
		n := 0
		for i, v := range g.Pix {
			if v == 255 && grey.Pix[i] <= uint8(p.Threshold) {
				grey.Pix[i] = 255
				n++
			}
		}
		g = grey
		step("grey", true, "evenly lit, noise %.1f below %.0f: handed over in grey (Otsu threshold %d used only for clean-up, %d px whitened)",
			p.Noise, DenoiseThreshold, p.Threshold, n)
		p.Binarization, p.Threshold = "none", 0
	}

	if blank {
		for i := range g.Pix {
			g.Pix[i] = 255
		}
		step("blank", true, "blank page: %d ink pixels at half size, fewer than %d", bg.ink, minInk)
	} else {
		step("blank", false, "%d ink pixels at half size", bg.ink)
	}

	p.Image = g
	toScaled := func(b Box) Box { return clipBox(b, W, H) }
	if rotated {
		toScaled = rot.boxToSrc
	}
	if s := p.Scale; s > 1 {
		p.ToOriginal = func(b Box) Box { return clipBox(scaleBoxDown(toScaled(b), s), srcW, srcH) }
	} else {
		p.ToOriginal = toScaled
	}
	return p, nil
}

// scaleDetail says why a page was not treated as a low-resolution page.
func scaleDetail(dpi float64, auto, blank bool) string {
	switch {
	case dpi <= 0:
		return "resolution unknown"
	case dpi >= LowDPI:
		return fmt.Sprintf("%.0f dpi: resolution high enough", dpi)
	case !auto:
		return fmt.Sprintf("%.0f dpi, binarisation requested: left as it is", dpi)
	case blank:
		return fmt.Sprintf("%.0f dpi, blank page", dpi)
	}
	return fmt.Sprintf("%.0f dpi, but the enlarged page would exceed %d pixels: resolution tag doubtful, left as it is", dpi, maxUpscaledPixels)
}

// boxToSrc maps a box of the rotated image to the smallest upright box of
// the source holding it, clipped to the source.
func (r rotation) boxToSrc(b Box) Box {
	x0, y0 := math.Inf(1), math.Inf(1)
	x1, y1 := math.Inf(-1), math.Inf(-1)
	for _, c := range [4][2]float64{
		{float64(b.X), float64(b.Y)}, {float64(b.X + b.W), float64(b.Y)},
		{float64(b.X), float64(b.Y + b.H)}, {float64(b.X + b.W), float64(b.Y + b.H)},
	} {
		x, y := r.toSrc(c[0], c[1])
		x0, y0 = math.Min(x0, x), math.Min(y0, y)
		x1, y1 = math.Max(x1, x), math.Max(y1, y)
	}
	ix0, iy0 := int(math.Floor(x0+1e-6)), int(math.Floor(y0+1e-6))
	ix1, iy1 := int(math.Ceil(x1-1e-6)), int(math.Ceil(y1-1e-6))
	return clipBox(Box{X: ix0, Y: iy0, W: ix1 - ix0, H: iy1 - iy0}, r.srcW, r.srcH)
}

// clipBox clips b to a w×h image; a box wholly outside becomes empty at the
// nearest edge.
func clipBox(b Box, w, h int) Box {
	x0, y0 := min(max(b.X, 0), w), min(max(b.Y, 0), h)
	x1, y1 := min(max(b.X+b.W, 0), w), min(max(b.Y+b.H, 0), h)
	return Box{X: x0, Y: y0, W: max(0, x1-x0), H: max(0, y1-y0)}
}

// greyWhenClean switches the grey hand-over of evenly lit, low-noise pages
// in automatic mode (see Prepare). Tesseract thresholds a grey page with
// Otsu's method itself, so a global Otsu threshold of ours earns nothing
// there, and on worn type it was measured to lose characters.
var greyWhenClean = true

// dustFraction: on a page handed over in grey, clean-up whitens speckle
// only when speckle makes up at least this fraction of the ink pixels
// (dust). Worn type breaks into a few fragments of speckle size (about 0.1 %
// of the ink on ocr/synth's "worn" pages), and whitening them cost
// characters; dust of 0.5 % of the pixels makes several percent of the ink.
const dustFraction = 0.01

// isBilevel reports whether the page of grey-level histogram h holds
// (almost) only two grey levels, as a scanner's bilevel output does (1-bit
// TIFF, or grey written with two levels): at least 99.9 % of the pixels in
// the two commonest levels, at least 64 levels apart.
func isBilevel(h *[256]int) bool {
	a, b := 0, -1
	for v := range h {
		if h[v] > h[a] {
			a = v
		}
	}
	for v := range h {
		if v != a && (b < 0 || h[v] > h[b]) {
			b = v
		}
	}
	n := 0
	for _, c := range h {
		n += c
	}
	if b < 0 || h[b] == 0 || n == 0 {
		return false // one level: nothing to threshold either way
	}
	d := a - b
	return (d >= 64 || d <= -64) && float64(h[a]+h[b]) >= 0.999*float64(n)
}

// minInk is the number of ink pixels at half size (about 4 times as many at
// full size: a quarter of a 12-point letter at 300 dpi) below which a page
// is blank.
const minInk = 60

// background is what measureBackground found.
type background struct {
	paper     int     // median paper level over the tiles, grey level
	variation float64 // spread (95th − 5th percentile) of the tiles' paper levels, grey levels
	otsu      int     // Otsu's threshold of the reduced page
	ink       int     // pixels clearly darker than their surroundings (see measureBackground)
}

// measureBackground measures the paper level across the page: the page is
// cut into tiles about 1/12 of its shorter side, the paper level of a tile
// is its 80th-percentile grey level (text covers well under 20% of a
// tile), and the variation is the spread between the 5th and 95th
// percentiles of the tiles' paper levels. A tile whose paper level is below
// Otsu's threshold of the page holds no paper (a photograph, a black
// scanner border, a solid block of ink) and says nothing about the light:
// it is left out of the paper level and the variation (on
// 8087_054.3B.tif reduced to 100 dpi, 23 of 192 tiles, which made a
// variation of 255 on a page lit evenly; 0 without them). It also counts ink: pixels at
// least max(40, 6σ) grey levels below their tile's paper level, σ being the
// noise of the reduced image, with a dark neighbour to the right or below,
// outside a margin of 2% of each side.
func measureBackground(g *image.Gray) background {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	ts := max(8, min(w, h)/12)
	var levels []int
	hist := histogram(g)
	res := background{otsu: otsu(hist)}
	noise := estimateNoise(g)
	contrast := int(math.Max(40, 6*noise))
	mx, my := max(1, w/50), max(1, h/50) // at least 1: the test below reads x+1 and y+1
	for ty := 0; ty < h; ty += ts {
		for tx := 0; tx < w; tx += ts {
			var th [256]int
			x1, y1 := min(w, tx+ts), min(h, ty+ts)
			n := 0
			for y := ty; y < y1; y++ {
				for _, v := range g.Pix[y*g.Stride+tx : y*g.Stride+x1] {
					th[v]++
				}
				n += x1 - tx
			}
			if n < ts*ts/4 {
				continue // a sliver at the edge
			}
			level := percentile(&th, n, 0.8)
			if level >= res.otsu {
				levels = append(levels, level)
			}
			lim := uint8(max(0, level-contrast))
			if lim == 0 {
				continue
			}
			// A pixel counts when the pixel right of it or below it is
			// dark too: noise rarely darkens two neighbours together.
			for y := max(ty, my); y < min(y1, h-my, h-1); y++ {
				row := g.Pix[y*g.Stride : y*g.Stride+w]
				next := g.Pix[(y+1)*g.Stride : (y+1)*g.Stride+w]
				for x := max(tx, mx); x < min(x1, w-mx, w-1); x++ {
					if row[x] < lim && (row[x+1] < lim || next[x] < lim) {
						res.ink++
					}
				}
			}
		}
	}
	if len(levels) == 0 {
		res.paper = percentile(hist, w*h, 0.8)
		return res
	}
	var lh [256]int
	for _, l := range levels {
		lh[l]++
	}
	res.paper = percentile(&lh, len(levels), 0.5)
	res.variation = float64(percentile(&lh, len(levels), 0.95) - percentile(&lh, len(levels), 0.05))
	return res
}

// percentile returns the smallest level at or below which a fraction q of
// the n counted pixels lie.
func percentile(h *[256]int, n int, q float64) int {
	target := int(math.Ceil(q * float64(n)))
	if target < 1 {
		target = 1
	}
	cum := 0
	for v, c := range h {
		cum += c
		if cum >= target {
			return v
		}
	}
	return 255
}

// denoisePasses is the number of 3×3 box-blur passes for a noise level:
// one pass divides white noise's standard deviation by 3, two by about 4.3
// (the variance of the 5×5 tent is 0.055 of the input's); more would round
// off strokes three pixels wide (11-point text at 300 dpi).
func denoisePasses(noise float64) int {
	if noise >= denoiseTwice {
		return 2
	}
	return 1
}

// minSkew is the smallest skew Auto deskewing corrects on a page w pixels
// wide: MinSkew, or the angle whose tangent is 1/w (one pixel across the
// page) if larger.
func minSkew(w int) float64 {
	return math.Max(MinSkew, math.Atan(1/float64(max(w, 1)))*180/math.Pi)
}
