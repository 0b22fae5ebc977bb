package quality

import (
	"slices"
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
	r     []rune
	alive bool
	d     []int32 // gt pieces only: least distance to every hypothesis piece by id, -1 when that piece is gone
}

// flexState is the working memory of flexErrors.
type flexState struct {
	bv       bitState
	gt, hy   []flexSeg
	rev, rtx []rune
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

// distOf is the least distance of any substring of the longer of g and h
// to the whole of the shorter.
func (f *flexState) distOf(g, h []rune) int32 {
	if len(g) <= len(h) {
		d, _ := f.bv.scan(g, h, false)
		return int32(d)
	}
	d, _ := f.bv.scan(h, g, false)
	return int32(d)
}

// errors returns the errors of the greedy flexible matching of the
// reference lines ref against the hypothesis lines hyp (see the comment at
// the top of this file): the edit distances of the matches plus the
// characters left unmatched on either side.
//
// Complexity: O(G·H) scans of ⌈k/64⌉·L word steps for G reference and H
// hypothesis lines at the start, and each match scans only its new pieces;
// for a 3,000-character page of 60 lines this is about 2·10⁵ word steps.
func (f *flexState) errors(ref, hyp [][]rune) int {
	f.gt, f.hy = f.gt[:0], f.hy[:0]
	for _, h := range hyp {
		f.hy = append(f.hy, flexSeg{r: h, alive: true})
	}
	for _, g := range ref {
		f.gt = append(f.gt, flexSeg{})
		seg := &f.gt[len(f.gt)-1]
		seg.r, seg.alive = g, true
		seg.d = slices.Grow(seg.d[:0], len(hyp))[:len(hyp)]
	}
	// Each piece's match vectors are built once for all the pieces it is
	// the pattern of (the shorter one; g on ties).
	for gi := range f.gt {
		g := f.gt[gi].r
		f.bv.buildPeq(g)
		for hi, h := range hyp {
			if len(g) <= len(h) {
				b, _ := f.bv.scanBuilt(h, false)
				f.gt[gi].d[hi] = int32(b)
			}
		}
	}
	for hi, h := range hyp {
		f.bv.buildPeq(h)
		for gi := range f.gt {
			if g := f.gt[gi].r; len(h) < len(g) {
				b, _ := f.bv.scanBuilt(g, false)
				f.gt[gi].d[hi] = int32(b)
			}
		}
	}
	errs := 0
	for {
		bg, bh, bd, bk := -1, -1, int32(0), 0
		for gi := range f.gt {
			g := &f.gt[gi]
			if !g.alive {
				continue
			}
			for hi, d := range g.d {
				if d < 0 {
					continue
				}
				k := min(len(g.r), len(f.hy[hi].r))
				if int(d) >= k {
					continue
				}
				if bg < 0 || better(int(d), k, int(bd), bk) {
					bg, bh, bd, bk = gi, hi, d, k
				}
			}
		}
		if bg < 0 {
			break
		}
		errs += int(bd)
		g, h := f.gt[bg].r, f.hy[bh].r
		f.kill(bg, bh)
		if len(g) <= len(h) {
			_, s, e := f.match(g, h)
			f.addHyp(trimSpace(h[:s]))
			f.addHyp(trimSpace(h[e:]))
		} else {
			_, s, e := f.match(h, g)
			f.addGT(trimSpace(g[:s]))
			f.addGT(trimSpace(g[e:]))
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

// better reports whether a match of distance d over a shorter piece of k
// characters ranks before one of distance bd over bk: (d+1)/(k+1) lower,
// or equal and k longer.
func better(d, k, bd, bk int) bool {
	l, r := (d+1)*(bk+1), (bd+1)*(k+1)
	return l < r || l == r && k > bk
}

func (f *flexState) kill(gi, hi int) {
	f.gt[gi].alive = false
	f.hy[hi].alive = false
	for i := range f.gt {
		if f.gt[i].alive {
			f.gt[i].d[hi] = -1
		}
	}
}

// addGT appends a reference piece (unless empty) with its distances to
// every live hypothesis piece.
func (f *flexState) addGT(g []rune) {
	if len(g) == 0 {
		return
	}
	n := len(f.gt)
	if n < cap(f.gt) {
		f.gt = f.gt[:n+1]
	} else {
		f.gt = append(f.gt, flexSeg{})
	}
	seg := &f.gt[n]
	seg.r, seg.alive, seg.d = g, true, seg.d[:0]
	built := false
	for i := range f.hy {
		seg.d = append(seg.d, f.newDist(g, &f.hy[i], true, &built))
	}
}

// addHyp appends a hypothesis piece (unless empty) and its distance to
// every live reference piece.
func (f *flexState) addHyp(h []rune) {
	if len(h) == 0 {
		return
	}
	f.hy = append(f.hy, flexSeg{r: h, alive: true})
	built := false
	for i := range f.gt {
		g := &f.gt[i]
		g.d = append(g.d, f.newDist(h, g, false, &built))
	}
}

// newDist returns the distance between a new piece p and the piece q of
// the other side, -1 when q is not alive; isRef says p is the reference
// piece. The shorter piece is the pattern, the reference one when both are
// as long (as in distOf). p's match vectors are built once for every q it
// is the pattern for: *built says they are in place, and is cleared when
// another pattern's replace them.
func (f *flexState) newDist(p []rune, q *flexSeg, isRef bool, built *bool) int32 {
	switch {
	case !q.alive:
		return -1
	case len(p) < len(q.r) || isRef && len(p) == len(q.r):
		if !*built {
			f.bv.buildPeq(p)
			*built = true
		}
		d, _ := f.bv.scanBuilt(q.r, false)
		return int32(d)
	}
	*built = false
	if isRef {
		return f.distOf(p, q.r)
	}
	return f.distOf(q.r, p)
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
