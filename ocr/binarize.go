package ocr

import (
	"image"
)

// histogram counts the grey levels of g. Four tables count alternate
// pixels and are summed at the end: with one table, a page that is mostly
// paper increments the same counter pixel after pixel, each increment
// waiting on the one before (about four times slower on a clean A4 page:
// BenchmarkHistogram).
func histogram(g *image.Gray) *[256]int {
	var h [4][256]int
	w := g.Rect.Dx()
	for y := 0; y < g.Rect.Dy(); y++ {
		row := g.Pix[y*g.Stride : y*g.Stride+w]
		i := 0
		for ; i+4 <= len(row); i += 4 {
			h[0][row[i]]++
			h[1][row[i+1]]++
			h[2][row[i+2]]++
			h[3][row[i+3]]++
		}
		for ; i < len(row); i++ {
			h[0][row[i]]++
		}
	}
	for v := range h[0] {
		h[0][v] += h[1][v] + h[2][v] + h[3][v]
	}
	return &h[0]
}

// otsu returns Otsu's threshold for a grey-level histogram (N. Otsu, "A
// threshold selection method from gray-level histograms", IEEE Trans.
// Systems, Man and Cybernetics 9(1), 1979): the level k that maximises the
// between-class variance σ_B²(k) = [μ_T ω(k) − μ(k)]² / (ω(k)[1 − ω(k)]),
// where class C0 holds levels 0..k and C1 levels k+1..255. Pixels at or
// below k are dark (ink). When several levels tie, the middle of the first
// run of tied levels is returned. A histogram with a single occupied level
// returns that level.
func otsu(h *[256]int) int {
	var total, sum float64
	for i, c := range h {
		total += float64(c)
		sum += float64(i) * float64(c)
	}
	if total == 0 {
		return 0
	}
	var w0, s0, best float64
	bestK, bestEnd := -1, -1
	for k := 0; k < 255; k++ {
		w0 += float64(h[k])
		s0 += float64(k) * float64(h[k])
		if w0 == 0 {
			continue
		}
		w1 := total - w0
		if w1 == 0 {
			break
		}
		d := sum*w0/total - s0 // = total·(μ_T ω − μ)
		v := d * d / (w0 * w1)
		switch {
		case v > best*(1+1e-12):
			best, bestK, bestEnd = v, k, k
		case bestK >= 0 && bestEnd == k-1 && v >= best*(1-1e-12):
			bestEnd = k // empty bins extend a tie
		}
	}
	if bestK < 0 {
		// One occupied level.
		for i, c := range h {
			if c > 0 {
				return i
			}
		}
	}
	return (bestK + bestEnd) / 2
}

// threshold writes 0 to dst where src ≤ t and 255 elsewhere. dst and src
// have the same size and may be the same image.
func threshold(dst, src *image.Gray, t int) {
	var lut [256]uint8
	for i := t + 1; i < 256; i++ {
		lut[i] = 255
	}
	w := src.Rect.Dx()
	for y := 0; y < src.Rect.Dy(); y++ {
		s := src.Pix[y*src.Stride : y*src.Stride+w]
		d := dst.Pix[y*dst.Stride : y*dst.Stride+w]
		for x, v := range s {
			d[x] = lut[v]
		}
	}
}

// Sauvola parameters: J. Sauvola and M. Pietikäinen, "Adaptive document
// image binarization", Pattern Recognition 33(2), 2000, threshold
// T = m·(1 + k·(s/R − 1)) with m and s the mean and standard deviation of a
// window around the pixel. The paper uses k = 0.5 and R = 128; k = 0.34 is
// a common, less aggressive choice for faint print (common practice).
const (
	sauvolaK = 0.34
	sauvolaR = 128.0
)

// sauvolaWindow is the window side for an image: about 1/50 of the shorter
// side (49 pixels at A4 300 dpi, one to two text lines), odd, at least 15.
func sauvolaWindow(w, h int) int {
	n := min(w, h) / 50
	if n < 15 {
		n = 15
	}
	return n | 1
}

// integral is a summed-area table of an image and of its squares (F. Crow,
// "Summed-area tables for texture mapping", SIGGRAPH 1984; applied to local
// thresholding by F. Shafait, D. Keysers and T. Breuel, "Efficient
// implementation of local adaptive thresholding techniques using integral
// images", SPIE Document Recognition and Retrieval XV, 2008), kept for a
// sliding band of rows: a window never spans more than win+1 table rows, so
// only the last win+2 are stored (about 1 MB for an A4 page at 300 dpi
// instead of 70 MB), which keeps the work in cache.
//
// Table row i holds, at column x, the sum of the pixels above row i and left
// of column x. The tables are uint32 and wrap around on large images; window
// sums are differences modulo 2³², exact as long as a window's true sum is
// below 2³² (a 255-level window of up to 66,000 pixels for squares).
type integral struct {
	g          *image.Gray
	w          int      // image width; table rows have w+1 entries
	slots      int      // table rows stored
	next       int      // index of the next table row to compute
	sum, sumSq []uint32 // slots × (w+1), table row i in slot i % slots
}

// reset starts a table for g whose windows span at most win rows.
func (it *integral) reset(g *image.Gray, win int) {
	it.g, it.w, it.slots, it.next = g, g.Rect.Dx(), win+2, 0
	n := it.slots * (it.w + 1)
	if cap(it.sum) < n {
		it.sum, it.sumSq = make([]uint32, n), make([]uint32, n)
	}
	it.sum, it.sumSq = it.sum[:n], it.sumSq[:n]
}

// row returns table row i (0 ≤ i ≤ image height), computing the rows up to
// it. Rows more than slots−1 below the last computed row are gone: callers
// ask for rows in increasing order, within a window of win+1.
func (it *integral) row(i int) (sum, sumSq []uint32) {
	W := it.w + 1
	for ; it.next <= i; it.next++ {
		k := it.next
		cur := it.sum[(k%it.slots)*W : (k%it.slots)*W+W]
		curSq := it.sumSq[(k%it.slots)*W : (k%it.slots)*W+W]
		if k == 0 {
			clear(cur)
			clear(curSq)
			continue
		}
		prev := it.sum[((k-1)%it.slots)*W : ((k-1)%it.slots)*W+W]
		prevSq := it.sumSq[((k-1)%it.slots)*W : ((k-1)%it.slots)*W+W]
		src := it.g.Pix[(k-1)*it.g.Stride : (k-1)*it.g.Stride+it.w]
		cur[0], curSq[0] = 0, 0
		var rs, rq uint32
		for x, v := range src {
			rs += uint32(v)
			rq += uint32(v) * uint32(v)
			cur[x+1] = prev[x+1] + rs
			curSq[x+1] = prevSq[x+1] + rq
		}
	}
	return it.sum[(i%it.slots)*W : (i%it.slots)*W+W], it.sumSq[(i%it.slots)*W : (i%it.slots)*W+W]
}

// sauvola binarises src into dst (same size; may be the same image) with a
// win×win window clipped at the image edges, in O(pixels) through integral
// images. it is scratch space, reused across calls.
//
// The test v ≤ m·(1 + k·(s/R − 1)) is evaluated without a square root:
// with a = v − m·(1 − k) it holds when a ≤ 0, or else when
// a² ≤ (m·k/R)²·s².
func sauvola(dst, src *image.Gray, win int, it *integral) {
	w, h := src.Rect.Dx(), src.Rect.Dy()
	if dst.Rect.Dx() != w || dst.Rect.Dy() != h {
		panic("ocr: sauvola: sizes differ")
	}
	if w == 0 || h == 0 {
		return
	}
	if &dst.Pix[0] == &src.Pix[0] {
		// In place: the table reads source rows up to r ahead of the
		// row being written, so work from a copy.
		src = toGray(src)
	}
	it.reset(src, win)
	r := win / 2
	for y := 0; y < h; y++ {
		y0, y1 := max(0, y-r), min(h, y+r+1)
		bot, botQ := it.row(y1)
		top, topQ := it.row(y0)
		s := src.Pix[y*src.Stride : y*src.Stride+w]
		d := dst.Pix[y*dst.Stride : y*dst.Stride+w]
		rows := y1 - y0
		// Interior: the window is whole across, x0 = x−r and x1 = x+r+1.
		lo, hi := min(r, w), max(min(r, w), w-r-1)
		if win <= w {
			inv := 1 / float64(win*rows)
			n := hi - lo
			b0, b1 := bot[:n], bot[win:win+n]
			t0, t1 := top[:n], top[win:win+n]
			q0, q1 := botQ[:n], botQ[win:win+n]
			u0, u1 := topQ[:n], topQ[win:win+n]
			sv, dv := s[lo:lo+n], d[lo:lo+n]
			for i := range sv {
				m := float64(b1[i]-b0[i]-t1[i]+t0[i]) * inv
				variance := float64(q1[i]-q0[i]-u1[i]+u0[i])*inv - m*m
				dv[i] = sauvolaPixel(sv[i], m, variance)
			}
		} else {
			lo, hi = 0, 0
		}
		// Edges, where the window is clipped.
		for x := 0; x < w; x++ {
			if x == lo && hi > lo {
				x = hi - 1
				continue
			}
			x0, x1 := max(0, x-r), min(w, x+r+1)
			inv := 1 / float64((x1-x0)*rows)
			m := float64(bot[x1]-bot[x0]-top[x1]+top[x0]) * inv
			variance := float64(botQ[x1]-botQ[x0]-topQ[x1]+topQ[x0])*inv - m*m
			d[x] = sauvolaPixel(s[x], m, variance)
		}
	}
}

// sauvolaPixel applies Sauvola's test to grey level v with window mean m
// and variance: 0 (ink) or 255.
func sauvolaPixel(v uint8, m, variance float64) uint8 {
	const k, kr = sauvolaK, sauvolaK / sauvolaR
	a := float64(v) - m*(1-k)
	if a <= 0 {
		return 0
	}
	if b := m * kr; a*a <= b*b*variance {
		return 0
	}
	return 255
}
