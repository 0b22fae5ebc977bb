package ocr

import (
	"image"
	"math"
)

// half returns g reduced by 2 in each direction, each pixel the rounded mean
// of a 2×2 block (a trailing odd row or column is dropped).
func half(g *image.Gray) *image.Gray {
	w, h := g.Rect.Dx()/2, g.Rect.Dy()/2
	d := image.NewGray(image.Rect(0, 0, w, h))
	for y := 0; y < h; y++ {
		a := g.Pix[2*y*g.Stride : 2*y*g.Stride+2*w]
		b := g.Pix[(2*y+1)*g.Stride : (2*y+1)*g.Stride+2*w]
		row := d.Pix[y*d.Stride : y*d.Stride+w]
		for x := range row {
			row[x] = uint8((int(a[2*x]) + int(a[2*x+1]) + int(b[2*x]) + int(b[2*x+1]) + 2) >> 2)
		}
	}
	return d
}

// inkPoints lists the coordinates of the pixels of g at or below level t
// (for a binary image, t = 0 lists the ink), ignoring a margin of m pixels on
// every side, where scanner edges and shadows lie. Every step-th such pixel
// in raster order is kept.
func inkPoints(g *image.Gray, t uint8, m, step int, xs, ys []int32) ([]int32, []int32) {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	k := 0
	for y := m; y < h-m; y++ {
		row := g.Pix[y*g.Stride+m : y*g.Stride+w-m]
		for x, v := range row {
			if v <= t {
				if k == 0 {
					xs = append(xs, int32(x+m))
					ys = append(ys, int32(y))
				}
				k++
				if k == step {
					k = 0
				}
			}
		}
	}
	return xs, ys
}

// skewScorer scores candidate angles by the sharpness of the horizontal
// projection profile of ink points (H. S. Baird, "The skew angle of printed
// documents", SPSE 40th Conference, 1987; W. Postl, "Detection of linear
// oblique structures and skew scan in digitized documents", ICPR 1986): the
// points are projected onto the axis perpendicular to lines of text tilted by
// the angle, counted in bins one pixel tall, and the sum of squared bin
// counts is largest when the bins line up with the text lines (Baird's
// criterion). Postl's differential criterion, the sum of the squared
// differences between neighbouring rows of the profile (also the one of
// Leptonica's pixFindSkew: D. Bloomberg, Leptonica 1.82, skew.c), rewards
// the sharp top and bottom edges of the lines instead of their mass.
type skewScorer struct {
	xs, ys []int32
	w, h   int
	diff   int // 0: Σ bin²; n: Σ (row − previous row)² over rows of n bins
	bins   []int32
	tx     []int32
	ty     []int32
}

// score returns Σ bin² for an angle in degrees, counter-clockwise positive
// as the page is seen: a line of text skewed by θ rises to the right, so in
// image coordinates (y down) its points satisfy y·cosθ + x·sinθ = const.
func (s *skewScorer) score(deg float64) float64 {
	th := deg * math.Pi / 180
	sn, cs := math.Sin(th), math.Cos(th)
	const one = 1 << 10
	if len(s.tx) < s.w {
		s.tx = make([]int32, s.w)
	}
	if len(s.ty) < s.h {
		s.ty = make([]int32, s.h)
	}
	off := 0.0
	if sn < 0 {
		off = -sn * float64(s.w)
	}
	for x := 0; x < s.w; x++ {
		s.tx[x] = int32(math.Round((float64(x)*sn + off) * one))
	}
	for y := 0; y < s.h; y++ {
		s.ty[y] = int32(math.Round(float64(y) * cs * one))
	}
	n := int(math.Ceil(float64(s.h)*cs+math.Abs(sn)*float64(s.w))) + 2
	if cap(s.bins) < n {
		s.bins = make([]int32, n)
	}
	bins := s.bins[:n]
	clear(bins)
	tx, ty := s.tx, s.ty
	// Each point is shared between the two nearest bins in proportion to
	// its distance from them (linear interpolation), so the score changes
	// smoothly with the angle instead of in steps as points cross bin
	// edges; the fine search and its parabola fit rely on that. Sharing
	// lowers Σ bin² by an amount that depends on where points fall within
	// their bins, which at 0° (and other angles where rows line up with
	// bins) is the same for every point; a fixed pseudo-random sub-bin
	// offset per point (dither) makes that loss the same at every angle.
	for i, x := range s.xs {
		v := tx[x] + ty[s.ys[i]] + dither(i)
		f := v & (one - 1)
		b := v >> 10
		bins[b] += one - f
		bins[b+1] += f
	}
	var sum float64
	if s.diff > 0 {
		// Postl's differential criterion on rows of s.diff bins.
		prev := int64(0)
		for i := 0; i < len(bins); i += s.diff {
			var c int64
			for _, v := range bins[i:min(i+s.diff, len(bins))] {
				c += int64(v)
			}
			d := float64(c - prev)
			sum += d * d
			prev = c
		}
		return sum
	}
	for _, c := range bins {
		sum += float64(c) * float64(c)
	}
	return sum
}

// dither returns a fixed pseudo-random offset in [0, 1024) for point i
// (a multiplicative hash, Knuth's constant).
func dither(i int) int32 {
	return int32((uint32(i) * 2654435761) >> 22)
}

// minSkewPeak is the least sharpness (skewEstimate.peak) of a skew
// estimate taken as a clear peak: a text page's profile at the right angle
// is far sharper than on average; pictures and noise give a flat curve.
// Measured on the real pages of TestSkewAgreesWithLeptonica, text pages
// give 1.13 to 2.33.
const minSkewPeak = 1.1

// skewEstimate is what findSkew measured.
type skewEstimate struct {
	deg  float64 // skew, degrees, counter-clockwise positive as seen
	peak float64 // best score of the coarse sweep over its mean (1 for a flat curve)
	ok   bool    // a clear peak was found
	text bool    // measured on text-like components only (false: on all ink)
}

// findSkew searches ±maxDeg for the skew of a page in three stages of the
// projection-profile score: every 0.25° on at most 15,000 ink points of the
// binary half-size page b2 (Baird's criterion, which has a broad peak and
// finds the neighbourhood of the skew); every 0.05° within ±0.6° of the best
// on at most 100,000 of them and every 0.02° within ±0.1° of that on the
// ink of the full-size page g (pixels at or below level t within the 2×2
// blocks of b2's ink, at most about 120,000 of them, evenly spread), or on b2's ink
// again when t < 0 (pages whose light varies, where no global level finds
// the ink). Each of the last two stages fits a parabola through the best
// score and its neighbours. The angle is in degrees at full size (the same
// at half size). The last two stages use Postl's differential criterion
// on rows one pixel tall: on the real two-column page feyn.tif, Baird's
// criterion is pulled to −1.42° by the lines of one column lining up with
// those of the other (each column alone: −1.04° and −0.86°; Leptonica
// −0.95°); the differential criterion gives −0.94°, and over the 29 real
// pages where Leptonica is confident the mean difference from Leptonica
// falls from 0.094° to 0.053° (0.060° since low-resolution pages have
// their resolution estimated; TestSkewAgreesWithLeptonica). On drawn
// pages turned by −15° to 15° (TestSkewRecovered) the largest error is
// 0.031° (0.029° with Baird's criterion throughout); rows two pixels tall
// at full size gave 0.108°.
//
// The ink measured is that of text-like components (see textPoints), so
// that photographs, black borders, ruled lines and the facing page's edge
// do not steer the estimate; on a page with little text-like ink, or where
// it gives no clear peak (music staves, a form's rules), all the ink is
// measured, as before.
func findSkew(b2, g *image.Gray, t int, maxDeg float64) skewEstimate {
	w2, h2 := b2.Rect.Dx(), b2.Rect.Dy()
	allInk := func() ([]int32, []int32) { return inkPoints(b2, 0, min(w2, h2)/50, 1, nil, nil) }
	xs, ys := textPoints(b2)
	est := skewEstimate{text: len(xs) >= 200}
	if !est.text {
		xs, ys = allInk()
	}
	if len(xs) < 200 {
		return skewEstimate{}
	}
	s := &skewScorer{w: w2, h: h2}
	best, peak := s.sweep(xs, ys, maxDeg)
	if peak < minSkewPeak && est.text {
		est.text = false
		xs, ys = allInk()
		if len(xs) < 200 {
			return skewEstimate{}
		}
		best, peak = s.sweep(xs, ys, maxDeg)
	}
	est.peak = peak
	if peak < minSkewPeak {
		return est
	}
	s.xs, s.ys = subsample(xs, 100000), subsample(ys, 100000)
	s.diff = 1
	best = s.search(best, 0.6, 0.05, maxDeg)

	if t >= 0 {
		// The full-size ink lies in the 2×2 blocks of the half-size
		// ink: look only there, keeping at most about 120,000 points.
		w, h := g.Rect.Dx(), g.Rect.Dy()
		step := 4*len(xs)/120000 + 1
		fx, fy := make([]int32, 0, 4*len(xs)/step+4), make([]int32, 0, 4*len(xs)/step+4)
		k := 0
		for i, x := range xs {
			x0, y0 := int(2*x), int(2*ys[i])
			if x0+1 >= w || y0+1 >= h {
				continue
			}
			for dy := 0; dy < 2; dy++ {
				row := g.Pix[(y0+dy)*g.Stride+x0 : (y0+dy)*g.Stride+x0+2]
				for dx, v := range row {
					if int(v) <= t {
						if k == 0 {
							fx = append(fx, int32(x0+dx))
							fy = append(fy, int32(y0+dy))
						}
						k++
						if k == step {
							k = 0
						}
					}
				}
			}
		}
		if len(fx) >= 200 {
			s = &skewScorer{w: w, h: h, xs: fx, ys: fy, diff: 1}
		}
	}
	est.deg = s.search(best, 0.1, 0.02, maxDeg)
	est.ok = true
	return est
}

// sweep scores every 0.25° within ±(maxDeg + 0.5) on at most 15,000 of
// the points and returns the best angle and its score over the mean score
// (its peak; 1 when the best is at an end of the sweep, where the score was
// still rising: no peak, as Leptonica's pixFindSkew reports no confidence
// then. Measured on the real page cavalerie.11: 14.97°, against
// Leptonica's −0.22°). The half degree beyond maxDeg lets a skew of maxDeg
// itself have a peak.
func (s *skewScorer) sweep(xs, ys []int32, maxDeg float64) (best, peak float64) {
	s.xs, s.ys = subsample(xs, 15000), subsample(ys, 15000)
	var total float64
	var count int
	bestScore := -1.0
	lim := maxDeg + 0.5
	for a := -lim; a <= lim+1e-9; a += 0.25 {
		v := s.score(a)
		total += v
		count++
		if v > bestScore {
			best, bestScore = a, v
		}
	}
	if total <= 0 || math.Abs(best) > lim-0.125 {
		return 0, 1
	}
	return max(-maxDeg, min(maxDeg, best)), bestScore * float64(count) / total
}

// textPoints lists the ink pixels of the binary image b (0 is ink) that
// belong to text-like components, and m, the median height of the
// components: a component is text-like when it does not touch the image
// edge (scanner borders, the facing page), is between a third of and three
// times m tall (not a photograph, a rule's thickness or speckle) and is not
// a rule (at most 20 times as wide as tall, and not under half of m tall
// while wider than 3·m). The median is taken over components at least 2
// pixels tall and 4 in area that do not touch the edge: about the height of
// the page's letters, as in cleanup.
func textPoints(b *image.Gray) (xs, ys []int32) {
	w, h := b.Rect.Dx(), b.Rect.Dy()
	runs := components(b, nil)
	stats, roots := componentStats(runs)
	touches := func(s *compStats) bool {
		return s.x0 == 0 || s.y0 == 0 || int(s.x1) == w || int(s.y1) == h
	}
	var hist [256]int
	n := 0
	for _, root := range roots {
		s := &stats[root]
		if hgt := s.y1 - s.y0; hgt >= 2 && s.area >= 4 && !touches(s) {
			hist[min(255, hgt)]++
			n++
		}
	}
	if n == 0 {
		return nil, nil
	}
	m := int32(percentile(&hist, n, 0.5))
	keep := make([]bool, len(runs))
	kept := 0
	for _, root := range roots {
		s := &stats[root]
		hgt, wid := s.y1-s.y0, s.x1-s.x0
		switch {
		case touches(s), hgt < max(2, m/3), hgt > 3*m, wid > 20*hgt, hgt < m/2 && wid > 3*m:
		default:
			keep[root] = true
			kept++
		}
	}
	inner, textInk := 0, 0
	for _, root := range roots {
		if s := &stats[root]; !touches(s) {
			inner += s.area
			if keep[root] {
				textInk += s.area
			}
		}
	}
	// A page whose ink is mostly not text-like (music staves, a form's
	// rules, a plate): its lines are what there is to measure.
	if kept < 20 || 10*textInk < inner {
		return nil, nil
	}
	for _, r := range runs {
		if keep[r.parent] {
			for x := r.x0; x < r.x1; x++ {
				xs = append(xs, x)
				ys = append(ys, r.y)
			}
		}
	}
	return xs, ys
}

// subsample keeps at most n of the values, evenly spread.
func subsample(v []int32, n int) []int32 {
	if len(v) <= n {
		return v
	}
	step := len(v)/n + 1
	out := make([]int32, 0, n)
	for i := 0; i < len(v); i += step {
		out = append(out, v[i])
	}
	return out
}

// search scores angles every step degrees within ±span of centre (and
// within ±maxDeg) and returns the best, refined by a parabola through the
// best score and its two neighbours.
func (s *skewScorer) search(centre, span, step, maxDeg float64) float64 {
	lo, hi := max(-maxDeg, centre-span), min(maxDeg, centre+span)
	n := int(math.Round((hi-lo)/step)) + 1
	scores := make([]float64, n)
	bi := 0
	for i := range scores {
		scores[i] = s.score(lo + float64(i)*step)
		if scores[i] > scores[bi] {
			bi = i
		}
	}
	deg := lo + float64(bi)*step
	if bi > 0 && bi < n-1 {
		l, c, r := scores[bi-1], scores[bi], scores[bi+1]
		if den := l - 2*c + r; den < 0 {
			deg += step * 0.5 * (l - r) / den
		}
	}
	return deg
}

// rotation maps between the pixels of an original image and of the image
// rotated by deg degrees counter-clockwise (as seen) about its centre on a
// canvas grown to hold all of it.
type rotation struct {
	sin, cos     float64
	srcW, srcH   int
	dstW, dstH   int
	srcCX, srcCY float64
	dstCX, dstCY float64
}

func newRotation(deg float64, w, h int) rotation {
	th := deg * math.Pi / 180
	r := rotation{sin: math.Sin(th), cos: math.Cos(th), srcW: w, srcH: h}
	as, ac := math.Abs(r.sin), math.Abs(r.cos)
	r.dstW = int(math.Ceil(float64(w)*ac + float64(h)*as - 1e-6))
	r.dstH = int(math.Ceil(float64(w)*as + float64(h)*ac - 1e-6))
	r.srcCX, r.srcCY = float64(w)/2, float64(h)/2
	r.dstCX, r.dstCY = float64(r.dstW)/2, float64(r.dstH)/2
	return r
}

// toSrc maps a point of the rotated image to the original (continuous
// coordinates, pixel centres at +0.5).
func (r rotation) toSrc(x, y float64) (float64, float64) {
	dx, dy := x-r.dstCX, y-r.dstCY
	// Counter-clockwise as seen with y down: (dx, dy) → (dx·c + dy·s, −dx·s + dy·c).
	// The inverse takes a destination offset back to the source.
	return r.srcCX + dx*r.cos - dy*r.sin, r.srcCY + dx*r.sin + dy*r.cos
}

// inside returns the run [xa, xb) of x in [0, n) for which a + x·u lies in
// [0, hi): a line crosses a band in one run.
func inside(a, u, hi int64, n int) (xa, xb int) {
	switch {
	case u == 0:
		if a >= 0 && a < hi {
			return 0, n
		}
		return 0, 0
	case u > 0: // x ≥ ⌈−a/u⌉ and x < ⌈(hi−a)/u⌉
		return clampRun(ceilDiv(-a, u), ceilDiv(hi-a, u), n)
	default: // x ≤ ⌊a/−u⌋ and x > ⌊(a−hi)/−u⌋
		return clampRun(floorDiv(a-hi, -u)+1, floorDiv(a, -u)+1, n)
	}
}

func clampRun(lo, hi int64, n int) (int, int) {
	lo, hi = max(lo, 0), min(hi, int64(n))
	if hi < lo {
		return 0, 0
	}
	return int(lo), int(hi)
}

// floorDiv and ceilDiv divide by b > 0, rounding down and up.
func floorDiv(a, b int64) int64 {
	q := a / b
	if a%b != 0 && a < 0 {
		q--
	}
	return q
}

func ceilDiv(a, b int64) int64 { return -floorDiv(-a, b) }

// rotate returns src rotated by deg degrees counter-clockwise (as seen) with
// bilinear interpolation and white (255) where no source pixel falls.
func rotate(src *image.Gray, deg float64) *image.Gray {
	r := newRotation(deg, src.Rect.Dx(), src.Rect.Dy())
	dst := image.NewGray(image.Rect(0, 0, r.dstW, r.dstH))
	// A copy with a one-pixel white border lets every interpolation read
	// its four pixels without edge tests.
	pw, ph := r.srcW+2, r.srcH+2
	pad := make([]uint8, pw*ph)
	for i := range pad[:pw] {
		pad[i] = 255
	}
	for y := 0; y < r.srcH; y++ {
		row := pad[(y+1)*pw : (y+2)*pw]
		row[0], row[pw-1] = 255, 255
		copy(row[1:], src.Pix[y*src.Stride:y*src.Stride+r.srcW])
	}
	for i := range pad[(ph-1)*pw:] {
		pad[(ph-1)*pw+i] = 255
	}
	const fb = 16
	const one = 1 << fb
	// Per step in x, the source moves by (cos, sin).
	ux, uy := int64(math.Round(r.cos*one)), int64(math.Round(r.sin*one))
	maxX, maxY := int64(pw-1), int64(ph-1)
	for y := 0; y < r.dstH; y++ {
		sx0, sy0 := r.toSrc(0.5, float64(y)+0.5)
		// Fixed point, in padded coordinates relative to pixel centres.
		fx := int64(math.Round((sx0 + 0.5) * one))
		fy := int64(math.Round((sy0 + 0.5) * one))
		row := dst.Pix[y*dst.Stride : y*dst.Stride+r.dstW]
		// The pixels of the row whose four source pixels lie inside the
		// padded copy form one run [xa, xb); white outside it.
		xa, xb := inside(fx, ux, maxX<<fb, len(row))
		ya, yb := inside(fy, uy, maxY<<fb, len(row))
		xa, xb = max(xa, ya), min(xb, yb)
		if xb <= xa {
			xa, xb = 0, 0
		}
		for x := range row[:xa] {
			row[x] = 255
		}
		for x := range row[xb:] {
			row[xb+x] = 255
		}
		fx += int64(xa) * ux
		fy += int64(xa) * uy
		for x := xa; x < xb; x++ {
			o := int(fy>>fb)*pw + int(fx>>fb)
			p := pad[o : o+pw+2 : o+pw+2]
			if p[0] == p[1] && p[0] == p[pw] && p[0] == p[pw+1] {
				row[x] = p[0] // flat paper: nothing to interpolate
				fx += ux
				fy += uy
				continue
			}
			p00, p10, p01, p11 := int64(p[0]), int64(p[1]), int64(p[pw]), int64(p[pw+1])
			ax, ay := fx&(one-1), fy&(one-1)
			top := p00<<fb + (p10-p00)*ax
			bot := p01<<fb + (p11-p01)*ax
			row[x] = uint8((top<<fb + (bot-top)*ay + 1<<(2*fb-1)) >> (2 * fb))
			fx += ux
			fy += uy
		}
	}
	return dst
}
