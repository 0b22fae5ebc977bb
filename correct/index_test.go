package correct

import (
	"slices"
	"testing"

	"github.com/sajari/fuzzy"

	"recto/lexicon"
)

// TestIndexFindsAllWithinTwo checks the deletion index against an obvious
// slow search: every word of a lexicon within Damerau distance 1 of a token
// (2 for tokens and words of five letters or more) must be found.
func TestIndexFindsAllWithinTwo(t *testing.T) {
	lex := lexicon.New()
	words := []string{"whale", "whales", "whaler", "while", "whole", "wheel", "shale", "hale", "ale",
		"modern", "modem", "moder", "madden", "the", "then", "than", "tho", "he", "she", "harpoon", "harpoons"}
	for _, w := range words {
		lex.Add(w, 1)
	}
	c := New(lex, acressModel(), Config{})
	s := c.pool.Get().(*scratch)
	defer c.pool.Put(s)
	for _, q := range []string{"whale", "wha1e", "vvhale", "rnodern", "modrn", "th", "tbe", "harpon", "hwale", "shhale"} {
		var got []string
		for _, id := range c.search(s, q) {
			got = append(got, c.ix.words[id])
		}
		for _, w := range words {
			limit := 1
			if runeLen(q) >= longWord && runeLen(w) >= longWord {
				limit = 2
			}
			if damerau(q, w) <= limit && damerau(q, w) <= c.edits && !slices.Contains(got, w) {
				t.Errorf("search(%q) = %v misses %q (distance %d)", q, got, w, damerau(q, w))
			}
		}
	}
}

// BenchmarkCandidates compares our deletion index with github.com/sajari/fuzzy
// (depth 2) on the same lexicon and tokens: candidate lookup only.
func BenchmarkCandidates(b *testing.B) {
	lex := lexicon.Default()
	queries := []string{"tbe", "wbale", "rnodern", "harpooneer", "constituticnal", "knowiedge", "iong", "tnese", "piace", "bedfeliow"}
	b.Run("deletion-index", func(b *testing.B) {
		c := New(lex, nil, Config{})
		s := c.pool.Get().(*scratch)
		b.ReportAllocs()
		for b.Loop() {
			for _, q := range queries {
				c.search(s, q)
			}
		}
		b.ReportMetric(float64(len(queries)*b.N)/b.Elapsed().Seconds(), "lookups/s")
	})
	b.Run("sajari-fuzzy", func(b *testing.B) {
		m := fuzzy.NewModel()
		m.SetDepth(2)
		m.SetThreshold(1)
		var ws []string
		for _, w := range lex.Words() {
			if indexable(w) {
				ws = append(ws, w)
			}
		}
		m.Train(ws)
		b.ReportAllocs()
		b.ResetTimer()
		for b.Loop() {
			for _, q := range queries {
				m.Suggestions(q, true)
			}
		}
		b.ReportMetric(float64(len(queries)*b.N)/b.Elapsed().Seconds(), "lookups/s")
	})
}
