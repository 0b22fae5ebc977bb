package correct

import "math"

// MergeModels returns the model of the two models' training pages taken
// together: rule counts, reference characters, words, pairs and the
// token-level counts (stray marks, glyphs) are added. N(From), the count
// of a rule's From in the reference text, is added too where both models
// hold it; where one model has no rule with that From it did not keep its
// count, and it is estimated from that model's text size, N(From) × its
// characters / the other's characters (the From is taken to be as common in
// both texts). Single characters are counted by every model, so one-
// character confusions merge exactly. Merging lets a model trained on new
// pages (other fonts, other texts) join an existing one whose pages are
// not at hand.
func MergeModels(a, b *Model) *Model {
	counts := map[[2]string]int64{}
	for _, m := range []*Model{a, b} {
		for _, r := range m.rules {
			counts[[2]string{r.From, r.To}] += r.N
		}
	}
	ctx := map[string]int64{}
	estimate := func(from string, m, other *Model) int64 {
		if n, ok := m.context[from]; ok {
			return n
		}
		if n, ok := other.context[from]; ok && other.chars > 0 {
			return int64(math.Round(float64(n) * float64(m.chars) / float64(other.chars)))
		}
		return 0
	}
	for _, m := range []*Model{a, b} {
		for from := range m.context {
			if _, done := ctx[from]; !done && from != "" {
				ctx[from] = estimate(from, a, b) + estimate(from, b, a)
			}
		}
	}
	var rules []Rule
	for k, n := range counts {
		if k[0] != "" && ctx[k[0]] < n {
			ctx[k[0]] = n // an estimate below the count seen: keep the model consistent
		}
		rules = append(rules, Rule{From: k[0], To: k[1], N: n})
	}
	m := newModel(rules, ctx, a.chars+b.chars, a.words+b.words, a.pairs+b.pairs)
	marks := map[string]MarkStat{}
	for _, x := range []*Model{a, b} {
		for k, v := range x.marks {
			s := marks[k]
			s.N += v.N
			s.Kept += v.Kept
			marks[k] = s
		}
	}
	glyphs := map[[2]rune]int64{}
	for _, x := range []*Model{a, b} {
		for _, g := range x.glyphs {
			var k [2]rune
			for _, r := range g.Read {
				k[0] = r
			}
			for _, r := range g.Truth {
				k[1] = r
			}
			glyphs[k] += g.N
		}
	}
	m.withTokens(marks, glyphStats(glyphs))
	return m
}
