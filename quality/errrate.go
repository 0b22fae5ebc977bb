package quality

import (
	"strings"
)

// Counts are the edit counts of one page, a title or a whole collection.
// Rates are micro-averages: sums of edits over sums of reference lengths.
type Counts struct {
	Chars      int // reference code points, after normalisation
	CharErrors int // character edits (Levenshtein distance over code points)
	Words      int // reference words (runs between spaces), after normalisation
	WordErrors int // word edits (Levenshtein distance over words)
	FlexErrors int // errors of the flexible character accuracy, over Chars (see flex.go)
	BagErrors  int // reference words missing from the hypothesis plus extra words, as multisets (see bag.go)
	// FlexSkipped counts the pages whose flexible matching was not run
	// because of their length (longtext.go); their FlexErrors are their
	// CharErrors, an upper bound, so FlexCER is then an upper bound too.
	FlexSkipped int
}

// Add returns the sum of c and d.
func (c Counts) Add(d Counts) Counts {
	return Counts{
		Chars: c.Chars + d.Chars, CharErrors: c.CharErrors + d.CharErrors,
		Words: c.Words + d.Words, WordErrors: c.WordErrors + d.WordErrors,
		FlexErrors: c.FlexErrors + d.FlexErrors, BagErrors: c.BagErrors + d.BagErrors,
		FlexSkipped: c.FlexSkipped + d.FlexSkipped,
	}
}

// CER returns the character error rate CharErrors/Chars, and false when
// there is no reference text (Chars == 0). It may exceed 1.
func (c Counts) CER() (float64, bool) {
	if c.Chars == 0 {
		return 0, false
	}
	return float64(c.CharErrors) / float64(c.Chars), true
}

// WER returns the word error rate WordErrors/Words, and false when the
// reference has no words. It may exceed 1.
func (c Counts) WER() (float64, bool) {
	if c.Words == 0 {
		return 0, false
	}
	return float64(c.WordErrors) / float64(c.Words), true
}

// Compare normalises ref and hyp with o and counts the character and word
// edits that turn ref into hyp, the errors of the flexible character
// accuracy (flex.go) and the bag-of-words errors (bag.go). Its cost is that
// of Normalize on both (twice: whole and line by line), two Distance calls,
// one over code points and one over word ids, and the flexible matching.
func Compare(ref, hyp string, o NormOptions) Counts {
	var s Scratch
	return s.Compare(ref, hyp, o)
}

// Compare is Compare with reusable scratch. Long texts take a path that
// holds no code point slices (longtext.go), so that scoring costs little
// more than the normalised texts themselves.
func (s *Scratch) Compare(ref, hyp string, o NormOptions) Counts {
	refRaw, hypRaw := ref, hyp
	ref, hyp = Normalize(ref, o), Normalize(hyp, o)
	var c Counts
	c.Chars, c.CharErrors = s.textDistance(ref, hyp)
	var ok bool
	if len(ref)+len(hyp) >= longText {
		c.Words, c.WordErrors, c.BagErrors, ok = s.wordErrorsLopsided(ref, hyp)
	}
	if !ok {
		rw, hw := WordIDs(ref, hyp)
		c.Words, c.WordErrors = len(rw), s.Distance(rw, hw)
		c.BagErrors = bagErrors(rw, hw)
	}
	c.FlexErrors = c.CharErrors
	switch {
	case c.CharErrors == 0:
	case !flexFits(refRaw, hypRaw):
		c.FlexSkipped = 1
	default:
		c.FlexErrors = min(c.CharErrors, s.flex.errors(flexLines(refRaw, o), flexLines(hypRaw, o)))
	}
	return c
}

// WordIDs splits normalised ref and hyp at spaces and gives each distinct
// word a number (from 1, in order of first appearance), so that the edit
// distance over the numbers is the distance over words. The words are
// counted first, so each slice is allocated once at its size (4 bytes a
// word) and no slice of the words themselves is made.
func WordIDs(ref, hyp string) (r, h []rune) {
	ids := make(map[string]rune)
	conv := func(s string) []rune {
		out := make([]rune, 0, wordCount(s))
		for w := range strings.FieldsSeq(s) {
			id, ok := ids[w]
			if !ok {
				id = rune(len(ids) + 1)
				ids[w] = id
			}
			out = append(out, id)
		}
		return out
	}
	return conv(ref), conv(hyp)
}

// TitlePage names a page found at rel, its path under the ground-truth root
// with '/' separators (such as "ledger-1841/p0007.txt"). The title is the
// first folder of rel, or rootName, the root folder's own name, for a file
// lying directly in the root; page is rel without a final ".txt".
func TitlePage(rel string, rootName string) (title, page string) {
	page = strings.TrimSuffix(rel, ".txt")
	if first, _, ok := strings.Cut(rel, "/"); ok {
		return first, page
	}
	return rootName, page
}
