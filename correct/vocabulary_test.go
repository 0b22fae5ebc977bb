package correct

import (
	"testing"

	"recto/lexicon"
	"recto/ocr"
)

// vocabRecord makes a page record of words read at the given confidence, one
// line.
func vocabRecord(conf float64, words ...string) *ocr.Record {
	rec := &ocr.Record{Version: ocr.RecordVersion}
	for i, w := range words {
		rec.Words = append(rec.Words, ocr.Word{Text: w, Conf: conf, Box: ocr.Box{X: 10 * i, W: 8, H: 10}})
	}
	return rec
}

// The thresholds documented in vocabulary.go: confidence 0.90 or more, 3
// readings, 2 pages.
func TestVocabularyThresholds(t *testing.T) {
	vc := NewVocabularyCounter()
	vc.AddRecord(vocabRecord(0.95, "Brekkestø,", "Brekkestø", "Tjørnholm", "Tjørnholm", "Tjørnholm", "Vassli"))
	vc.AddRecord(vocabRecord(0.95, "Brekkestø.", "Vassli", "Vassli"))
	vc.AddRecord(vocabRecord(0.89, "Ulvøy", "Ulvøy", "Ulvøy"))
	vc.AddRecord(vocabRecord(0.89, "Ulvøy", "Ulvøy"))
	v := vc.Vocabulary(nil)
	for w, want := range map[string]int64{"brekkestø": 3, "vassli": 3, "tjørnholm": 0, "ulvøy": 0} {
		if got := v.Count(w); got != want {
			t.Errorf("vocabulary count of %q = %d, want %d", w, got, want)
		}
	}
	prior := lexicon.New()
	prior.Add("ulvøy", 7)
	if v := vc.Vocabulary(prior); v.Count("ulvøy") != 7 || v.Count("vassli") != 3 {
		t.Errorf("with a saved vocabulary: ulvøy %d vassli %d, want 7 and 3", v.Count("ulvøy"), v.Count("vassli"))
	}
}

// A word of the collection vocabulary is never changed: the change the
// corrector would make ("tbe" -> "the", TestChangePositions) is reported
// as blocked and the text keeps the word.
func TestVocabularyBlocks(t *testing.T) {
	voc := lexicon.New()
	voc.Add("tbe", 5)
	c := testCorrector(Config{Vocabulary: voc})
	const text = "It was\n  ahead of tbe ship"
	out, changes := c.CorrectText(text)
	if out != text {
		t.Errorf("text changed to %q", out)
	}
	if len(changes) != 1 || changes[0].Blocked != BlockedVocabulary || changes[0].Before != "tbe" || changes[0].After != "the" || Made(changes) != 0 {
		t.Fatalf("changes = %+v, want one blocked tbe→the", changes)
	}
	rec := vocabRecord(0.5, "ahead", "of", "tbe", "ship")
	got, changes := c.CorrectRecord(rec)
	if got.Words[2].Text != "tbe" || len(changes) != 1 || changes[0].Blocked == "" {
		t.Errorf("record: %q, changes %+v; want tbe kept and the change blocked", got.Words[2].Text, changes)
	}
	if _, changes := testCorrector(Config{}).CorrectText(text); Made(changes) != 1 {
		t.Errorf("without the vocabulary: %+v, want tbe→the made", changes)
	}
}
