package quality

import (
	"strings"
	"unicode"
	"unicode/utf8"

	"recto/lexicon"
	"recto/ocr"
)

// LowConfidence is the word confidence below which a word counts as
// uncertain in Features.LowConf (0.6, i.e. 60 on Tesseract's percent scale;
// common practice, not from a published source).
const LowConfidence = 0.6

// Features describe one page of OCR output without ground truth. Shares are
// fractions in [0, 1]; a share whose denominator is zero is 0.
type Features struct {
	// FromRecord is true when the features come from a page record (.json)
	// with confidences and boxes; false for plain text (TextFeatures), in
	// which case MeanConf, LowConf, Coverage and Density are 0 and unused.
	FromRecord bool `json:"from_record"`

	Tokens int `json:"tokens"` // whitespace-separated tokens (words as recognised)
	Chars  int `json:"chars"`  // non-space characters (code points)

	MeanConf float64 `json:"mean_conf"` // mean word confidence, in [0, 1]
	LowConf  float64 `json:"low_conf"`  // share of words with confidence < LowConfidence

	// Shape of the confidence distribution (page records only): shares of
	// words under 0.3 and under 0.9, and the mean confidence weighted by
	// each word's characters (code points), so a long word counts more
	// than a stray mark.
	ConfUnder30 float64 `json:"conf_under_30"`
	ConfUnder90 float64 `json:"conf_under_90"`
	CharConf    float64 `json:"char_conf"`

	LexWords int     `json:"lex_words"` // words of letters (2+ letters) checked against the lexicon
	LexHit   float64 `json:"lex_hit"`   // share of LexWords found in the lexicon (exact key or accent-blind)
	Garbage  float64 `json:"garbage"`   // share of tokens breaking a garbage rule (see GarbageRules)
	Short    float64 `json:"short"`     // share of tokens of a single character

	LexHitChars  float64 `json:"lex_hit_chars"` // share of the letters of LexWords that lie in words found in the lexicon
	Stray        float64 `json:"stray"`         // share of tokens with neither a letter nor a digit ("~", "“.", "-..")
	Suspect      float64 `json:"suspect"`       // share of characters in suspect tokens: a lexicon miss, garbage, or no letter or digit
	SuspectDoubt float64 `json:"suspect_doubt"` // Σ characters·(1 − confidence) over suspect words, over all characters (records only)
	EdgeJunk     float64 `json:"edge_junk"`     // share of lines whose first or last token has no letter

	Letters float64 `json:"letters"` // share of characters that are letters
	Digits  float64 `json:"digits"`  // share of characters that are digits
	Punct   float64 `json:"punct"`   // share of characters that are punctuation
	Symbols float64 `json:"symbols"` // share of characters that are anything else (symbols, marks, controls)
	Upper   float64 `json:"upper"`   // share of letters in upper case

	Coverage float64 `json:"coverage"` // share of the page area covered by word boxes
	Density  float64 `json:"density"`  // characters per square inch of page (page size from Width, Height, DPI)

	Noise float64 `json:"noise"` // the page's estimated noise, grey levels (standard deviation), from the record

	// InkMeasured is true when the record carries the shape of the page's
	// ink (ocr.Record.Ink; records from before it was measured do not);
	// TextLikeInk says whether that ink has the shape of text (lines of
	// letter-sized marks, ocr.InkShape.LooksLikeText) and InkLines counts
	// those lines. SmallTextInk says that ink that does not look like
	// text at letter size does when marks of 2-3 pixels are taken for
	// letters (ocr.InkShape.SmallText: print too small for the scan's
	// resolution).
	InkMeasured  bool `json:"ink_measured"`
	TextLikeInk  bool `json:"text_like_ink"`
	InkLines     int  `json:"ink_lines"`
	SmallTextInk bool `json:"small_text_ink,omitempty"`

	// NoLexicon is true when the page's language had no lexicon and the
	// features were computed with lexicon.AcceptAll: LexHit, LexHitChars
	// and the lexicon part of Suspect carry no evidence, and the reasons
	// say so.
	NoLexicon bool `json:"no_lexicon,omitempty"`

	// Blank is true when there is nothing to read: the record says the
	// engine found no ink worth recognising, or (plain text only, where ink
	// cannot be seen) the text has no characters. A record with ink but no
	// recognised character is not blank: see Triage.
	Blank bool `json:"blank"`
}

// PageFeatures computes the features of a page record. lex nil means the
// embedded English lexicon (lexicon.Default).
func PageFeatures(rec *ocr.Record, lex *lexicon.Lexicon) Features {
	f := Features{FromRecord: true}
	var lines [][]string
	var confs [][]float64 // confidence of each token, shaped like lines
	var confSum, charConfSum, charSum float64
	var nw, low, under30, under90 int
	var boxArea float64
	for i, w := range rec.Words {
		toks := strings.Fields(w.Text)
		if i == 0 || w.Line != rec.Words[i-1].Line || w.Block != rec.Words[i-1].Block {
			lines = append(lines, nil)
			confs = append(confs, nil)
		}
		lines[len(lines)-1] = append(lines[len(lines)-1], toks...)
		for range toks {
			confs[len(confs)-1] = append(confs[len(confs)-1], w.Conf)
		}
		if len(toks) == 0 {
			continue
		}
		nw++
		confSum += w.Conf
		n := float64(utf8.RuneCountInString(w.Text))
		charConfSum += n * w.Conf
		charSum += n
		if w.Conf < LowConfidence {
			low++
		}
		if w.Conf < 0.3 {
			under30++
		}
		if w.Conf < 0.9 {
			under90++
		}
		boxArea += float64(w.Box.W) * float64(w.Box.H)
	}
	if nw > 0 {
		f.MeanConf = confSum / float64(nw)
		f.LowConf = float64(low) / float64(nw)
		f.ConfUnder30 = float64(under30) / float64(nw)
		f.ConfUnder90 = float64(under90) / float64(nw)
		f.CharConf = charConfSum / charSum
	}
	textStats(&f, lines, confs, joinHyphens(rec), lex)
	if area := float64(rec.Width) * float64(rec.Height); area > 0 {
		f.Coverage = min(boxArea/area, 1)
		if rec.DPI > 0 {
			f.Density = float64(f.Chars) / (area / (rec.DPI * rec.DPI))
		}
	}
	f.Noise = rec.Noise
	f.Blank = rec.Blank
	if rec.Ink != nil {
		f.InkMeasured, f.TextLikeInk, f.InkLines = true, rec.Ink.LooksLikeText(), rec.Ink.Lines
		f.SmallTextInk = !f.TextLikeInk && rec.Ink.SmallText
	}
	return f
}

// TextFeatures computes the features of plain OCR text, for pages where
// only the .txt exists: no confidences, boxes or page size.
func TextFeatures(text string, lex *lexicon.Lexicon) Features {
	var f Features
	var lines [][]string
	for _, l := range strings.Split(text, "\n") {
		if toks := strings.Fields(l); len(toks) > 0 {
			lines = append(lines, toks)
		}
	}
	textStats(&f, lines, nil, lexWords(strings.ReplaceAll(text, "-\n", "")), lex)
	f.Blank = f.Chars == 0
	return f
}

// joinHyphens returns the words of a record for lexicon lookup, with a word
// hyphenated at a line end joined to the first word of the next line.
func joinHyphens(rec *ocr.Record) []string {
	var b strings.Builder
	for i, w := range rec.Words {
		if i > 0 {
			prev := rec.Words[i-1]
			if !(w.Line != prev.Line && strings.HasSuffix(prev.Text, "-") && len(prev.Text) > 1) {
				b.WriteByte(' ')
			} else {
				s := b.String()
				b.Reset()
				b.WriteString(s[:len(s)-1])
			}
		}
		b.WriteString(w.Text)
	}
	return lexWords(b.String())
}

// lexWords returns the words of text that are made of letters (with inner
// apostrophes or hyphens) after edge punctuation is removed, split at
// hyphens; words with digits or other marks inside are not lexicon words
// (the garbage rules judge those).
func lexWords(text string) []string {
	var out []string
	for _, tok := range strings.Fields(text) {
		t := strings.TrimFunc(tok, func(r rune) bool { return !unicode.IsLetter(r) && !unicode.IsDigit(r) })
		if t == "" {
			continue
		}
		ok := true
		for _, r := range t {
			if !unicode.IsLetter(r) && !unicode.IsMark(r) && r != '\'' && r != '’' && r != '-' {
				ok = false
				break
			}
		}
		if !ok {
			continue
		}
		for _, part := range strings.Split(t, "-") {
			if part != "" {
				out = append(out, strings.ReplaceAll(part, "’", "'"))
			}
		}
	}
	return out
}

// textStats fills the token, lexicon, garbage, suspect, line and
// character-class fields from the tokens of each line and the words for
// lexicon lookup; confs, when not nil, holds each token's confidence in the
// shape of lines (a page record's) and gives SuspectDoubt.
func textStats(f *Features, lines [][]string, confs [][]float64, words []string, lex *lexicon.Lexicon) {
	if lex == nil {
		lex = lexicon.Default()
	}
	var suspectChars int
	var doubt float64
	var garbage, short, stray, letters, digits, punct, other, upper, edge, nlines int
	for _, toks := range lines {
		if len(toks) == 0 {
			continue
		}
		nlines++
		if !hasLetter(toks[0]) || !hasLetter(toks[len(toks)-1]) {
			edge++
		}
	}
	if nlines > 0 {
		f.EdgeJunk = float64(edge) / float64(nlines)
	}
	for li, toks := range lines {
		for ti, t := range toks {
			f.Tokens++
			if IsGarbage(t) {
				garbage++
			}
			if !strings.ContainsFunc(t, func(r rune) bool { return unicode.IsLetter(r) || unicode.IsDigit(r) }) {
				stray++
			}
			if suspect(t, lex) {
				n := utf8.RuneCountInString(t)
				suspectChars += n
				if confs != nil {
					doubt += float64(n) * (1 - confs[li][ti])
				}
			}
			n := 0
			for _, r := range t {
				n++
				switch {
				case unicode.IsLetter(r):
					letters++
					if unicode.IsUpper(r) {
						upper++
					}
				case unicode.IsDigit(r):
					digits++
				case unicode.IsPunct(r):
					punct++
				default:
					other++
				}
			}
			f.Chars += n
			if n == 1 {
				short++
			}
		}
	}
	if f.Tokens > 0 {
		f.Garbage = float64(garbage) / float64(f.Tokens)
		f.Short = float64(short) / float64(f.Tokens)
		f.Stray = float64(stray) / float64(f.Tokens)
	}
	if f.Chars > 0 {
		c := float64(f.Chars)
		f.Suspect = float64(suspectChars) / c
		f.SuspectDoubt = doubt / c
		f.Letters, f.Digits, f.Punct, f.Symbols = float64(letters)/c, float64(digits)/c, float64(punct)/c, float64(other)/c
	}
	if letters > 0 {
		f.Upper = float64(upper) / float64(letters)
	}
	hit, hitChars, allChars := 0, 0, 0
	for _, w := range words {
		n := utf8.RuneCountInString(w)
		if n < 2 {
			continue
		}
		f.LexWords++
		allChars += n
		if lex.Has(w) || lex.HasFold(w) {
			hit++
			hitChars += n
		}
	}
	if f.LexWords > 0 {
		f.LexHit = float64(hit) / float64(f.LexWords)
		f.LexHitChars = float64(hitChars) / float64(allChars)
	}
}

// suspect reports whether a token is probably misread: it breaks a garbage
// rule, has neither letter nor digit, or holds a word of 2+ letters that
// the lexicon lacks (hyphenation across lines is not joined here).
func suspect(tok string, lex *lexicon.Lexicon) bool {
	if IsGarbage(tok) || !strings.ContainsFunc(tok, func(r rune) bool { return unicode.IsLetter(r) || unicode.IsDigit(r) }) {
		return true
	}
	t := strings.TrimFunc(tok, func(r rune) bool { return !unicode.IsLetter(r) && !unicode.IsDigit(r) })
	for _, r := range t {
		if !unicode.IsLetter(r) && !unicode.IsMark(r) && r != '\'' && r != '’' && r != '-' {
			return false // digits or other marks inside: the garbage rules judge it
		}
	}
	for part := range strings.SplitSeq(t, "-") {
		if utf8.RuneCountInString(part) < 2 {
			continue
		}
		if strings.ContainsRune(part, '’') {
			part = strings.ReplaceAll(part, "’", "'")
		}
		if !lex.Has(part) && !lex.HasFold(part) {
			return true
		}
	}
	return false
}

func hasLetter(tok string) bool { return strings.ContainsFunc(tok, unicode.IsLetter) }
