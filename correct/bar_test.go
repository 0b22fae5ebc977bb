package correct

import (
	"strings"
	"testing"

	"recto/lexicon"
)

// recordLine makes a one-line record of the words of line, each read at
// conf except the word at i, read at ci.
func recordLine(line string, i int, conf, ci float64) (words []string, confs []float64) {
	words = strings.Fields(line)
	confs = make([]float64, len(words))
	for k := range confs {
		confs[k] = conf
	}
	confs[i] = ci
	return words, confs
}

// TestCleanPageCases: the wrong changes the corrector made on clean pages
// of the project's Debian-font corpus (docs/dev-correct.md,
// "Generalisation"; lines as the engine read them, confidences as it gave
// them), each with what it should have done. A vertical bar, a spaced
// exclamation mark or a brace read alone for the word "I" was deleted as
// a stray, which leaves the page no closer to the truth: it is "I" when a
// counted word pair supports it (common practice: the bar/I/l confusion is
// the classic one of OCR, as in Kernighan, Church and Gale 1990's shape
// confusions). The other cases are words read clearly that no lexicon
// lists (initials, an older spelling) and the case of a letter read as a
// digit at a sentence's start.
func TestCleanPageCases(t *testing.T) {
	c := New(lexicon.Default(), nil, Config{})
	tests := []struct {
		line string
		i    int     // the token under test
		conf float64 // its confidence (the others 0.96)
		want string  // "" keeps the token, "(deleted)" deletes it
	}{
		{"situation of our country since | had last the", 5, 0.82, "I"},
		{"pleasure to address you, | find ample reason for a", 4, 0.8, "I"},
		// An exclamation mark is "I" only when the pair clears the margin
		// by itself (read at 0.91 on the page, it is kept: the pair after
		// a semicolon has no left context).
		{`replied Rochebriant; "! am ashamed of it.`, 2, 0.91, ""},
		{"expedient, I am happy that { can congratulate you on", 5, 0.85, "I"},
		{"private insurance for every American. And | might say,", 6, 0.82, "I"},
		// Spaced exclamation marks, as older print sets them, are not
		// made "I".
		{"Hark ! the whale is near", 1, 0.8, "(deleted)"},
		// Initials and abbreviations are not words to correct.
		{"given under my hand and seal, L.S., this day", 6, 0.68, ""},
		// An older spelling read clearly is kept.
		{"the mourners followed the corse. And so they went", 4, 0.97, ""},
		// A digit read for the first letter of a sentence.
		{"agricultural. 1t is therefore the", 1, 0.78, "It"},
		// A bracket read for the capital I of a word.
		{"the swaying mass. [nto this hole, the", 3, 0.8, "Into"},
	}
	for _, tt := range tests {
		words, conf := recordLine(tt.line, tt.i, 0.96, tt.conf)
		out, ch := c.CorrectRecord(recordOf(words, conf))
		var got string
		for _, x := range ch {
			if x.Column == 1+len([]rune(strings.Join(words[:tt.i], " ")))+min(tt.i, 1) {
				got = x.After
				if got == "" {
					got = "(deleted)"
				}
			}
		}
		if tt.want == "" && got != "" || tt.want != "" && got != tt.want {
			t.Errorf("%q: token %q became %q, want %q (all changes %+v; text %q)", tt.line, words[tt.i], got, tt.want, ch, out.Text())
		}
	}
}

// TestBarWithoutSupport: a bar read alone where no counted pair supports
// "I" (after a bracket and before a number, as on the German pages, where
// a bar is a speck or a rule) is left to the stray rules: read at low
// confidence it is deleted, not made "I".
func TestBarWithoutSupport(t *testing.T) {
	c := New(lexicon.Default(), nil, Config{})
	words, conf := recordLine("[Ergebnis] | 1861", 1, 0.96, 0.3)
	_, ch := c.CorrectRecord(recordOf(words, conf))
	for _, x := range ch {
		if x.Before == "|" && x.After != "" {
			t.Errorf("bar without support became %q, want deleted or kept", x.After)
		}
	}
}

// TestUnlearnedMarkReadClearly: a mark the model has no statistics of
// (the pooled odds of rare marks) is kept when read at 0.9 or more, and
// deleted when read poorly. "->" stands in the ground truth of a German
// page of the corpus ("(s.a. -> Rechtis)", Debian fortunes-de).
func TestUnlearnedMarkReadClearly(t *testing.T) {
	c := New(lexicon.Default(), nil, Config{})
	if _, learned := c.m.markOdds["->"]; learned {
		t.Fatal(`the embedded model learned "->"; the case needs a mark it did not`)
	}
	for _, tt := range []struct {
		conf    float64
		deleted bool
	}{{0.93, false}, {0.2, true}} {
		words, conf := recordLine("see also -> the chapter on whales", 2, 0.96, tt.conf)
		_, ch := c.CorrectRecord(recordOf(words, conf))
		got := len(ch) == 1 && ch[0].Before == "->" && ch[0].After == ""
		if got != tt.deleted {
			t.Errorf("-> read at %.2f: deleted %v, want %v (%+v)", tt.conf, got, tt.deleted, ch)
		}
	}
}
