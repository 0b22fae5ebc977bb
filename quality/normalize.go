package quality

import (
	"strings"
	"unicode"
	"unicode/utf8"

	"golang.org/x/text/cases"
	"golang.org/x/text/unicode/norm"
)

// NormOptions chooses how text is normalised before it is scored. The zero
// value is the default normalisation, which every option extends:
//
//   - the byte order mark U+FEFF is dropped, at the start of the text and
//     anywhere else (where it is a leftover of joined files, invisible);
//   - the text is put in Unicode Normalization Form C (NFC), so precomposed
//     and combining spellings of the same letter compare equal;
//   - every run of white space (unicode.IsSpace, which includes CR, LF, tab
//     and no-break space, so CRLF line ends are accepted) becomes one
//     U+0020 space;
//   - leading and trailing space is trimmed.
//
// Practitioners differ on the choices below; each is off by default.
type NormOptions struct {
	// FoldCase applies Unicode full case folding ("Straße" and "STRASSE"
	// become "strasse").
	FoldCase bool
	// IgnorePunct deletes every code point of Unicode general category P
	// (punctuation: quotes, dashes, full stops, brackets...). Symbols
	// (category S: "$", "+", "§") are kept. A deleted mark leaves no space,
	// so "well-known" becomes "wellknown" on both sides alike.
	IgnorePunct bool
	// PlainTypography maps typographic variants to plain ones: curly and
	// low single quotes and primes to "'", curly and low double quotes to
	// '"', hyphen, dash and minus variants to "-", the ellipsis to "...",
	// the Latin ligatures U+FB00–U+FB06 ("ﬁ", "ﬂ", "ﬀ", "ﬃ", "ﬄ", "ﬅ", "ﬆ")
	// to their letters and the long s "ſ" to "s"; and the Fraktur forms: the
	// double oblique hyphen "⸗" to "-", the r rotunda "ꝛ" to "r", and the
	// combining small e written over a vowel for the old umlaut ("aͤ") to
	// the diaeresis ("ä"). The full table is typographyMap.
	PlainTypography bool
}

// typographyMap is the PlainTypography table (common practice in
// transcription guidelines; the code points are from the Unicode charts).
var typographyMap = map[rune]string{
	'\u2018': "'", '\u2019': "'", '\u201A': "'", '\u201B': "'", '\u2032': "'", '\u02BC': "'", // U+02BC: modifier letter apostrophe
	'\u201C': `"`, '\u201D': `"`, '\u201E': `"`, '\u201F': `"`, '\u2033': `"`,
	'\u2010': "-", '\u2011': "-", '\u2012': "-", '\u2013': "-", '\u2014': "-", '\u2015': "-", '\u2212': "-",
	'\u2026': "...",
	'\uFB00': "ff", '\uFB01': "fi", '\uFB02': "fl", '\uFB03': "ffi", '\uFB04': "ffl", '\uFB05': "st", '\uFB06': "st",
	'\u017F': "s",
	// Fraktur print: the double oblique hyphen, r rotunda, and the small e
	// above a vowel, the umlaut's older form (Unicode code charts U+2E17,
	// U+A75A/B, U+0364; that these stand for "-", "r" and the diaeresis is
	// common practice in transcribing Fraktur, from memory).
	'\u2E17': "-", '\uA75A': "R", '\uA75B': "r", '\u0364': "\u0308",
}

// String describes the active normalisation in words, for reports.
func (o NormOptions) String() string {
	var b strings.Builder
	b.WriteString("NFC, white space collapsed and trimmed")
	b.WriteString(onOff(o.FoldCase, ", case folded", ", case kept"))
	b.WriteString(onOff(o.IgnorePunct, ", punctuation ignored", ", punctuation kept"))
	b.WriteString(onOff(o.PlainTypography, ", typography made plain", ", typography kept"))
	return b.String()
}

func onOff(on bool, yes, no string) string {
	if on {
		return yes
	}
	return no
}

// Normalize returns s normalised as o describes (see NormOptions). Invalid
// UTF-8 bytes become U+FFFD; callers that must reject them check
// utf8.ValidString first. Normalize runs in time linear in len(s).
func Normalize(s string, o NormOptions) string {
	if strings.Contains(s, "\uFEFF") {
		s = strings.ReplaceAll(s, "\uFEFF", "")
	}
	s = norm.NFC.String(s)
	// Fold first: folding can yield marks the other options remove
	// ("ŉ" folds to U+02BC + "n").
	if o.FoldCase {
		s = foldCase(s)
	}
	if o.PlainTypography || o.IgnorePunct {
		var b strings.Builder
		b.Grow(len(s))
		for _, r := range s {
			if o.PlainTypography {
				if t, ok := typographyMap[r]; ok {
					if !o.IgnorePunct {
						b.WriteString(t)
						continue
					}
					for _, tr := range t {
						if !unicode.IsPunct(tr) {
							b.WriteRune(tr)
						}
					}
					continue
				}
			}
			if o.IgnorePunct && unicode.IsPunct(r) {
				continue
			}
			b.WriteRune(r)
		}
		s = b.String()
	}
	if o.FoldCase || o.IgnorePunct || o.PlainTypography {
		// The options may leave text out of NFC: folding decomposes U+0130
		// into "i" + U+0307, and deleting "." from "e.\u0301" joins a mark
		// to a letter. The first NFC made canonically equivalent inputs
		// equal, so this second pass keeps them equal.
		s = norm.NFC.String(s)
	}
	return collapseSpace(s)
}

// collapseSpace turns every run of white space into one U+0020 and trims
// both ends; invalid bytes become U+FFFD.
func collapseSpace(s string) string {
	var b strings.Builder
	b.Grow(len(s))
	pending := false
	for _, r := range s {
		if unicode.IsSpace(r) {
			pending = b.Len() > 0
			continue
		}
		if pending {
			b.WriteByte(' ')
			pending = false
		}
		if r == utf8.RuneError {
			b.WriteString("\uFFFD")
			continue
		}
		b.WriteRune(r)
	}
	return b.String()
}

// foldCase applies Unicode full case folding. golang.org/x/text/cases
// (v0.44) folds Cherokee letters in a cycle (U+13EB to U+ABBB and back),
// so they are then mapped to the capitals that CaseFolding.txt (Unicode
// 15) gives as their folded form, which keeps folding idempotent.
func foldCase(s string) string {
	s = cases.Fold().String(s)
	return strings.Map(func(r rune) rune {
		if (r >= 0x13A0 && r <= 0x13FD) || (r >= 0xAB70 && r <= 0xABBF) {
			return unicode.ToUpper(r)
		}
		return r
	}, s)
}
