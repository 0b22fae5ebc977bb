package quality

import (
	"unicode"
	"unicode/utf8"
)

// Garbage-string detection.
//
// The rules follow Taghva, Nartker, Condit & Borsack (2001), "Automatic
// removal of 'garbage strings' in OCR text: an implementation" (rules L, A,
// R, V, P, C below), with the additions of Kulp & Kontostathis (2007), "On
// retrieving legal files: shortening documents and weeding out garbage"
// (consonant runs, mixed letters and digits, punctuation runs). The exact
// thresholds are recalled from memory of those papers, not copied from
// them; where a rule has been adapted for this project it says so. A token
// is a whitespace-separated string, as in both papers.

// GarbageRule names one rule; GarbageRules returns the rules a token breaks.
type GarbageRule string

const (
	// RuleLength (Taghva L): a string longer than 40 characters.
	RuleLength GarbageRule = "length"
	// RuleAlnum (Taghva A): more punctuation characters than alphanumeric
	// ones. Adaptations: sentence punctuation, quotes and brackets at the
	// ends of the token are not counted ("e.g.," is judged as "e.g"), and
	// tokens made only of dashes, ellipses or quotes ("—", "--", "…") are
	// typographic, not garbage, and are exempt.
	RuleAlnum GarbageRule = "punctuation"
	// RuleRepeat (Taghva R): four or more identical characters in a row.
	// Adaptation: digits are exempt ("10000", "1800").
	RuleRepeat GarbageRule = "repeat"
	// RuleVowels (Taghva V): among the letters of a string with at least
	// five letters, more than eight times as many consonants as vowels, or
	// the reverse ("y" counts as a vowel; "strengths", 8 to 1, passes).
	// Thresholds from memory.
	RuleVowels GarbageRule = "vowels"
	// RulePunctKinds (Taghva P): ignoring the first and last characters,
	// two or more different punctuation characters.
	RulePunctKinds GarbageRule = "punctuation-mix"
	// RuleCase (Taghva C): begins and ends with a lower-case letter and has
	// an upper-case letter in between ("tHe").
	RuleCase GarbageRule = "case"
	// RuleConsonants (Kulp & Kontostathis): six or more consecutive
	// consonants (Latin letters; "y" counts as a vowel). Threshold from memory.
	RuleConsonants GarbageRule = "consonants"
	// RuleMixed (Kulp & Kontostathis): letters and digits mixed in one
	// string ("w1th", "0f"). Adaptation: English ordinals ("1st", "22nd",
	// "3rd", "19th") and a single letter after digits ("12a", "1790s")
	// are exempt.
	RuleMixed GarbageRule = "letters-digits"
	// RulePunctRun (Kulp & Kontostathis): three or more consecutive
	// punctuation characters inside the string (not at its ends).
	RulePunctRun GarbageRule = "punctuation-run"
)

// IsGarbage reports whether tok breaks at least one garbage rule.
func IsGarbage(tok string) bool { return len(GarbageRules(tok)) > 0 }

// GarbageRules returns the rules tok breaks, in the order listed above;
// nil for a clean token or an empty one.
func GarbageRules(tok string) []GarbageRule {
	if tok == "" {
		return nil
	}
	var out []GarbageRule
	rs := []rune(tok)
	n := len(rs)
	if n > 40 {
		out = append(out, RuleLength)
	}
	var alnum, punct, letters, digits, vowels, cons int
	for _, r := range rs {
		switch {
		case unicode.IsLetter(r):
			alnum++
			letters++
			if isVowel(r) {
				vowels++
			} else if isLatinConsonant(r) {
				cons++
			}
		case unicode.IsDigit(r):
			alnum++
			digits++
		case unicode.IsPunct(r) || unicode.IsSymbol(r):
			punct++
		}
	}
	if punct-edgePunct(rs) > alnum && !typographic(rs) {
		out = append(out, RuleAlnum)
	}
	run := 1
	for i := 1; i < n; i++ {
		if rs[i] == rs[i-1] && !unicode.IsDigit(rs[i]) {
			run++
			if run == 4 {
				out = append(out, RuleRepeat)
				break
			}
		} else {
			run = 1
		}
	}
	if letters >= 5 && (cons > 8*vowels || vowels > 8*cons) {
		out = append(out, RuleVowels)
	}
	if n > 2 {
		kinds := map[rune]bool{}
		for _, r := range rs[1 : n-1] {
			if unicode.IsPunct(r) || unicode.IsSymbol(r) {
				kinds[r] = true
			}
		}
		if len(kinds) >= 2 {
			out = append(out, RulePunctKinds)
		}
	}
	if n > 2 && unicode.IsLower(rs[0]) && unicode.IsLower(rs[n-1]) {
		for _, r := range rs[1 : n-1] {
			if unicode.IsUpper(r) {
				out = append(out, RuleCase)
				break
			}
		}
	}
	run = 0
	for _, r := range rs {
		if isLatinConsonant(r) {
			run++
			if run == 6 {
				out = append(out, RuleConsonants)
				break
			}
		} else {
			run = 0
		}
	}
	if letters > 0 && digits > 0 && !ordinalLike(rs) {
		out = append(out, RuleMixed)
	}
	run = 0
	for i := 1; i < n-1; i++ {
		if unicode.IsPunct(rs[i]) || unicode.IsSymbol(rs[i]) {
			run++
			if run == 3 {
				out = append(out, RulePunctRun)
				break
			}
		} else {
			run = 0
		}
	}
	return out
}

func isVowel(r rune) bool {
	switch unicode.ToLower(r) {
	case 'a', 'e', 'i', 'o', 'u', 'y', 'à', 'á', 'â', 'ä', 'è', 'é', 'ê', 'ë', 'ì', 'í', 'î', 'ï', 'ò', 'ó', 'ô', 'ö', 'ù', 'ú', 'û', 'ü':
		return true
	}
	return false
}

func isLatinConsonant(r rune) bool {
	r = unicode.ToLower(r)
	return r < utf8.RuneSelf && 'a' <= r && r <= 'z' && !isVowel(r)
}

// typographic reports whether rs consists only of dashes, ellipses, quotes
// and apostrophes (with surrounding brackets or sentence punctuation).
func typographic(rs []rune) bool {
	for _, r := range rs {
		switch r {
		case '-', '–', '—', '…', '.', '\'', '"', '‘', '’', '“', '”', ',', ';', ':', '!', '?', '(', ')':
		default:
			return false
		}
	}
	return true
}

// ordinalLike reports whether rs (edge punctuation ignored) is digits
// followed by an English ordinal suffix or by a single letter.
func ordinalLike(rs []rune) bool {
	i, j := 0, len(rs)
	for i < j && !unicode.IsLetter(rs[i]) && !unicode.IsDigit(rs[i]) {
		i++
	}
	for j > i && !unicode.IsLetter(rs[j-1]) && !unicode.IsDigit(rs[j-1]) {
		j--
	}
	k := i
	for k < j && unicode.IsDigit(rs[k]) {
		k++
	}
	if k == i {
		return false
	}
	suf := string(rs[k:j])
	switch suf {
	case "st", "nd", "rd", "th", "d", "s", "ST", "ND", "RD", "TH":
		return true
	}
	return len(rs[k:j]) == 1 && unicode.IsLetter(rs[k])
}

// edgePunct counts the sentence punctuation, quotes and brackets at the
// start and end of rs (all of rs when it has nothing else).
func edgePunct(rs []rune) int {
	isEdge := func(r rune) bool {
		switch r {
		case '.', ',', ';', ':', '!', '?', '"', '\'', '‘', '’', '“', '”', '(', ')', '[', ']':
			return true
		}
		return false
	}
	i, j := 0, len(rs)
	for i < j && isEdge(rs[i]) {
		i++
	}
	for j > i && isEdge(rs[j-1]) {
		j--
	}
	return i + len(rs) - j
}
