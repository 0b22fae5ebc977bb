package correct

import (
	"math/rand/v2"
	"path/filepath"
	"strings"
	"testing"

	"recto/lexicon"
)

// BenchmarkCorrectNorwegian corrects pages of Bokmål running text with the
// Norwegian lexicons as --lang nor loads them (lexicon.ForLang: Bokmål and
// Nynorsk with their compounding rules; build them with 'recto lexicon
// build --lang nob' and '--lang nno', or point RECTO_LEXICONS at a folder
// holding them). The text is the held-out catalog of the nob recipe
// (bash's Bokmål help texts, counted into no lexicon), as clean pages and
// as copies with one word in twelve given a classic OCR confusion (rn for
// m, c for e, 1 for l, li for h; common practice). Target (issue 12): at
// least 30,000 tokens per second on one core (run with -cpu 1; see
// "tokens/cpu-s" on a shared machine).
func BenchmarkCorrectNorwegian(b *testing.B) {
	sel, err := lexicon.ForLang("nor")
	if err != nil {
		b.Fatal(err)
	}
	if !sel.Complete() {
		b.Skipf("no Norwegian lexicons in %s: run 'recto lexicon build --lang nob' and '--lang nno'", lexicon.Dir())
	}
	r := lexicon.Recipes["nob"]
	var text []string
	for _, h := range r.Catalogs.HeldOut {
		msgs, err := lexicon.ReadCatalog(filepath.Join(r.Catalogs.Dir, h))
		if err != nil {
			b.Fatal(err)
		}
		for _, m := range msgs {
			text = append(text, strings.Fields(m)...)
		}
	}
	if len(text) < 3000 {
		b.Fatalf("%d words of held-out Bokmål text, want 3,000 or more", len(text))
	}
	confuse := strings.NewReplacer("m", "rn", "e", "c", "l", "1", "h", "li")
	rng := rand.New(rand.NewPCG(1, 2))
	var pages []string
	tokens := 0
	for i := 0; i+300 <= len(text) && len(pages) < 20; i += 300 {
		clean := text[i : i+300]
		dirty := make([]string, len(clean))
		for j, w := range clean {
			dirty[j] = w
			if rng.IntN(12) == 0 {
				dirty[j] = confuse.Replace(w)
			}
		}
		pages = append(pages, strings.Join(clean, " "), strings.Join(dirty, " "))
		tokens += 600
	}
	c := New(sel.Lexicon, nil, Config{})
	c.CorrectText(pages[0]) // build the index outside the timing
	b.ReportAllocs()
	cpu0 := cpuTime()
	b.ResetTimer()
	for b.Loop() {
		for _, p := range pages {
			c.CorrectText(p)
		}
	}
	b.StopTimer()
	n := float64(tokens) * float64(b.N)
	b.ReportMetric(n/b.Elapsed().Seconds(), "tokens/s")
	if cpu := cpuTime() - cpu0; cpu > 0 {
		b.ReportMetric(n/cpu.Seconds(), "tokens/cpu-s")
	}
}
