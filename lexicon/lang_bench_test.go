package lexicon

import (
	"fmt"
	"os"
	"os/exec"
	"runtime"
	"strings"
	"testing"
)

// BenchmarkLoadNorwegian loads the Bokmål and Nynorsk lexicons that
// `recto lexicon build --lang nob/nno` wrote (lexicon.Path; set
// RECTO_LEXICONS), with their compound rules, as --lang nor does
// (ForLang: both files read side by side, through their compact forms,
// merged without copying). Targets (issue 12): under 500 ms ("ms/load")
// and under 300 MB: of heap held after the load ("MB") and of peak
// resident memory of a process that does nothing but load them
// ("peak-RSS-MB", VmHWM of /proc/self/status, Linux proc(5), read by a
// child process). The sub-benchmark text parses the lexicon files
// themselves, as every load did before the compact form.
func BenchmarkLoadNorwegian(b *testing.B) { benchLoadLang(b, "nor", "fjellgård") }

// BenchmarkLoadGerman is BenchmarkLoadNorwegian for --lang deu (the
// lexicon `recto lexicon build --lang deu` builds from hunspell-de-de and
// wngerman), with the same targets.
func BenchmarkLoadGerman(b *testing.B) { benchLoadLang(b, "deu", "haustür") }

func benchLoadLang(b *testing.B, lang, probe string) {
	for _, c := range LexiconCodes(lang) {
		if !fileExists(Path(c)) {
			b.Skipf("no %s lexicon at %s: run 'recto lexicon build --lang %s'", c, Path(c), c)
		}
	}
	b.Run("compact", func(b *testing.B) { benchForLang(b, lang, probe, true) })
	b.Run("text", func(b *testing.B) { benchForLang(b, lang, probe, false) })
}

func benchForLang(b *testing.B, lang, probe string, compact bool) {
	defer func(old bool) { useCompact = old }(useCompact)
	useCompact = compact
	if compact {
		// The compact forms are made by `recto lexicon build`, or on the
		// first load: not what is measured.
		for _, c := range LexiconCodes(lang) {
			if _, err := readCompact(CompactPath(Path(c)), mustRead(b, Path(c))); err != nil {
				if err := WriteCompact(Path(c)); err != nil {
					b.Fatal(err)
				}
			}
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
		sel, err := ForLang(lang)
		if err != nil || !sel.Complete() {
			b.Fatal(err, sel)
		}
		l := sel.Lexicon
		b.StopTimer()
		runtime.GC()
		runtime.ReadMemStats(&after)
		held = (float64(after.HeapAlloc) - float64(before.HeapAlloc)) / (1 << 20)
		if !l.Has(probe) {
			b.Fatalf("%s lexicon lacks %s", lang, probe)
		}
		runtime.KeepAlive(l)
		b.StartTimer()
	}
	b.ReportMetric(float64(b.Elapsed().Milliseconds())/float64(b.N), "ms/load")
	b.ReportMetric(held, "MB")
	b.ReportMetric(childPeakRSS(b, lang, compact), "peak-RSS-MB")
}

func mustRead(b *testing.B, path string) []byte {
	data, err := os.ReadFile(path)
	if err != nil {
		b.Fatal(err)
	}
	return data
}

// childPeakRSS runs TestHelperLoadLang in a child process and returns the
// peak resident set it reports, in MiB.
func childPeakRSS(b *testing.B, lang string, compact bool) float64 {
	cmd := exec.Command(os.Args[0], "-test.run=^TestHelperLoadLang$")
	cmd.Env = append(os.Environ(), "RECTO_HELPER_LOAD="+lang, fmt.Sprintf("RECTO_HELPER_COMPACT=%v", compact))
	out, err := cmd.CombinedOutput()
	if err != nil {
		b.Fatalf("child load: %v: %s", err, out)
	}
	_, after, ok := strings.Cut(string(out), "VmHWM:")
	var kb int64
	if _, err := fmt.Sscan(after, &kb); !ok || err != nil {
		b.Fatalf("child load: no VmHWM line in its output: %s", out)
	}
	return float64(kb) / 1024
}

// TestHelperLoadLang is the child process of the load benchmarks (the
// helper-process pattern of os/exec's own tests): with RECTO_HELPER_LOAD
// set to a --lang value it loads that language's lexicons as ForLang does
// and prints its VmHWM line; otherwise it does nothing.
func TestHelperLoadLang(t *testing.T) {
	lang := os.Getenv("RECTO_HELPER_LOAD")
	if lang == "" {
		return
	}
	useCompact = os.Getenv("RECTO_HELPER_COMPACT") == "true"
	sel, err := ForLang(lang)
	if err != nil || !sel.Complete() {
		t.Fatal(err, sel)
	}
	status, err := os.ReadFile("/proc/self/status")
	if err != nil {
		t.Fatal(err)
	}
	for _, line := range strings.Split(string(status), "\n") {
		if strings.HasPrefix(line, "VmHWM:") {
			fmt.Println(line)
		}
	}
	runtime.KeepAlive(sel)
}

// BenchmarkHasNorwegian looks words up in the --lang nor lexicon read
// through the compact forms and read from the text files: every 97th word
// of the lexicon and each with its last letter doubled (mostly not words,
// so the compound search runs), 2 look-ups per word ("ns/lookup").
func BenchmarkHasNorwegian(b *testing.B) {
	for _, c := range LexiconCodes("nor") {
		if !fileExists(Path(c)) {
			b.Skipf("no %s lexicon at %s: run 'recto lexicon build --lang %s'", c, Path(c), c)
		}
	}
	for _, compact := range []bool{true, false} {
		name := map[bool]string{true: "compact", false: "text"}[compact]
		b.Run(name, func(b *testing.B) {
			defer func(old bool) { useCompact = old }(useCompact)
			useCompact = compact
			loaded.Clear()
			merged.Clear()
			sel, err := ForLang("nor")
			if err != nil || !sel.Complete() {
				b.Fatal(err, sel)
			}
			l := sel.Lexicon
			var words []string
			for i, w := range l.Words() {
				if i%97 == 0 {
					words = append(words, w, w+w[len(w)-1:])
				}
			}
			for i := 0; i < len(words); i += 2 { // the words it lists, it must find
				if !l.Has(words[i]) {
					b.Fatalf("the lexicon lists %q and does not find it", words[i])
				}
			}
			hits := 0
			b.ResetTimer()
			for b.Loop() {
				for _, w := range words {
					if l.Has(w) {
						hits++
					}
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(words)), "ns/lookup")
			loaded.Clear()
			merged.Clear()
		})
	}
}
