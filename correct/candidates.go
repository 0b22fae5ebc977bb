// Candidate generation: edit-distance search of the lexicon and expansion
// through learned confusions, with the hashes the variant table uses.

package correct

import (
	"math"
	"slices"
)

// search returns lexicon words within the edit distance allowed for q.
func (c *Corrector) search(s *scratch, q string) []uint32 {
	s.rs = s.rs[:0]
	for _, r := range q {
		s.rs = append(s.rs, r)
	}
	depth := 1
	if len(s.rs) >= longWord {
		depth = c.edits
	}
	s.ids = s.ids[:0]
	s.hs, s.ids = c.ix.lookup(s.rs, depth, s.hs, s.ids, s.seen)
	return s.ids
}

// expansions returns the lexicon words reached from q by undoing one or two
// learned confusions (To→From) whose probabilities together exceed floor,
// sorted. For a known q only single confusions are tried. Variants are
// built in scratch buffers and looked up without allocating.
func (c *Corrector) expansions(s *scratch, q string, known bool, floor, minStep float64) []string {
	floor = max(floor, minExpand2LogP)
	s.seenV.reset()
	if known {
		if s.logp == nil {
			s.logp = make(map[string]float64)
		}
		clear(s.logp)
	}
	found := s.found[:0]
	s.arena, s.front = s.arena[:0], s.front[:0]
	// level makes the variants of w by undoing one confusion. Each
	// variant's hash is composed from w's prefix and suffix hashes and the
	// confusion's own, so a variant's bytes are built only when it may be
	// a word or must be kept for the second level.
	level := func(w []byte, acc float64, first bool) {
		n := len(w)
		s.pre = slices.Grow(s.pre[:0], n+1)[:n+1]
		s.suf = slices.Grow(s.suf[:0], n+1)[:n+1]
		s.pow = slices.Grow(s.pow[:0], n+1)[:n+1]
		s.pre[0], s.suf[n], s.pow[0] = 0, 0, 1
		for k := 0; k < n; k++ {
			s.pre[k+1] = s.pre[k]*polyBase + uint64(w[k])
			s.pow[k+1] = s.pow[k] * polyBase
		}
		for k := n - 1; k >= 0; k-- {
			s.suf[k] = uint64(w[k])*s.pow[n-1-k] + s.suf[k+1]
		}
		for k := 0; k < n; k++ {
			if w[k]&0xc0 == 0x80 {
				continue // inside a multi-byte rune
			}
			for i := range c.m.expFirst[w[k]] {
				x := &c.m.expFirst[w[k]][i]
				if acc+x.logp <= floor || x.logp < minStep {
					break // sorted, most likely first
				}
				if !hasPrefix(w[k:], x.to) {
					continue
				}
				if s.seenV.full() {
					// Every later variant would be refused: stop.
					return
				}
				rest := n - k - len(x.to)
				ph := (s.pre[k]*x.fromPow+x.fromH)*s.pow[rest] + s.suf[k+len(x.to)]
				h := polyFinish(ph, k+len(x.from)+rest)
				if !s.seenV.add(h) {
					continue
				}
				may := c.ix.mayHave(h)
				if !may && !first {
					continue
				}
				v := append(append(append(s.vbuf[:0], w[:k]...), x.from...), w[k+len(x.to):]...)
				s.vbuf = v
				if may {
					if id, ok := c.ix.id[string(v)]; ok {
						found = append(found, c.ix.words[id])
						if known {
							s.logp[c.ix.words[id]] = acc + x.logp
						}
						continue
					}
				}
				if first {
					s.front = append(s.front, frontier{off: len(s.arena), n: len(v), logp: acc + x.logp})
					s.arena = append(s.arena, v...)
				}
			}
		}
	}
	s.qbuf = append(s.qbuf[:0], q...)
	level(s.qbuf, 0, true)
	if !known {
		// Second confusions only from the likeliest first ones: the first
		// maxFrontier of a stable sort by falling logp, picked by insertion
		// (a later variant goes after those at least as likely).
		top := s.top[:0]
		for _, f := range s.front {
			pos := len(top)
			for pos > 0 && top[pos-1].logp < f.logp {
				pos--
			}
			if pos == maxFrontier {
				continue
			}
			if len(top) < maxFrontier {
				top = append(top, frontier{})
			}
			copy(top[pos+1:], top[pos:])
			top[pos] = f
		}
		s.top = top
		for i, f := range top {
			if len(found) >= maxExpansions || i == maxFrontier || s.seenV.full() {
				break
			}
			if f.logp+c.m.expMax <= floor {
				// Sorted: no confusion lifts this or any later variant
				// above the floor.
				break
			}
			level(s.arena[f.off:f.off+f.n], f.logp, false)
		}
	}
	slices.Sort(found)
	s.found = found
	return found
}

// neighbour is a lexicon word one learned confusion away from another, with
// that confusion's log probability and the channel score log P(other |
// word); or, in scratch.lm, a candidate with its context score in logp.
type neighbour struct {
	word string
	logp float64
	ch   float64
}

// maxExpansions bounds candidates made through confusions per token.
const maxExpansions = 64

// maxCached bounds the words whose neighbours are remembered.
const maxCached = 200_000

// realWordNeighbours returns the lexicon words one likely confusion away
// from the lexicon word q with their channel scores, remembered per
// Corrector (words recur). s.obs must hold q.
func (c *Corrector) realWordNeighbours(s *scratch, q string) []neighbour {
	if v, ok := c.neigh.Load(q); ok {
		return v.([]neighbour)
	}
	var ns []neighbour
	for _, w := range c.expansions(s, q, true, minExpandLogP, minExpandLogP) {
		var ch float64
		ch, s.buf = c.m.logChannel(&s.obs, w, &s.crs, s.buf, math.Inf(-1))
		ns = append(ns, neighbour{w, s.logp[w], ch})
	}
	if c.cached.Add(1) <= maxCached {
		c.neigh.Store(q, ns)
	}
	return ns
}

// frontier is a one-confusion variant kept in scratch.arena.
type frontier struct {
	off, n int
	logp   float64
}

func hasPrefix(b []byte, p string) bool {
	if len(b) < len(p) {
		return false
	}
	for i := 0; i < len(p); i++ {
		if b[i] != p[i] {
			return false
		}
	}
	return true
}

// variantSet remembers the hashes of the variants made for one token, at
// most 2*maxExpansions, in a small open-addressing table cleared by
// generation rather than by zeroing.
type variantSet struct {
	slot [4 * maxExpansions]uint64 // hash|1, or 0 for empty
	gen  [4 * maxExpansions]uint32
	cur  uint32
	n    int
}

func (v *variantSet) reset() {
	v.cur++
	v.n = 0
	if v.cur == 0 { // wrapped: old generations would look current
		v.gen = [4 * maxExpansions]uint32{}
		v.cur = 1
	}
}

// full reports whether add refuses every hash not yet recorded.
func (v *variantSet) full() bool { return v.n >= 2*maxExpansions }

// add records h and reports whether it was new and there was room.
func (v *variantSet) add(h uint64) bool {
	h |= 1
	const mask = 4*maxExpansions - 1
	for i := uint32(h) & mask; ; i = (i + 1) & mask {
		if v.gen[i] != v.cur {
			if v.n >= 2*maxExpansions {
				return false
			}
			v.gen[i], v.slot[i] = v.cur, h
			v.n++
			return true
		}
		if v.slot[i] == h {
			return false
		}
	}
}

// polyBase is the base of polyHash, odd so that powers never vanish mod
// 2^64.
const polyBase = 0x100000001b3

// polyHash is the polynomial hash sum b[i]·polyBase^(len-1-i) mod 2^64,
// which composes: polyHash(a+b) = polyHash(a)·polyBase^len(b) +
// polyHash(b).
func polyHash(s string) uint64 {
	var h uint64
	for i := 0; i < len(s); i++ {
		h = h*polyBase + uint64(s[i])
	}
	return h
}

// polyPow returns polyBase^n mod 2^64.
func polyPow(n int) uint64 {
	p := uint64(1)
	for range n {
		p *= polyBase
	}
	return p
}

// polyFinish mixes a polynomial hash with the string's length (the
// splitmix64 finaliser, Steele, Lea and Flood 2014) so that every bit of
// the result depends on every byte: the Bloom filter and the seen-variant
// table index by low and middle bits.
func polyFinish(h uint64, n int) uint64 {
	z := h + uint64(n)*0x9e3779b97f4a7c15
	z = (z ^ z>>30) * 0xbf58476d1ce4e5b9
	z = (z ^ z>>27) * 0x94d049bb133111eb
	return z ^ z>>31
}

// wordHash is the hash the Bloom filter and the seen-variant table use.
func wordHash(s string) uint64 { return polyFinish(polyHash(s), len(s)) }
