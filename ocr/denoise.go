package ocr

import "image"

// estimateNoise returns the standard deviation of additive noise in g, in
// grey levels, by Immerkær's method (J. Immerkær, "Fast noise variance
// estimation", Computer Vision and Image Understanding 64(2), 1996): the
// image is convolved with the mask
//
//	 1 -2  1
//	-2  4 -2
//	 1 -2  1
//
// which cancels constant, linear and most smooth structure and has gain 36σ²
// on white noise of variance σ². Immerkær averages |response|; text edges
// would dominate that average on a page, so we take the median |response|
// instead (for a zero-mean normal variable, median|X| = 0.6745 sd(X)), which
// ignores edges as long as they cover under half the page. Rows are sampled
// so that at most about 500,000 responses are computed.
func estimateNoise(g *image.Gray) float64 {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	if w < 3 || h < 3 {
		return 0
	}
	step := 1
	for (h-2)/step*(w-2) > 500_000 {
		step++
	}
	var hist [16*255 + 1]int
	n := 0
	s := g.Stride
	for y := 1; y < h-1; y += step {
		up := g.Pix[(y-1)*s : (y-1)*s+w]
		mid := g.Pix[y*s : y*s+w]
		dn := g.Pix[(y+1)*s : (y+1)*s+w]
		for x := 1; x < w-1; x++ {
			v := int(up[x-1]) - 2*int(up[x]) + int(up[x+1]) -
				2*int(mid[x-1]) + 4*int(mid[x]) - 2*int(mid[x+1]) +
				int(dn[x-1]) - 2*int(dn[x]) + int(dn[x+1])
			if v < 0 {
				v = -v
			}
			hist[v]++
			n++
		}
	}
	// Median with linear interpolation inside the median bin, so that small
	// noise levels are not rounded to whole response units.
	half := float64(n) / 2
	cum := 0
	for v, c := range hist {
		if c == 0 {
			continue
		}
		if float64(cum+c) >= half {
			med := float64(v) + (half-float64(cum))/float64(c) - 0.5
			if med < 0 {
				med = 0
			}
			return med / (6 * 0.6745)
		}
		cum += c
	}
	return 0
}

// boxBlur replaces g by the mean over a (2r+1)×(2r+1) window, clipped at the
// edges, using running sums: O(pixels) whatever r. It runs as two 1-D
// passes, each rounding its result, so it may differ from the exact 2-D
// mean by one grey level. Two passes approximate a Gaussian (common
// practice).
func boxBlur(g *image.Gray, r int) {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	if r < 1 || w == 0 || h == 0 {
		return
	}
	s := g.Stride
	// Division by the window count n ≤ 2r+1 as a multiplication:
	// (sum·⌈2¹⁶/n⌉ + 2¹⁵) >> 16 rounds sum/n to the nearest integer for the
	// sums that occur (at most 255·n).
	recip := make([]uint32, 2*r+2)
	for n := 1; n < len(recip); n++ {
		recip[n] = (1<<16 + uint32(n) - 1) / uint32(n)
	}
	// Horizontal pass, one row at a time through a copy of the row.
	row := make([]uint8, w)
	for y := 0; y < h; y++ {
		p := g.Pix[y*s : y*s+w]
		copy(row, p)
		var sum uint32
		cnt := 0
		for x := 0; x <= r && x < w; x++ {
			sum += uint32(row[x])
			cnt++
		}
		for x := 0; x < w; x++ {
			p[x] = uint8((sum*recip[cnt] + 1<<15) >> 16)
			if x+r+1 < w {
				sum += uint32(row[x+r+1])
				cnt++
			}
			if x-r >= 0 {
				sum -= uint32(row[x-r])
				cnt--
			}
		}
	}
	// Vertical pass: column sums over a sliding window of rows, kept in a
	// ring of the last r+1 original rows.
	ring := make([]uint8, (r+1)*w)
	col := make([]uint32, w)
	cnt := 0
	for y := 0; y <= r && y < h; y++ {
		for x, v := range g.Pix[y*s : y*s+w] {
			col[x] += uint32(v)
		}
		cnt++
	}
	for y := 0; y < h; y++ {
		p := g.Pix[y*s : y*s+w]
		// Save the original row y before overwriting it; it leaves the
		// window at y+r+1.
		copy(ring[(y%(r+1))*w:], p)
		m := recip[cnt]
		for x := range p {
			p[x] = uint8((col[x]*m + 1<<15) >> 16)
		}
		if y+r+1 < h {
			for x, v := range g.Pix[(y+r+1)*s : (y+r+1)*s+w] {
				col[x] += uint32(v)
			}
			cnt++
		}
		if y-r >= 0 {
			old := ring[((y-r)%(r+1))*w : ((y-r)%(r+1))*w+w]
			for x, v := range old {
				col[x] -= uint32(v)
			}
			cnt--
		}
	}
}
