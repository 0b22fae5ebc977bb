package correct

import (
	"cmp"
	"math"
	"slices"
	"strings"
)

// word decides whether to change one token.
func (c *Corrector) word(s *scratch, t *token, prev, next string) (edit, bool) {
	if runeLen(t.core) < 2 {
		return edit{}, false
	}
	q := lookupForm(t.core)
	known := c.known(q)
	raw := t.lead + t.core + t.trail
	if protected(raw, t.core, known) || strings.HasPrefix(t.trail, "'") || strings.HasPrefix(t.trail, "’") ||
		strings.HasSuffix(t.lead, "'") || strings.HasSuffix(t.lead, "’") {
		// An apostrophe against the word marks an elision ("tellin'",
		// "'em", "'gainst") or a plural possessive: the word is as the
		// printer set it.
		return edit{}, false
	}
	margin := c.marginFor(t.conf) + s.page
	pattern := casePattern(t.core)
	upper := startsUpper(t.core)
	if known {
		if t.conf >= sureConf {
			return edit{}, false
		}
		margin += realWordMargin
	} else if upper {
		if t.conf >= nameConf {
			return edit{}, false
		}
		if t.conf < 0 {
			margin += nameMargin
		}
	}
	strict := !known && !upper && t.conf >= strictConf
	keep := c.m.logIdentity(q) + c.logContext(prev, q, next)
	if !known {
		keep -= oovPenalty
	}
	// Every candidate scores at most its channel probability (the context
	// probability is at most 1), and no channel probability exceeds that
	// of the likeliest edit that fits the token: frequent words stop here.
	c.m.prepare(&s.obs, q)
	if keep+margin >= max(s.obs.bound, c.m.spaceDel) {
		return edit{}, false
	}
	best, bestScore := "", math.Inf(-1)
	ctx := c.contextFor(prev, next)
	// scoreAll scores words likeliest-in-context first: once a word's
	// context score plus the best channel score any candidate can have
	// falls below the best so far, none of the rest can win.
	scoreAll := func(words []string) {
		s.lm = s.lm[:0]
		for _, w := range words {
			if w != q {
				s.lm = append(s.lm, neighbour{word: w, logp: ctx.score(w)})
			}
		}
		slices.SortFunc(s.lm, func(a, b neighbour) int {
			if a.logp != b.logp {
				return cmp.Compare(b.logp, a.logp)
			}
			return strings.Compare(a.word, b.word)
		})
		for _, x := range s.lm {
			if x.logp+s.obs.bound <= max(bestScore, keep+margin) {
				break
			}
			var ch float64
			ch, s.buf = c.m.logChannel(&s.obs, x.word, &s.crs, s.buf, keep+margin-x.logp)
			if v := ch + x.logp; v > bestScore || (v == bestScore && x.word < best) {
				best, bestScore = x.word, v
			}
		}
	}
	switch {
	case known:
		// The channel score of each neighbour is remembered with it (it
		// does not depend on the context), so only neighbours that could
		// still win cost a context score.
		for _, x := range c.realWordNeighbours(s, q) {
			if x.word != q && x.logp > keep+margin && x.ch > keep+margin {
				if v := x.ch + ctx.score(x.word); v > bestScore || (v == bestScore && x.word < best) {
					best, bestScore = x.word, v
				}
			}
		}
	case strict:
		scoreAll(c.expansions(s, q, false, keep+margin, strictStepLogP))
	case s.obs.n() >= longWord:
		// The search finds every word within two edits, single learned
		// confusions included; undoing confusions only adds words further
		// away, so it runs only when the search found no winner.
		s.cands = s.cands[:0]
		for _, id := range c.search(s, q) {
			s.cands = append(s.cands, c.ix.words[id])
		}
		scoreAll(s.cands)
		if bestScore-keep <= margin {
			scoreAll(c.expansions(s, q, false, keep+margin, minExpandLogP))
		}
	default:
		// Short tokens are searched within one edit only: undo learned
		// confusions first ("rnan" → "man"), and search when that gave no
		// clear winner.
		scoreAll(c.expansions(s, q, false, keep+margin, minExpandLogP))
		if bestScore-keep <= margin+clearWin {
			s.cands = s.cands[:0]
			for _, id := range c.search(s, q) {
				s.cands = append(s.cands, c.ix.words[id])
			}
			scoreAll(s.cands)
		}
	}
	var split []string
	if !known && !c.cfg.KeepSpacing && plainWord(q) {
		if w1, w2, v, ok := c.bestSplit(s, q, prev, next); ok && v > bestScore {
			best, bestScore, split = "", v, []string{w1, w2}
		}
	}
	delta := bestScore - keep
	if delta <= margin {
		return edit{}, false
	}
	if split != nil {
		return edit{n: 1, words: []string{t.lead + applyCase(split[0], pattern, upper), applyCase(split[1], caseLower, false) + t.trail}, score: delta}, true
	}
	trail := t.trail
	if (strings.HasPrefix(trail, "!") || strings.HasPrefix(trail, "|")) && len(best) > len(q) && strings.HasPrefix(best, q) {
		// "annua!" → "annual": the engine often reads a final l, t or i
		// as "!" or "|"; when the correction restores letters at the end,
		// the mark was one of them.
		trail = trail[1:]
	}
	return edit{n: 1, words: []string{t.lead + applyCase(best, pattern, upper) + trail}, score: delta}, true
}

// identity is log P(s | s) with s kept as read.
func (o *observed) identity(m *Model) float64 {
	var v float64
	for _, r := range o.runes {
		v += m.keepLog(r)
	}
	return v
}
