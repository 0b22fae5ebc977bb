package correct

import (
	"math"
	"unicode/utf8"
)

// observed is a token prepared for channel scoring: its runes and, for each
// end position j, the learned confusions whose To ends there.
type observed struct {
	s     string   // lower-case core
	runes []rune   // s as runes
	off   []int    // byte offset of each rune in s, plus len(s)
	rules [][]crul // rules[j]: confusions whose To is s[off[j-b]:off[j]]
	bound float64  // no candidate's log P(s | candidate) exceeds this
}

type crul struct {
	r *crule
}

// n returns the token's length in runes.
func (o *observed) n() int { return len(o.runes) }

// prepare fills o for the lower-case token s.
func (m *Model) prepare(o *observed, s string) {
	o.s = s
	o.runes = o.runes[:0]
	o.off = o.off[:0]
	for i, r := range s {
		o.runes = append(o.runes, r)
		o.off = append(o.off, i)
	}
	o.off = append(o.off, len(s))
	n := len(o.runes)
	if cap(o.rules) < n+1 {
		o.rules = make([][]crul, n+1)
	}
	o.rules = o.rules[:n+1]
	for j := range o.rules {
		o.rules[j] = o.rules[j][:0]
	}
	o.bound = m.maxEdit
	for j := 1; j <= n; j++ {
		for b := 1; b <= maxRule && b <= j; b++ {
			rs := m.byTo[s[o.off[j-b]:o.off[j]]]
			for k := range rs {
				o.rules[j] = append(o.rules[j], crul{&rs[k]})
				o.bound = max(o.bound, rs[k].logp)
			}
		}
	}
}

// logChannel returns log P(o | cand): the most likely way (Viterbi
// approximation, as in Brill and Moore 2000) for the engine to turn the
// lower-case candidate into the observed token, as a product over a
// partition into confusions of up to three characters, kept characters,
// and unseen one-character edits at smoothed rates. buf is scratch space.
// Every step multiplies by a probability and no step spans more than
// maxRule candidate characters, so the best value over any maxRule
// consecutive rows of the table bounds the result: as soon as that is at or
// below limit, logChannel gives up and returns -Inf (pass -Inf to always
// finish).
func (m *Model) logChannel(o *observed, cand string, rbuf *[]rune, buf []float64, limit float64) (float64, []float64) {
	var crs []rune
	if rbuf != nil {
		crs = (*rbuf)[:0]
	}
	for _, r := range cand {
		crs = append(crs, r)
	}
	if rbuf != nil {
		*rbuf = crs
	}
	n, mm := len(crs), len(o.runes)
	w := mm + 1
	size := (n+1)*w + 2*n
	if cap(buf) < size {
		buf = make([]float64, size)
	}
	d := buf[:(n+1)*w]
	// Per candidate character: log P(kept) and log P(deleted), looked up
	// once rather than once per cell.
	keep, del := buf[(n+1)*w:(n+1)*w+n], buf[(n+1)*w+n:size]
	for i, r := range crs {
		keep[i] = m.keepLog(r)
		if v, ok := m.del[r]; ok {
			del[i] = v
		} else {
			del[i] = m.delFloor
		}
	}
	inf := math.Inf(-1)
	var recent [maxRule]float64 // best of the last rows, by i % maxRule
	for k := range recent {
		recent[k] = 0
	}
	for i := 0; i <= n; i++ {
		rowBest := inf
		for j := 0; j <= mm; j++ {
			if i == 0 && j == 0 {
				d[0] = 0
				continue
			}
			best := inf
			if i > 0 && j > 0 {
				v := d[(i-1)*w+j-1]
				if crs[i-1] == o.runes[j-1] {
					v += keep[i-1]
				} else {
					v += m.subFloor
				}
				best = v
			}
			if i > 0 {
				if v := d[(i-1)*w+j] + del[i-1]; v > best {
					best = v
				}
			}
			if j > 0 {
				if v := d[i*w+j-1] + m.insFloor; v > best {
					best = v
				}
				for _, cr := range o.rules[j] {
					r := cr.r
					a := len(r.from)
					if a > i {
						continue
					}
					match := true
					for k := 0; k < a; k++ {
						if crs[i-a+k] != r.from[k] {
							match = false
							break
						}
					}
					if !match {
						continue
					}
					if v := d[(i-a)*w+j-r.to] + r.logp; v > best {
						best = v
					}
				}
			}
			d[i*w+j] = best
			rowBest = max(rowBest, best)
		}
		recent[i%maxRule] = rowBest
		if i >= maxRule-1 {
			best := recent[0]
			for _, v := range recent[1:] {
				best = max(best, v)
			}
			if best <= limit {
				return inf, buf
			}
		}
	}
	return d[n*w+mm], buf
}

func (m *Model) keepLog(r rune) float64 {
	if v, ok := m.keep[r]; ok {
		return v
	}
	return m.keepDef
}

// logIdentity returns log P(s | s) along the all-kept path, which is what
// logChannel gives for cand == s unless a confusion path is likelier.
func (m *Model) logIdentity(s string) float64 {
	var v float64
	for _, r := range s {
		v += m.keepLog(r)
	}
	return v
}

func runeLen(s string) int { return utf8.RuneCountInString(s) }
