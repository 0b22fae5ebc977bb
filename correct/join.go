// Splitting run-together words and joining split or hyphenated ones.

package correct

import (
	"math"
	"unicode/utf8"
)

// bestSplit finds the likeliest split of q into two lexicon words.
func (c *Corrector) bestSplit(s *scratch, q, prev, next string) (string, string, float64, bool) {
	rs := []rune(q)
	if len(rs) < 3 {
		return "", "", 0, false
	}
	best := math.Inf(-1)
	var b1, b2 string
	base := s.obs.identity(c.m) + c.m.spaceDel
	// For valid UTF-8 the halves are substrings of q (no copies).
	valid := utf8.ValidString(q)
	off := 0
	for k := 1; k < len(rs); k++ {
		var w1, w2 string
		if valid {
			off += utf8.RuneLen(rs[k-1])
			w1, w2 = q[:off], q[off:]
		} else {
			w1, w2 = string(rs[:k]), string(rs[k:])
		}
		// A word with a count other than 0 is in the lexicon: Count alone
		// answers both "listed" and "counted".
		if !splitPart(w1) || !splitPart(w2) || c.lex.Count(w1) == 0 || c.lex.Count(w2) == 0 {
			continue
		}
		v := base + c.logCond(prev, w1) + c.logCond(w1, w2)
		if next != "" {
			v += c.logCond(w2, next)
		}
		if v > best {
			best, b1, b2 = v, w1, w2
		}
	}
	return b1, b2, best, b1 != ""
}

// splitPart reports whether w may be one half of a split word: two letters
// or more, or "a" or "i".
func splitPart(w string) bool {
	if w == "a" || w == "i" {
		return true
	}
	return runeLen(w) >= 2
}

// tryJoin considers joining toks[i] with toks[i+1]: a word hyphenated
// across a line end, or a word split by a stray space.
func (c *Corrector) tryJoin(s *scratch, toks []token, i int, prev string) (edit, bool) {
	if i+1 >= len(toks) {
		return edit{}, false
	}
	t, u := &toks[i], &toks[i+1]
	if t.core == "" || u.core == "" || u.lead != "" {
		return edit{}, false
	}
	a, b := lookupForm(t.core), lookupForm(u.core)
	joined := a + b
	if !plainWord(joined) {
		return edit{}, false
	}
	next := ""
	if i+2 < len(toks) && !breaksContext(u.trail, toks[i+2].lead) {
		next = lookupForm(toks[i+2].core)
	}
	pattern, upper := casePattern(t.core), startsUpper(t.core)
	if t.lineEnd {
		// Hyphenated across a line end.
		if c.cfg.KeepHyphens || !isHyphen(t.trail) || !c.lex.Has(joined) || c.lex.Count(joined) == 0 {
			return edit{}, false
		}
		if hy := a + "-" + b; c.lex.Has(hy) && c.lex.Count(hy) >= c.lex.Count(joined) {
			return edit{}, false
		}
		keep := c.logContext(prev, a, "") + c.logContext("", b, next)
		return edit{i: i, n: 2, words: []string{t.lead + applyCase(joined, pattern, upper) + u.trail},
			score: c.logContext(prev, joined, next) - keep}, true
	}
	if c.cfg.KeepSpacing || t.trail != "" {
		return edit{}, false
	}
	ka, kb := c.known(a), c.known(b)
	if (ka && kb) || !c.lex.Has(joined) || c.lex.Count(joined) == 0 {
		return edit{}, false
	}
	if protected(t.core, t.core, ka) || protected(u.core, u.core, kb) {
		return edit{}, false
	}
	if !ka && startsUpper(t.core) && t.conf >= nameConf || !kb && startsUpper(u.core) && u.conf >= nameConf {
		return edit{}, false
	}
	c.m.prepare(&s.obs, a)
	keep := s.obs.identity(c.m)
	c.m.prepare(&s.obs, b)
	keep += s.obs.identity(c.m)
	keep += c.logCond(prev, a) + c.logCond(a, b)
	if next != "" {
		keep += c.logCond(b, next)
	}
	c.m.prepare(&s.obs, joined)
	v := s.obs.identity(c.m) + c.m.spaceIns + c.logContext(prev, joined, next)
	conf := t.conf
	if u.conf >= 0 && (conf < 0 || u.conf < conf) {
		conf = u.conf
	}
	if v-keep <= c.marginFor(conf)+s.page {
		return edit{}, false
	}
	return edit{i: i, n: 2, words: []string{t.lead + applyCase(joined, pattern, upper) + u.trail}, score: v - keep}, true
}

func isHyphen(trail string) bool {
	switch trail {
	case "-", "¬", "\u00ad", "‐":
		return true
	}
	return false
}
