package quality

import (
	"math"
	"slices"
)

// OpKind is the kind of one alignment step.
type OpKind uint8

const (
	OpMatch OpKind = iota // R == H
	OpSub                 // R replaced by H
	OpIns                 // H inserted (R == 0)
	OpDel                 // R deleted (H == 0)
)

// String returns "match", "sub", "ins" or "del".
func (k OpKind) String() string {
	switch k {
	case OpMatch:
		return "match"
	case OpSub:
		return "sub"
	case OpIns:
		return "ins"
	case OpDel:
		return "del"
	}
	return "invalid"
}

// Op is one step of an alignment between a reference and a hypothesis.
type Op struct {
	Kind OpKind
	R    rune // reference symbol; 0 for OpIns
	H    rune // hypothesis symbol; 0 for OpDel
}

// Cost returns the number of edits in ops (every op but OpMatch).
func Cost(ops []Op) int {
	c := 0
	for _, op := range ops {
		if op.Kind != OpMatch {
			c++
		}
	}
	return c
}

// Align returns an optimal alignment of ref and hyp, in order: the
// reference is the R of every op but OpIns, the hypothesis the H of every
// op but OpDel, and the number of non-match ops equals Distance(ref, hyp).
// Every symbol of a common prefix or suffix is matched.
//
// Method: when the distance D is small (D ≤ 512 and D² below the bit-vector
// cost) every diagonal-transition round is kept and traced back (O(D²)
// memory, at most about 2 MB). Otherwise the problem is split at a cell of
// an optimal path and each half is aligned in turn (Hirschberg 1975, "A
// linear space algorithm for computing maximal common subsequences"): the
// cell is found either by running the rounds forward from the start and
// backward from the end until they meet (as in the bidirectional wavefront
// aligner, Marco-Sola et al. 2023, "Optimal gap-affine alignment in O(s)
// space") or, when D is large, from two bit-vector columns at the middle of
// hyp (bitSplit).
//
// Complexity, with n = len(ref), m = len(hyp): about twice Distance's time,
// O(n + m + min(D², ⌈n/64⌉·m)) in the usual case; O(n + m) memory besides
// the at most 2 MB of stored rounds and the result.
func Align(ref, hyp []rune) []Op {
	var s Scratch
	// An alignment has between max(n, m) and n+m ops; this covers a few
	// per cent of edits without growing.
	l := max(len(ref), len(hyp))
	return s.Align(ref, hyp, make([]Op, 0, l+l/32+16))
}

// Align is Align with reusable scratch; it appends the ops to dst and
// returns the extended slice.
func (s *Scratch) Align(ref, hyp []rune, dst []Op) []Op {
	return s.al.align(ref, hyp, dst)
}

// storedMax is the largest distance traced back with every wavefront kept:
// (storedMax+1)·(2·storedMax+1) int32 values, about 2 MB.
const storedMax = 512

type aligner struct {
	bv   bitState
	colF []int32 // forward column of bitSplit
	bag  bagCounter
	// noWaveSplit skips the bidirectional wavefront split (for tests)
	noWaveSplit bool
	limit       int     // largest distance traced back with stored wavefronts; 0 means storedMax
	waves       []int32 // stored wavefronts, round after round
	start       []int   // start[s] = index in waves of round s's diagonal lo(s)
	f0, f1      []int32
	b0, b1      []int32
	ra, rb      []rune // reversed inputs for the backward search
	rda, rdb    []byte // the same, byte-encoded (denseCoder)
	dense       denseCoder
}

func (al *aligner) align(a, b []rune, dst []Op) []Op {
	p := 0
	for p < len(a) && p < len(b) && a[p] == b[p] {
		dst = append(dst, Op{OpMatch, a[p], b[p]})
		p++
	}
	a, b = a[p:], b[p:]
	q := 0
	for q < len(a) && q < len(b) && a[len(a)-1-q] == b[len(b)-1-q] {
		q++
	}
	tailA, tailB := a[len(a)-q:], b[len(b)-q:]
	a, b = a[:len(a)-q], b[:len(b)-q]
	dst = al.alignCore(a, b, -1, dst)
	for i := range tailA {
		dst = append(dst, Op{OpMatch, tailA[i], tailB[i]})
	}
	return dst
}

// alignCore appends an optimal alignment of a and b; d is their distance
// when known, or -1. It picks, by estimated cost, between the wavefront
// traceback with stored rounds (about d² steps), the bidirectional
// wavefront split (about d² steps, linear memory) and the bit-vector
// split (about 2·⌈n/64⌉·m word steps, linear memory).
func (al *aligner) alignCore(a, b []rune, d int, dst []Op) []Op {
	n, m := len(a), len(b)
	switch {
	case n == 0:
		for _, r := range b {
			dst = append(dst, Op{OpIns, 0, r})
		}
		return dst
	case m == 0:
		for _, r := range a {
			dst = append(dst, Op{OpDel, r, 0})
		}
		return dst
	case d == 0:
		for i := range a {
			dst = append(dst, Op{OpMatch, a[i], b[i]})
		}
		return dst
	case n == 1 || m == 1:
		return alignOne(a, b, dst)
	}
	limit := al.limit
	if limit == 0 {
		if (n+1)*(m+1) <= smallCells {
			// A small table: the stored rounds (d <= n+m) always finish.
			ops, _ := al.stored(a, b, n+m, dst)
			return ops
		}
		limit = storedMax
	}
	bitCost := ((n + 63) / 64) * m
	wavefronts := true // whether d² is thought to be within bitCost
	switch {
	case d < 0:
		// Try the stored rounds for a while: half the bit-vector cost,
		// so that a large distance wastes little before the columns;
		// not at all when the bag distance, a lower bound, is beyond.
		l := limit
		if l*l > bitCost/2 {
			l = isqrt(bitCost / 2)
		}
		lb := al.bag.bound(a, b)
		if lb <= l {
			if ops, ok := al.stored(a, b, l, dst); ok {
				return ops
			}
		}
		// d > l, or d >= lb > l
		wavefronts = l == limit && lb*lb <= bitCost
	case d*d > bitCost:
		wavefronts = false
	case d <= limit:
		if ops, ok := al.stored(a, b, d, dst); ok {
			return ops
		}
	}
	if wavefronts && !al.noWaveSplit {
		if i, j, df, db, ok := al.split(a, b, bitCost); ok {
			dst = al.alignCore(a[:i], b[:j], df, dst)
			return al.alignCore(a[i:], b[j:], db, dst)
		}
	}
	i, j, df, db := al.bitSplit(a, b)
	dst = al.alignCore(a[:i], b[:j], df, dst)
	return al.alignCore(a[i:], b[j:], db, dst)
}

// smallCells is the table size (cells) below which the stored rounds are
// used whatever the distance.
const smallCells = 1 << 12

func isqrt(x int) int {
	r := int(math.Sqrt(float64(x)))
	for r*r > x {
		r--
	}
	for (r+1)*(r+1) <= x {
		r++
	}
	return r
}

// alignOne aligns when a or b has one symbol: match it with the first
// equal symbol of the other string if there is one, else substitute it
// for the first symbol; every other symbol is deleted or inserted.
func alignOne(a, b []rune, dst []Op) []Op {
	if len(b) == 1 {
		p := max(slices.Index(a, b[0]), 0)
		for i, r := range a {
			switch {
			case i != p:
				dst = append(dst, Op{OpDel, r, 0})
			case r == b[0]:
				dst = append(dst, Op{OpMatch, r, r})
			default:
				dst = append(dst, Op{OpSub, r, b[0]})
			}
		}
		return dst
	}
	p := max(slices.Index(b, a[0]), 0)
	for j, r := range b {
		switch {
		case j != p:
			dst = append(dst, Op{OpIns, 0, r})
		case r == a[0]:
			dst = append(dst, Op{OpMatch, r, r})
		default:
			dst = append(dst, Op{OpSub, a[0], r})
		}
	}
	return dst
}

// bitSplit is Hirschberg's split (Hirschberg 1975) with the columns
// computed by the bit-vector method: D(i, mid) from the start for every i,
// the cost from (i, mid) to the end from the reversed strings, and the i
// with the least sum is on an optimal path. It needs len(b) >= 2.
//
// Complexity: O(⌈n/64⌉·m) time, O(n) memory.
func (al *aligner) bitSplit(a, b []rune) (i, j, df, db int) {
	n, m := len(a), len(b)
	mid := m / 2
	al.colF = append(al.colF[:0], al.bv.column(a, b[:mid])...)
	al.ra = reversed(al.ra, a)
	al.rb = reversed(al.rb, b[mid:])
	colB := al.bv.column(al.ra, al.rb)
	best := -1
	for k := 0; k <= n; k++ {
		if c := int(al.colF[k] + colB[n-k]); best < 0 || c < best {
			best, i = c, k
		}
	}
	return i, mid, int(al.colF[i]), int(colB[n-i])
}

// stored runs the wavefronts keeping each round, up to limit rounds, and
// traces back through them. It reports false (appending nothing) when the
// distance exceeds limit.
//
// Complexity: O(n + m + D²) time and O(D²) memory for distance D ≤ limit.
func (al *aligner) stored(a, b []rune, limit int, dst []Op) ([]Op, bool) {
	n, m := len(a), len(b)
	al.waves = al.waves[:0]
	al.start = al.start[:0]
	// Round s covers diagonals lo(s)..hi(s); two unreached guards on each
	// side let round s+1 read k-1, k and k+1 without bounds tests.
	lo := func(s int) int { return max(-s, -n) }
	hi := func(s int) int { return min(s, m) }
	at := func(s, k int) int32 { // fr_s[k], or unreached
		if k < lo(s) || k > hi(s) {
			return unreached
		}
		return al.waves[al.start[s]+k-lo(s)+2]
	}
	push := func(s int) []int32 {
		base := len(al.waves)
		w := hi(s) - lo(s) + 5
		al.start = append(al.start, base)
		for range w {
			al.waves = append(al.waves, unreached)
		}
		return al.waves[base : base+w]
	}
	target := m - n
	d := 0
	w := push(0)
	w[2] = int32(slide(a, b, 0, 0))
	for !(target >= lo(d) && target <= hi(d) && int(at(d, target)) >= n) {
		if d == limit {
			return dst, false
		}
		d++
		cur := push(d) // may move al.waves: take prev after it
		prev := al.waves[al.start[d-1]:al.start[d]]
		plo := lo(d - 1)
		clo := lo(d)
		for k := clo; k <= hi(d); k++ {
			x := k - plo + 2 // k's index in prev; clo >= plo-1
			r := prev[x] + 1
			if v := prev[x+1] + 1; v > r {
				r = v
			}
			if v := prev[x-1]; v > r {
				r = v
			}
			row := int(r)
			if end := min(n, m-k); row > end {
				row = end
			}
			cur[k-clo+2] = int32(slide(a, b, row, k))
		}
	}
	// Trace back from (n, m) with budget d: a cell is within budget s when
	// its row is at most fr_s of its diagonal.
	mark := len(dst)
	i, j, s := n, m, d
	for i > 0 || j > 0 {
		if i > 0 && j > 0 && a[i-1] == b[j-1] {
			dst = append(dst, Op{OpMatch, a[i-1], b[j-1]})
			i, j = i-1, j-1
			continue
		}
		k := j - i
		if s == 0 {
			panic("quality: alignment traceback left its budget")
		}
		switch {
		case s > 0 && i <= int(at(s-1, k)):
			s-- // the cell is cheaper than the budget
		case i > 0 && j > 0 && i-1 <= int(at(s-1, k)):
			dst = append(dst, Op{OpSub, a[i-1], b[j-1]})
			i, j, s = i-1, j-1, s-1
		case i > 0 && i-1 <= int(at(s-1, k+1)):
			dst = append(dst, Op{OpDel, a[i-1], 0})
			i, s = i-1, s-1
		default: // insertion; the recurrence guarantees one of the four
			dst = append(dst, Op{OpIns, 0, b[j-1]})
			j, s = j-1, s-1
		}
	}
	reverseOps(dst[mark:])
	return dst, true
}

func reverseOps(ops []Op) {
	for i, j := 0, len(ops)-1; i < j; i, j = i+1, j-1 {
		ops[i], ops[j] = ops[j], ops[i]
	}
}

// split finds a cell (i, j) on an optimal path from (0, 0) to (n, m) and
// the distances df of a[:i], b[:j] and db of a[i:], b[j:]; df+db is the
// distance of a and b, and both are below it when it is 2 or more. It runs
// the forward wavefronts (on a, b) and the backward ones (on the reversed
// strings) in turn, one round each, and stops at the first diagonal where
// the forward furthest row passes the backward one: the cell at the
// backward row then costs at most sf from the start and at most sb to the
// end, and sf+sb cannot undercut the distance. With rounds taken in turn
// that first meeting happens when sf+sb equals the distance. It gives up
// (ok false) once the rounds have cost about budget steps (sf²+sb²).
//
// Complexity: O(n + m + D²) time in the usual case, O(n + m) memory.
func (al *aligner) split(a, b []rune, budget int) (i, j, df, db int, ok bool) {
	if len(a)+len(b) >= denseMin {
		if da, db, ok := al.dense.encode(a, b); ok {
			al.rda = reversed(al.rda, da)
			al.rdb = reversed(al.rdb, db)
			return splitRounds(al, da, db, al.rda, al.rdb, budget)
		}
	}
	al.ra = reversed(al.ra, a)
	al.rb = reversed(al.rb, b)
	return splitRounds(al, a, b, al.ra, al.rb, budget)
}

// splitRounds is split on a, b and their reversals ra, rb.
func splitRounds[T symbol](al *aligner, a, b, ra, rb []T, budget int) (i, j, df, db int, ok bool) {
	n, m := len(a), len(b)
	// Rounds stop once sf²+sb² > budget, so sf, sb <= smax and the
	// wavefronts need only the diagonals -min(n, smax)-1 .. min(m, smax)+1
	// (the same for the backward ones, whose strings have the same lengths).
	smax := isqrt(budget) + 1
	off := min(n, smax) + 1
	size := off + min(m, smax) + 2
	al.f0 = fillUnreached(al.f0, size)
	al.f1 = fillUnreached(al.f1, size)
	al.b0 = fillUnreached(al.b0, size)
	al.b1 = fillUnreached(al.b1, size)
	fprev, fcur := al.f0, al.f1
	bprev, bcur := al.b0, al.b1
	fprev[off] = int32(slide(a, b, 0, 0))
	bprev[off] = int32(slide(ra, rb, 0, 0))
	sf, sb := 0, 0
	// meet looks for a diagonal k (forward numbering) where the forward
	// row reaches the backward row n - fr_b[m-n-k].
	meet := func() (int, bool) {
		flo, fhi := max(-sf, -n), min(sf, m)
		// backward diagonal kb = (m-n) - k must lie in its range
		blo, bhi := max(-sb, -n), min(sb, m)
		klo, khi := max(flo, m-n-bhi), min(fhi, m-n-blo)
		for k := klo; k <= khi; k++ {
			br := n - int(bprev[m-n-k+off])
			if int(fprev[k+off]) >= br {
				return k, true
			}
		}
		return 0, false
	}
	for t := 1; ; t++ {
		if sf*sf+sb*sb > budget {
			return 0, 0, 0, 0, false
		}
		if t%2 == 1 {
			sf++
			nextRound(a, b, fprev, fcur, off, max(-sf, -n), min(sf, m))
			fprev, fcur = fcur, fprev
		} else {
			sb++
			nextRound(ra, rb, bprev, bcur, off, max(-sb, -n), min(sb, m))
			bprev, bcur = bcur, bprev
		}
		if k, ok := meet(); ok {
			i = n - int(bprev[m-n-k+off])
			return i, i + k, sf, sb, true
		}
	}
}

func reversed[T symbol](dst, src []T) []T {
	dst = append(dst[:0], src...)
	for i, j := 0, len(dst)-1; i < j; i, j = i+1, j-1 {
		dst[i], dst[j] = dst[j], dst[i]
	}
	return dst
}

// tableAlign is the textbook full-table traceback (Wagner and Fischer
// 1974): O(n·m) time and memory. It is the slow oracle for the tests.
func tableAlign(a, b []rune) []Op {
	n, m := len(a), len(b)
	t := make([][]int, n+1)
	for i := range t {
		t[i] = make([]int, m+1)
		t[i][0] = i
	}
	for j := range t[0] {
		t[0][j] = j
	}
	for i := 1; i <= n; i++ {
		for j := 1; j <= m; j++ {
			c := t[i-1][j-1]
			if a[i-1] != b[j-1] {
				c++
			}
			t[i][j] = min(c, t[i-1][j]+1, t[i][j-1]+1)
		}
	}
	var ops []Op
	i, j := n, m
	for i > 0 || j > 0 {
		switch {
		case i > 0 && j > 0 && a[i-1] == b[j-1] && t[i][j] == t[i-1][j-1]:
			ops = append(ops, Op{OpMatch, a[i-1], b[j-1]})
			i, j = i-1, j-1
		case i > 0 && j > 0 && t[i][j] == t[i-1][j-1]+1:
			ops = append(ops, Op{OpSub, a[i-1], b[j-1]})
			i, j = i-1, j-1
		case i > 0 && t[i][j] == t[i-1][j]+1:
			ops = append(ops, Op{OpDel, a[i-1], 0})
			i--
		default:
			ops = append(ops, Op{OpIns, 0, b[j-1]})
			j--
		}
	}
	reverseOps(ops)
	return ops
}
