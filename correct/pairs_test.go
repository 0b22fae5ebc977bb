package correct

import (
	"fmt"
	"testing"

	"recto/lexicon"
)

// TestPairFilter checks the word-pair Bloom filter against the lexicon it
// was built from: a Bloom filter never answers "absent" for a member
// (Bloom 1970, "Space/time trade-offs in hash coding with allowable
// errors"), so every stored pair, asked for in any case or Unicode form,
// must be let through; and pairs never stored are mostly refused.
func TestPairFilter(t *testing.T) {
	lex := lexicon.New()
	var pairs [][2]string
	for i := range 5000 {
		a, b := fmt.Sprintf("Word%d", i), fmt.Sprintf("zeile%dé", i*7)
		lex.Add(a, 1)
		lex.Add(b, 1)
		lex.AddBigram(a, b, int64(1+i%3))
		pairs = append(pairs, [2]string{a, b})
	}
	// "Cafe\u0301" is "Café" decomposed: Key composes it (NFC).
	lex.AddBigram("Cafe\u0301", "NOIR", 2)
	pairs = append(pairs, [2]string{"CAFÉ", "noir"})
	f := buildPairFilter(lex)
	for _, p := range pairs {
		if !f.mayHave(lexicon.Key(p[0]), lexicon.Key(p[1])) {
			t.Fatalf("stored pair %q %q refused", p[0], p[1])
		}
		if lex.Bigram(p[0], p[1]) == 0 {
			t.Fatalf("pair %q %q not in the lexicon", p[0], p[1])
		}
	}
	fp := 0
	const n = 20000
	for i := range n {
		if f.mayHave(fmt.Sprintf("word%d", i), fmt.Sprintf("zeile%dé", i*7+1)) {
			fp++
		}
	}
	// 5,001 pairs in 2^22 bits with two probes: about 6e-6 expected.
	if fp > n/100 {
		t.Errorf("%d of %d unseen pairs let through", fp, n)
	}
}
