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
				i, j, df, db, _ := al.split(a, b, 1<<30)
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

// TestBitDistanceAgainstTable checks the bit-vector method on its own,
// across block boundaries (64 rows) and with non-ASCII symbols.
func TestBitDistanceAgainstTable(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 9))
	alphabets := [][]rune{[]rune("ab"), []rune("abcde é𝔄"), []rune("etaoinshrdlu ,.")}
	var s Scratch
	for it := range 800 {
		n := rng.IntN(200)
		a, b := randomPair(rng, alphabets[it%3], n, []float64{0, 0.1, 0.5, 1}[it%4])
		if it%5 == 0 {
			a, b = b, a
		}
		if want, got := tableDistance(a, b), s.bv.distance(a, b); got != want {
			t.Fatalf("bitDistance(%q, %q) = %d, want %d", string(a), string(b), got, want)
		}
		if len(b) > 0 {
			mid := rng.IntN(len(b) + 1)
			col := s.bv.column(a, b[:mid])
			want := tableColumn(a, b[:mid])
			for i := range col {
				if int(col[i]) != want[i] {
					t.Fatalf("column(%q, %q)[%d] = %d, want %d", string(a), string(b[:mid]), i, col[i], want[i])
				}
			}
		}
	}
}

// tableColumn returns D(i, len(b)) for i = 0..len(a) by the textbook table.
func tableColumn(a, b []rune) []int {
	row := make([]int, len(b)+1)
	for j := range row {
		row[j] = j
	}
	col := []int{len(b)}
	for i := 1; i <= len(a); i++ {
		diag := row[0]
		row[0] = i
		for j := 1; j <= len(b); j++ {
			up := row[j]
			c := diag
			if a[i-1] != b[j-1] {
				c++
			}
			row[j] = min(c, up+1, row[j-1]+1)
			diag = up
		}
		col = append(col, row[len(b)])
	}
	return col
}

// TestBitSplit checks Hirschberg's split with bit-vector columns against
// the table on random pairs, and the alignment that uses it throughout.
func TestBitSplit(t *testing.T) {
	rng := rand.New(rand.NewPCG(10, 11))
	alphabets := [][]rune{[]rune("ab"), []rune("abcde é𝔄"), []rune("etaoinshrdlu ,.")}
	for it := range 600 {
		a, b := randomPair(rng, alphabets[it%3], 2+rng.IntN(150), []float64{0.05, 0.3, 1}[it%3])
		if len(b) < 2 {
			continue
		}
		var al aligner
		want := tableDistance(a, b)
		i, j, df, db := al.bitSplit(a, b)
		if df+db != want || tableDistance(a[:i], b[:j]) != df || tableDistance(a[i:], b[j:]) != db {
			t.Fatalf("bitSplit(%q, %q) = %d,%d,%d,%d; distance %d", string(a), string(b), i, j, df, db, want)
		}
		// limit 1 and no wavefront split: every level splits by columns
		al = aligner{limit: 1, noWaveSplit: true}
		checkOps(t, a, b, al.align(a, b, nil), want)
	}
}

// TestBagBound: the bag distance never exceeds the edit distance
// (Bartolini, Ciaccia and Patella 2002).
func TestBagBound(t *testing.T) {
	rng := rand.New(rand.NewPCG(12, 13))
	var c bagCounter
	for it := range 2000 {
		a, b := randomPair(rng, []rune("abcé𝔄 "), rng.IntN(60), []float64{0.1, 0.5, 1}[it%3])
		if lb, d := c.bound(a, b), tableDistance(a, b); lb > d {
			t.Fatalf("bag bound %d > distance %d for %q, %q", lb, d, string(a), string(b))
		}
	}
	if got := c.bound([]rune("abc"), []rune("xbcd")); got != 2 {
		t.Errorf("bound(abc, xbcd) = %d, want 2", got)
	}
}

// TestDensePath runs Distance and the alignment split on byte-encoded
// texts (normally only for long ones) against the table, and checks the
// fallback when a pair has more than 256 distinct symbols.
func TestDensePath(t *testing.T) {
	saved := denseMin
	denseMin = 0
	t.Cleanup(func() { denseMin = saved })
	rng := rand.New(rand.NewPCG(14, 15))
	wide := make([]rune, 300)
	for i := range wide {
		wide[i] = rune(0x4E00 + i) // 300 distinct CJK ideographs
	}
	alphabets := [][]rune{[]rune("ab"), []rune("abcde é𝔄"), wide}
	var s Scratch
	for it := range 900 {
		alpha := alphabets[it%3]
		a, b := randomPair(rng, alpha, rng.IntN(120), []float64{0.05, 0.3, 1}[it%3])
		if it%3 == 2 {
			a = append(a, wide...) // force more than 256 symbols
		}
		want := tableDistance(a, b)
		if got := s.Distance(a, b); got != want {
			t.Fatalf("Distance(%q, %q) = %d, want %d", string(a), string(b), got, want)
		}
		al := aligner{limit: 1}
		checkOps(t, a, b, al.align(a, b, nil), want)
	}
	var c denseCoder
	if _, _, ok := c.encode(wide, nil); ok {
		t.Error("300 distinct symbols encoded as bytes")
	}
	da, db, ok := c.encode([]rune("aé𝔄"), []rune("𝔄a"))
	if !ok || string(da) != "\x00\x01\x02" || string(db) != "\x02\x00" {
		t.Errorf("encode = %q, %q, %v", da, db, ok)
	}
}
