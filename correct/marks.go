package correct

import (
	"math"
	"sort"
	"strings"
	"unicode"
	"unicode/utf8"

	"recto/quality"
)

// Besides character confusions inside words, a model learns two things at
// the level of tokens and glyphs from the same aligned pairs:
//
//   - stray marks: a token with no letter or digit ("." ":" "‘" "|") that
//     the engine read on its own between words. Specks, stains and show-
//     through are read as such tokens; the model counts, for each mark, how
//     often the engine produced it as a whole token and how often the
//     ground truth had that same token there. A mark that is almost never
//     in the truth is deleted when the odds beat the margin.
//   - glyph conventions: a punctuation glyph the engine reads where the
//     transcription has another, consistently (a straight quotation mark on
//     the page read as a curly one). The model counts, for each punctuation
//     glyph read, which reference character the alignment puts against it.

// MarkStat counts one mark token in training.
type MarkStat struct {
	N    int64 `json:"n"`    // read by the engine as a whole token
	Kept int64 `json:"kept"` // of those, the ground truth had the same token there
}

// GlyphStat counts one punctuation glyph read against one reference
// character in training; Truth is "" where the alignment has nothing
// (the glyph was inserted).
type GlyphStat struct {
	Read  string `json:"read"`
	Truth string `json:"truth"`
	N     int64  `json:"n"`
}

// Thresholds for the token-level parts of a model.
const (
	// minMarkN is the least number of times a mark must be seen in
	// training to get odds of its own; rarer marks share pooled odds.
	minMarkN = 10
	// minGlyphN is the least number of times a glyph must be read in
	// training before it may be mapped to another.
	minGlyphN = 20
	// glyphShare is the least share of a glyph's readings against
	// punctuation that must stand against one other punctuation character
	// for the glyph to be mapped.
	glyphShare = 0.8
)

// runningMarks are marks set between spaces in ordinary English print
// (the ampersand, ellipses, reference marks; dashes: see runningMark): without training
// evidence of their own they are never taken for strays, and with it only
// when the engine was unsure of them (see Corrector.mark).
var runningMarks = map[string]bool{
	"&": true, "…": true, "...": true, "§": true, "¶": true, "†": true, "‡": true, "*": true, "/": true,
}

// runningMark reports whether tok is one of runningMarks or a run of dashes.
func runningMark(tok string) bool {
	if runningMarks[tok] {
		return true
	}
	for _, r := range tok {
		if !strings.ContainsRune("-‐‑‒–—―", r) {
			return false
		}
	}
	return true
}

// isMark reports whether tok has no letter or digit.
func isMark(tok string) bool {
	if tok == "" || !utf8.ValidString(tok) {
		return false // bytes that are not text are passed through, never judged
	}
	for _, r := range tok {
		if unicode.IsLetter(r) || unicode.IsDigit(r) || r == utf8.RuneError {
			return false
		}
	}
	return true
}

// isGlyph reports whether r is punctuation or a symbol.
func isGlyph(r rune) bool { return unicode.IsPunct(r) || unicode.IsSymbol(r) }

// learnMarks counts the mark tokens of hyp and whether the word alignment
// of ref and hyp matches each with the same token of ref.
func learnMarks(sc *quality.Scratch, ref, hyp string, marks map[string]*MarkStat, ops []quality.Op) []quality.Op {
	r, h := quality.WordIDs(ref, hyp)
	toks := strings.Fields(quality.Normalize(hyp, quality.NormOptions{}))
	if len(toks) != len(h) {
		return ops // cannot happen: WordIDs splits the same normal form
	}
	ops = sc.Align(r, h, ops[:0])
	hi := 0
	for _, op := range ops {
		if op.Kind == quality.OpDel {
			continue
		}
		if tok := toks[hi]; isMark(tok) {
			st := marks[tok]
			if st == nil {
				st = &MarkStat{}
				marks[tok] = st
			}
			st.N++
			if op.Kind == quality.OpMatch {
				st.Kept++
			}
		}
		hi++
	}
	return ops
}

// learnGlyphs counts, for each punctuation glyph on the hypothesis side of
// a character alignment, the reference character against it.
func learnGlyphs(ops []quality.Op, glyphs map[[2]rune]int64) {
	for _, op := range ops {
		if op.Kind == quality.OpDel || !isGlyph(op.H) {
			continue
		}
		glyphs[[2]rune{op.H, op.R}]++ // R is 0 for an insertion
	}
}

// glyphStats lists glyph counts in a stable order for the model file.
func glyphStats(glyphs map[[2]rune]int64) []GlyphStat {
	out := make([]GlyphStat, 0, len(glyphs))
	for k, n := range glyphs {
		g := GlyphStat{Read: string(k[0]), N: n}
		if k[1] != 0 {
			g.Truth = string(k[1])
		}
		out = append(out, g)
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Read != out[j].Read {
			return out[i].Read < out[j].Read
		}
		return out[i].Truth < out[j].Truth
	})
	return out
}

// glyphSub is a compiled glyph mapping: read as the key, write to.
type glyphSub struct {
	to   rune
	odds float64 // log odds of to over the glyph as read
}

// compileTokens builds the mark odds and the glyph map from the counts.
func (m *Model) compileTokens() {
	m.markOdds = make(map[string]float64)
	var poolN, poolKept int64
	for tok, st := range m.marks {
		if st.N >= minMarkN {
			m.markOdds[tok] = math.Log((float64(st.N-st.Kept) + 0.5) / (float64(st.Kept) + 0.5))
		} else {
			poolN += st.N
			poolKept += st.Kept
		}
	}
	m.markPool = math.Inf(-1)
	if poolN > 0 {
		m.markPool = math.Log((float64(poolN-poolKept) + 0.5) / (float64(poolKept) + 0.5))
	}
	byRead := make(map[rune]map[rune]int64)
	for _, g := range m.glyphs {
		r, _ := utf8.DecodeRuneInString(g.Read)
		var t rune
		if g.Truth != "" {
			t, _ = utf8.DecodeRuneInString(g.Truth)
		}
		if byRead[r] == nil {
			byRead[r] = make(map[rune]int64)
		}
		byRead[r][t] += g.N
	}
	m.glyphMap = make(map[rune]glyphSub)
	for r, against := range byRead {
		// Only readings against punctuation count: where the alignment
		// puts a letter or nothing against the glyph, the page was
		// misread, not transcribed by another convention.
		var total, best int64
		var to rune
		for t, n := range against {
			if t == 0 || !isGlyph(t) {
				continue
			}
			total += n
			if t != r && (n > best || n == best && t < to) {
				best, to = n, t
			}
		}
		if total < minGlyphN || float64(best) < glyphShare*float64(total) {
			continue
		}
		m.glyphMap[r] = glyphSub{to: to, odds: math.Log((float64(best) + 0.5) / (float64(against[r]) + 0.5))}
	}
}

// markOddsOf returns the log odds that the mark token tok, read on its own,
// is a stray; ok is false when the model has nothing to say about it.
func (m *Model) markOddsOf(tok string) (float64, bool) {
	if v, ok := m.markOdds[tok]; ok {
		return v, true
	}
	if runningMark(tok) || math.IsInf(m.markPool, -1) || bracketed(tok) {
		return 0, false
	}
	return m.markPool, true
}

// bracketed reports whether a mark holds a bracket or a quotation mark
// (Unicode Ps, Pe, Pi, Pf: "((", "));", "«'»"): printed pairs that the
// pool of marks the model never saw must not take for specks. Measured on
// clean Bokmål pages rendered from bash's help texts ("(( uttrykk ))"),
// where the pool deleted six of them.
func bracketed(tok string) bool {
	return strings.ContainsFunc(tok, func(r rune) bool {
		return unicode.In(r, unicode.Ps, unicode.Pe, unicode.Pi, unicode.Pf)
	})
}

// mapGlyphs rewrites the glyphs of s that the model maps whose odds clear
// margin, and returns the result and the least odds among the rewrites.
func (m *Model) mapGlyphs(s string, margin float64) (string, float64, bool) {
	if len(m.glyphMap) == 0 {
		return s, 0, false
	}
	var b []byte
	least := math.Inf(1)
	for i, r := range s {
		g, ok := m.glyphMap[r]
		if !ok || g.odds <= margin {
			if b != nil {
				b = utf8.AppendRune(b, r)
			}
			continue
		}
		if b == nil {
			b = append(make([]byte, 0, len(s)+4), s[:i]...)
		}
		b = utf8.AppendRune(b, g.to)
		least = math.Min(least, g.odds)
	}
	if b == nil {
		return s, 0, false
	}
	return string(b), least, true
}

// Marks returns the model's mark counts (a copy).
func (m *Model) Marks() map[string]MarkStat {
	out := make(map[string]MarkStat, len(m.marks))
	for k, v := range m.marks {
		out[k] = v
	}
	return out
}

// GlyphMap returns the glyph mappings the model makes at the given margin
// (0 means DefaultMargin): read glyph → written glyph.
func (m *Model) GlyphMap(margin float64) map[string]string {
	if margin == 0 {
		margin = DefaultMargin
	}
	out := make(map[string]string)
	for r, g := range m.glyphMap {
		if g.odds > margin {
			out[string(r)] = string(g.to)
		}
	}
	return out
}
