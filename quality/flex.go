package quality

import (
	"strings"
)

// Flexible character accuracy (Clausner, Pletschacher and Antonacopoulos
// 2020, "Flexible character accuracy measure for reading-order-independent
// evaluation", Pattern Recognition Letters 131, pp. 390–397) scores OCR text
// without regard to the order of its lines: each piece of reference text is
// matched with the stretch of hypothesis text that resembles it best, the
// matched parts are cut out, what is left of a line is matched again, and
// whatever finds no partner counts as deleted (reference) or inserted
// (hypothesis). The accuracy is (N − errors)/N for N reference characters;
// recto reports its error form, flex_cer = errors/N, which is lower for
// better text like CER.
//
// What follows the paper (from memory; the paper was not at hand while
// this was written): lines as the unit, the shorter of two pieces slid
// along the longer one, the best match taken first, the unmatched rest of
// the longer piece split off and matched again, leftovers as insertions
// and deletions, and the result taken as the best of several matching
// runs. What is recto's own: the best stretch is found exactly (the least
// edit distance over every substring of the longer piece, by bit vectors,
// Myers 1999) rather than by sliding windows of the shorter piece's
// length; candidates are ranked by (d+1)/(k+1) for edit distance d and
// shorter-piece length k (so long, clean matches go first and a piece of
// one character cannot jump the queue); a match is taken only while d < k;
// and the runs whose best is taken are the greedy matching and the plain
// in-order alignment (the CER's), so that flex_cer ≤ CER always holds. The
// paper's penalty coefficients and its sweep over them are not reproduced.
//
// Characters: both texts are normalised line by line with the same
// options as CER; N is the CER's reference length (the line breaks count as
// one space each, as they do in CER), and line ends and the spaces at a cut
// are never errors, since line breaks are what the measure ignores.

// flexSeg is one piece of a line still to be matched.
type flexSeg struct {
	r      []rune
	alive  bool
	off    int // its symbol counts: flexState.cnt[off:off+sigma], by code
	so, sn int // the codes it holds, each once: flexState.syms[so:so+sn]
	queued int // pairs queued with it
}

// flexCand is a pair of a reference piece gi and a hypothesis piece hi in
// the queue, k the length of the shorter of the two. d ≥ 0 is their
// distance (of the shorter to the best stretch of the longer); d < 0 says
// that only a lower bound of it, -1-d, is known so far.
type flexCand struct {
	d, k, gi, hi int32
}

// flexState is the working memory of flexErrors.
type flexState struct {
	bv       bitState
	gt, hy   []flexSeg
	q        flexQueue
	stale    int // pairs in q whose pieces are gone, an estimate from above
	rev, rtx []rune
	built    int // whose match vectors are in bv: gt piece i as i+1, hy piece i as -(i+1), 0 none
	coder    denseCoder
	sigma    int     // symbol codes of the page, 0 when there are over 256 (no counts, no bounds)
	cnt      []int32 // symbol counts of every piece, sigma a piece
	syms     []uint8 // the codes each piece holds
}

// flexLines splits s at line breaks and normalises each line with o,
// leaving out the lines that become empty. Joined with single spaces the
// lines give Normalize(s, o).
func flexLines(s string, o NormOptions) [][]rune {
	var out [][]rune
	for _, line := range strings.FieldsFunc(s, isLineBreak) {
		if n := Normalize(line, o); n != "" {
			out = append(out, []rune(n))
		}
	}
	return out
}

// isLineBreak reports the code points that end a line: LF, VT, FF, CR, NEL
// and the Unicode line and paragraph separators (UAX #14's mandatory
// breaks).
func isLineBreak(r rune) bool {
	switch r {
	case '\n', '\v', '\f', '\r', '\u0085', '\u2028', '\u2029':
		return true
	}
	return false
}

// trimSpace trims U+0020 from both ends of r (normalised text has no other
// white space).
func trimSpace(r []rune) []rune {
	for len(r) > 0 && r[0] == ' ' {
		r = r[1:]
	}
	for len(r) > 0 && r[len(r)-1] == ' ' {
		r = r[:len(r)-1]
	}
	return r
}

// flexMatch finds the best place of pat in text: the least edit distance d
// between pat and any substring text[start:end], the smallest such end
// and, for that end, the largest start. Cost O(⌈|pat|/64⌉·|text|).
func (f *flexState) match(pat, text []rune) (d, start, end int) {
	d, end = f.bv.scan(pat, text, false)
	f.rev = reversed(f.rev[:0], pat)
	f.rtx = reversed(f.rtx[:0], text[:end])
	_, j := f.bv.scan(f.rev, f.rtx, true)
	return d, end - j, end
}

// errors returns the errors of the greedy flexible matching of the
// reference lines ref against the hypothesis lines hyp (see the comment at
// the top of this file): the edit distances of the matches plus the
// characters left unmatched on either side.
//
// Every pair of pieces waits in a queue (a binary heap) ranked by its
// distance, or by a lower bound of it until the distance is needed: the
// characters of the shorter piece that the longer one lacks (bound). A
// bound at the head of the queue is replaced by the distance, and an exact
// pair at the head is the best of all pairs, since no other pair's
// distance is below its place in the queue. So the pairs are taken in the
// same order as by ranking every live pair afresh each round (ties in
// reading order: reference piece first, then hypothesis piece, the order
// new pieces are numbered in), but most pairs of unrelated lines are never
// scanned: their bound ranks them behind the pairs that use up their
// pieces.
//
// Complexity: O(G·H·σ') for the bounds of G reference and H hypothesis
// pieces (σ' distinct symbols a piece) and O(log(G·H)) a queue step,
// plus ⌈k/64⌉·L word steps for each pair whose distance is needed; on a
// 3,000-character page of 60 lines at 5% CER, 193 of the 6,426 pairs
// queued (before the queue every pair was scanned: 6,957 scans).
// Memory: 16 bytes a pair whose bound is below its shorter length.
func (f *flexState) errors(ref, hyp [][]rune) int {
	f.gt, f.hy, f.q, f.built, f.stale = f.gt[:0], f.hy[:0], f.q[:0], 0, 0
	f.countSymbols(ref, hyp)
	for _, h := range hyp {
		f.hy = append(f.hy, f.piece(h))
	}
	for _, g := range ref {
		f.gt = append(f.gt, f.piece(g))
	}
	for gi := range f.gt {
		for hi := range f.hy {
			if c, ok := f.candidate(gi, hi); ok {
				f.q = append(f.q, c)
				f.gt[gi].queued++
				f.hy[hi].queued++
			}
		}
	}
	f.q.init()
	errs := 0
	for len(f.q) > 0 {
		c := f.q[0]
		if !f.gt[c.gi].alive || !f.hy[c.hi].alive {
			f.q.pop()
			continue
		}
		if c.d < 0 {
			if d := f.dist(c); d < c.k {
				f.q[0].d = d
				f.q.down(0)
			} else {
				f.q.pop()
			}
			continue
		}
		f.q.pop()
		errs += int(c.d)
		g, h := f.gt[c.gi].r, f.hy[c.hi].r
		f.gt[c.gi].alive, f.hy[c.hi].alive = false, false
		if f.stale += f.gt[c.gi].queued + f.hy[c.hi].queued; 2*f.stale > len(f.q) {
			f.compact()
		}
		f.built = 0 // match builds its own vectors
		if len(g) <= len(h) {
			_, s, e := f.match(g, h)
			f.add(trimSpace(h[:s]), false)
			f.add(trimSpace(h[e:]), false)
		} else {
			_, s, e := f.match(h, g)
			f.add(trimSpace(g[:s]), true)
			f.add(trimSpace(g[e:]), true)
		}
	}
	for _, g := range f.gt {
		if g.alive {
			errs += len(g.r)
		}
	}
	for _, h := range f.hy {
		if h.alive {
			errs += len(h.r)
		}
	}
	return errs
}

// countSymbols numbers the symbols of ref and hyp for the pieces' counts
// (sigma of them), or sets sigma to 0 when there are more than 256.
func (f *flexState) countSymbols(ref, hyp [][]rune) {
	f.cnt, f.syms = f.cnt[:0], f.syms[:0]
	f.coder.reset()
	for _, side := range [2][][]rune{ref, hyp} {
		for _, l := range side {
			for _, r := range l {
				if _, ok := f.coder.code(r); !ok {
					f.sigma = 0
					return
				}
			}
		}
	}
	f.sigma = f.coder.next
}

// piece returns a live piece of text r with its symbol counts.
func (f *flexState) piece(r []rune) flexSeg {
	p := flexSeg{r: r, alive: true, off: len(f.cnt), so: len(f.syms)}
	if f.sigma == 0 {
		return p
	}
	f.cnt = append(f.cnt, make([]int32, f.sigma)...)
	cnt := f.cnt[p.off:]
	for _, c := range r {
		b, _ := f.coder.code(c) // every symbol has its code (countSymbols)
		if cnt[b] == 0 {
			f.syms = append(f.syms, b)
		}
		cnt[b]++
	}
	p.sn = len(f.syms) - p.so
	return p
}

// bound returns a lower bound of the distance between pattern piece p and
// any stretch of text piece t: the characters of p that t lacks, counted
// with repetition. In an alignment of p with a stretch of t, a character
// of p is matched to an equal one of the stretch or costs an edit of its
// own (substituted or deleted), and of each symbol at most as many are
// matched as t holds (the substring form of the bag distance, Bartolini,
// Ciaccia and Patella 2002). 0 without counts.
func (f *flexState) bound(p, t *flexSeg) int {
	if f.sigma == 0 {
		return 0
	}
	pc, tc := f.cnt[p.off:p.off+f.sigma], f.cnt[t.off:t.off+f.sigma]
	lb := 0
	for _, c := range f.syms[p.so : p.so+p.sn] {
		lb += int(max(pc[c]-tc[c], 0))
	}
	return lb
}

// candidate returns the pair of reference piece gi and hypothesis piece
// hi ranked by its bound, and false when the bound already shows that the
// pair can never be taken (d ≥ k). The shorter piece is the pattern, the
// reference one when both are as long.
func (f *flexState) candidate(gi, hi int) (flexCand, bool) {
	g, h := &f.gt[gi], &f.hy[hi]
	k := min(len(g.r), len(h.r))
	var lb int
	if len(g.r) <= len(h.r) {
		lb = f.bound(g, h)
	} else {
		lb = f.bound(h, g)
	}
	return flexCand{d: int32(-1 - lb), k: int32(k), gi: int32(gi), hi: int32(hi)}, lb < k
}

// dist returns the distance of pair c: the least edit distance between
// its shorter piece (the reference one on ties) and any stretch of the
// longer. The pattern's match vectors are kept for the next pair that has
// the same pattern.
func (f *flexState) dist(c flexCand) int32 {
	pat, text, id := f.gt[c.gi].r, f.hy[c.hi].r, int(c.gi)+1
	if len(text) < len(pat) {
		pat, text, id = text, pat, -int(c.hi)-1
	}
	if f.built != id {
		f.bv.buildPeq(pat)
		f.built = id
	}
	d, _ := f.bv.scanBuilt(text, false)
	return int32(d)
}

// add appends a piece (unless empty) of the reference (ref) or of the
// hypothesis and queues it with every live piece of the other side.
func (f *flexState) add(r []rune, ref bool) {
	if len(r) == 0 {
		return
	}
	mine, other := &f.hy, f.gt
	if ref {
		mine, other = &f.gt, f.hy
	}
	i := len(*mine)
	*mine = append(*mine, f.piece(r))
	for j := range other {
		if !other[j].alive {
			continue
		}
		if ref {
			f.queue(i, j)
		} else {
			f.queue(j, i)
		}
	}
}

func (f *flexState) queue(gi, hi int) {
	if c, ok := f.candidate(gi, hi); ok {
		f.q = append(f.q, c)
		f.q.up(len(f.q) - 1)
		f.gt[gi].queued++
		f.hy[hi].queued++
	}
}

// compact drops the pairs of pieces that are gone from the queue once
// they may be half of it: a pass over the queue and a heap built afresh,
// both linear, instead of a pop of log₂ of the queue for each (most pairs
// of a page end so, their pieces used up by better pairs). Dropping them
// changes nothing of the order of the others.
func (f *flexState) compact() {
	live := f.q[:0]
	for _, c := range f.q {
		if f.gt[c.gi].alive && f.hy[c.hi].alive {
			live = append(live, c)
		}
	}
	f.q, f.stale = live, 0
	f.q.init()
}

// before reports whether pair a ranks before pair b: (d+1)/(k+1) lower
// (d the distance or its bound, k the shorter length), or equal and k
// longer, or both equal and a earlier in reading order (reference piece,
// then hypothesis piece).
func (a flexCand) before(b flexCand) bool {
	ad, bd := a.d^a.d>>31, b.d^b.d>>31 // d, or the bound -1-d when d < 0
	l, r := (int64(ad)+1)*(int64(b.k)+1), (int64(bd)+1)*(int64(a.k)+1)
	switch {
	case l != r:
		return l < r
	case a.k != b.k:
		return a.k > b.k
	case a.gi != b.gi:
		return a.gi < b.gi
	}
	return a.hi < b.hi
}

// flexQueue is a binary heap of pairs, the first by before at index 0.
// (Written out rather than through container/heap, whose interface calls
// would cost more than the comparisons.)
type flexQueue []flexCand

func (q flexQueue) init() {
	for i := len(q)/2 - 1; i >= 0; i-- {
		q.down(i)
	}
}

func (q flexQueue) up(i int) {
	for i > 0 {
		p := (i - 1) / 2
		if !q[i].before(q[p]) {
			return
		}
		q[i], q[p] = q[p], q[i]
		i = p
	}
}

func (q flexQueue) down(i int) {
	for {
		c := 2*i + 1
		if c >= len(q) {
			return
		}
		if r := c + 1; r < len(q) && q[r].before(q[c]) {
			c = r
		}
		if !q[c].before(q[i]) {
			return
		}
		q[i], q[c] = q[c], q[i]
		i = c
	}
}

// pop removes the first pair.
func (q *flexQueue) pop() {
	n := len(*q) - 1
	(*q)[0] = (*q)[n]
	*q = (*q)[:n]
	q.down(0)
}

// FlexCER returns the flexible character error rate FlexErrors/Chars (1 −
// flexible character accuracy), and false when there is no reference text.
// It never exceeds CER and, like it, may exceed 1.
func (c Counts) FlexCER() (float64, bool) {
	if c.Chars == 0 {
		return 0, false
	}
	return float64(c.FlexErrors) / float64(c.Chars), true
}

// FlexErrors counts the errors of the flexible character accuracy between
// ref and hyp after normalising each of their lines with o: the matching
// described at the top of flex.go, or the in-order edit distance when that
// is lower.
func FlexErrors(ref, hyp string, o NormOptions) int {
	var s Scratch
	return s.Compare(ref, hyp, o).FlexErrors
}
