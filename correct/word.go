package correct

import (
	"cmp"
	"math"
	"slices"
	"strings"
	"unicode"
	"unicode/utf8"
)

// word decides whether to change one token.
func (c *Corrector) word(s *scratch, t *token, prev, next string) (edit, bool) {
	if runeLen(t.core) < 2 {
		return edit{}, false
	}
	q := lookupForm(t.core)
	known := c.known(q)
	if known && c.cfg.Vocabulary != nil && c.cfg.Vocabulary.Listed(q) && c.lex.Count(q) <= c.cfg.Vocabulary.Count(q) {
		// A word that only the collection vocabulary knows (the
		// lexicon's count is the vocabulary's) is judged as if the
		// lexicon lacked it, so that the change it stops is known and
		// reported (blockVocabulary); it is never made.
		known = false
	}
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
	} else if t.conf >= sureConf && c.compounds {
		// A language that compounds freely (the lexicon has a Hunspell
		// dictionary's compounding rules: German, Norwegian): a word
		// read clearly that the dictionary cannot build is a compound or
		// form it does not know, or the printer's own spelling, more
		// often than a misreading. Measured on clean German pages from
		// bash's help texts: the two changes made without this rule were
		// both of the translation's own spellings (Rückgebewert, Enfernt).
		return edit{}, false
	} else if !upper && t.conf >= rareConf {
		// A lower-case word read this clearly that the lexicon lacks is
		// a rare or older spelling ("shews", "corse", dialect "wat") far
		// more often than a misreading: each was made a modern word on
		// clean pages of the Debian-font corpus.
		return edit{}, false
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
		return edit{n: 1, words: []string{t.lead + inPageForm(t.core, applyCase(split[0], pattern, upper)), inPageForm(t.core, applyCase(split[1], caseLower, false)) + t.trail}, score: delta}, true
	}
	trail := t.trail
	if (strings.HasPrefix(trail, "!") || strings.HasPrefix(trail, "|")) && len(best) > len(q) && strings.HasPrefix(best, q) {
		// "annua!" → "annual": the engine often reads a final l, t or i
		// as "!" or "|"; when the correction restores letters at the end,
		// the mark was one of them.
		trail = trail[1:]
	}
	lead := t.lead
	if g := lastRune(lead); strings.ContainsRune(barLeads, g) && len(best) == len(q)+1 && strings.HasSuffix(best, q) && (best[0] == 'i' || best[0] == 'l') {
		// "[nto" → "Into": a bracket or bar before a word that lacks
		// its first letter was that letter, a tall stroke: the capital I
		// or a lower-case l.
		lead = strings.TrimSuffix(lead, string(g))
		if best[0] == 'i' && pattern == caseLower {
			pattern, upper = caseTitle, true
		}
	}
	if r, _ := utf8.DecodeRuneInString(t.core); t.sentence && pattern == caseLower && !unicode.IsLetter(r) {
		// "1t" at the start of a sentence is "It": a digit read for the
		// first letter says nothing of its case, the sentence does.
		pattern, upper = caseTitle, true
	}
	return edit{n: 1, words: []string{lead + inPageForm(t.core, applyCase(best, pattern, upper)) + trail}, score: delta}, true
}

// barLeads are the glyphs the engine reads for a first letter I or l
// (common practice; "[nto" for "Into" on a clean held-out page).
const barLeads = "[]|!{"

// lastRune returns the last rune of s, or 0.
func lastRune(s string) rune {
	r, _ := utf8.DecodeLastRuneInString(s)
	if s == "" {
		return 0
	}
	return r
}

// identity is log P(s | s) with s kept as read.
func (o *observed) identity(m *Model) float64 {
	var v float64
	for _, r := range o.runes {
		v += m.keepLog(r)
	}
	return v
}
