package correct

import (
	"math/rand/v2"
	"strings"
	"testing"

	"recto/lexicon"
	"recto/ocr"
)

// strayPairs makes training pairs from the paragraphs of a clean text: the
// reference is the paragraph with every fifth " and " written " & " (a
// mark the ground truth has, read correctly), the hypothesis the same with
// stray marks planted between words at rate and the straight quotation
// marks read as curly ones (opening before a word, closing after).
func strayPairs(t *testing.T, rate float64, seed uint64) []Pair {
	t.Helper()
	text := readTestdata(t, "moby-ch1-5.txt")
	strays := []string{".", ":", "‘", ";", "|"}
	rng := rand.New(rand.NewPCG(seed, 3))
	var pairs []Pair
	n := 0
	for _, para := range strings.Split(text, "\n") {
		if strings.TrimSpace(para) == "" {
			continue
		}
		var ref, hyp []string
		for _, w := range strings.Fields(para) {
			if w == "and" {
				if n++; n%5 == 0 {
					w = "&"
				}
			}
			ref = append(ref, w)
			h := w
			if strings.HasPrefix(h, `"`) {
				h = "“" + h[1:]
			}
			if strings.HasSuffix(h, `"`) {
				h = h[:len(h)-1] + "”"
			}
			hyp = append(hyp, h)
			if rng.Float64() < rate {
				hyp = append(hyp, strays[rng.IntN(len(strays))])
			}
		}
		pairs = append(pairs, Pair{Ref: strings.Join(ref, " "), Hyp: strings.Join(hyp, " ")})
	}
	return pairs
}

// TestTrainCountsMarks: the learner counts each mark the engine read on its
// own and how often the ground truth had it there, recovering planted
// strays (every planted "." is a stray; every "&" is in the truth).
func TestTrainCountsMarks(t *testing.T) {
	pairs := strayPairs(t, 0.05, 1)
	planted := 0
	for _, p := range pairs {
		planted += len(strings.Fields(p.Hyp)) - len(strings.Fields(p.Ref))
	}
	m := Train(pairs, TrainOptions{})
	marks := m.Marks()
	var strays int64
	for _, s := range []string{".", ":", "‘", ";", "|"} {
		st := marks[s]
		if st.N == 0 || st.Kept != 0 {
			t.Errorf("planted stray %q: counted %+v, want seen and never kept", s, st)
		}
		strays += st.N
	}
	if strays != int64(planted) {
		t.Errorf("counted %d stray marks, planted %d", strays, planted)
	}
	if st := marks["&"]; st.N == 0 || st.Kept != st.N {
		t.Errorf(`"&" (always in the truth): counted %+v, want every one kept`, st)
	}
	if _, ok := m.markOddsOf("."); !ok {
		t.Error(`no odds for "."`)
	}
	// The curly quotation marks are read for straight ones every time.
	got := m.GlyphMap(0)
	if got["“"] != `"` || got["”"] != `"` {
		t.Errorf("glyph map %q; want “ and ” mapped to \"", got)
	}
	if _, ok := got["."]; ok {
		t.Error(`"." is mapped, but it was always read right`)
	}
}

// TestStrayMarksDeleted: with a model that has learned the strays, they
// are deleted from plain text and records, with the space beside them;
// marks the truth has ("&"), rows of marks (". . .") and dashes read with
// confidence stay; KeepMarks keeps everything.
func TestStrayMarksDeleted(t *testing.T) {
	m := Train(strayPairs(t, 0.05, 2), TrainOptions{})
	c := New(lexicon.Default(), m, Config{})
	in := "the whale : rose & fell\nand sank ;\nthen . . . nothing — at all"
	want := "the whale rose & fell\nand sank\nthen . . . nothing — at all"
	out, changes := c.CorrectText(in)
	if out != want {
		t.Errorf("CorrectText(%q)\n = %q\nwant %q", in, out, want)
	}
	if len(changes) != 2 || changes[0].Before != ":" || changes[0].After != "" || changes[0].Line != 1 || changes[0].Column != 11 ||
		changes[1].Before != ";" || changes[1].Line != 2 || changes[1].Column != 10 {
		t.Errorf("changes %+v; want \":\" at 1:11 and \";\" at 2:10, each to nothing", changes)
	}
	// White space goes with the stray: a stray alone on its line takes
	// the line (no empty line is left to read as a paragraph break).
	for _, tt := range []struct{ in, want string }{
		{": the whale", "the whale"},
		{"the whale :", "the whale"},
		{"the whale\n  :  \r\nrose", "the whale\nrose"},
		{"the whale .\n: rose", "the whale\nrose"},
		{"the\t:\twhale", "the\twhale"},
	} {
		if out, _ := c.CorrectText(tt.in); out != tt.want {
			t.Errorf("CorrectText(%q) = %q, want %q", tt.in, out, tt.want)
		}
	}
	if out, _ := New(lexicon.Default(), m, Config{KeepMarks: true}).CorrectText(in); out != in {
		t.Errorf("KeepMarks changed the text to %q", out)
	}

	rec := &ocr.Record{Version: ocr.RecordVersion, Words: []ocr.Word{
		{Text: "the", Conf: 0.96}, {Text: "|", Conf: 0.4}, {Text: "whale", Conf: 0.96},
		{Text: "—", Conf: 0.8}, {Text: "rose", Conf: 0.96},
	}}
	got, changes := c.CorrectRecord(rec)
	if text := strings.TrimSpace(got.Text()); text != "the whale — rose" {
		t.Errorf("record text %q, want %q", text, "the whale — rose")
	}
	if len(changes) != 1 || changes[0].Before != "|" || changes[0].After != "" {
		t.Errorf("record changes %+v; want the stray \"|\" only", changes)
	}
	if len(rec.Words) != 5 {
		t.Error("CorrectRecord modified its input")
	}
}

// TestGlyphsMappedOnlyWhenAsked: the learned glyph map is applied only
// with MapGlyphs, and then together with a word correction on the same
// token.
func TestGlyphsMappedOnlyWhenAsked(t *testing.T) {
	m := Train(strayPairs(t, 0.01, 3), TrainOptions{})
	in := "he said “the whale” and left"
	if out, _ := New(lexicon.Default(), m, Config{}).CorrectText(in); out != in {
		t.Errorf("without MapGlyphs: %q", out)
	}
	out, changes := New(lexicon.Default(), m, Config{MapGlyphs: true}).CorrectText("he said “tbe whale” and left")
	if want := `he said "the whale" and left`; out != want {
		t.Errorf("with MapGlyphs: %q, want %q", out, want)
	}
	if len(changes) != 2 {
		t.Errorf("changes %+v; want two (one per token)", changes)
	}
}

// TestPagePrior: on a page where the lexicon knows nearly every word, an
// unknown word is more likely rare than misread, so every margin on the
// page rises; on a page full of unknown strings, or a page too short to
// judge, it does not (common practice: the prior probability of an error
// follows the page's error rate).
func TestPagePrior(t *testing.T) {
	c := testCorrector(Config{})
	clean := strings.Repeat("the ship sailed from the port of the town and ", 4)
	noisy := strings.Repeat("tbe sbip sailcd frorn tbe barbour of tlie towm aud ", 4)
	if v := c.pagePrior(tokenize(clean)); v <= 0 {
		t.Errorf("clean page: prior %.3f, want > 0", v)
	}
	if v := c.pagePrior(tokenize(noisy)); v != 0 {
		t.Errorf("noisy page: prior %.3f, want 0", v)
	}
	if v := c.pagePrior(tokenize("the ship sailed")); v != 0 {
		t.Errorf("three words: prior %.3f, want 0", v)
	}
}

// TestShortRunTogether: three-letter tokens that are a word and "a" or "I"
// run together are split (the clean-page cases "ona", "Iam" once changed
// to "one" and "Am").
func TestShortRunTogether(t *testing.T) {
	c := testCorrector(Config{})
	for _, tt := range []struct{ in, want string }{
		{"in felicitating you ona continuance of the", "in felicitating you on a continuance of the"},
		{"Iam persuaded that", "I am persuaded that"},
	} {
		if out, _ := c.CorrectText(tt.in); out != tt.want {
			t.Errorf("CorrectText(%q) = %q, want %q", tt.in, out, tt.want)
		}
	}
}

// TestElisionsKept: an apostrophe before the word marks an elision
// ("'em", "'gainst"): the word is left as printed.
func TestElisionsKept(t *testing.T) {
	c := testCorrector(Config{})
	for _, in := range []string{"give 'em a cheer", "set ’gainst the wind", "and 'mong the men"} {
		if out, ch := c.CorrectText(in); out != in {
			t.Errorf("CorrectText(%q) = %q (%+v)", in, out, ch)
		}
	}
}

// TestMisreadOrdinals: an ordinal with "I" or "l" read for the digit 1 is
// no word and is left alone ("May Ist, 1820" once became "May Last").
// Suffixes as in English ordinals (common practice: 1st, 2nd, 3rd, 11th,
// 21st).
func TestMisreadOrdinals(t *testing.T) {
	for _, tt := range []struct {
		core string
		want bool
	}{
		{"Ist", true}, {"lst", true}, {"2Ist", true}, {"l2th", true}, {"IIth", true}, {"I3th", true},
		{"Ith", false}, {"Ind", false}, {"IIst", false}, {"list", false}, {"Isth", false}, {"1st", false}, {"st", false},
	} {
		if got := misreadOrdinal(tt.core); got != tt.want {
			t.Errorf("misreadOrdinal(%q) = %v, want %v", tt.core, got, tt.want)
		}
	}
	c := testCorrector(Config{})
	if out, _ := c.CorrectText("the act of May Ist, 1820, exacted"); out != "the act of May Ist, 1820, exacted" {
		t.Errorf("changed to %q", out)
	}
}
