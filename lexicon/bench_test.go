package lexicon

import (
	"bytes"
	"path/filepath"
	"strconv"
	"testing"
)

// BenchmarkLoad500k loads a compressed lexicon of 500,000 words, without
// and with 500,000 word pairs; the target is under 300 ms per load
// ("ms/load") for 500,000 words.
func BenchmarkLoad500k(b *testing.B) {
	b.Run("words", func(b *testing.B) { benchLoad(b, false) })
	b.Run("words+pairs", func(b *testing.B) { benchLoad(b, true) })
}

func benchLoad(b *testing.B, pairs bool) {
	l := New()
	var w []byte
	for i := 0; i < 500000; i++ {
		w = w[:0]
		for n := i; ; n /= 26 {
			w = append(w, byte('a'+n%26))
			if n < 26 {
				break
			}
		}
		w = append(w, "ing"...)
		l.Add(string(w), int64(i%1000))
		if pairs {
			l.AddBigram(string(w), "the"+strconv.Itoa(i%50), int64(i%7+1))
		}
	}
	p := filepath.Join(b.TempDir(), "big.lex.gz")
	if err := l.Save(p); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		got, err := Load(p)
		if err != nil || got.Len() != 500000 {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Milliseconds())/float64(b.N), "ms/load")
}

// BenchmarkDefault parses the embedded English lexicon.
func BenchmarkDefault(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		if _, err := read(bytes.NewReader(englishData), "en"); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Milliseconds())/float64(b.N), "ms/load")
}
