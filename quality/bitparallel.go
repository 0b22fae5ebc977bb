package quality

import (
	"iter"
	"slices"
)

// bitState is the working memory of the bit-vector method (Myers 1999,
// in Hyyrö's 2003 form): the match vectors of one pattern, built once by
// buildPeq and then run over any number of texts, and the current column.
// One loop runs the columns for every use (bitColumns): the global
// distance (distance, bitDistance, bitDistanceSeq, column) and the
// approximate matching of the flexible character accuracy (scan).
type bitState struct {
	pv, mv []uint64       // vertical deltas +1 / -1 of the current column
	peq    []uint64       // match vectors, nb words per symbol; symbol 0 is the all-zero vector of every symbol the pattern lacks
	low    [256]int32     // symbol below 256 -> index into peq / nb, 0 when the pattern lacks it
	sym    map[rune]int32 // the same for the other symbols
	lows   []uint8        // the symbols below 256 set in low, to clear it for the next pattern
	n, nb  int            // the pattern's length and words per symbol
	chunk  []rune         // bitDistanceSeq's buffer
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
	if len(a) == 0 {
		return len(b)
	}
	buildPeqOf(s, a)
	s.startColumn()
	d, _, _ := bitColumns(s, b, 1, len(a), false)
	return d
}

// bitDistanceSeq is bitDistance with b given as a sequence, read once, so
// that a long text can be streamed from its string (longtext.go); it also
// returns the length of b. Symbols of b that a lacks never match, so b may
// yield any value for them. The sequence is run through the columns in
// chunks of bitChunk symbols.
func bitDistanceSeq[T symbol](s *bitState, a []T, b iter.Seq[T]) (dist, m int) {
	n := len(a)
	if n == 0 {
		for range b {
			m++
		}
		return m, m
	}
	buildPeqOf(s, a)
	s.startColumn()
	dist = n
	buf := slices.Grow(s.chunk[:0], bitChunk)
	for c := range b {
		m++
		if buf = append(buf, rune(c)); len(buf) == bitChunk {
			dist, _, _ = bitColumns(s, buf, 1, dist, false)
			buf = buf[:0]
		}
	}
	dist, _, _ = bitColumns(s, buf, 1, dist, false)
	s.chunk = buf[:0]
	return dist, m
}

// bitChunk is the number of symbols bitDistanceSeq buffers at a time.
const bitChunk = 1024

// scan runs the bit-vector method with pat as the rows and text as the
// columns and returns the least score in the last row over every column
// j = 0..len(text), and the first column where it is reached. With
// anchored false, row 0 is 0 in every column, so the score at column j is
// the least distance between pat and a substring of text ending at j
// (approximate string matching, Sellers 1980; Myers 1999); with anchored
// true row 0 is j, so it is the distance between pat and text[:j].
//
// Complexity: O(⌈n/64⌉·m) time for n = len(pat) and m = len(text).
func (s *bitState) scan(pat, text []rune, anchored bool) (best, at int) {
	if len(pat) == 0 {
		return 0, 0
	}
	s.buildPeq(pat)
	return s.scanBuilt(text, anchored)
}

// scanBuilt is scan with the match vectors of a non-empty pattern already
// built (buildPeq), so that one pattern scans many texts.
func (s *bitState) scanBuilt(text []rune, anchored bool) (best, at int) {
	s.startColumn()
	top := uint64(0)
	if anchored {
		top = 1
	}
	_, best, at = bitColumns(s, text, top, s.n, true)
	return best, at
}

// startColumn sets the column to column 0, D(i, 0) = i: every vertical
// delta +1.
func (s *bitState) startColumn() {
	if cap(s.pv) < s.nb {
		s.pv, s.mv = make([]uint64, s.nb), make([]uint64, s.nb)
	}
	s.pv, s.mv = s.pv[:s.nb], s.mv[:s.nb]
	for i := range s.pv {
		s.pv[i], s.mv[i] = ^uint64(0), 0
	}
}

// bitColumns advances the column held in s.pv and s.mv by one column for
// each symbol of text. score is the current column's score at the last
// row; top is the horizontal delta entering the first row from row 0: 1
// when row 0 counts the columns (D(0, j) = j: global distance, or a match
// anchored at the start), 0 when it is 0 everywhere (a match may start at
// any column). It returns the last column's score and the least score
// over the new columns, with the first of them (counted from 1) where it
// is reached; best is the starting score and at 0 when no column is lower.
// With stop set it returns at the first column scoring 0.
//
// A pattern of at most 64 symbols, the usual line of text, runs on one
// word held in registers.
func bitColumns[T symbol](s *bitState, text []T, top uint64, score int, stop bool) (last, best, at int) {
	nb, peq := s.nb, s.peq
	lastBit := uint((s.n - 1) % 64)
	best = score
	if nb == 1 {
		pv, mv := s.pv[0], s.mv[0]
		for j, c := range text {
			var ph, mh uint64
			pv, mv, ph, mh = blockStep(peq[s.index(rune(c))], pv, mv, top, 0)
			score += int(ph>>lastBit&1) - int(mh>>lastBit&1)
			if score < best {
				best, at = score, j+1
				if stop && best == 0 {
					break
				}
			}
		}
		s.pv[0], s.mv[0] = pv, mv
		return score, best, at
	}
	pv, mv := s.pv[:nb], s.mv[:nb]
	lw := nb - 1 // the last word
	for j, c := range text {
		i := int(s.index(rune(c))) * nb
		eqs := peq[i : i+nb]
		// The horizontal delta entering a block from above, as two bits.
		hpos, hneg := top, uint64(0)
		for k := range lw {
			var ph, mh uint64
			pv[k], mv[k], ph, mh = blockStep(eqs[k], pv[k], mv[k], hpos, hneg)
			hpos, hneg = ph>>63, mh>>63
		}
		var ph, mh uint64
		pv[lw], mv[lw], ph, mh = blockStep(eqs[lw], pv[lw], mv[lw], hpos, hneg)
		score += int(ph>>lastBit&1) - int(mh>>lastBit&1)
		if score < best {
			best, at = score, j+1
			if stop && best == 0 {
				break
			}
		}
	}
	return score, best, at
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

// buildPeq fills the match vectors of a: for each distinct symbol, ⌈n/64⌉
// words with bit i%64 of word i/64 set where a[i] is that symbol.
func (s *bitState) buildPeq(a []rune) { buildPeqOf(s, a) }

func buildPeqOf[T symbol](s *bitState, a []T) {
	for _, c := range s.lows {
		s.low[c] = 0
	}
	s.lows = s.lows[:0]
	if len(s.sym) > 0 {
		clear(s.sym)
	}
	nb := (len(a) + 63) / 64
	s.n, s.nb = len(a), nb
	s.peq = append(s.peq[:0], make([]uint64, nb)...) // symbol 0: no match
	for i, c := range a {
		r := rune(c)
		idx := s.index(r)
		if idx == 0 {
			idx = int32(len(s.peq) / nb)
			s.peq = append(s.peq, make([]uint64, nb)...)
			if uint32(r) < uint32(len(s.low)) {
				s.low[r] = idx
				s.lows = append(s.lows, uint8(r))
			} else {
				if s.sym == nil {
					s.sym = make(map[rune]int32)
				}
				s.sym[r] = idx
			}
		}
		s.peq[int(idx)*nb+i/64] |= 1 << uint(i%64)
	}
}

// index returns the index of symbol r's match vectors, 0 (no match) when
// the pattern lacks it.
func (s *bitState) index(r rune) int32 {
	if uint32(r) < uint32(len(s.low)) {
		return s.low[r]
	}
	return s.sym[r] // 0 when absent, also when the map is nil
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
