package quality

// The edit distance here is the Levenshtein distance (Levenshtein 1966):
// the least number of single-symbol substitutions, insertions and deletions
// that turn a into b, every edit costing 1. Symbols are compared as int32
// values: code points for CER, word ids for WER (see Compare).
//
// Distance uses the diagonal-transition method (Ukkonen 1985, "Algorithms
// for approximate string matching"; Myers 1986, "An O(ND) difference
// algorithm and its variations"; the same recurrence as the wavefront
// aligner of Marco-Sola et al. 2021). Write D(i, j) for the distance between
// a[:i] and b[:j], and diagonal k for the cells with j-i = k. Along a
// diagonal D never decreases, so the cells with D <= s on diagonal k are a
// prefix of it; fr_s[k], the furthest row of that prefix, is all a round s
// needs. Round s derives fr_s from fr_{s-1} with one substitution, deletion
// or insertion, then slides along runs of equal symbols. The distance is the
// first s at which diagonal len(b)-len(a) reaches the last row.

// bitSwitch weighs a wavefront step against a bit-vector block step when
// Distance decides to change method (see Scratch.Distance); measured with
// BenchmarkDistance.
var bitSwitch = 1

// symbol is what the wavefront code compares: code points (or word ids),
// or bytes from denseCoder for long texts.
type symbol interface{ ~int32 | ~uint8 }

// denseMin is the combined length from which Distance and the alignment
// split re-encode texts of at most 256 distinct symbols as bytes, a
// quarter of the memory, so that far-apart diagonals miss the cache less
// often (the 1,000,000-character benchmark spends most of its time on
// those loads). Tests lower it.
var denseMin = 1 << 15

// unreached marks a diagonal no round has reached yet; adding a few edits
// to it stays far below every real row.
const unreached = -1 << 30

// Scratch is reusable working memory for Distance and Align. The zero value
// is ready to use; a Scratch keeps its buffers between calls, so a warmed
// Scratch computes distances without allocating. A Scratch must not be used
// by two goroutines at once.
type Scratch struct {
	w0, w1 []int32 // two wavefronts, indexed by diagonal + offset
	al     aligner // Align's buffers
	bv     bitState
	bag    bagCounter
	dense  denseCoder
	flex   flexState
}

// Distance returns the Levenshtein distance between a and b, counted in
// symbols (code points for text). It allocates nothing once s has grown to
// the sizes it needs.
//
// It runs the diagonal-transition rounds and, should they cost more than
// the bit-vector method would (D² > ⌈min(n,m)/64⌉·max(n,m)), finishes with
// the bit-vector method instead (bitState.distance).
//
// Complexity: O(n + m + min(D², ⌈min(n,m)/64⌉·max(n,m))) time in the usual
// case, where n = len(a), m = len(b) and D is the distance; O(n+m) memory.
// For OCR text D is a small fraction of n, so this beats the O(n·m) table by
// a wide margin; for unrelated strings the bit vectors do 64 cells per word
// step (about 20 times the table's speed measured). Long texts (n+m ≥
// denseMin) of at most 256 distinct symbols run the rounds on a byte
// encoding, which touches a quarter of the memory.
func (s *Scratch) Distance(a, b []rune) int {
	a, b = trimCommon(a, b)
	n, m := len(a), len(b)
	if n == 0 || m == 0 {
		return n + m
	}
	// The wavefronts cost about d² steps by round d, the bit vectors
	// ⌈short/64⌉·long word steps whatever the distance: once the rounds
	// have spent that much the distance is large, and the bit vectors
	// finish the job in at most the same time again.
	short, long := a, b
	if n > m {
		short, long = b, a
	}
	budget := bitSwitch * ((len(short) + 63) / 64) * len(long)
	// Rounds stop by d = isqrt(budget), so the wavefronts need only the
	// diagonals -min(n, dmax)-1 .. min(m, dmax)+1.
	if n+m >= denseMin {
		if da, db, ok := s.dense.encode(a, b); ok {
			if d, ok := wavefrontDistance(s, da, db, budget); ok {
				return d
			}
			return s.bv.distance(short, long)
		}
	}
	if d, ok := wavefrontDistance(s, a, b, budget); ok {
		return d
	}
	return s.bv.distance(short, long)
}

// wavefrontDistance runs the diagonal-transition rounds while d² stays
// within budget and reports false if they have not finished by then, or
// as soon as the bag distance shows that they will not.
func wavefrontDistance[T symbol](s *Scratch, a, b []T, budget int) (int, bool) {
	n, m := len(a), len(b)
	// Rounds stop by d = isqrt(budget), so the wavefronts need only the
	// diagonals -min(n, dmax)-1 .. min(m, dmax)+1.
	dmax := isqrt(budget)
	off := min(n, dmax) + 1 // index of diagonal 0
	size := off + min(m, dmax) + 2
	s.w0 = fillUnreached(s.w0, size)
	s.w1 = fillUnreached(s.w1, size)
	prev, cur := s.w0, s.w1
	prev[off] = int32(slide(a, b, 0, 0))
	target := m - n
	if target == 0 && int(prev[off]) >= n {
		return 0, true
	}
	// Past round check the distance is above check; if the bag distance
	// (a lower bound) already shows it above √budget, stop the rounds now.
	check := max(1, isqrt(budget/8))
	for d := 1; ; d++ {
		if d*d > budget || d == check && bagBound(&s.bag, a, b) > dmax {
			return 0, false
		}
		lo, hi := max(-d, -n), min(d, m)
		nextRound(a, b, prev, cur, off, lo, hi)
		if target >= lo && target <= hi && int(cur[target+off]) >= n {
			return d, true
		}
		prev, cur = cur, prev
	}
}

// nextRound computes wavefront cur (diagonals lo..hi) from prev. Rows are
// clamped to the diagonal's end, which is sound because D changes by at
// most 1 between neighbouring cells.
func nextRound[T symbol](a, b []T, prev, cur []int32, off, lo, hi int) {
	n, m := len(a), len(b)
	for k := lo; k <= hi; k++ {
		x := k + off
		r := prev[x] + 1 // substitution
		if v := prev[x+1] + 1; v > r {
			r = v // deletion (from diagonal k+1)
		}
		if v := prev[x-1]; v > r {
			r = v // insertion (from diagonal k-1)
		}
		row := int(r)
		if end := min(n, m-k); row > end {
			row = end
		}
		cur[x] = int32(slide(a, b, row, k))
	}
}

// slide returns the furthest row reached from row on diagonal k by
// matching symbols.
func slide[T symbol](a, b []T, row, k int) int {
	col := row + k
	if row < 0 || col < 0 {
		return row
	}
	for row < len(a) && col < len(b) && a[row] == b[col] {
		row++
		col++
	}
	return row
}

// trimCommon drops the common prefix and suffix of a and b, which every
// optimal alignment matches (a classical property of the edit distance).
func trimCommon[T symbol](a, b []T) ([]T, []T) {
	p := 0
	for p < len(a) && p < len(b) && a[p] == b[p] {
		p++
	}
	a, b = a[p:], b[p:]
	q := 0
	for q < len(a) && q < len(b) && a[len(a)-1-q] == b[len(b)-1-q] {
		q++
	}
	return a[:len(a)-q], b[:len(b)-q]
}

func fillUnreached(w []int32, size int) []int32 {
	if cap(w) < size {
		w = make([]int32, size)
	}
	w = w[:size]
	for i := range w {
		w[i] = unreached
	}
	return w
}

// Distance returns the Levenshtein distance between a and b over code
// points (or any int32 symbols). It is Scratch.Distance with fresh scratch;
// reuse a Scratch to avoid the allocation in a loop.
//
// Complexity: O((n+m) + D²) time in the usual case, O((n+m)·D) at worst;
// O(n+m) memory (see Scratch.Distance).
func Distance(a, b []rune) int {
	var s Scratch
	return s.Distance(a, b)
}

// tableDistance is the textbook dynamic programme (Wagner and Fischer 1974,
// "The string-to-string correction problem"): O(n·m) time, O(m) memory. It
// is the baseline for the benchmarks and the slow oracle for the tests.
func tableDistance(a, b []rune) int {
	row := make([]int, len(b)+1)
	for j := range row {
		row[j] = j
	}
	for i := 1; i <= len(a); i++ {
		diag := row[0]
		row[0] = i
		for j := 1; j <= len(b); j++ {
			up := row[j]
			c := diag
			if a[i-1] != b[j-1] {
				c++
			}
			c = min(c, up+1, row[j-1]+1)
			row[j] = c
			diag = up
		}
	}
	return row[len(b)]
}
