package lexicon

import (
	"runtime"
	"testing"
)

// BenchmarkLoadNorwegian loads the Bokmål and Nynorsk lexicons that
// `recto lexicon build --lang nob/nno` wrote (lexicon.Path; set
// RECTO_LEXICONS), with their compound rules, as --lang nor does
// (ForLang: both files read side by side, merged without copying). Targets (issue 12): under 500 ms ("ms/load") and under 300 MB of
// heap held ("MB").
func BenchmarkLoadNorwegian(b *testing.B) {
	for _, c := range []string{"nob", "nno"} {
		if !fileExists(Path(c)) {
			b.Skipf("no %s lexicon at %s: run 'recto lexicon build --lang %s'", c, Path(c), c)
		}
	}
	var held float64
	for b.Loop() {
		b.StopTimer()
		loaded.Clear() // read the files again each time
		merged.Clear()
		runtime.GC()
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		b.StartTimer()
		sel, err := ForLang("nor")
		if err != nil || !sel.Complete() {
			b.Fatal(err, sel)
		}
		l := sel.Lexicon
		b.StopTimer()
		runtime.GC()
		runtime.ReadMemStats(&after)
		held = (float64(after.HeapAlloc) - float64(before.HeapAlloc)) / (1 << 20)
		if !l.Has("fjellgård") {
			b.Fatal("merged Norwegian lexicon lacks fjellgård")
		}
		runtime.KeepAlive(l)
		b.StartTimer()
	}
	b.ReportMetric(float64(b.Elapsed().Milliseconds())/float64(b.N), "ms/load")
	b.ReportMetric(held, "MB")
}
