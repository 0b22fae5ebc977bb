package quality

import (
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/agnivade/levenshtein"
	"golang.org/x/text/unicode/norm"
)

// TestDistanceWorkedExamples checks published worked examples of the
// Levenshtein distance (unit costs for substitution, insertion, deletion).
func TestDistanceWorkedExamples(t *testing.T) {
	tests := []struct {
		name, a, b string
		want       int
		source     string
	}{
		// kitten → sitten → sittin → sitting: the classic example
		// (Levenshtein 1966 definition; worked in Wikipedia's "Levenshtein
		// distance" and in most textbooks; value from memory).
		{"kitten", "kitten", "sitting", 3, "textbook example"},
		// Jurafsky and Martin, "Speech and Language Processing" (3rd ed.
		// draft, 2023), ch. 2 "Minimum Edit Distance": intention → execution
		// costs 5 with unit costs (8 when a substitution costs 2); from memory.
		{"intention", "intention", "execution", 5, "Jurafsky & Martin ch. 2"},
		// Wikipedia "Levenshtein distance": Saturday/Sunday = 3 (from memory).
		{"saturday", "Saturday", "Sunday", 3, "Wikipedia"},
		// Wagner and Fischer 1974 boundary cases: against the empty string the
		// distance is the other length.
		{"empty a", "", "abc", 3, "Wagner & Fischer 1974"},
		{"empty b", "abc", "", 3, "Wagner & Fischer 1974"},
		{"both empty", "", "", 0, "definition"},
		// Code points, not bytes: one substitution of a two-byte letter and
		// one of an astral character (common practice for CER).
		{"accent", "café", "cafe", 1, "definition over code points"},
		{"astral", "a𝔄b", "a𝔅b", 1, "definition over code points"},
	}
	var s Scratch
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			a, b := []rune(tt.a), []rune(tt.b)
			if got := s.Distance(a, b); got != tt.want {
				t.Errorf("Distance(%q, %q) = %d, want %d (%s)", tt.a, tt.b, got, tt.want, tt.source)
			}
			if got := tableDistance(a, b); got != tt.want {
				t.Errorf("tableDistance(%q, %q) = %d, want %d (%s)", tt.a, tt.b, got, tt.want, tt.source)
			}
			checkOps(t, a, b, Align(a, b), tt.want)
		})
	}
}

// TestCompareWorkedExamples checks the CER and WER definitions on worked
// examples.
func TestCompareWorkedExamples(t *testing.T) {
	// Jurafsky and Martin, "Speech and Language Processing" (3rd ed. draft),
	// ch. 16 "Automatic Speech Recognition and Text-to-Speech", §16.5: the
	// reference "i um the phone is i left the portable phone upstairs last
	// night" (13 words) against the hypothesis "i got it to the fullest i
	// love to portable form of stores last night" has 6 substitutions,
	// 3 insertions and 1 deletion: WER = 10/13 = 76.9%. From memory.
	ref := "i um the phone is i left the portable phone upstairs last night"
	hyp := "i got it to the fullest i love to portable form of stores last night"
	c := Compare(ref, hyp, NormOptions{})
	if c.Words != 13 || c.WordErrors != 10 {
		t.Errorf("J&M WER example: %d word errors over %d words, want 10 over 13", c.WordErrors, c.Words)
	}
	if w, ok := c.WER(); !ok || w < 0.769 || w > 0.7693 {
		t.Errorf("J&M WER example: WER = %v, %v, want 0.769", w, ok)
	}

	// CER = (S+D+I)/N over characters (common practice; e.g. the ICDAR
	// and OCR-D definitions). "kitten" → "sitting": 3 edits over 6.
	c = Compare("kitten", "sitting", NormOptions{})
	if cer, ok := c.CER(); !ok || c.CharErrors != 3 || c.Chars != 6 || cer != 0.5 {
		t.Errorf("kitten/sitting: %+v, CER %v", c, cer)
	}
	// CER may exceed 1 when the hypothesis is longer (definition).
	c = Compare("ab", "xyzw", NormOptions{})
	if cer, _ := c.CER(); cer != 2 {
		t.Errorf("CER(ab, xyzw) = %v, want 2", cer)
	}
	// An empty reference has no CER.
	if _, ok := Compare("", "x", NormOptions{}).CER(); ok {
		t.Error("CER of an empty reference reported as defined")
	}
}

// randomText draws a string mixing ASCII, Latin letters with combining
// marks, Greek, CJK and astral characters.
func randomText(rng *rand.Rand, n int) string {
	pool := []string{"a", "b", "e", "r", "n", "m", " ", ".", "é", "e\u0301", "\u0301", "\u0308",
		"ß", "ſ", "ﬁ", "Ω", "語", "𝔄", "𝔅", "😀", "👍🏽", "\u200d"}
	var b strings.Builder
	for range n {
		b.WriteString(pool[rng.IntN(len(pool))])
	}
	return b.String()
}

// mutate applies about rate·len random edits to s, drawing from the same
// pool as randomText.
func mutate(rng *rand.Rand, s string, rate float64) string {
	in := []rune(s)
	extra := []rune(randomText(rng, 4))
	var out []rune
	for _, r := range in {
		if rng.Float64() >= rate {
			out = append(out, r)
			continue
		}
		switch rng.IntN(3) {
		case 0:
			out = append(out, extra[rng.IntN(len(extra))])
		case 1:
		case 2:
			out = append(out, r, extra[rng.IntN(len(extra))])
		}
	}
	return string(out)
}

// TestDistanceAgainstAgnivade checks Distance against a general-purpose
// library, github.com/agnivade/levenshtein v1.2.2 (counts runes), on
// thousands of random pairs with astral characters and combining marks.
func TestDistanceAgainstAgnivade(t *testing.T) {
	seed := uint64(20261201)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, seed))
	var s Scratch
	pairs := 5000
	if testing.Short() {
		pairs = 1000
	}
	for i := range pairs {
		a := randomText(rng, rng.IntN(80))
		var b string
		if i%3 == 0 {
			b = randomText(rng, rng.IntN(80))
		} else {
			b = mutate(rng, a, []float64{0.01, 0.05, 0.2, 0.5}[rng.IntN(4)])
		}
		want := levenshtein.ComputeDistance(a, b)
		ra, rb := []rune(a), []rune(b)
		if got := s.Distance(ra, rb); got != want {
			t.Fatalf("Distance(%q, %q) = %d, agnivade says %d", a, b, got, want)
		}
		if i%5 == 0 {
			checkOps(t, ra, rb, s.Align(ra, rb, nil), want)
		}
	}
}

// TestNFCAndNFDScoreZero: canonically equivalent spellings (Unicode
// Standard Annex #15, "Unicode Normalization Forms") score 0.
func TestNFCAndNFDScoreZero(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	texts := []string{"café crème", "Ångström Zoë", "Việt Nam", "ḍḥṣ", "한국어"}
	for range 200 {
		texts = append(texts, randomText(rng, 30))
	}
	for _, s := range texts {
		nfc, nfd := norm.NFC.String(s), norm.NFD.String(s)
		c := Compare(nfc, nfd, NormOptions{})
		if c.CharErrors != 0 || c.WordErrors != 0 {
			t.Errorf("Compare(NFC %q, NFD %q) = %+v, want no errors", nfc, nfd, c)
		}
		if nfc != nfd && tableDistance([]rune(nfc), []rune(nfd)) == 0 {
			t.Errorf("test data: %q has equal NFC and NFD runes", s)
		}
	}
}

// TestAlignLongDivideAndConquer exercises the divide-and-conquer path on
// inputs long enough to need it and checks the result against the table.
func TestAlignLongDivideAndConquer(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	n := 4000
	if testing.Short() {
		n = 2500 // still over storedMax at this seed (1,500 gave 429, under it)
	}
	a, b := randomPair(rng, []rune("etaoinshrdlu ,."), n, 0.3)
	want := tableDistance(a, b)
	if want <= storedMax {
		t.Fatalf("test data: distance %d does not force a split (> %d)", want, storedMax)
	}
	if got := Distance(a, b); got != want {
		t.Fatalf("Distance = %d, want %d", got, want)
	}
	checkOps(t, a, b, Align(a, b), want)
}

// TestDistanceAllocs pins zero allocations on warmed scratch (common
// practice, as golang.org/x/text/runes pins its transformers).
func TestDistanceAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	a, b := randomPair(rng, []rune("etaoinshrdlu "), 3000, 0.05)
	var s Scratch
	s.Distance(a, b)
	if n := testing.AllocsPerRun(20, func() { s.Distance(a, b) }); n != 0 {
		t.Errorf("Scratch.Distance allocates %v times per run, want 0", n)
	}
	var ops []Op
	ops = s.Align(a, b, ops[:0])
	if n := testing.AllocsPerRun(20, func() { ops = s.Align(a, b, ops[:0]) }); n != 0 {
		t.Errorf("Scratch.Align allocates %v times per run on warmed scratch, want 0", n)
	}
}

// FuzzAlign checks the metric properties of the distance (Levenshtein
// 1966; Wagner and Fischer 1974) and the alignment against each other and
// against the table: no panic; symmetric; 0 only for equal strings; at
// least the length difference and at most the longer length; Align's ops
// rebuild both strings and cost exactly Distance.
func FuzzAlign(f *testing.F) {
	f.Add("kitten", "sitting")
	f.Add("intention", "execution")
	f.Add("modern", "rnodern")
	f.Add("cafe\u0301", "café")
	f.Add("", "𝔄b")
	f.Add("aaaa", "")
	f.Fuzz(func(t *testing.T, x, y string) {
		a, b := []rune(x), []rune(y)
		if len(a) > 2000 || len(b) > 2000 {
			return
		}
		var s Scratch
		d := s.Distance(a, b)
		if d2 := s.Distance(b, a); d2 != d {
			t.Fatalf("Distance not symmetric: %d vs %d for %q, %q", d, d2, x, y)
		}
		if (d == 0) != (string(a) == string(b)) {
			t.Fatalf("Distance(%q, %q) = %d", x, y, d)
		}
		lo, hi := len(a)-len(b), max(len(a), len(b))
		if lo < 0 {
			lo = -lo
		}
		if d < lo || d > hi {
			t.Fatalf("Distance(%q, %q) = %d, outside [%d, %d]", x, y, d, lo, hi)
		}
		if len(a)*len(b) <= 250000 {
			if want := tableDistance(a, b); d != want {
				t.Fatalf("Distance(%q, %q) = %d, table says %d", x, y, d, want)
			}
		}
		checkOps(t, a, b, s.Align(a, b, nil), d)
		al := aligner{limit: 1}
		checkOps(t, a, b, al.align(a, b, nil), d)
	})
}
