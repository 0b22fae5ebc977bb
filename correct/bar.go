// A vertical bar or an exclamation mark read alone where the page has the
// word "I".

package correct

import "strings"

// barGlyphs are the marks the engine reads for a capital I standing alone:
// a vertical bar (the I of a sans or a worn serif face), an exclamation
// mark (an I whose foot broke off) and a brace (an I with bold serifs). Common practice in OCR post-correction;
// measured on the project's Debian-font corpus (docs/dev-correct.md): of the
// 100 tokens "|" and "!" read alone on English pages, nearly all stood for
// "I", the rest for a speck or a lost line.
var barGlyphs = [...]string{"|", "!", "{"}

// splitBar parses a mark token as opening quotes or brackets, one bar
// glyph, and closing punctuation ("\"!", "|.", "|,"); ok is false for any
// other mark.
func splitBar(lead string) (open, bar, close string, ok bool) {
	rest := strings.TrimLeft(lead, "\"“‘'(")
	open = lead[:len(lead)-len(rest)]
	for _, g := range barGlyphs {
		if strings.HasPrefix(rest, g) {
			bar, close = g, rest[len(g):]
			break
		}
	}
	if bar == "" || strings.Trim(close, ".,;:?\"”’')") != "" {
		return "", "", "", false
	}
	return open, bar, close, true
}

// barWord decides whether the mark token toks[i] is the word "I" misread:
// the lexicon must know "i", and the context must support it — a counted
// pair with the word before or after — with log odds (the context score of
// the neighbours with "I" between them over their score as neighbours)
// that clear the token's margin, or the mark be one the model would delete
// as a stray anyway. Then "I" takes its place instead of nothing. Without
// that support (German and Norwegian text, where a bar read alone is a
// speck or a rule) the mark is left to the stray rules.
//
// The capital is written because the glyphs have the height of a capital:
// a dotted lower-case i is read as "i" or "l", not as a bar.
func (c *Corrector) barWord(s *scratch, toks []token, i int, prev string) (edit, bool) {
	t := &toks[i]
	open, bar, close, ok := splitBar(t.lead)
	if !ok || !c.lex.Has("i") {
		return edit{}, false
	}
	next := ""
	if i+1 < len(toks) && !breaksContext(close, toks[i+1].lead) {
		next = lookupForm(toks[i+1].core)
	}
	left, right := 0.0, 0.0
	if prev != "" {
		left = c.bigram(prev, "i")
	}
	if next != "" {
		right = c.bigram("i", next)
	}
	if left == 0 && right == 0 || bar == "!" && right == 0 {
		// An exclamation mark set off by a space ends a clause in print
		// that spaces its punctuation ("Hark ! the"): it is "I" only
		// before a word that "I" is counted before.
		return edit{}, false
	}
	gain := c.logContext(prev, "i", next)
	if next != "" {
		gain -= c.logCond(prev, next) // the neighbours with the mark gone
	}
	margin := c.marginFor(t.conf) + s.page
	if gain <= margin {
		if bar == "!" {
			// Deleting a spaced exclamation mark loses a letter or a
			// mark; reading it as "I" on the stray rules' word alone
			// would make "Hark ! the" "Hark I the".
			return edit{}, false
		}
		del, ok := c.mark(s, toks, i)
		if !ok {
			return edit{}, false
		}
		gain = max(gain, del.score)
	}
	return edit{n: 1, words: []string{open + "I" + close}, score: gain}, true
}
