package correct

import (
	"regexp"
	"strings"
	"unicode"
	"unicode/utf8"

	"golang.org/x/text/unicode/norm"

	"recto/lexicon"
)

// token is one whitespace-separated piece of a page.
type token struct {
	start, end int     // byte offsets in the page text
	line, col  int     // 1-based line and rune column of start
	lead       string  // punctuation before the core
	core       string  // from the first to the last letter or digit
	trail      string  // punctuation after the core
	conf       float64 // engine confidence in [0, 1]; -1 when unknown
	word       int     // index in Record.Words; -1 for plain text
	lineEnd    bool    // the next token is on another line (or there is none)
	// piece marks a token that is part of a record word joined to another
	// part by a dash ("tbe—the"); start and end are then byte offsets in
	// the word's text.
	piece bool
	// sentence marks a token that begins a sentence: the first of the
	// page, or one after a full stop, question or exclamation mark (set
	// by run).
	sentence bool
}

// endsSentence reports whether a token's trailing punctuation ends a
// sentence: a full stop, question or exclamation mark, perhaps inside a
// closing quote or bracket.
func endsSentence(trail string) bool {
	t := strings.TrimRight(trail, "\"”’')]")
	return strings.HasSuffix(t, ".") || strings.HasSuffix(t, "?") || strings.HasSuffix(t, "!")
}

// bom is the byte-order mark (U+FEFF). At the start of a page it says how
// the file was encoded and is no part of the first word (Unicode Standard,
// section 23.8, "Specials": U+FEFF as a signature); it stays in the text.
const bom = '\ufeff'

// dashAt reports the length in bytes of a dash that joins the words on
// either side of it at s[i:]: an em dash, a horizontal bar, an en dash, or
// two or more hyphens (the typewriter's dash, as plain-text transcriptions
// such as Project Gutenberg's write it: common practice), and 0 for none.
// Punctuation attached by such a dash splits like other punctuation:
// "tbe—the" is the words "tbe" and "the".
func dashAt(s string, i int) int {
	switch {
	case strings.HasPrefix(s[i:], "—"), strings.HasPrefix(s[i:], "―"), strings.HasPrefix(s[i:], "–"):
		return len("—")
	case strings.HasPrefix(s[i:], "--"):
		n := 2
		for i+n < len(s) && s[i+n] == '-' {
			n++
		}
		return n
	}
	return 0
}

// dashPieces splits s after each dash that has a letter or digit on both
// sides, returning the byte offsets where the pieces start (the first is
// 0). The dash stays with the piece before it as its trail.
func dashPieces(s string) []int {
	starts := []int{0}
	seenCore := false
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		if n := dashAt(s, i); n > 0 {
			if seenCore && i+n < len(s) {
				if next, _ := utf8.DecodeRuneInString(s[i+n:]); unicode.IsLetter(next) || unicode.IsDigit(next) {
					starts = append(starts, i+n)
					seenCore = false
				}
			}
			i += n
			continue
		}
		if unicode.IsLetter(r) || unicode.IsDigit(r) {
			seenCore = true
		}
		i += size
	}
	return starts
}

// tokenize splits text at white space, recording where each token is.
func tokenize(text string) []token {
	var toks []token
	line, col := 1, 1
	start, startCol := -1, 0
	flush := func(end int) {
		if start < 0 {
			return
		}
		raw := text[start:end]
		ps := dashPieces(raw)
		for k, p := range ps {
			e := len(raw)
			if k+1 < len(ps) {
				e = ps[k+1]
			}
			t := token{start: start + p, end: start + e, line: line, col: startCol + utf8.RuneCountInString(raw[:p]), conf: -1, word: -1}
			t.lead, t.core, t.trail = splitToken(raw[p:e])
			toks = append(toks, t)
		}
		start = -1
	}
	for i, r := range text {
		if i == 0 && r == bom {
			continue // not counted as a column either
		}
		if unicode.IsSpace(r) {
			flush(i)
			if r == '\n' {
				if len(toks) > 0 {
					toks[len(toks)-1].lineEnd = true
				}
				line++
				col = 1
				continue
			}
		} else if start < 0 {
			start, startCol = i, col
		}
		col++
	}
	flush(len(text))
	if len(toks) > 0 {
		toks[len(toks)-1].lineEnd = true
	}
	return toks
}

// splitToken separates leading and trailing punctuation from the core,
// which runs from the first to the last letter or digit, with the
// combining marks that follow it (a word written decomposed, NFD "café",
// ends in U+0301, which belongs to its last letter).
func splitToken(s string) (lead, core, trail string) {
	first, last := -1, -1
	for i, r := range s {
		if unicode.IsLetter(r) || unicode.IsDigit(r) {
			if first < 0 {
				first = i
			}
			last = i + utf8.RuneLen(r)
		} else if last == i && unicode.Is(unicode.M, r) {
			last = i + utf8.RuneLen(r)
		}
	}
	if first < 0 {
		return s, "", ""
	}
	return s[:first], s[first:last], s[last:]
}

// Case patterns of a core's letters.
const (
	caseLower = iota
	caseTitle
	caseUpper
	caseMixed
)

func casePattern(s string) int {
	upper, lower, n := 0, 0, 0
	firstUpper := false
	for _, r := range s {
		if !unicode.IsLetter(r) {
			continue
		}
		if unicode.IsUpper(r) {
			upper++
			if n == 0 {
				firstUpper = true
			}
		} else if unicode.IsLower(r) {
			lower++
		}
		n++
	}
	switch {
	case upper == 0:
		return caseLower
	case lower == 0 && n > 1:
		return caseUpper
	case firstUpper && upper == 1:
		return caseTitle
	case lower == 0: // one upper-case letter
		return caseTitle
	}
	return caseMixed
}

// applyCase gives the lower-case word w the case pattern p of the token it
// replaces. Mixed case becomes lower case, or title case when the token
// began with a capital.
func applyCase(w string, p int, firstUpper bool) string {
	switch p {
	case caseUpper:
		return strings.ToUpper(w)
	case caseTitle:
		return title(w)
	case caseMixed:
		if firstUpper {
			return title(w)
		}
	}
	return w
}

func title(w string) string {
	r, n := utf8.DecodeRuneInString(w)
	if r == utf8.RuneError {
		return w
	}
	return string(unicode.ToTitle(r)) + w[n:]
}

func startsUpper(s string) bool {
	for _, r := range s {
		if unicode.IsLetter(r) {
			return unicode.IsUpper(r)
		}
	}
	return false
}

var (
	romanRe   = regexp.MustCompile(`^(?i)m{0,4}(cm|cd|d?c{0,3})(xc|xl|l?x{0,3})(ix|iv|v?i{0,3})$`)
	ordinalRe = regexp.MustCompile(`^(?i)[0-9]+(st|nd|rd|th|d|s)$`)
	// abbrevRe matches a core of letters in groups of one or two parted
	// by full stops: initials and abbreviations ("L.S", "U.S", "e.g",
	// "z.B"), which no lexicon lists and which are read as printed more
	// often than not (a clean held-out page had "L.S." made "LANDS.").
	abbrevRe = regexp.MustCompile(`^(\pL{1,2}\.)+\pL{1,2}$`)
)

// confusableDigits are digits commonly read for letters (0/o, 1/l/I, 5/s,
// 8/B); a core with other digits is left alone as a number or code.
const confusableDigits = "0158"

// protected reports whether a core must be left as it is whatever the
// model says: numbers and dates, codes, URLs and e-mail addresses, roman
// numerals, suspended compound parts. known tells whether the lexicon has the word.
func protected(raw, core string, known bool) bool {
	if i := strings.Index(raw, core); i >= 0 {
		// A suspended compound part ("for-, while- und until-Schleifen",
		// "Ein- oder Ausgabe", "land- og sjøveien"): a hyphen and more
		// punctuation after the word; the part need not be a word.
		// "--" is a typewriter dash, not a hyphen.
		if trail := raw[i+len(core):]; strings.HasPrefix(trail, "-") && len(trail) > 1 && trail[1] != '-' {
			return true
		}
	}
	if strings.Contains(raw, "://") || strings.HasPrefix(strings.ToLower(raw), "www.") || strings.Contains(core, "@") {
		return true
	}
	letters, digits := 0, 0
	for _, r := range core {
		switch {
		case unicode.IsLetter(r):
			letters++
		case unicode.IsDigit(r):
			digits++
			if r > unicode.MaxASCII || !strings.ContainsRune(confusableDigits, r) {
				return true
			}
		}
	}
	if letters == 0 || digits > letters || (digits > 0 && letters < 2 && utf8.RuneCountInString(core) > 2) {
		return true // numbers, dates, times, codes like A4
	}
	if abbrevRe.MatchString(core) {
		return true // initials and abbreviations: "L.S", "U.S", "e.g"
	}
	if digits > 0 && ordinalRe.MatchString(core) || misreadOrdinal(core) {
		return true
	}
	if !known && romanRe.MatchString(core) && (casePattern(core) == caseUpper || len(core) <= 4) {
		return true
	}
	return false
}

// misreadOrdinal reports whether core is an ordinal number with "I" or "l"
// read for the digit 1 ("Ist", "2Ist", "l2th"): read with 1 for each, the
// digits must end as the suffix requires (1st, 2nd, 3rd, else th; 11th to
// 13th). Such a token is left alone: no word is meant there.
func misreadOrdinal(core string) bool {
	if len(core) < 3 {
		return false
	}
	suf := strings.ToLower(core[len(core)-2:])
	num := core[:len(core)-2]
	if suf != "st" && suf != "nd" && suf != "rd" && suf != "th" || !strings.ContainsAny(num, "Il") {
		return false
	}
	digits := []byte(num)
	for i, b := range digits {
		switch {
		case b == 'I' || b == 'l':
			digits[i] = '1'
		case b < '0' || b > '9':
			return false
		}
	}
	last, tens := digits[len(digits)-1], byte('0')
	if len(digits) > 1 {
		tens = digits[len(digits)-2]
	}
	want := "th"
	if tens != '1' {
		switch last {
		case '1':
			want = "st"
		case '2':
			want = "nd"
		case '3':
			want = "rd"
		}
	}
	return suf == want
}

// lookupForm is the lower-case form a core is looked up and scored in:
// composed (Unicode normalisation form C, as the lexicon's words are), with
// typographic apostrophes made ASCII ones, the long s and ligatures as
// plain letters (lexicon.FoldForms).
func lookupForm(core string) string {
	if !norm.NFC.IsNormalString(core) {
		core = norm.NFC.String(core)
	}
	s := lexicon.FoldForms(strings.ToLower(core))
	if strings.ContainsAny(s, "’‘") {
		s = strings.NewReplacer("’", "'", "‘", "'").Replace(s)
	}
	return s
}

// inPageForm writes the replacement w (composed, as the lexicon has it) in
// the normalisation form of the core it replaces: decomposed when the page
// wrote that word decomposed, and with the long s when the page's word had
// one, so a correction does not change how the rest of the page is
// encoded.
func inPageForm(core, w string) string {
	if strings.Contains(core, "ſ") {
		// A page set with the long s gets it in the replacement too.
		w = LongS(w)
	}
	if norm.NFC.IsNormalString(core) {
		return w
	}
	return norm.NFD.String(w)
}

// plainWord reports whether s is letters with inner apostrophes or hyphens
// (the shape of words the corrector proposes or splits).
func plainWord(s string) bool { return indexable(s) }
