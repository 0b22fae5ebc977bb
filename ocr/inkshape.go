package ocr

import (
	"bytes"
	"image"
	"math"
	"sort"
	"sync"
)

// InkShape describes the ink of a page as connected components: how much
// of it has the shape of text (marks of one regular height sitting side by
// side on lines) and how large that text is. It is measured on the page
// before any enlargement, in the page's own pixels, and recorded in the
// page record (Record.Ink) so that triage can tell a failed reading of
// text from a picture without the image.
type InkShape struct {
	Components int     `json:"components"`         // ink components considered (not touching the edge, at least 2 pixels)
	Letters    int     `json:"letters"`            // components of letter size (see measureInk)
	Lines      int     `json:"text_lines"`         // lines of at least minLineMarks letter-sized marks side by side
	LineMarks  int     `json:"line_marks"`         // letter-sized marks on those lines
	TextInk    float64 `json:"text_ink"`           // share of the ink pixels that lie in those lines, 0-1
	XHeight    float64 `json:"x_height"`           // commonest height of the marks on the lines, pixels; 0 when none
	LinePitch  float64 `json:"line_pitch"`         // median distance between the bottoms of neighbouring lines, pixels; 0 with fewer than two lines
	Denoised   bool    `json:"denoised,omitempty"` // measured on the denoised page (the noisy page's ink did not look like text): the x-height is not trusted for the resolution
	Turned     bool    `json:"turned,omitempty"`   // measured on the page turned a quarter: its lines run up or down the page (a title page printed sideways)
	Inverted   bool    `json:"inverted,omitempty"` // measured as light marks on dark: the pixels above the threshold, the majority of the page, taken for ink

	// SmallText is set when the ink does not look like text at letter
	// size but does when marks from minSmallHeight pixels tall are taken
	// for letters (as the page lies or turned a quarter): print too small
	// for the scan's resolution, such as a book photographed at 45 dpi.
	// It is not used for the resolution (paper grain takes that size too,
	// and the denoised measure of a noisy page replaces this one).
	SmallText bool `json:"small_text,omitempty"`
}

// Text-shape limits (our own, checked on the real scans of
// TestInkShapeRealPages and on ocr/synth pages).
const (
	// minLineMarks: a line is at least this many letter-sized marks, each
	// within lineGap x-heights of the next and overlapping it vertically.
	minLineMarks = 3
	lineGap      = 1.5

	// Ink looks like text when it forms at least TextLikeMinLines lines
	// that hold at least TextLikeMinMarks of the letter-sized marks and
	// TextLikeMinInk of the ink pixels. On the real scans of leptonlib's
	// prog/ folder, pages of print put 0.5-0.99 of their marks on lines
	// (a newspaper page with large photographs 0.58), drawings,
	// paintings, photographs and graph paper 0.02-0.46; the ink share
	// keeps out a drawing with a caption (0.02; text pages 0.16-0.99).
	TextLikeMinLines = 5
	TextLikeMinMarks = 0.5
	TextLikeMinInk   = 0.1

	// minXHeight is the smallest x-height, in pixels, at which marks are
	// taken for letters: under it Tesseract's guidance gives the engine
	// no chance (below about 8 pixels most text is removed as noise;
	// Tesseract documentation, "Improving the quality of the output",
	// from memory), and halftone dots and paper grain take that size.
	minXHeight = 4

	// minSmallHeight is the smallest height of a mark taken for a letter
	// by the small-print measure (InkShape.SmallText).
	minSmallHeight = 2
)

// LooksLikeText reports whether the ink has the shape of text (see
// TextLikeMinLines).
func (s InkShape) LooksLikeText() bool {
	return s.Lines >= TextLikeMinLines && s.Letters > 0 &&
		float64(s.LineMarks) >= TextLikeMinMarks*float64(s.Letters) && s.TextInk >= TextLikeMinInk
}

// mark is one ink component's bounding box and area.
type mark struct {
	x0, y0, x1, y1 int32
	area           int
}

func (m mark) h() int32 { return m.y1 - m.y0 }
func (m mark) w() int32 { return m.x1 - m.x0 }

// measureInk measures the shape of the ink of g: the page is thresholded
// at level t (pixels at or below are ink), its 8-connected components are
// found, and those of letter size are chained into lines. A mark is of
// letter size when it is at least minXHeight tall, under a tenth of the
// page's height, at most 8 times as wide as tall (a few touching letters)
// and fills at least a tenth of its box. The x-height is the commonest
// height of the marks that sit on lines (most lower-case letters have no
// ascender or descender), refined by a second chaining that uses it.
//
// When the ink does not look like text as the page lies, it is measured
// again on the page turned a quarter (lines that run up or down the page:
// title pages and tables printed sideways) and, when the pixels at or
// below t are the majority of the page, with the light pixels taken for
// ink (light print on dark, or a scan whose two levels are swapped); the
// first of these that looks like text is returned, marked Turned or
// Inverted, else the measure of the page as it lies. Ink that does not
// look like text in any of these ways is taken for a picture by triage
// (when the engine reads few words with confidence), so text must not be
// missed for lying sideways or being light on dark.
//
// Not tried: a local threshold (Sauvola's) for unevenly lit pages. It finds
// the text of ocr/synth's uneven kind at 300 dpi (whose dim half Otsu's
// threshold turns into one dark mass), but also makes a map on an evenly
// lit page (leptonlib's map.057.jpg) look like text, even restricted to
// pages the preparation's own test finds unevenly lit.
func measureInk(g *image.Gray, t int) InkShape {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	b := image.NewGray(image.Rect(0, 0, w, h))
	threshold(b, g, t)
	// The labellings share one run buffer, kept between pages: growing a
	// new run list for each page cost more than the labelling itself
	// (BenchmarkRunOverhead's noise pages, cmd/internal/run). The page
	// turned a quarter is not labelled again: turning keeps every
	// component, with its box turned (see turnMarks).
	sp := runPool.Get().(*[]run)
	defer runPool.Put(sp)
	marks := inkMarks(b, sp)
	s := measureMarks(marks, h, minXHeight)
	if s.LooksLikeText() {
		return s
	}
	turned := turnMarks(marks)
	if st := measureMarks(turned, w, minXHeight); st.LooksLikeText() {
		st.Turned = true
		return st
	}
	dark := 0
	for y := 0; y < h; y++ {
		dark += bytes.Count(b.Pix[y*b.Stride:y*b.Stride+w], ink)
	}
	if 2*dark > w*h {
		invert(b)
		inv := inkMarks(b, sp)
		if si := measureMarks(inv, h, minXHeight); si.LooksLikeText() {
			si.Inverted = true
			return si
		}
		if si := measureMarks(turnMarks(inv), w, minXHeight); si.LooksLikeText() {
			si.Inverted, si.Turned = true, true
			return si
		}
	}
	s.SmallText = measureMarks(marks, h, minSmallHeight).LooksLikeText() ||
		measureMarks(turned, w, minSmallHeight).LooksLikeText()
	return s
}

// ink is the level of ink in a binary image, for bytes.Count.
var ink = []byte{0}

// runPool holds run buffers for measureInk, one per page measured at once.
var runPool = sync.Pool{New: func() any { return new([]run) }}

// invert swaps the two levels of the binary image b in place.
func invert(b *image.Gray) {
	w := b.Rect.Dx()
	for y := 0; y < b.Rect.Dy(); y++ {
		row := b.Pix[y*b.Stride : y*b.Stride+w]
		for x, v := range row {
			row[x] = 255 - v
		}
	}
}

// inkMarks returns the boxes and areas of the 8-connected components of
// the ink (0) of the binary image b that measureMarks considers: at least
// 2 pixels, not touching the image's edge. *runs is scratch space.
func inkMarks(b *image.Gray, runs *[]run) []mark {
	w, h := b.Rect.Dx(), b.Rect.Dy()
	*runs = components(b, *runs)
	stats, roots := componentStats(*runs)
	var ms []mark
	for _, root := range roots {
		s := stats[root]
		if s.area < 2 || s.x0 == 0 || s.y0 == 0 || int(s.x1) == w || int(s.y1) == h {
			continue
		}
		ms = append(ms, mark{s.x0, s.y0, s.x1, s.y1, s.area})
	}
	return ms
}

// turnMarks returns the marks of the image mirrored about its diagonal
// (rows become columns, so that lines running up or down the page run
// across it; the order of the letters along a line does not matter to the
// measure): the same components with x and y swapped. Mirroring keeps
// 8-connectivity, areas and the edge test, and measureMarks does not
// depend on the order of the marks, so the marks need not be labelled
// again on a mirrored image (TestTurnMarksAgreesWithMirroredPage).
func turnMarks(ms []mark) []mark {
	out := make([]mark, len(ms))
	for i, m := range ms {
		out[i] = mark{m.y0, m.x0, m.y1, m.x1, m.area}
	}
	return out
}

// measureMarks measures the shape of the ink whose components are ms (see
// inkMarks), on an image h pixels tall (see measureInk), taking marks from
// minH pixels tall for letters.
func measureMarks(ms []mark, h int, minH int32) InkShape {
	var res InkShape
	ink := 0
	var letters []mark
	for _, m := range ms {
		res.Components++
		ink += m.area
		if m.h() >= minH && int(m.h())*10 < h && m.w() <= 8*m.h() && m.area*10 >= int(m.w())*int(m.h()) {
			letters = append(letters, m)
		}
	}
	res.Letters = len(letters)
	if len(letters) < minLineMarks || ink == 0 {
		return res
	}
	// First pass: chain marks of any letter size, with the median height
	// standing in for the x-height; then chain again with the commonest
	// height of the marks found on lines.
	hs := make([]int, len(letters))
	for i, m := range letters {
		hs[i] = int(m.h())
	}
	sort.Ints(hs)
	xh := float64(hs[len(hs)/2])
	for pass := 0; pass < 2; pass++ {
		lines := chainLines(letters, xh, minH)
		mode := lineHeightMode(letters, lines)
		if mode == 0 {
			return res
		}
		xh = mode
	}
	lines := chainLines(letters, xh, minH)
	res.XHeight = xh
	inLines, marksOn := 0, 0
	type line struct{ x0, x1, bottom int32 }
	var ls []line
	for _, l := range lines {
		res.Lines++
		ln := line{x0: math.MaxInt32, x1: -1}
		bs := make([]int32, 0, len(l))
		marksOn += len(l)
		for _, i := range l {
			m := letters[i]
			inLines += m.area
			ln.x0, ln.x1 = min(ln.x0, m.x0), max(ln.x1, m.x1)
			if float64(m.h()) <= 1.25*xh {
				bs = append(bs, m.y1)
			}
		}
		if len(bs) == 0 {
			continue
		}
		sort.Slice(bs, func(a, b int) bool { return bs[a] < bs[b] })
		ln.bottom = bs[len(bs)/2]
		ls = append(ls, ln)
	}
	res.TextInk = float64(inLines) / float64(ink)
	res.LineMarks = marksOn
	// Line pitch: for each line, the nearest line below that overlaps it
	// horizontally, at least 1.5 x-heights lower (not a fragment of the
	// same line).
	var pitches []float64
	for _, a := range ls {
		best := int32(math.MaxInt32)
		for _, c := range ls {
			d := c.bottom - a.bottom
			if float64(d) >= 1.5*xh && d < best && c.x0 < a.x1 && a.x0 < c.x1 {
				best = d
			}
		}
		if best != math.MaxInt32 && float64(best) <= 8*xh {
			pitches = append(pitches, float64(best))
		}
	}
	if len(pitches) > 0 {
		sort.Float64s(pitches)
		res.LinePitch = pitches[len(pitches)/2]
	}
	return res
}

// chainLines joins marks that sit side by side (vertical overlap of at
// least half the shorter one, horizontal gap under lineGap·xh, heights
// within a factor of 2.5 of xh and at least minH) and returns the groups of at least
// minLineMarks marks, each as indices into marks.
func chainLines(marks []mark, xh float64, minH int32) [][]int {
	lo, hi := max(minH, int32(math.Floor(0.5*xh))), int32(math.Ceil(2.5*xh))
	idx := make([]int, 0, len(marks))
	for i, m := range marks {
		if m.h() >= lo && m.h() <= hi {
			idx = append(idx, i)
		}
	}
	sort.Slice(idx, func(a, b int) bool { return marks[idx[a]].x0 < marks[idx[b]].x0 })
	parent := make([]int, len(marks))
	for i := range parent {
		parent[i] = i
	}
	var root func(int) int
	root = func(i int) int {
		for parent[i] != i {
			parent[i] = parent[parent[i]]
			i = parent[i]
		}
		return i
	}
	gap := int32(math.Ceil(lineGap * xh))
	for k, i := range idx {
		a := marks[i]
		// Candidates start left of a.x1 + gap; scanning forward in x0
		// order, stop when a mark starts beyond that.
		for _, j := range idx[k+1:] {
			c := marks[j]
			if c.x0 > a.x1+gap {
				break
			}
			ov := min(a.y1, c.y1) - max(a.y0, c.y0)
			if 2*ov < min(a.h(), c.h()) {
				continue
			}
			if ri, rj := root(i), root(j); ri != rj {
				parent[max(ri, rj)] = min(ri, rj)
			}
		}
	}
	groups := map[int][]int{}
	for _, i := range idx {
		r := root(i)
		groups[r] = append(groups[r], i)
	}
	var out [][]int
	for _, g := range groups {
		if len(g) >= minLineMarks {
			out = append(out, g)
		}
	}
	sort.Slice(out, func(a, b int) bool { return out[a][0] < out[b][0] })
	return out
}

// lineHeightMode returns the commonest height of the marks on lines,
// the histogram smoothed over neighbouring heights (±1 pixel), refined to
// the mean height of the marks within 15 % of it; 0 with no marks.
func lineHeightMode(marks []mark, lines [][]int) float64 {
	var hist []int
	for _, l := range lines {
		for _, i := range l {
			hh := int(marks[i].h())
			for len(hist) <= hh+1 {
				hist = append(hist, 0)
			}
			hist[hh]++
		}
	}
	best, bestN := 0, 0
	for v := 1; v+1 < len(hist); v++ {
		if n := hist[v-1] + hist[v] + hist[v+1]; n > bestN {
			best, bestN = v, n
		}
	}
	if bestN == 0 {
		return 0
	}
	sum, n := 0.0, 0
	for v := range hist {
		if math.Abs(float64(v-best)) <= math.Max(1, 0.15*float64(best)) {
			sum += float64(v * hist[v])
			n += hist[v]
		}
	}
	return sum / float64(n)
}
