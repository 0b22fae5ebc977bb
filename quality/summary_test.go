package quality

import (
	"math"
	"testing"
)

func TestGroupConfusions(t *testing.T) {
	tests := []struct {
		ref, hyp string
		want     []string
	}{
		// Grouping adjacent edits (common practice in OCR error analysis).
		{"modern", "rnodern", []string{"m→rn"}},
		{"the", "tbe", []string{"h→b"}},
		{"end.", "end", []string{".→∅"}},
		{"end", "end.", []string{"∅→."}},
		{"a cat", "acat", []string{"␣→∅"}},
		{"same", "same", nil},
		{"clear", "dear", []string{"cl→d"}},
		// "tin" → "tirn" is one insertion (the n still matches), not n→rn.
		{"tin mill", "tirn rnill", []string{"∅→r", "m→rn"}},
	}
	for _, tt := range tests {
		var got []string
		for _, c := range Group(Align([]rune(tt.ref), []rune(tt.hyp))) {
			got = append(got, c.String())
		}
		if len(got) != len(tt.want) {
			t.Errorf("Group(%q→%q) = %q, want %q", tt.ref, tt.hyp, got, tt.want)
			continue
		}
		for i := range got {
			if got[i] != tt.want[i] {
				t.Errorf("Group(%q→%q) = %q, want %q", tt.ref, tt.hyp, got, tt.want)
			}
		}
	}
}

func TestTopConfusions(t *testing.T) {
	counts := map[Confusion]int{{"m", "rn"}: 5, {"e", "c"}: 5, {"l", "1"}: 2, {"", "."}: 7}
	got := TopConfusions(counts, 3)
	want := []string{"∅→.", "e→c", "m→rn"}
	if len(got) != 3 {
		t.Fatalf("TopConfusions = %v", got)
	}
	for i, c := range got {
		if c.String() != want[i] {
			t.Errorf("TopConfusions[%d] = %v, want %s", i, c, want[i])
		}
	}
}

func TestMeanAndBootstrap(t *testing.T) {
	pages := []Counts{{Chars: 100, CharErrors: 1}, {Chars: 200, CharErrors: 10}, {Chars: 0, CharErrors: 3}, {Chars: 50, CharErrors: 5}}
	mean, ok := MeanCER(pages)
	// (0.01 + 0.05 + 0.10) / 3: the empty page has no CER and is left out.
	if !ok || math.Abs(mean-0.16/3) > 1e-12 {
		t.Errorf("MeanCER = %v, %v", mean, ok)
	}
	lo, hi, ok := BootstrapCER(pages, 0, 0)
	lo2, hi2, _ := BootstrapCER(pages, DefaultResamples, DefaultSeed)
	if !ok || lo != lo2 || hi != hi2 {
		t.Errorf("defaults differ from DefaultResamples/DefaultSeed: %v %v vs %v %v", lo, hi, lo2, hi2)
	}
	// The percentile interval lies within the range of possible resample
	// rates (each between the best and worst page's CER, counting the
	// empty-reference page's errors) and is repeatable with the seed.
	if lo > hi || lo < 0.01 || hi > 0.1+3.0/50 {
		t.Errorf("interval [%v, %v] out of range", lo, hi)
	}
	micro := 19.0 / 350
	if micro < lo || micro > hi {
		t.Errorf("interval [%v, %v] does not hold the sample's own rate %v", lo, hi, micro)
	}
	if lo3, hi3, _ := BootstrapCER(pages, 0, 99); lo3 == lo && hi3 == hi {
		t.Log("another seed gave the same interval (possible with few pages)")
	}
	// Identical pages: every resample has the same rate.
	same := []Counts{{Chars: 10, CharErrors: 1}, {Chars: 10, CharErrors: 1}}
	if lo, hi, ok := BootstrapCER(same, 0, 0); !ok || lo != 0.1 || hi != 0.1 {
		t.Errorf("identical pages: [%v, %v] %v, want [0.1, 0.1]", lo, hi, ok)
	}
	if _, _, ok := BootstrapCER([]Counts{{Chars: 0, CharErrors: 2}}, 0, 0); ok {
		t.Error("interval reported for a title without reference text")
	}
	if _, _, ok := BootstrapCER(nil, 0, 0); ok {
		t.Error("interval reported for no pages")
	}
}

// TestNearestRank checks the nearest-rank percentile on the worked example
// of Wikipedia's "Percentile" article (from memory): for 15, 20, 35, 40,
// 50 the 30th percentile is 20, the 40th 20, the 50th 35 and the 100th 50.
func TestNearestRank(t *testing.T) {
	v := []float64{15, 20, 35, 40, 50}
	for _, tt := range []struct {
		permille int
		want     float64
	}{{300, 20}, {400, 20}, {500, 35}, {1000, 50}, {25, 15}} {
		if got := nearestRank(v, tt.permille); got != tt.want {
			t.Errorf("nearestRank(%v‰) = %v, want %v", tt.permille, got, tt.want)
		}
	}
}
