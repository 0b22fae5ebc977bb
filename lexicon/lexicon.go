package lexicon

import (
	"sort"
	"strings"
	"sync"
	"sync/atomic"
	"unicode"

	"golang.org/x/text/runes"
	"golang.org/x/text/transform"
	"golang.org/x/text/unicode/norm"
)

// Lexicon is a set of words with unigram and bigram counts. Words are stored
// and looked up by Key. The zero value is not usable; call New.
// A Lexicon is safe for concurrent reads once it is no longer modified.
type Lexicon struct {
	words   map[string]int64 // Key(word) -> count
	bigrams map[string]int64 // Key(w1) + pairSep + Key(w2) -> count
	total   int64            // sum of unigram counts
	comp    []*compounding   // compound rules and parts, one per dictionary (compound.go)

	foldMu sync.Mutex                          // guards building fold
	fold   atomic.Pointer[map[string]struct{}] // Fold keys of words; nil until HasFold needs it
}

// pairSep joins the two keys of a word pair; words never hold a TAB (the
// lexicon file uses it as field separator), so the file's pair lines serve
// as map keys unchanged.
const pairSep = "\t"

// New returns an empty lexicon.
func New() *Lexicon {
	return &Lexicon{words: make(map[string]int64), bigrams: make(map[string]int64)}
}

// Key is the lookup form of a word: Unicode NFC, then lower case (Unicode
// simple case mapping, so "Straße" keys as "straße" and "ÉTÉ" as "été").
// Diacritics are kept ("café" and "cafe" are different keys); see Fold for
// the accent-blind form. Every lookup (Has, Count, Bigram) and the lexicon
// file use Key.
func Key(word string) string {
	return strings.ToLower(norm.NFC.String(word))
}

// Fold is the accent-blind lookup form of a word: Key with combining marks
// removed (NFD, drop Unicode category Mn, NFC), so "Café", "CAFE" and "café"
// all fold to "cafe". Letters that are not decomposed by NFD ("ø", "ß", "æ")
// are kept as they are.
func Fold(word string) string {
	k := Key(word)
	ascii := true
	for i := 0; i < len(k); i++ {
		if k[i] >= 0x80 {
			ascii = false
			break
		}
	}
	if ascii {
		return k
	}
	t := transform.Chain(norm.NFD, runes.Remove(runes.In(unicode.Mn)), norm.NFC)
	s, _, err := transform.String(t, k)
	if err != nil {
		return k
	}
	return s
}

// HasFold reports whether the lexicon holds a word with the same Fold as
// word ("cafe" finds "café"). The first call builds an index of folded
// words; it is safe for concurrent use with other reads.
func (l *Lexicon) HasFold(word string) bool {
	idx := l.fold.Load()
	if idx == nil {
		l.foldMu.Lock()
		if idx = l.fold.Load(); idx == nil {
			m := make(map[string]struct{}, len(l.words))
			for w := range l.words {
				m[Fold(w)] = struct{}{}
			}
			idx = &m
			l.fold.Store(idx)
		}
		l.foldMu.Unlock()
	}
	_, ok := (*idx)[Fold(word)]
	return ok
}

// Add adds n occurrences of word (n may be 0 to add a word with no count,
// as from a plain word list). A word that is empty or holds a TAB or a
// newline (which no tokeniser yields and the file format cannot store) is
// ignored.
func (l *Lexicon) Add(word string, n int64) {
	if word == "" || strings.ContainsAny(word, "\t\n") {
		return
	}
	l.words[Key(word)] += n
	l.total += n
	l.fold.Store(nil)
}

// AddBigram adds n occurrences of the word pair w1 w2. Pairs with a word
// that Add would ignore are ignored.
func (l *Lexicon) AddBigram(w1, w2 string, n int64) {
	if w1 == "" || w2 == "" || strings.ContainsAny(w1, "\t\n") || strings.ContainsAny(w2, "\t\n") {
		return
	}
	l.bigrams[Key(w1)+pairSep+Key(w2)] += n
}

// Has reports whether the lexicon holds word (compared by Key), or, for a
// lexicon built from a Hunspell dictionary that compounds, whether word is
// a compound of its parts under the dictionary's rules (see compound.go).
func (l *Lexicon) Has(word string) bool {
	k := Key(word)
	if _, ok := l.words[k]; ok {
		return true
	}
	for _, c := range l.comp {
		if c.accepts(k) {
			return true
		}
	}
	return false
}

// Listed reports whether the lexicon holds word itself, not as a compound.
func (l *Lexicon) Listed(word string) bool {
	_, ok := l.words[Key(word)]
	return ok
}

// Compounds reports whether the lexicon accepts compounds.
func (l *Lexicon) Compounds() bool { return len(l.comp) > 0 }

// EachBigram calls fn with the keys and count of every word pair, in no
// particular order.
func (l *Lexicon) EachBigram(fn func(k1, k2 string, n int64)) {
	for k, n := range l.bigrams {
		k1, k2, _ := strings.Cut(k, pairSep)
		fn(k1, k2, n)
	}
}

// Merge returns a lexicon holding the words and pairs of all the given
// lexicons (counts added) and accepting the compounds of each under its own
// rules. The inputs are not modified; their compound parts are shared.
func Merge(ls ...*Lexicon) *Lexicon {
	n := 0
	for _, x := range ls {
		n = max(n, len(x.words))
	}
	l := &Lexicon{words: make(map[string]int64, n), bigrams: make(map[string]int64)}
	for _, x := range ls {
		for k, c := range x.words {
			l.words[k] += c
		}
		for k, c := range x.bigrams {
			l.bigrams[k] += c
		}
		l.total += x.total
		l.comp = append(l.comp, x.comp...)
	}
	return l
}

// Count returns the unigram count of word, 0 when absent.
func (l *Lexicon) Count(word string) int64 { return l.words[Key(word)] }

// Bigram returns the count of the pair w1 w2, 0 when absent.
func (l *Lexicon) Bigram(w1, w2 string) int64 { return l.bigrams[Key(w1)+pairSep+Key(w2)] }

// Total returns the sum of all unigram counts.
func (l *Lexicon) Total() int64 { return l.total }

// Bigrams returns the number of distinct word pairs.
func (l *Lexicon) Bigrams() int { return len(l.bigrams) }

// Len returns the number of distinct words.
func (l *Lexicon) Len() int { return len(l.words) }

// Words returns the keys of all words, sorted.
func (l *Lexicon) Words() []string {
	ws := make([]string, 0, len(l.words))
	for w := range l.words {
		ws = append(ws, w)
	}
	sort.Strings(ws)
	return ws
}
