package correct

import (
	"strings"
	"unicode"
	"unicode/utf8"
)

// Fraktur print (issue 12 part 3). The long s "ſ" and the Latin ligatures
// are forms of letters, not other letters: words are looked up, scored and
// trained with them folded to their plain letters (lexicon.FoldForms), and a
// replacement is written back in the page's own form (LongS when the word
// was read with a long s).

// LongS writes text in the long-s orthography of German and English print
// before the 19th century's end: a lower-case s is long ("ſ") except at the
// end of a word, where the round s stands; "ß" and capitals are unchanged.
// This is the basic rule (Duden's Fraktur rules, from memory); the round s
// at the end of a compound's parts ("Hausthür") and before some letters in
// some printers' use needs the word's structure and is not applied, so a
// page set by LongS has a long s in a few places a printer would have set
// a round one.
func LongS(text string) string {
	if !strings.Contains(text, "s") {
		return text
	}
	var b strings.Builder
	b.Grow(len(text) + 8)
	for i, r := range text {
		if r != 's' {
			b.WriteRune(r)
			continue
		}
		next, _ := utf8.DecodeRuneInString(text[i+1:])
		if i+1 < len(text) && unicode.IsLetter(next) {
			b.WriteRune('ſ')
		} else {
			b.WriteRune('s')
		}
	}
	return b.String()
}
