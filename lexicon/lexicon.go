package lexicon

import (
	"sort"
	"strings"

	"golang.org/x/text/unicode/norm"
)

// Lexicon is a set of words with unigram and bigram counts. Words are stored
// and looked up by Key. The zero value is not usable; call New.
// A Lexicon is safe for concurrent reads once it is no longer modified.
type Lexicon struct {
	words   map[string]int64 // Key(word) -> count
	bigrams map[string]int64 // Key(w1) + "\x00" + Key(w2) -> count
	total   int64            // sum of unigram counts
}

// New returns an empty lexicon.
func New() *Lexicon {
	return &Lexicon{words: make(map[string]int64), bigrams: make(map[string]int64)}
}

// Key is the lookup form of a word: Unicode NFC, then lower case.
// Diacritics are kept ("café" and "cafe" are different keys).
func Key(word string) string {
	return strings.ToLower(norm.NFC.String(word))
}

// Add adds n occurrences of word (n may be 0 to add a word with no count,
// as from a plain word list).
func (l *Lexicon) Add(word string, n int64) {
	if word == "" {
		return
	}
	l.words[Key(word)] += n
	l.total += n
}

// AddBigram adds n occurrences of the word pair w1 w2.
func (l *Lexicon) AddBigram(w1, w2 string, n int64) {
	l.bigrams[Key(w1)+"\x00"+Key(w2)] += n
}

// Has reports whether the lexicon holds word (compared by Key).
func (l *Lexicon) Has(word string) bool {
	_, ok := l.words[Key(word)]
	return ok
}

// Count returns the unigram count of word, 0 when absent.
func (l *Lexicon) Count(word string) int64 { return l.words[Key(word)] }

// Bigram returns the count of the pair w1 w2, 0 when absent.
func (l *Lexicon) Bigram(w1, w2 string) int64 { return l.bigrams[Key(w1)+"\x00"+Key(w2)] }

// Total returns the sum of all unigram counts.
func (l *Lexicon) Total() int64 { return l.total }

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
