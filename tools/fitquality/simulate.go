package main

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"recto/lexicon"
	"recto/quality"
)

// simulate builds text-only samples by putting character noise into
// passages of running text: the fallback used before the rendered corpus
// existed (-simulate). Its page records carry no confidences, so the
// record regression is fitted on text terms only. It is no substitute for
// the rendered corpus and says so in the model's provenance.
func simulate(dir string, n int, seed int64, lex *lexicon.Lexicon) ([]quality.Sample, error) {
	files, err := filepath.Glob(filepath.Join(dir, "*.txt"))
	if err != nil {
		return nil, err
	}
	sort.Strings(files)
	var passages []string
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			return nil, err
		}
		words := strings.Fields(string(data))
		for i := 0; i+250 <= len(words); i += 250 {
			passages = append(passages, strings.Join(words[i:i+250], " "))
		}
	}
	rng := rand.New(rand.NewPCG(uint64(seed), 99))
	confuse := map[rune]string{'e': "c", 'c': "e", 'l': "1", 'i': "l", 'o': "0", 'h': "b", 'n': "u", 'u': "n", 'm': "rn", 't': "f", 'a': "o", 's': "5"}
	const noise = ".,;:'~^*|!"
	var out []quality.Sample
	for k := 0; k < n && len(passages) > 0; k++ {
		ref := passages[rng.IntN(len(passages))]
		rate := math.Exp(math.Log(0.0005) + rng.Float64()*(math.Log(0.6)-math.Log(0.0005)))
		var b strings.Builder
		for _, r := range ref {
			x := rng.Float64()
			switch {
			case x < rate*0.6:
				if c, ok := confuse[r]; ok {
					b.WriteString(c)
				} else {
					b.WriteByte(noise[rng.IntN(len(noise))])
				}
			case x < rate*0.8: // deletion
			case x < rate:
				b.WriteRune(r)
				b.WriteByte(noise[rng.IntN(len(noise))])
			default:
				b.WriteRune(r)
			}
		}
		hyp := b.String()
		cer, _ := quality.Compare(ref, hyp, quality.NormOptions{}).CER()
		tf := quality.TextFeatures(hyp, lex)
		out = append(out, quality.Sample{ID: string(rune('a'+k%26)) + strings.Repeat("x", k/26), Text: tf, CER: cer})
	}
	return out, nil
}
