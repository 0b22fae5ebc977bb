package correct

import (
	"strings"
	"unicode"
	"unicode/utf8"

	"recto/lexicon"
	"recto/ocr"
)

// The collection's own vocabulary (issue 12, part 4). Names of people,
// farms, ships and places, dialect and old spellings are in no
// dictionary, but a collection repeats them, and the engine reads them
// as clearly as any other word. A word the engine read with confidence
// VocabularyConf or more at least VocabularyMin times, on at least
// VocabularyPages pages, is a word of the collection: it joins the
// collection's lexicon with its count (Vocabulary), and Config.Vocabulary
// keeps it from ever being changed into another word; such a change is
// reported with Change.Blocked set instead of being made.
const (
	VocabularyConf  = 0.90 // engine confidence, in [0, 1]
	VocabularyMin   = 3    // confident readings across the collection
	VocabularyPages = 2    // pages they are spread over
)

// BlockedVocabulary is Change.Blocked for a change not made because the
// word read is a word of the collection vocabulary.
const BlockedVocabulary = "collection vocabulary"

// VocabularyCounter gathers the confident readings of words across the
// pages of a collection. The zero value is not usable: call
// NewVocabularyCounter. It is not safe for concurrent use.
type VocabularyCounter struct {
	counts map[string]int64 // key -> confident readings
	pages  map[string]int   // key -> pages with one
	seen   map[string]bool  // keys seen on the current page
}

// NewVocabularyCounter returns an empty counter.
func NewVocabularyCounter() *VocabularyCounter {
	return &VocabularyCounter{counts: map[string]int64{}, pages: map[string]int{}, seen: map[string]bool{}}
}

// AddRecord counts the words of one page record read with confidence
// VocabularyConf or more: their letters with edge punctuation taken off;
// only words of two or more letters (inner apostrophes and hyphens
// allowed) count.
func (v *VocabularyCounter) AddRecord(rec *ocr.Record) {
	clear(v.seen)
	for _, w := range rec.Words {
		if w.Conf < VocabularyConf {
			continue
		}
		core := strings.TrimFunc(w.Text, func(r rune) bool { return !unicode.IsLetter(r) && !unicode.IsDigit(r) })
		if utf8.RuneCountInString(core) < 2 || !indexable(lexicon.Key(core)) {
			continue
		}
		k := lexicon.Key(core)
		v.counts[k]++
		if !v.seen[k] {
			v.seen[k] = true
			v.pages[k]++
		}
	}
}

// Vocabulary returns the words that pass the thresholds with their counts
// of confident readings, as a lexicon, adding the words of prior (a saved
// vocabulary; nil for none) with their counts.
func (v *VocabularyCounter) Vocabulary(prior *lexicon.Lexicon) *lexicon.Lexicon {
	out := lexicon.New()
	for k, n := range v.counts {
		if n >= VocabularyMin && v.pages[k] >= VocabularyPages {
			out.Add(k, n)
		}
	}
	if prior != nil {
		for _, k := range prior.Words() {
			out.Add(k, prior.Count(k))
		}
	}
	return out
}

// blockVocabulary marks the edits that would change a word of the
// collection vocabulary (a token holding one) as blocked: they are
// reported, not made. Deleting a stray mark is never blocked.
func (c *Corrector) blockVocabulary(toks []token, eds []edit) {
	if c.cfg.Vocabulary == nil {
		return
	}
	for k := range eds {
		e := &eds[k]
		for _, t := range toks[e.i : e.i+e.n] {
			if t.core != "" && c.cfg.Vocabulary.Listed(lookupForm(t.core)) {
				e.blocked = true
				break
			}
		}
	}
}

// Made returns how many of changes were made (not Blocked).
func Made(changes []Change) int {
	n := 0
	for _, ch := range changes {
		if ch.Blocked == "" {
			n++
		}
	}
	return n
}
