package quality

import (
	"strings"
	"testing"
	"unicode/utf8"

	"recto/lexicon"
	"recto/ocr"
)

// BenchmarkPageFeatures measures feature extraction and triage of a page of
// about 400 words ("pages/s").
func BenchmarkPageFeatures(b *testing.B) {
	words := strings.Fields(strings.Repeat("The harbour master of Vellmark kept a ledger of every ship, w1th tbe n@rne of her master. ", 25))
	rec := &ocr.Record{Width: 2480, Height: 3508, DPI: 300}
	for i, w := range words {
		rec.Words = append(rec.Words, ocr.Word{Text: w, Conf: 0.9, Box: ocr.Box{W: 100, H: 40}, Line: i / 12})
	}
	lex := lexicon.Default()
	m := DefaultModel()
	b.ReportAllocs()
	for b.Loop() {
		Triage(PageFeatures(rec, lex), m, Thresholds{})
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "pages/s")
}

// FuzzGarbageRules: the rules never panic, agree with IsGarbage, and a
// token of plain lower-case letters a–e shorter than 5 is never garbage.
func FuzzGarbageRules(f *testing.F) {
	for _, s := range []string{"harpooneer", "w1th", "tH3..,,x", "—", "e.g.,", "\xff\xfe", ""} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		if len(s) > 200 {
			return
		}
		r := GarbageRules(s)
		if IsGarbage(s) != (len(r) > 0) {
			t.Fatalf("IsGarbage(%q) disagrees with %v", s, r)
		}
		if utf8.RuneCountInString(s) < 4 && strings.Trim(s, "abcde") == "" && len(r) > 0 {
			t.Fatalf("short plain token %q flagged %v", s, r)
		}
	})
}
