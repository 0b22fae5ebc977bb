package quality

import (
	"iter"
	"slices"
)

// bitState is the working memory of the bit-vector method.
type bitState struct {
	pv, mv []uint64       // vertical deltas +1 / -1 of the current column
	zero   []uint64       // the match vector of a symbol a lacks
	peq    []uint64       // match vectors, ⌈n/64⌉ words per distinct symbol
	sym    map[rune]int32 // symbol -> index into peq, beyond ASCII
	ascii  [128]int32     // ASCII symbol -> index into peq, or -1
	col    []int32        // column scores (column)
}

// column computes D(i, len(b)) for i = 0..len(a) into s.col and returns
// it (valid until the next call).
func (s *bitState) column(a, b []rune) []int32 {
	s.distance(a, b)
	n := len(a)
	if cap(s.col) < n+1 {
		s.col = make([]int32, n+1)
	}
	col := s.col[:n+1]
	col[0] = int32(len(b))
	for i := 1; i <= n; i++ {
		w, bit := (i-1)/64, uint((i-1)%64)
		col[i] = col[i-1] + int32(s.pv[w]>>bit&1) - int32(s.mv[w]>>bit&1)
	}
	return col
}

// distance computes the Levenshtein distance with the bit-vector
// algorithm of Myers (1999, "A fast bit-vector algorithm for approximate
// string matching based on dynamic programming", J. ACM 46(3)) in the form
// for global distance given by Hyyrö (2003, "A bit-vector algorithm for
// computing Levenshtein and Damerau edit distances", Nordic J. Computing
// 10(1)). One column of the table is held as two bit vectors of vertical
// deltas (+1 and -1) over the rows of a, in 64-row blocks, and each symbol
// of b advances every block by a few word operations; the score at the
// last row is carried along.
//
// On return s.pv and s.mv hold the last column, D(·, m): bit i%64 of word
// i/64 of pv (mv) is set when D(i+1, m) - D(i, m) is +1 (-1); see column.
//
// Complexity: O(⌈n/64⌉·m) time and O(σ·⌈n/64⌉) memory, where n = len(a),
// m = len(b) and σ is the number of distinct symbols of a. For a distance
// alone callers pass the shorter string as a.
func (s *bitState) distance(a, b []rune) int { return bitDistance(s, a, b) }

// bitDistance is bitState.distance over any symbol type (code points, or
// the bytes of denseCoder for long texts).
func bitDistance[T symbol](s *bitState, a, b []T) int {
	d, _ := bitDistanceSeq(s, a, slices.Values(b))
	return d
}

// bitDistanceSeq is bitDistance with b given as a sequence, read once, so
// that a long text can be streamed from its string (longtext.go); it also
// returns the length of b. Symbols of b that a lacks never match, so b may
// yield any value for them.
func bitDistanceSeq[T symbol](s *bitState, a []T, b iter.Seq[T]) (dist, m int) {
	n := len(a)
	if n == 0 {
		for range b {
			m++
		}
		return m, m
	}
	nb := (n + 63) / 64
	buildPeqOf(s, a, nb)
	if cap(s.pv) < nb {
		s.pv, s.mv = make([]uint64, nb), make([]uint64, nb)
	}
	pv, mv := s.pv[:nb], s.mv[:nb]
	for i := range pv {
		pv[i], mv[i] = ^uint64(0), 0 // column 0: D(i, 0) = i, all deltas +1
	}
	if cap(s.zero) < nb {
		s.zero = make([]uint64, nb)
	}
	zero := s.zero[:nb]
	lastBit := uint((n - 1) % 64)
	score := n
	for c := range b {
		m++
		eqs := s.peqOf(rune(c), nb)
		if eqs == nil {
			eqs = zero
		}
		eqs, pv, mv := eqs[:nb], pv[:nb], mv[:nb]
		// The horizontal delta entering a block from above, as two bits:
		// +1 on row 0 (D(0, j) = j).
		hpos, hneg := uint64(1), uint64(0)
		last := nb - 1
		for k := range last {
			var ph, mh uint64
			pv[k], mv[k], ph, mh = blockStep(eqs[k], pv[k], mv[k], hpos, hneg)
			hpos, hneg = ph>>63, mh>>63
		}
		var ph, mh uint64
		pv[last], mv[last], ph, mh = blockStep(eqs[last], pv[last], mv[last], hpos, hneg)
		hpos, hneg = ph>>lastBit&1, mh>>lastBit&1
		score += int(hpos) - int(hneg)
	}
	return score, m
}

// blockStep advances one 64-row block by one column: eq is the block's
// match vector for the column's symbol, p and m its vertical +1 and -1
// deltas, hpos and hneg the horizontal delta (+1, -1, or neither) entering
// from the row above the block. It returns the new vertical deltas and the
// block's horizontal deltas before the shift, whose top bit is the delta
// leaving the block.
func blockStep(eq, p, m, hpos, hneg uint64) (np, nm, ph, mh uint64) {
	xv := eq | m
	eq |= hneg // a -1 entering acts as a match on the block's first row
	xh := (((eq & p) + p) ^ p) | eq
	ph = m | ^(xh | p)
	mh = p & xh
	sph := ph<<1 | hpos
	np = mh<<1 | hneg | ^(xv | sph)
	nm = sph & xv
	return np, nm, ph, mh
}

// buildPeq fills the match vectors of a: for each distinct symbol, nb
// words with bit i%64 of word i/64 set where a[i] is that symbol.
func (s *bitState) buildPeq(a []rune, nb int) { buildPeqOf(s, a, nb) }

func buildPeqOf[T symbol](s *bitState, a []T, nb int) {
	if s.sym == nil {
		s.sym = make(map[rune]int32)
	}
	clear(s.sym)
	for i := range s.ascii {
		s.ascii[i] = -1
	}
	s.peq = s.peq[:0]
	for i, c := range a {
		r := rune(c)
		idx := s.symIndex(r)
		if idx < 0 {
			idx = int32(len(s.peq) / nb)
			for range nb {
				s.peq = append(s.peq, 0)
			}
			if r >= 0 && r < int32(len(s.ascii)) {
				s.ascii[r] = idx
			} else {
				s.sym[r] = idx
			}
		}
		s.peq[int(idx)*nb+i/64] |= 1 << uint(i%64)
	}
}

func (s *bitState) symIndex(r rune) int32 {
	if r >= 0 && r < int32(len(s.ascii)) {
		return s.ascii[r]
	}
	if idx, ok := s.sym[r]; ok {
		return idx
	}
	return -1
}

// peqOf returns the match vector of symbol c, or nil when a lacks it.
func (s *bitState) peqOf(c rune, nb int) []uint64 {
	idx := s.symIndex(c)
	if idx < 0 {
		return nil
	}
	return s.peq[int(idx)*nb : int(idx+1)*nb]
}

// bagCounter computes the bag distance, a lower bound on the Levenshtein
// distance (Bartolini, Ciaccia and Patella 2002, "String matching with
// metric trees using an approximate distance"): count each symbol in a and
// in b; the distance is at least the larger of a's total surplus and b's,
// since one edit lowers each by at most 1. It lets Distance and Align skip
// the diagonal rounds when the distance is sure to be large.
type bagCounter struct {
	ascii [128]int32
	other map[rune]int32
}

// bound returns the bag distance of a and b in O(len(a)+len(b)) time.
func (c *bagCounter) bound(a, b []rune) int { return bagBound(c, a, b) }

// bagBound is bagCounter.bound for either kind of symbol.
func bagBound[T symbol](c *bagCounter, a, b []T) int {
	clear(c.ascii[:])
	if c.other == nil {
		c.other = make(map[rune]int32)
	}
	clear(c.other)
	for _, r := range a {
		if r >= 0 && r < 128 {
			c.ascii[r]++
		} else {
			c.other[rune(r)]++
		}
	}
	for _, r := range b {
		if r >= 0 && r < 128 {
			c.ascii[r]--
		} else {
			c.other[rune(r)]--
		}
	}
	pos, neg := 0, 0
	for _, v := range c.ascii {
		if v > 0 {
			pos += int(v)
		} else {
			neg -= int(v)
		}
	}
	for _, v := range c.other {
		if v > 0 {
			pos += int(v)
		} else {
			neg -= int(v)
		}
	}
	return max(pos, neg)
}

// denseCoder re-encodes two texts of at most 256 distinct symbols as one
// byte per symbol (codes in order of first appearance); equal symbols get
// equal bytes, so distances and split points are unchanged.
type denseCoder struct {
	ascii  [128]int16 // code of an ASCII symbol, or -1
	other  map[rune]uint8
	next   int // the next code to give
	da, db []byte
}

// reset forgets every code given.
func (c *denseCoder) reset() {
	for i := range c.ascii {
		c.ascii[i] = -1
	}
	if c.other == nil {
		c.other = make(map[rune]uint8)
	}
	clear(c.other)
	c.next = 0
}

// code returns r's byte, giving it the next one if it has none, or false
// when 256 codes are given already.
func (c *denseCoder) code(r rune) (byte, bool) {
	if r >= 0 && r < 128 {
		if v := c.ascii[r]; v >= 0 {
			return byte(v), true
		}
	} else if v, ok := c.other[r]; ok {
		return v, true
	}
	if c.next == 256 {
		return 0, false
	}
	v := byte(c.next)
	c.next++
	if r >= 0 && r < 128 {
		c.ascii[r] = int16(v)
	} else {
		c.other[r] = v
	}
	return v, true
}

// encode returns the byte forms of a and b, valid until the next call, or
// false when they use more than 256 distinct symbols. O(len(a)+len(b)).
func (c *denseCoder) encode(a, b []rune) ([]byte, []byte, bool) {
	c.reset()
	var ok bool
	c.da, c.db = slices.Grow(c.da[:0], len(a)), slices.Grow(c.db[:0], len(b))
	if c.da, ok = c.appendCodes(c.da, a); !ok {
		return nil, nil, false
	}
	if c.db, ok = c.appendCodes(c.db, b); !ok {
		return nil, nil, false
	}
	return c.da, c.db, true
}

func (c *denseCoder) appendCodes(dst []byte, s []rune) ([]byte, bool) {
	for _, r := range s {
		v, ok := c.code(r)
		if !ok {
			return dst, false
		}
		dst = append(dst, v)
	}
	return dst, true
}

// appendString is appendCodes over the code points of a UTF-8 string.
func (c *denseCoder) appendString(dst []byte, s string) ([]byte, bool) {
	for _, r := range s {
		v, ok := c.code(r)
		if !ok {
			return dst, false
		}
		dst = append(dst, v)
	}
	return dst, true
}
