package correct

import (
	"slices"
	"sync"
	"unicode"

	"recto/lexicon"
)

// deleteIndex finds lexicon words near a token by symmetric deletion: every
// word is filed under the hashes of the strings left after deleting up to
// one character (up to two for words of five or more characters); a token
// looks up the hashes of its own deletions. Two strings within edit distance
// d share such a string when each side may delete up to d characters, so
// for tokens and words of five or more characters every word within
// distance 2 is found; shorter ones are searched within distance 1, plus
// whatever the deletions reach beyond that. Hash collisions only add
// candidates, which scoring rejects.
type deleteIndex struct {
	words  []string          // lexicon keys, by id
	id     map[string]uint32 // id of each word
	counts []int64           // unigram counts, by id
	keys   []uint64          // sorted deletion hashes
	ids    []uint32          // ids[i] is the word filed under keys[i]
	bloom  []uint64          // Bloom filter of the words' wordHash, 2 probes
	// start[b] is the first i with keys[i]>>shift >= b: the keys in
	// bucket b are keys[start[b]:start[b+1]], a few on average, so a
	// lookup touches the table and one short run instead of binary
	// searching millions of keys.
	start []uint32
	shift uint
	pairs *pairFilter // the lexicon's word pairs
}

// bloomBits is the size of deleteIndex.bloom in bits (256 KiB): about 20
// bits a word for the embedded lexicon, so about 1 % false positives.
const bloomBits = 1 << 21

// mayHave reports whether the word with wordHash h may be in the index;
// false means it is not. Most variants made by undoing confusions are not
// words, and the filter answers for them without touching the word map.
func (ix *deleteIndex) mayHave(h uint64) bool {
	a, b := h&(bloomBits-1), (h>>32)&(bloomBits-1)
	return ix.bloom[a>>6]&(1<<(a&63)) != 0 && ix.bloom[b>>6]&(1<<(b&63)) != 0
}

// longWord is the length (in runes) from which words and tokens are
// searched within edit distance 2 rather than 1.
const longWord = 5

var (
	indexMu    sync.Mutex
	indexCache = map[*lexicon.Lexicon]*deleteIndex{}
)

// indexFor returns the deletion index of lex, building it on first use.
// Lexicons must not change once a Corrector uses them.
func indexFor(lex *lexicon.Lexicon) *deleteIndex {
	indexMu.Lock()
	defer indexMu.Unlock()
	if ix, ok := indexCache[lex]; ok {
		return ix
	}
	ix := buildIndex(lex)
	if len(indexCache) > 8 {
		clear(indexCache)
	}
	indexCache[lex] = ix
	return ix
}

// indexable reports whether a lexicon key is a word worth offering as a
// correction: letters, with inner apostrophes or hyphens.
func indexable(w string) bool {
	n := 0
	for _, r := range w {
		if unicode.IsLetter(r) {
			n++
			continue
		}
		if r != '\'' && r != '-' {
			return false
		}
	}
	return n > 0
}

type hashID struct {
	h  uint64
	id uint32
}

// IndexAllMax is the largest lexicon whose every word is offered as a
// correction. A bigger lexicon (a Hunspell dictionary expanded into all
// its forms: about 950,000 for Bokmål, 360,000 for German) offers only
// the words its running text counted: the index stays small (its size
// grows as words times their deletions, about 60 a word), and a rare form
// no text attests is a poor guess for a misread word. Every word stays
// known (Has), so none is changed for being rare.
const IndexAllMax = 250_000

func buildIndex(lex *lexicon.Lexicon) *deleteIndex {
	ix := &deleteIndex{id: make(map[string]uint32), bloom: make([]uint64, bloomBits/64), pairs: buildPairFilter(lex)}
	var pairs []hashID
	var rs []rune
	var hs []uint64
	words := lex.Words()
	onlyCounted := len(words) > IndexAllMax
	for _, w := range words {
		if !indexable(w) {
			continue
		}
		if onlyCounted && lex.Count(w) == 0 {
			continue
		}
		id := uint32(len(ix.words))
		ix.words = append(ix.words, w)
		ix.id[w] = id
		h := wordHash(w)
		a, b := h&(bloomBits-1), (h>>32)&(bloomBits-1)
		ix.bloom[a>>6] |= 1 << (a & 63)
		ix.bloom[b>>6] |= 1 << (b & 63)
		ix.counts = append(ix.counts, lex.Count(w))
		rs = append(rs[:0], []rune(w)...)
		depth := 1
		if len(rs) >= longWord {
			depth = 2
		}
		hs = deletionHashes(rs, depth, hs[:0])
		for _, h := range hs {
			pairs = append(pairs, hashID{h, id})
		}
	}
	slices.SortFunc(pairs, func(a, b hashID) int {
		switch {
		case a.h < b.h:
			return -1
		case a.h > b.h:
			return 1
		}
		return int(a.id) - int(b.id)
	})
	ix.keys = make([]uint64, len(pairs))
	ix.ids = make([]uint32, len(pairs))
	for i, p := range pairs {
		ix.keys[i], ix.ids[i] = p.h, p.id
	}
	bits := uint(1)
	for bits < 24 && len(ix.keys)>>bits > 8 {
		bits++
	}
	ix.shift = 64 - bits
	ix.start = make([]uint32, 1<<bits+1)
	b := 0
	for i, k := range ix.keys {
		for ; b <= int(k>>ix.shift); b++ {
			ix.start[b] = uint32(i)
		}
	}
	for ; b < len(ix.start); b++ {
		ix.start[b] = uint32(len(ix.keys))
	}
	return ix
}

const (
	fnvOffset = 14695981039346656037
	fnvPrime  = 1099511628211
)

// deletionHashes appends the distinct hashes of rs with up to depth (1 or
// 2) characters deleted, rs itself included.
func deletionHashes(rs []rune, depth int, out []uint64) []uint64 {
	hash := func(skip1, skip2 int) uint64 {
		h := uint64(fnvOffset)
		for i, r := range rs {
			if i == skip1 || i == skip2 {
				continue
			}
			h ^= uint64(r)
			h *= fnvPrime
		}
		h ^= 0xff // end marker
		return h * fnvPrime
	}
	start := len(out)
	out = append(out, hash(-1, -1))
	for i := range rs {
		// Deleting either of two equal neighbours gives the same string.
		if i > 0 && rs[i] == rs[i-1] {
			continue
		}
		out = append(out, hash(i, -1))
		if depth < 2 {
			continue
		}
		for j := i + 1; j < len(rs); j++ {
			if j > i+1 && rs[j] == rs[j-1] {
				continue
			}
			out = append(out, hash(i, j))
		}
	}
	// Remove duplicates (rare beyond the cases skipped above).
	seg := out[start:]
	slices.Sort(seg)
	seg = slices.Compact(seg)
	return out[:start+len(seg)]
}

// lookup appends to ids the words filed under any deletion of rs (up to
// depth deletions), each at most once; seen is scratch, keyed by id.
func (ix *deleteIndex) lookup(rs []rune, depth int, hs []uint64, ids []uint32, seen map[uint32]struct{}) ([]uint64, []uint32) {
	hs = deletionHashes(rs, depth, hs[:0])
	clear(seen)
	for _, h := range hs {
		b := h >> ix.shift
		lo, hi := int(ix.start[b]), int(ix.start[b+1])
		i, _ := slices.BinarySearch(ix.keys[lo:hi], h)
		for i += lo; i < len(ix.keys) && ix.keys[i] == h; i++ {
			id := ix.ids[i]
			if _, ok := seen[id]; ok {
				continue
			}
			seen[id] = struct{}{}
			ids = append(ids, id)
		}
	}
	return hs, ids
}
