package correct

import (
	"math/rand/v2"
	"testing"

	"recto/lexicon"
	"recto/ocr"
)

// recordOf makes a one-line record of words read at the given confidences.
func recordOf(words []string, conf []float64) *ocr.Record {
	rec := &ocr.Record{}
	for i, w := range words {
		rec.Words = append(rec.Words, ocr.Word{Text: w, Conf: conf[i]})
	}
	return rec
}

// TestConfidentWordsKept: good text is not made worse. A word the engine
// read with high confidence is kept when the lexicon lists it, even with
// no count, and, when it is an unknown lower-case word, is changed only
// through a likely learned confusion, not an unseen edit. The same words
// read with low confidence are changed, so the test can fail both ways.
// The unknown word is one once wrongly changed on the demo collection's
// clean page ("ling", a fish; common practice: a confident reading of a
// rare word is more often right than an OCR error). The listed word is
// one letter from a likelier word through the classic h/b confusion
// (Kernighan, Church and Gale 1990 list such shape confusions). The
// embedded model has learned that a "y" is lost about once in 300 (so
// "lying" is one likely confusion from "ling"): at 0.86 "ling" becomes
// "lying" on a line of four words, which is why the sure case is 0.9.
func TestConfidentWordsKept(t *testing.T) {
	lex := lexicon.Default()
	if lex.Has("ling") {
		t.Fatal(`the embedded lexicon lists "ling"; the case needs an unknown word`)
	}
	if !lex.Has("bad") || !lex.Has("had") {
		t.Fatal(`the embedded lexicon must list "bad" and "had"`)
	}
	c := New(lex, nil, Config{})
	tests := []struct {
		name      string
		words     []string
		i         int     // the word under test
		sure, low float64 // confidences: kept at sure, changed at low
	}{
		{"listed word", []string{"he", "bad", "gone", "home"}, 1, 0.96, 0.3},
		{"unknown lower-case word", []string{"cod", "and", "ling.", "The"}, 2, 0.9, 0.3},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			conf := []float64{0.96, 0.96, 0.96, 0.96}
			conf[tt.i] = tt.sure
			if _, ch := c.CorrectRecord(recordOf(tt.words, conf)); len(ch) > 0 {
				t.Errorf("read at %.2f: changed %q -> %q, want kept", tt.sure, ch[0].Before, ch[0].After)
			}
			conf[tt.i] = tt.low
			if _, ch := c.CorrectRecord(recordOf(tt.words, conf)); len(ch) == 0 {
				t.Errorf("read at %.2f: kept; the case should show that confidence decides", tt.low)
			}
		})
	}
	// A confident unknown word is still corrected through a classic
	// confusion (rn read for m: Kernighan, Church and Gale 1990 list such
	// character confusions; common practice for OCR).
	rec := recordOf([]string{"the", "rnodern", "harbour"}, []float64{0.96, 0.9, 0.96})
	if out, _ := c.CorrectRecord(rec); out.Words[1].Text != "modern" {
		t.Errorf(`"rnodern" read at 0.9 became %q, want "modern"`, out.Words[1].Text)
	}
}

// TestListedWordFloor: a listed word with no count scores like a word
// counted once, not like a string never seen.
func TestListedWordFloor(t *testing.T) {
	lex := lexicon.New()
	lex.Add("slates", 0)
	lex.Add("stones", 1)
	lex.Add("zzzz", 1_000_000)
	c := New(lex, nil, Config{})
	if a, b := c.logUni("slates"), c.logUni("stones"); a != b {
		t.Errorf("log P(slates) = %.3f with no count, log P(stones) = %.3f counted once; want equal", a, b)
	}
	if a, b := c.logUni("slates"), c.logUni("slatez"); a <= b {
		t.Errorf("log P(slates) = %.3f listed, log P(slatez) = %.3f unlisted; want the listed word likelier", a, b)
	}
}

// TestVariantSet checks the seen-variant table against a map (the obvious
// slow version), across resets and when full.
func TestVariantSet(t *testing.T) {
	var v variantSet
	rng := rand.New(rand.NewPCG(3, 5))
	for round := 0; round < 50; round++ {
		v.reset()
		want := map[uint64]bool{}
		for k := 0; k < 400; k++ {
			h := rng.Uint64N(300) << 1 // collisions on purpose; low bit is forced to 1 by add
			got := v.add(h)
			exp := !want[h] && len(want) < 2*maxExpansions
			if exp {
				want[h] = true
			}
			if got != exp {
				t.Fatalf("round %d: add(%d) = %v, want %v (%d held)", round, h, got, exp, len(want))
			}
		}
	}
}
