package quality

import (
	"fmt"
	"iter"
	"slices"
	"strings"
	"unicode/utf8"
)

// Long texts. A page's ground truth is normally a few thousand characters,
// but a delivery may hold a whole volume as one file. Scoring such a text
// must not cost many times its size (issue #16: a 50 MB file at most 3×),
// so Compare works on the normalised strings and never holds them as code
// point slices (4 bytes per character) once they are long:
//
//   - the character distance runs on one byte per character (denseCoder,
//     texts of at most 256 distinct characters, encoded straight from the
//     strings), and only texts with more distinct characters fall back to
//     code points;
//   - the word ids are counted before they are stored, 4 bytes per word;
//   - the flexible matching (flex.go) needs every reference line against
//     every hypothesis line; above flexMaxCells pairs or flexMaxChars
//     characters it is not run, and the page's flexible errors are its
//     character errors, the upper bound that flex ≤ CER guarantees
//     (Counts.FlexSkipped counts such pages).
//
// BenchmarkTruthMemory (cmd/internal/run) measures the peak heap.

// longText is the combined length in bytes from which Compare takes the
// string path; shorter pages keep the code point path unchanged.
const longText = 1 << 16

// flexMaxCells and flexMaxChars bound the flexible matching: at most
// 4,194,304 line pairs (each queued pair is a 16-byte flexCand, so the
// queue holds up to 64 MB) and 1,048,576 characters on either side (4 MB
// as code points), about a 300-page volume.
var (
	flexMaxCells = 1 << 22
	flexMaxChars = 1 << 20
)

// textDistance returns the number of code points of a and the Levenshtein
// distance between a and b over code points.
func (s *Scratch) textDistance(a, b string) (n, d int) {
	n = utf8.RuneCountInString(a)
	if len(a)+len(b) < longText {
		return n, s.Distance([]rune(a), []rune(b))
	}
	a, b = trimCommonString(a, b)
	if len(a) == 0 || len(b) == 0 {
		return n, utf8.RuneCountInString(a) + utf8.RuneCountInString(b)
	}
	if short, long, ok := lopsided(a, b); ok {
		// A page against a volume: the distance is at least the difference
		// in length, so the diagonal rounds cannot help; the bit-vector
		// method runs with the short text as its pattern and reads the
		// long one straight from its string.
		d, _ := bitDistanceSeq(&s.bv, []rune(short), runesOf(long))
		return n, d
	}
	da, db, ok := s.dense.encodeStrings(a, b)
	if !ok {
		return n, s.Distance([]rune(a), []rune(b))
	}
	defer s.dense.release()
	short, long := da, db
	if len(da) > len(db) {
		short, long = db, da
	}
	budget := bitSwitch * ((len(short) + 63) / 64) * len(long)
	if d, ok := wavefrontDistance(s, da, db, budget); ok {
		return n, d
	}
	return n, bitDistance(&s.bv, short, long)
}

// lopsided returns a and b as the shorter and the longer when the longer
// is at least lopsidedRatio times as long in bytes: then the shorter is
// held as code points (4 bytes each, at most a quarter of the longer) and
// the longer is only ever read from its string.
func lopsided(a, b string) (short, long string, ok bool) {
	short, long = a, b
	if len(a) > len(b) {
		short, long = b, a
	}
	return short, long, len(long) >= lopsidedRatio*len(short)
}

const lopsidedRatio = 16

// runesOf yields the code points of s.
func runesOf(s string) iter.Seq[rune] {
	return func(yield func(rune) bool) {
		for _, r := range s {
			if !yield(r) {
				return
			}
		}
	}
}

// trimCommonString is trimCommon on strings, cutting only between code
// points.
func trimCommonString(a, b string) (string, string) {
	p := 0
	for p < len(a) && p < len(b) && a[p] == b[p] {
		p++
	}
	for p > 0 && p < len(a) && !utf8.RuneStart(a[p]) {
		p-- // the first difference is inside a code point: keep all of it
	}
	for p > 0 && p < len(b) && !utf8.RuneStart(b[p]) {
		p--
	}
	a, b = a[p:], b[p:]
	q := 0
	for q < len(a) && q < len(b) && a[len(a)-1-q] == b[len(b)-1-q] {
		q++
	}
	for q > 0 && !utf8.RuneStart(a[len(a)-q]) {
		q-- // the shared end must start on a code point (same bytes in b)
	}
	return a[:len(a)-q], b[:len(b)-q]
}

// wordErrorsLopsided returns the reference's word count, the word distance
// and the bag-of-words errors of ref and hyp when one is far longer than
// the other (see lopsided), holding word numbers for the shorter only; ok
// is false otherwise, and Compare then uses WordIDs.
func (s *Scratch) wordErrorsLopsided(ref, hyp string) (words, wordErrs, bagErrs int, ok bool) {
	short, long, ok := lopsided(ref, hyp)
	if !ok {
		return 0, 0, 0, false
	}
	ids := make(map[string]rune)
	pattern := make([]rune, 0, wordCount(short))
	var left []int32 // per word number: occurrences in short not yet matched
	left = append(left, 0)
	for w := range strings.FieldsSeq(short) {
		id, seen := ids[w]
		if !seen {
			id = rune(len(ids) + 1)
			ids[w] = id
			left = append(left, 0)
		}
		left[id]++
		pattern = append(pattern, id)
	}
	matched := 0
	seq := func(yield func(rune) bool) {
		for w := range strings.FieldsSeq(long) {
			id := ids[w] // 0, a number the pattern never holds, for a word short lacks
			if id > 0 && left[id] > 0 {
				left[id]--
				matched++
			}
			if !yield(id) {
				return
			}
		}
	}
	wordErrs, m := bitDistanceSeq(&s.bv, pattern, seq)
	words = m
	if len(ref) <= len(hyp) { // lopsided's rule: ref is the shorter
		words = len(pattern)
	}
	return words, wordErrs, len(pattern) + m - 2*matched, true
}

// encodeStrings is encode reading the code points of a and b from their
// UTF-8 strings, so that no code point slice is ever made.
func (c *denseCoder) encodeStrings(a, b string) ([]byte, []byte, bool) {
	c.reset()
	var ok bool
	c.da = slices.Grow(c.da[:0], utf8.RuneCountInString(a))
	if c.da, ok = c.appendString(c.da, a); !ok {
		return nil, nil, false
	}
	c.db = slices.Grow(c.db[:0], utf8.RuneCountInString(b))
	if c.db, ok = c.appendString(c.db, b); !ok {
		return nil, nil, false
	}
	return c.da, c.db, true
}

// release drops buffers grown for a long text, so that a Scratch kept by a
// worker does not hold a volume's worth of memory after scoring it.
func (c *denseCoder) release() {
	if cap(c.da)+cap(c.db) > 4*longText {
		c.da, c.db = nil, nil
	}
}

// wordCount counts the words of s as strings.Fields splits them.
func wordCount(s string) int {
	n := 0
	for range strings.FieldsSeq(s) {
		n++
	}
	return n
}

// FlexSkippedNote is what a command says of a page whose flexible
// matching was not run (Counts.FlexSkipped).
var FlexSkippedNote = fmt.Sprintf("too long for the order-free matching (over %d characters, or %d line pairs): its flex_cer is given as its CER, an upper bound", flexMaxChars, flexMaxCells)

// flexFits reports whether the flexible matching of ref and hyp stays
// within flexMaxCells line pairs and flexMaxChars characters a side. Line
// counts are counted as flexLines splits (an upper bound: empty lines are
// counted too).
func flexFits(ref, hyp string) bool {
	if len(ref) > 4*flexMaxChars || len(hyp) > 4*flexMaxChars {
		return false // more than flexMaxChars code points whatever the text
	}
	if utf8.RuneCountInString(ref) > flexMaxChars || utf8.RuneCountInString(hyp) > flexMaxChars {
		return false
	}
	lines := func(s string) int {
		n := 1
		for _, r := range s {
			if isLineBreak(r) {
				n++
			}
		}
		return n
	}
	g, h := lines(ref), lines(hyp)
	return g <= flexMaxCells/h
}
