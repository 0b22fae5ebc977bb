package quality

import (
	"math"
	"testing"

	"recto/lexicon"
	"recto/ocr"
)

func word(text string, conf float64, line int) ocr.Word {
	return ocr.Word{Text: text, Conf: conf, Box: ocr.Box{W: 100, H: 30}, Line: line}
}

func TestPageFeatures(t *testing.T) {
	lex := lexicon.New()
	for _, w := range []string{"the", "whale", "sea", "going", "harpooneer"} {
		lex.Add(w, 1)
	}
	rec := &ocr.Record{Width: 1000, Height: 1000, DPI: 100, Words: []ocr.Word{
		word("The", 0.95, 0), word("whale,", 0.9, 0), word("tbe", 0.4, 0), word("harpoon-", 0.8, 0),
		word("eer", 0.7, 1), word("w1th", 0.3, 1), word("sea-going", 0.9, 1), word("I", 0.5, 1),
	}}
	f := PageFeatures(rec, lex)
	near := func(name string, got, want float64) {
		t.Helper()
		if math.Abs(got-want) > 1e-9 {
			t.Errorf("%s = %v, want %v", name, got, want)
		}
	}
	if !f.FromRecord || f.Tokens != 8 || f.Blank {
		t.Errorf("FromRecord %v, Tokens %d, Blank %v", f.FromRecord, f.Tokens, f.Blank)
	}
	near("MeanConf", f.MeanConf, (0.95+0.9+0.4+0.8+0.7+0.3+0.9+0.5)/8)
	near("LowConf", f.LowConf, 3.0/8) // 0.4, 0.3, 0.5
	// Lexicon words (2+ letters): The, whale, tbe, harpooneer (joined over
	// the line break), sea, going: 5 of 6 ("w1th" has a digit, "I" is short).
	if f.LexWords != 6 {
		t.Errorf("LexWords = %d, want 6", f.LexWords)
	}
	near("LexHit", f.LexHit, 5.0/6)
	near("Garbage", f.Garbage, 1.0/8) // w1th
	near("Short", f.Short, 1.0/8)     // I
	// Characters: 3+6+3+8+3+4+9+1 = 37; letters 31, digits 1, punct 5 (",", "-", "-", ... ).
	if f.Chars != 37 {
		t.Errorf("Chars = %d, want 37", f.Chars)
	}
	near("Digits", f.Digits, 1.0/37)
	near("Punct", f.Punct, 3.0/37)
	near("Coverage", f.Coverage, 8*100*30/1e6)
	near("Density", f.Density, 37.0/100) // 37 characters on 10 × 10 inches
}

func TestTextFeaturesAndBlank(t *testing.T) {
	f := TextFeatures("  \n\n ", nil)
	if !f.Blank || f.FromRecord {
		t.Errorf("empty text: Blank %v FromRecord %v", f.Blank, f.FromRecord)
	}
	f = PageFeatures(&ocr.Record{Width: 100, Height: 100, Blank: true}, nil)
	if !f.Blank {
		t.Error("record marked blank should give Blank features")
	}
	f = TextFeatures("The whale's sea-\ngoing ship.", nil)
	// The, whale's, seagoing (joined at the line-end hyphen), ship.
	if f.LexWords != 4 || f.LexHit != 1 || f.MeanConf != 0 {
		t.Errorf("text features: %+v", f)
	}
}
