package quality

import (
	"strings"
	"unicode"

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

	LexWords int     `json:"lex_words"` // words of letters (2+ letters) checked against the lexicon
	LexHit   float64 `json:"lex_hit"`   // share of LexWords found in the lexicon (exact key or accent-blind)
	Garbage  float64 `json:"garbage"`   // share of tokens breaking a garbage rule (see GarbageRules)
	Short    float64 `json:"short"`     // share of tokens of a single character

	Letters float64 `json:"letters"` // share of characters that are letters
	Digits  float64 `json:"digits"`  // share of characters that are digits
	Punct   float64 `json:"punct"`   // share of characters that are punctuation
	Symbols float64 `json:"symbols"` // share of characters that are anything else (symbols, marks, controls)
	Upper   float64 `json:"upper"`   // share of letters in upper case

	Coverage float64 `json:"coverage"` // share of the page area covered by word boxes
	Density  float64 `json:"density"`  // characters per square inch of page (page size from Width, Height, DPI)

	Noise float64 `json:"noise"` // the page's estimated noise, grey levels (standard deviation), from the record

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
	toks := make([]string, 0, len(rec.Words))
	var confSum float64
	var low int
	var boxArea float64
	for _, w := range rec.Words {
		for _, t := range strings.Fields(w.Text) {
			toks = append(toks, t)
		}
		if strings.TrimSpace(w.Text) == "" {
			continue
		}
		confSum += w.Conf
		if w.Conf < LowConfidence {
			low++
		}
		boxArea += float64(w.Box.W) * float64(w.Box.H)
	}
	nw := 0
	for _, w := range rec.Words {
		if strings.TrimSpace(w.Text) != "" {
			nw++
		}
	}
	if nw > 0 {
		f.MeanConf = confSum / float64(nw)
		f.LowConf = float64(low) / float64(nw)
	}
	textStats(&f, toks, joinHyphens(rec), lex)
	if area := float64(rec.Width) * float64(rec.Height); area > 0 {
		f.Coverage = min(boxArea/area, 1)
		if rec.DPI > 0 {
			f.Density = float64(f.Chars) / (area / (rec.DPI * rec.DPI))
		}
	}
	f.Noise = rec.Noise
	f.Blank = rec.Blank
	return f
}

// TextFeatures computes the features of plain OCR text, for pages where
// only the .txt exists: no confidences, boxes or page size.
func TextFeatures(text string, lex *lexicon.Lexicon) Features {
	var f Features
	toks := strings.Fields(text)
	textStats(&f, toks, lexWords(strings.ReplaceAll(text, "-\n", "")), lex)
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

// textStats fills the token, lexicon, garbage and character-class fields.
func textStats(f *Features, toks, words []string, lex *lexicon.Lexicon) {
	if lex == nil {
		lex = lexicon.Default()
	}
	f.Tokens = len(toks)
	var garbage, short, letters, digits, punct, other, upper int
	for _, t := range toks {
		if IsGarbage(t) {
			garbage++
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
	if f.Tokens > 0 {
		f.Garbage = float64(garbage) / float64(f.Tokens)
		f.Short = float64(short) / float64(f.Tokens)
	}
	if f.Chars > 0 {
		c := float64(f.Chars)
		f.Letters, f.Digits, f.Punct, f.Symbols = float64(letters)/c, float64(digits)/c, float64(punct)/c, float64(other)/c
	}
	if letters > 0 {
		f.Upper = float64(upper) / float64(letters)
	}
	hit := 0
	for _, w := range words {
		if len([]rune(w)) < 2 {
			continue
		}
		f.LexWords++
		if lex.Has(w) || lex.HasFold(w) {
			hit++
		}
	}
	if f.LexWords > 0 {
		f.LexHit = float64(hit) / float64(f.LexWords)
	}
}
