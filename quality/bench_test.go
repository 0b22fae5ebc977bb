package quality

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// benchText returns n code points of word-like text (syllables and
// spaces) and a copy with round(rate·n) edits at distinct random places,
// a third each substitutions, deletions and insertions, like OCR errors
// spread over a page.
func benchText(seed uint64, n int, rate float64) (ref, hyp []rune) {
	rng := rand.New(rand.NewPCG(seed, 1))
	syll := []string{"an", "ber", "ca", "do", "el", "fin", "ga", "her", "is", "jo", "ka", "lem",
		"mo", "nor", "ou", "pa", "qui", "ro", "sa", "te", "und", "vi", "wa", "xe", "ye", "zu", "th", "ch"}
	for len(ref) < n {
		for k := 1 + rng.IntN(3); k > 0; k-- {
			ref = append(ref, []rune(syll[rng.IntN(len(syll))])...)
		}
		ref = append(ref, ' ')
	}
	ref = ref[:n]
	edits := int(rate*float64(n) + 0.5)
	at := make(map[int]int, edits) // position -> kind
	for len(at) < edits {
		at[rng.IntN(n)] = rng.IntN(3)
	}
	letters := []rune("abcdefghijklmnopqrstuvwxyz.,")
	hyp = make([]rune, 0, n+edits)
	for i, r := range ref {
		kind, ok := at[i]
		switch {
		case !ok:
			hyp = append(hyp, r)
		case kind == 0:
			s := letters[rng.IntN(len(letters))]
			for s == r {
				s = letters[rng.IntN(len(letters))]
			}
			hyp = append(hyp, s)
		case kind == 1:
		default:
			hyp = append(hyp, r, letters[rng.IntN(len(letters))])
		}
	}
	return ref, hyp
}

// startChars starts measuring CPU time; the returned function reports the
// rate in reference characters per second of wall time ("refchars/s") and,
// where the platform tells, per second of process CPU time
// ("refchars/cpu-s"), which is the fairer figure on a shared machine.
func startChars(b *testing.B, n int) func() {
	cpu0, ok := cpuTime()
	return func() {
		b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "refchars/s")
		if cpu1, ok2 := cpuTime(); ok && ok2 && cpu1 > cpu0 {
			b.ReportMetric(float64(n)*float64(b.N)/(cpu1-cpu0).Seconds(), "refchars/cpu-s")
		}
	}
}

var benchRates = []float64{0.01, 0.05, 0.20}

// BenchmarkDistance compares the wavefront distance with the textbook
// table on 3,000-character pages.
func BenchmarkDistance(b *testing.B) {
	for _, rate := range benchRates {
		ref, hyp := benchText(11, 3000, rate)
		b.Run(fmt.Sprintf("cer=%g%%/wavefront", 100*rate), func(b *testing.B) {
			var s Scratch
			b.ReportAllocs()
			done := startChars(b, len(ref))
			for b.Loop() {
				s.Distance(ref, hyp)
			}
			done()
		})
		b.Run(fmt.Sprintf("cer=%g%%/table", 100*rate), func(b *testing.B) {
			b.ReportAllocs()
			done := startChars(b, len(ref))
			for b.Loop() {
				tableDistance(ref, hyp)
			}
			done()
		})
	}
}

// BenchmarkAlign compares the alignment with traceback against the
// full-table traceback on 3,000-character pages.
func BenchmarkAlign(b *testing.B) {
	for _, rate := range benchRates {
		ref, hyp := benchText(11, 3000, rate)
		b.Run(fmt.Sprintf("cer=%g%%/wavefront", 100*rate), func(b *testing.B) {
			var s Scratch
			var ops []Op
			b.ReportAllocs()
			done := startChars(b, len(ref))
			for b.Loop() {
				ops = s.Align(ref, hyp, ops[:0])
			}
			done()
		})
		b.Run(fmt.Sprintf("cer=%g%%/table", 100*rate), func(b *testing.B) {
			b.ReportAllocs()
			done := startChars(b, len(ref))
			for b.Loop() {
				tableAlign(ref, hyp)
			}
			done()
		})
	}
}

// BenchmarkTitle1M scores a 1,000,000-character text at 1% CER (a whole
// title without page breaks), exactly, with and without traceback. The
// table would need 10¹² cells (and 8 TB for its traceback), so it is not
// run; its speed is that of BenchmarkDistance's table per cell.
func BenchmarkTitle1M(b *testing.B) {
	ref, hyp := benchText(12, 1_000_000, 0.01)
	b.Run("distance", func(b *testing.B) {
		b.ReportAllocs()
		done := startChars(b, len(ref))
		for b.Loop() {
			Distance(ref, hyp)
		}
		done()
	})
	b.Run("align", func(b *testing.B) {
		b.ReportAllocs()
		done := startChars(b, len(ref))
		for b.Loop() {
			Align(ref, hyp)
		}
		done()
	})
}
