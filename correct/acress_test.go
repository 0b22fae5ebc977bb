package correct

import (
	"math"
	"sort"
	"testing"

	"recto/lexicon"
)

// The worked example of Kernighan, Church and Gale (1990), "A spelling
// correction program based on a noisy channel model", reused by Jurafsky
// and Martin, "Speech and Language Processing" (3rd ed. draft), appendix
// on spelling correction: the typo "acress" and its candidates within one
// edit. Word counts are from the AP newswire corpus (44 million words);
// channel probabilities are those printed in the table, one per derivation.
// All values below are quoted FROM MEMORY of that table, not re-read from
// the source.
var acressCounts = map[string]int64{
	"actress": 1343,
	"cress":   0,
	"caress":  4,
	"access":  2280,
	"across":  8436,
	"acres":   2879,
}

const acressCorpus = 44_000_000

// acressModel builds a Model whose confusions carry the table's channel
// probabilities: P(To | From) = N / N(From) with N(From) = 1e9.
func acressModel() *Model {
	const n = 1e9
	rules := []Rule{
		{From: "ct", To: "c", N: 117_000}, // actress: t deleted after c, .000117
		{From: "", To: "a", N: 1_440},     // cress: a inserted (at the start), .00000144
		{From: "ca", To: "ac", N: 1_640},  // caress: ca transposed, .00000164
		{From: "c", To: "r", N: 209},      // access: c read as r, .000000209
		{From: "o", To: "e", N: 9_300},    // across: o read as e, .0000093
		{From: "e", To: "es", N: 32_100},  // acres: s inserted after e, .0000321
		{From: "s", To: "ss", N: 34_200},  // acres: s inserted after s, .0000342
	}
	ctx := map[string]int64{}
	for _, r := range rules {
		if r.From != "" {
			ctx[r.From] = n
		}
	}
	for _, c := range "abcdefghijklmnopqrstuvwxyz" {
		ctx[string(c)] = n
	}
	return newModel(rules, ctx, n, n/5, 1)
}

func acressLexicon() *lexicon.Lexicon {
	lex := lexicon.New()
	var sum int64
	for w, n := range acressCounts {
		lex.Add(w, n)
		sum += n
	}
	// Distractors two or more edits away, and the rest of the corpus.
	for _, w := range []string{"acre", "actresses", "caressed", "accessed", "cares", "recess"} {
		lex.Add(w, 100)
		sum += 100
	}
	lex.Add("zzzz", acressCorpus-sum)
	return lex
}

func TestAcressCandidates(t *testing.T) {
	c := New(acressLexicon(), acressModel(), Config{MaxEdits: 1})
	s := c.pool.Get().(*scratch)
	defer c.pool.Put(s)
	set := map[string]bool{}
	for _, id := range c.search(s, "acress") {
		w := c.ix.words[id]
		if damerau(w, "acress") <= 1 { // the index may offer more; scoring sorts them out
			set[w] = true
		}
	}
	var got []string
	for w := range set {
		got = append(got, w)
	}
	sort.Strings(got)
	want := []string{"access", "acres", "across", "actress", "caress", "cress"}
	if len(got) != len(want) {
		t.Fatalf("candidates within one edit of %q = %v, want %v", "acress", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Fatalf("candidates within one edit of %q = %v, want %v", "acress", got, want)
		}
	}
	// The index must find every one of them (no misses), distractors aside.
	for _, w := range []string{"acre", "actresses", "caressed", "accessed"} {
		if set[w] {
			t.Errorf("%q is more than one edit from acress but was kept", w)
		}
	}
}

func TestAcressRanking(t *testing.T) {
	m := acressModel()
	c := New(acressLexicon(), m, Config{MaxEdits: 1})
	var o observed
	m.prepare(&o, "acress")
	score := map[string]float64{}
	for w := range acressCounts {
		ch, _ := m.logChannel(&o, w, nil, nil, math.Inf(-1))
		score[w] = ch + c.logUni(w)
	}
	// P(x|w)·P(w)·1e9 from the table (from memory): actress 3.69, acres 2.22
	// (the likelier of its two derivations: this model keeps the best path,
	// as Brill and Moore 2000 do), across 1.77, access .0000121... caress
	// .000164, cress .0000202 (P(cress) smoothed from a zero count).
	want := map[string]float64{"actress": 3.69, "acres": 2.22, "across": 1.77, "caress": 0.000164}
	for w, v := range want {
		got := math.Exp(score[w]) * 1e9
		if math.Abs(got-v)/v > 0.05 {
			t.Errorf("P(acress|%s)·P(%s)·1e9 = %.4g, want %.4g (±5%%)", w, w, got, v)
		}
	}
	order := []string{"actress", "acres", "across", "access", "caress", "cress"}
	for i := 1; i < len(order); i++ {
		if !(score[order[i-1]] > score[order[i]]) {
			t.Errorf("ranking: %s (%.3f) should beat %s (%.3f)", order[i-1], score[order[i-1]], order[i], score[order[i]])
		}
	}
}

// TestAcressInContext: Jurafsky and Martin go on to the sentence "... a
// stellar and versatile acress whose combination of sass and glamour ...",
// where bigrams make actress the clear winner over across. Their bigram
// estimates (from memory): P(actress|versatile) = P(across|versatile) =
// .000021, P(whose|actress) = .0010, P(whose|across) = .000006. The counts
// below reproduce those relative frequencies.
func TestAcressInContext(t *testing.T) {
	lex := lexicon.New()
	lex.Add("versatile", 1_000_000)
	lex.Add("whose", 5_000_000)
	lex.Add("actress", 1_343_000)
	lex.Add("across", 8_436_000)
	lex.Add("acres", 2_879_000)
	lex.Add("access", 2_280_000)
	lex.Add("caress", 4_000)
	lex.Add("zzzz", 44_000_000_000)
	lex.AddBigram("versatile", "actress", 21)
	lex.AddBigram("versatile", "across", 21)
	lex.AddBigram("actress", "whose", 1343)
	lex.AddBigram("across", "whose", 51)
	c := New(lex, acressModel(), Config{MaxEdits: 1, Margin: 0.5})
	out, changes := c.CorrectText("versatile acress whose")
	if out != "versatile actress whose" || len(changes) != 1 {
		t.Fatalf("got %q, %v; want actress chosen", out, changes)
	}
	// Without the right-hand context the bigram P(whose|·) cannot help.
	if out, _ := c.CorrectText("versatile acress."); out != "versatile actress." {
		t.Errorf("got %q; actress should still win on P(x|w)·P(w|versatile)", out)
	}
}

// damerau is the textbook optimal-string-alignment distance (Damerau 1964),
// the edit notion of Kernighan, Church and Gale.
func damerau(a, b string) int {
	x, y := []rune(a), []rune(b)
	d := make([][]int, len(x)+1)
	for i := range d {
		d[i] = make([]int, len(y)+1)
		d[i][0] = i
	}
	for j := range d[0] {
		d[0][j] = j
	}
	for i := 1; i <= len(x); i++ {
		for j := 1; j <= len(y); j++ {
			c := 1
			if x[i-1] == y[j-1] {
				c = 0
			}
			d[i][j] = min(d[i-1][j]+1, d[i][j-1]+1, d[i-1][j-1]+c)
			if i > 1 && j > 1 && x[i-1] == y[j-2] && x[i-2] == y[j-1] {
				d[i][j] = min(d[i][j], d[i-2][j-2]+1)
			}
		}
	}
	return d[len(x)][len(y)]
}
