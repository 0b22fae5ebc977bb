// Package correcttest plants OCR-like confusions in clean text, to make
// aligned training and test pairs where no recognised corpus is at hand.
package correcttest

import (
	"math/rand/v2"
	"strings"
	"unicode/utf8"
)

// Confusion is one planted error: the correct string From is written as To.
type Confusion struct{ From, To string }

// Confusions are the classic OCR confusions of letter shapes (common
// practice: rn/m, cl/d, li/h, vv/w, ii/u, 0/o, 1/l, 5/s, e/c, b/h).
var Confusions = []Confusion{
	{"m", "rn"}, {"d", "cl"}, {"h", "li"}, {"w", "vv"}, {"u", "ii"},
	{"o", "0"}, {"l", "1"}, {"s", "5"}, {"e", "c"}, {"c", "e"},
	{"h", "b"}, {"rn", "m"}, {"i", "l"},
}

// Plant returns text with confusions planted in about rate of its words
// (0 ≤ rate ≤ 1): one confusion from cs per chosen word, and in a tenth as
// many places a lost space between words or a stray space inside a word.
// Line breaks are kept. The result depends only on text, rate, cs and rng.
func Plant(text string, rate float64, cs []Confusion, rng *rand.Rand) string {
	var b strings.Builder
	b.Grow(len(text) + len(text)/10)
	lines := strings.Split(text, "\n")
	for li, line := range lines {
		if li > 0 {
			b.WriteByte('\n')
		}
		words := strings.Split(line, " ")
		for wi, w := range words {
			if w != "" && rng.Float64() < rate {
				w = plantOne(w, cs, rng)
			}
			if utf8.RuneCountInString(w) >= 6 && rng.Float64() < rate/10 {
				rs := []rune(w)
				k := 2 + rng.IntN(len(rs)-3)
				w = string(rs[:k]) + " " + string(rs[k:])
			}
			b.WriteString(w)
			if wi+1 < len(words) && !(w != "" && rng.Float64() < rate/10) {
				b.WriteByte(' ')
			}
		}
	}
	return b.String()
}

// plantOne applies one confusion that fits w, chosen at random; w is
// returned as it is when none fits.
func plantOne(w string, cs []Confusion, rng *rand.Rand) string {
	var fit []int
	for i, c := range cs {
		if strings.Contains(w, c.From) {
			fit = append(fit, i)
		}
	}
	if len(fit) == 0 {
		return w
	}
	c := cs[fit[rng.IntN(len(fit))]]
	var at []int
	for off := 0; ; {
		k := strings.Index(w[off:], c.From)
		if k < 0 {
			break
		}
		at = append(at, off+k)
		off += k + 1
	}
	k := at[rng.IntN(len(at))]
	return w[:k] + c.To + w[k+len(c.From):]
}
