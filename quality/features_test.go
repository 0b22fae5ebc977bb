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

	// Confidence shape: under 0.3 none (0.3 itself is not under); under
	// 0.9: 0.4, 0.8, 0.7, 0.3, 0.5. By characters: Σ n·conf = 2.85 + 5.4 +
	// 1.2 + 6.4 + 2.1 + 1.2 + 8.1 + 0.5 = 27.75 over 37 characters.
	near("ConfUnder30", f.ConfUnder30, 0)
	near("ConfUnder90", f.ConfUnder90, 5.0/8)
	near("CharConf", f.CharConf, 27.75/37)
	// Letters of lexicon words: The 3, whale 5, tbe 3, harpooneer 10, sea 3,
	// going 5 = 29, of which tbe's 3 are missing.
	near("LexHitChars", f.LexHitChars, 26.0/29)
	near("Stray", f.Stray, 0)
	near("EdgeJunk", f.EdgeJunk, 0)
	// Suspect tokens: tbe (3 characters), harpoon- (8: a line-end half is
	// judged alone), eer (3), w1th (4, garbage) = 18 of 37; their doubt
	// Σ n·(1 − conf) = 1.8 + 1.6 + 0.9 + 2.8 = 7.1.
	near("Suspect", f.Suspect, 18.0/37)
	near("SuspectDoubt", f.SuspectDoubt, 7.1/37)
}

func TestTextFeaturesLines(t *testing.T) {
	lex := lexicon.New()
	for _, w := range []string{"the", "whale", "sea", "going"} {
		lex.Add(w, 1)
	}
	// Line 1 starts with a stray mark, line 2 ends with a lone digit:
	// both lines have a letterless token at an edge. Stray tokens (no
	// letter, no digit): "~" and "-", 2 of 7.
	f := TextFeatures("~ The whale\n\nsea - going 3\n", lex)
	if f.Tokens != 7 || f.EdgeJunk != 1 || math.Abs(f.Stray-2.0/7) > 1e-12 {
		t.Errorf("Tokens %d, EdgeJunk %v, Stray %v; want 7, 1, 2/7", f.Tokens, f.EdgeJunk, f.Stray)
	}
	// Suspect characters: "~" and "-" (1 each) of 19 non-space characters.
	if math.Abs(f.Suspect-2.0/19) > 1e-12 || f.SuspectDoubt != 0 {
		t.Errorf("Suspect %v, SuspectDoubt %v; want 2/19 and 0 (no confidences)", f.Suspect, f.SuspectDoubt)
	}
	f = TextFeatures("The whale\nsea going\n", lex)
	if f.EdgeJunk != 0 || f.Stray != 0 || f.Suspect != 0 {
		t.Errorf("clean text: EdgeJunk %v, Stray %v, Suspect %v", f.EdgeJunk, f.Stray, f.Suspect)
	}
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
