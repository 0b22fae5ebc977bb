package quality

// TEMPORARY stand-in for the quality helper's Compare/TitlePage (same
// signatures); deleted when their work is merged into main.

import (
	"strings"

	"golang.org/x/text/unicode/norm"
)

type NormOptions struct{}

type Counts struct{ Chars, CharErrors int }

func (c Counts) CER() (float64, bool) {
	if c.Chars == 0 {
		return 0, false
	}
	return float64(c.CharErrors) / float64(c.Chars), true
}

func Compare(ref, hyp string, o NormOptions) Counts {
	n := func(s string) []rune { return []rune(strings.Join(strings.Fields(norm.NFC.String(s)), " ")) }
	r, h := n(ref), n(hyp)
	prev := make([]int, len(h)+1)
	cur := make([]int, len(h)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(r); i++ {
		cur[0] = i
		for j := 1; j <= len(h); j++ {
			c := prev[j-1]
			if r[i-1] != h[j-1] {
				c++
			}
			cur[j] = min(c, prev[j]+1, cur[j-1]+1)
		}
		prev, cur = cur, prev
	}
	return Counts{Chars: len(r), CharErrors: prev[len(h)]}
}

func TitlePage(rel string, rootName string) (title, page string) {
	page = strings.TrimSuffix(rel, ".txt")
	if first, _, ok := strings.Cut(rel, "/"); ok {
		return first, page
	}
	return rootName, page
}
