package lexicon

import (
	"slices"
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
	words   store          // Key(word) -> count
	bigrams store          // Key(w1) + pairSep + Key(w2) -> count
	total   int64          // sum of unigram counts
	comp    []*compounding // compound rules and parts, one per dictionary (compound.go)

	// layers are the lexicons a Merge combined, read through without being
	// copied: every read answers for the lexicon's own words and pairs
	// (words, bigrams) together with each layer's. Empty for any other
	// lexicon.
	layers []*Lexicon

	acceptAll bool // AcceptAll: Has and HasFold accept every word

	foldMu sync.Mutex                          // guards building fold
	fold   atomic.Pointer[map[string]struct{}] // Fold keys of words; nil until HasFold needs it
}

// pairSep joins the two keys of a word pair; words never hold a TAB (the
// lexicon file uses it as field separator), so the file's pair lines serve
// as map keys unchanged.
const pairSep = "\t"

// New returns an empty lexicon.
func New() *Lexicon {
	return &Lexicon{words: newStore(0), bigrams: newStore(0)}
}

// Key is the lookup form of a word: Unicode NFC, then lower case (Unicode
// simple case mapping, so "Straße" keys as "straße" and "ÉTÉ" as "été").
// Diacritics are kept ("café" and "cafe" are different keys); see Fold for
// the accent-blind form. The long s and the Latin ligatures U+FB00–U+FB06
// of old print are letter forms, not other letters: they key as their plain
// letters ("Wiſſen" as "wissen", "ﬁnden" as "finden"), so Fraktur pages are
// judged by the same lexicon. Every lookup (Has, Count, Bigram) and the
// lexicon file use Key.
func Key(word string) string {
	return FoldForms(strings.ToLower(norm.NFC.String(word)))
}

// FoldForms returns s with the long s and the ligatures U+FB00–U+FB06 as
// their plain letters.
func FoldForms(s string) string {
	// Every form's UTF-8 starts with byte 0xC5 (U+017F) or 0xEF
	// (U+FB00–U+FB06): two byte scans keep the common case cheap.
	if strings.IndexByte(s, 0xC5) < 0 && strings.IndexByte(s, 0xEF) < 0 {
		return s
	}
	if strings.ContainsAny(s, letterForms) {
		s = formFold.Replace(s)
	}
	return s
}

// letterForms are the long s and the ligatures Key folds (Unicode code
// charts: U+017F, U+FB00–U+FB06).
const letterForms = "ſﬀﬁﬂﬃﬄﬅﬆ"

var formFold = strings.NewReplacer("ſ", "s", "ﬀ", "ff", "ﬁ", "fi", "ﬂ", "fl", "ﬃ", "ffi", "ﬄ", "ffl", "ﬅ", "st", "ﬆ", "st")

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
	if l.acceptAll {
		return true
	}
	idx := l.fold.Load()
	if idx == nil {
		l.foldMu.Lock()
		if idx = l.fold.Load(); idx == nil {
			m := make(map[string]struct{}, l.words.len())
			for _, x := range l.all() {
				x.words.each(func(w string, _ int64) { m[Fold(w)] = struct{}{} })
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
	l.words.add(Key(word), n)
	l.total += n
	l.fold.Store(nil)
}

// AddBigram adds n occurrences of the word pair w1 w2. Pairs with a word
// that Add would ignore are ignored.
func (l *Lexicon) AddBigram(w1, w2 string, n int64) {
	if w1 == "" || w2 == "" || strings.ContainsAny(w1, "\t\n") || strings.ContainsAny(w2, "\t\n") {
		return
	}
	l.bigrams.add(Key(w1)+pairSep+Key(w2), n)
}

// Has reports whether the lexicon holds word (compared by Key), or, for a
// lexicon built from a Hunspell dictionary that compounds, whether word is
// a compound of its parts under the dictionary's rules (see compound.go).
func (l *Lexicon) Has(word string) bool { return l.acceptAll || l.hasKey(Key(word)) }

// AcceptAll returns a lexicon that holds no words and counts nothing but
// whose Has and HasFold accept every word: what page features are
// computed with when the page's language has no lexicon, so that no word
// counts against a page for being unknown (the lexicon features carry no
// evidence then; quality.Features.NoLexicon says so). It must not be
// used for correction (there is nothing to correct towards) and must
// not be modified.
func AcceptAll() *Lexicon { return acceptAll }

var acceptAll = &Lexicon{words: newStore(0), bigrams: newStore(0), acceptAll: true}

func (l *Lexicon) hasKey(k string) bool {
	if l.words.has(k) {
		return true
	}
	for _, x := range l.layers {
		if x.words.has(k) {
			return true
		}
	}
	for _, c := range l.comp {
		if c.accepts(k) {
			return true
		}
	}
	for _, x := range l.layers {
		for _, c := range x.comp {
			if c.accepts(k) {
				return true
			}
		}
	}
	return false
}

// Listed reports whether the lexicon holds word itself, not as a compound.
func (l *Lexicon) Listed(word string) bool {
	k := Key(word)
	if l.words.has(k) {
		return true
	}
	for _, x := range l.layers {
		if x.words.has(k) {
			return true
		}
	}
	return false
}

// Compounds reports whether the lexicon accepts compounds.
func (l *Lexicon) Compounds() bool {
	n := len(l.comp)
	for _, x := range l.layers {
		n += len(x.comp)
	}
	return n > 0
}

// all returns the lexicon's own maps' holder and its layers: every lexicon
// whose words and pairs the reads combine.
func (l *Lexicon) all() []*Lexicon { return append([]*Lexicon{l}, l.layers...) }

// EachBigram calls fn with the keys and count of every word pair (counts
// of a merged lexicon added), in no particular order.
func (l *Lexicon) EachBigram(fn func(k1, k2 string, n int64)) {
	all := l.all()
	for i, x := range all {
		x.bigrams.each(func(k string, n int64) {
			for _, y := range all[:i] {
				if y.bigrams.has(k) {
					return // counted with the first lexicon that has it
				}
			}
			for _, y := range all[i+1:] {
				m, _ := y.bigrams.get(k)
				n += m
			}
			k1, k2, _ := strings.Cut(k, pairSep)
			fn(k1, k2, n)
		})
	}
}

// Merge returns a lexicon holding the words and pairs of all the given
// lexicons (counts added) and accepting the compounds of each under its own
// rules. The inputs are read through, not copied (merging the Bokmål and
// Nynorsk lexicons costs nothing), so they must not be modified afterwards;
// words added to the result are its own.
func Merge(ls ...*Lexicon) *Lexicon {
	l := New()
	for _, x := range ls {
		l.layers = append(l.layers, x.all()...)
	}
	return l
}

// Count returns the unigram count of word, 0 when absent.
func (l *Lexicon) Count(word string) int64 {
	k := Key(word)
	n, _ := l.words.get(k)
	for _, x := range l.layers {
		m, _ := x.words.get(k)
		n += m
	}
	return n
}

// Bigram returns the count of the pair w1 w2, 0 when absent.
func (l *Lexicon) Bigram(w1, w2 string) int64 {
	k := Key(w1) + pairSep + Key(w2)
	n, _ := l.bigrams.get(k)
	for _, x := range l.layers {
		m, _ := x.bigrams.get(k)
		n += m
	}
	return n
}

// Total returns the sum of all unigram counts.
func (l *Lexicon) Total() int64 {
	n := l.total
	for _, x := range l.layers {
		n += x.total
	}
	return n
}

// Bigrams returns the number of distinct word pairs.
func (l *Lexicon) Bigrams() int {
	if len(l.layers) == 0 {
		return l.bigrams.len()
	}
	n := 0
	l.EachBigram(func(string, string, int64) { n++ })
	return n
}

// Len returns the number of distinct words.
func (l *Lexicon) Len() int {
	if len(l.layers) == 0 {
		return l.words.len()
	}
	return len(l.Words())
}

// Words returns the keys of all words, sorted.
func (l *Lexicon) Words() []string {
	n := l.words.len()
	for _, x := range l.layers {
		n += x.words.len()
	}
	ws := make([]string, 0, n)
	for _, x := range l.all() {
		x.words.each(func(w string, _ int64) { ws = append(ws, w) })
	}
	sort.Strings(ws)
	if len(l.layers) > 0 {
		ws = slices.Compact(ws)
	}
	return ws
}

// flat returns a lexicon with the words, pairs and compounding of l in its
// own maps (l itself when it has no layers), for Save.
func (l *Lexicon) flat() *Lexicon {
	if len(l.layers) == 0 {
		return l
	}
	f := New()
	for _, x := range l.all() {
		x.words.each(f.words.add)
		x.bigrams.each(f.bigrams.add)
		f.total += x.total
		f.comp = append(f.comp, x.comp...)
	}
	return f
}
