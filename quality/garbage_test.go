package quality

import (
	"reflect"
	"testing"
)

// Each row illustrates one rule as stated in Taghva, Nartker, Condit &
// Borsack (2001), "Automatic removal of 'garbage strings' in OCR text: an
// implementation", or in its extension by Kulp & Kontostathis (2007), "On
// retrieving legal files: shortening documents and weeding out garbage".
// The rules and thresholds are recalled from memory of the papers; the
// example strings are ours, built to sit just inside or just outside each
// threshold.
func TestGarbageRules(t *testing.T) {
	tests := []struct {
		name string
		tok  string
		want []GarbageRule
	}{
		{"plain word", "harpooneer", nil},
		{"word with punctuation", "whale's,", nil},
		{"hyphenated", "sea-going", nil},
		{"ordinal", "19th", nil},
		{"decade", "1790s", nil},
		{"number", "10000", nil},
		{"dash", "—", nil},
		{"quoted", "\"Ahoy!\"", nil},
		{"abbreviation", "e.g.,", nil},
		{"five consonants (strengths)", "strengths", nil},
		{"Taghva L: longer than 40", "abcdefghijabcdefghijabcdefghijabcdefghijab", []GarbageRule{RuleLength}},
		{"Taghva L: exactly 40 is fine", "abcdefghijabcdefghijabcdefghijabcdefghij", nil},
		{"Taghva A: more punctuation than alphanumerics", "a#$", []GarbageRule{RuleAlnum}},
		{"Taghva R: four identical", "whaaaale", []GarbageRule{RuleRepeat}},
		{"Taghva R: three identical is fine", "whaaale", nil},
		{"Taghva V: no vowels in five letters", "xkcdq", []GarbageRule{RuleVowels}},
		{"Taghva P: two kinds of inner punctuation", "ab.c,d", []GarbageRule{RulePunctKinds}},
		{"Taghva C: upper case inside lower", "tHe", []GarbageRule{RuleCase}},
		{"Taghva C: capitalised word is fine", "Queequeg", nil},
		{"K&K: six consonants", "abstrcktion", []GarbageRule{RuleConsonants}},
		{"K&K: letters and digits mixed", "w1th", []GarbageRule{RuleMixed}},
		{"K&K: inner punctuation run", "ab...cd", []GarbageRule{RulePunctRun}},
		{"several rules", "tH3..,,x", []GarbageRule{RulePunctKinds, RuleCase, RuleMixed, RulePunctRun}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := GarbageRules(tt.tok)
			if !reflect.DeepEqual(got, tt.want) {
				t.Errorf("GarbageRules(%q) = %v, want %v", tt.tok, got, tt.want)
			}
			if IsGarbage(tt.tok) != (len(tt.want) > 0) {
				t.Errorf("IsGarbage(%q) disagrees with GarbageRules", tt.tok)
			}
		})
	}
}

// Running English prose must be almost free of garbage: the first
// paragraph of Moby-Dick (Melville 1851, public domain) has none.
func TestGarbageCleanProse(t *testing.T) {
	text := `Call me Ishmael. Some years ago—never mind how long precisely—having little or no money in my purse, and nothing particular to interest me on shore, I thought I would sail about a little and see the watery part of the world. It is a way I have of driving off the spleen and regulating the circulation.`
	f := TextFeatures(text, nil)
	if f.Garbage != 0 {
		t.Errorf("garbage share %v in clean prose", f.Garbage)
	}
	if f.LexHit < 0.99 {
		t.Errorf("lexicon hit %v in clean prose", f.LexHit)
	}
}
