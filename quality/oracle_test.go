package quality

import (
	"math/rand/v2"
	"testing"
)

// randomPair returns a reference over alphabet and a copy with about rate
// of its symbols edited.
func randomPair(rng *rand.Rand, alphabet []rune, n int, rate float64) ([]rune, []rune) {
	a := make([]rune, n)
	for i := range a {
		a[i] = alphabet[rng.IntN(len(alphabet))]
	}
	var b []rune
	for _, r := range a {
		if rng.Float64() >= rate {
			b = append(b, r)
			continue
		}
		switch rng.IntN(3) {
		case 0:
			b = append(b, alphabet[rng.IntN(len(alphabet))])
		case 1:
		case 2:
			b = append(b, r, alphabet[rng.IntN(len(alphabet))])
		}
	}
	return a, b
}

// TestDistanceAgainstTable checks the wavefront distance and alignment
// against the textbook table (Wagner and Fischer 1974) on random pairs.
func TestDistanceAgainstTable(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	alphabets := [][]rune{[]rune("ab"), []rune("abcde "), []rune("etaoinshrdlu ,.")}
	var s Scratch
	for it := range 3000 {
		alpha := alphabets[it%len(alphabets)]
		n := rng.IntN(60)
		rate := []float64{0, 0.05, 0.2, 0.6, 1}[rng.IntN(5)]
		a, b := randomPair(rng, alpha, n, rate)
		if rng.IntN(4) == 0 {
			b = b[:rng.IntN(len(b)+1)]
		}
		want := tableDistance(a, b)
		if got := s.Distance(a, b); got != want {
			t.Fatalf("Distance(%q, %q) = %d, want %d", string(a), string(b), got, want)
		}
		ops := s.Align(a, b, nil)
		checkOps(t, a, b, ops, want)
		// force the divide-and-conquer path on small inputs
		al := aligner{limit: 1 + it%3}
		if want > 0 && len(a) > 0 && len(b) > 0 {
			checkOps(t, a, b, al.align(a, b, nil), want)
			if want > 1 {
				i, j, df, db := al.split(a, b)
				if df+db != want || tableDistance(a[:i], b[:j]) != df || tableDistance(a[i:], b[j:]) != db {
					t.Fatalf("split(%q, %q) = %d,%d,%d,%d; distance %d", string(a), string(b), i, j, df, db, want)
				}
			}
		}
	}
}

func checkOps(t testing.TB, a, b []rune, ops []Op, want int) {
	t.Helper()
	var ra, rb []rune
	for _, op := range ops {
		switch op.Kind {
		case OpMatch:
			if op.R != op.H {
				t.Fatalf("match op %q/%q differs", op.R, op.H)
			}
			ra, rb = append(ra, op.R), append(rb, op.H)
		case OpSub:
			if op.R == op.H {
				t.Fatalf("substitution of equal symbols %q", op.R)
			}
			ra, rb = append(ra, op.R), append(rb, op.H)
		case OpDel:
			ra = append(ra, op.R)
		case OpIns:
			rb = append(rb, op.H)
		}
	}
	if string(ra) != string(a) || string(rb) != string(b) {
		t.Fatalf("ops rebuild %q/%q, want %q/%q", string(ra), string(rb), string(a), string(b))
	}
	if c := Cost(ops); c != want {
		t.Fatalf("alignment of %q/%q costs %d, want %d", string(a), string(b), c, want)
	}
}
