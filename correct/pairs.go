package correct

import (
	"recto/lexicon"
)

// pairBits is the size of the word-pair Bloom filter in bits (512 KiB):
// about 19 bits a pair for the embedded lexicon's 220,502 pairs, so about
// 1 % false positives with two probes.
const pairBits = 1 << 22

// pairFilter is a Bloom filter over a lexicon's word pairs. Most candidate
// pairs scored by the context model were never seen; the filter answers
// for them without building the pair's key and probing the lexicon's large
// pair map. A false positive only costs that lookup.
type pairFilter struct {
	bits []uint64
}

// buildPairFilter files every word pair of the lexicon.
func buildPairFilter(lex *lexicon.Lexicon) *pairFilter {
	f := &pairFilter{bits: make([]uint64, pairBits/64)}
	lex.EachBigram(func(k1, k2 string, _ int64) {
		var h uint64
		for i := 0; i < len(k1); i++ {
			h = h*polyBase + uint64(k1[i])
		}
		h = h*polyBase + '\t'
		for i := 0; i < len(k2); i++ {
			h = h*polyBase + uint64(k2[i])
		}
		f.set(polyFinish(h, len(k1)+1+len(k2)))
	})
	return f
}

func (f *pairFilter) set(h uint64) {
	a, b := h&(pairBits-1), (h>>32)&(pairBits-1)
	f.bits[a>>6] |= 1 << (a & 63)
	f.bits[b>>6] |= 1 << (b & 63)
}

// mayHave reports whether the pair of keys k1, k2 may have a count; false
// means the lexicon's Bigram is 0. A nil filter says true.
func (f *pairFilter) mayHave(k1, k2 string) bool {
	if f == nil {
		return true
	}
	var h uint64
	for i := 0; i < len(k1); i++ {
		h = h*polyBase + uint64(k1[i])
	}
	h = h*polyBase + '\t'
	for i := 0; i < len(k2); i++ {
		h = h*polyBase + uint64(k2[i])
	}
	h = polyFinish(h, len(k1)+1+len(k2))
	a, b := h&(pairBits-1), (h>>32)&(pairBits-1)
	return f.bits[a>>6]&(1<<(a&63)) != 0 && f.bits[b>>6]&(1<<(b&63)) != 0
}
