package correct

import (
	"os"
	"strings"
	"testing"

	"golang.org/x/text/unicode/norm"

	"recto/lexicon"
	"recto/ocr"
)

// TestReaderFaults holds the corrector faults a reader found in its output
// (issue 17 part 2), each case with where its expectation comes from.
func TestReaderFaults(t *testing.T) {
	c := New(lexicon.Default(), nil, Config{})
	nfdCafe := norm.NFD.String("café")
	cases := []struct {
		name, in, want string
		before, after  []string // the changes expected, in order
		source         string
	}{
		{name: "NFD word the lexicon knows is kept", in: "The " + nfdCafe + " was open.", want: "The " + nfdCafe + " was open.",
			source: "Unicode Standard Annex #15, Unicode Normalization Forms: canonically equivalent strings (NFD and NFC café) are the same text"},
		{name: "NFC word kept too", in: "The café was open.", want: "The café was open.",
			source: "the lexicon lists café (lexicon/data)"},
		{name: "NFD page: correction written back decomposed", in: "tbe " + nfdCafe + " was open", want: "the " + nfdCafe + " was open",
			before: []string{"tbe"}, after: []string{"the"},
			source: "UAX #15: a program should not change the normalisation form of text it only partly edits (common practice)"},
		{name: "byte-order mark stays out of the first word", in: "\ufeffTbe whale rose.", want: "\ufeffThe whale rose.",
			before: []string{"Tbe"}, after: []string{"The"},
			source: "Unicode Standard 15.0, section 23.8: U+FEFF at the start of a text is a signature, not part of its content"},
		{name: "em dash joins words: both corrected", in: "He saw tbe—tbe whale rise.", want: "He saw the—the whale rise.",
			before: []string{"tbe—", "tbe"}, after: []string{"the—", "the"}, // attached punctuation is reported with its word, as "tbe," is
			source: "Chicago Manual of Style 6.85: the em dash is set closed up, so words touch it (common practice in print)"},
		{name: "typewriter dash", in: "and tbe--the sea", want: "and the--the sea",
			before: []string{"tbe--"}, after: []string{"the--"},
			source: "Project Gutenberg plain-text convention: -- for an em dash (common practice)"},
		{name: "hyphenated compound is one word", in: "a well-known man", want: "a well-known man",
			source: "a single hyphen joins a compound, not two words (common practice)"},
		{name: "docs' example in context at the default margin", in: "the rnodern whale", want: "the modern whale",
			before: []string{"rnodern"}, after: []string{"modern"},
			source: "docs/readme-correct.md example; m read as rn is the classic OCR confusion (Rice, Jenkins and Nartker 1996, The Fourth Annual Test of OCR Accuracy)"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			got, chs := c.CorrectText(tc.in)
			if got != tc.want {
				t.Errorf("CorrectText(%q) = %q, want %q (%s)", tc.in, got, tc.want, tc.source)
			}
			if len(chs) != len(tc.before) {
				t.Fatalf("changes %+v, want %d (%s)", chs, len(tc.before), tc.source)
			}
			for i, ch := range chs {
				if ch.Before != tc.before[i] || ch.After != tc.after[i] {
					t.Errorf("change %d = %q→%q, want %q→%q", i, ch.Before, ch.After, tc.before[i], tc.after[i])
				}
				if strings.ContainsRune(ch.Before+ch.After, '\ufeff') {
					t.Errorf("change %d holds a byte-order mark: %q→%q", i, ch.Before, ch.After)
				}
			}
		})
	}
}

// TestBOMColumn: the byte-order mark is not a column of the page (Unicode
// Standard section 23.8: a signature, not content), so the first word is at
// column 1.
func TestBOMColumn(t *testing.T) {
	c := New(lexicon.Default(), nil, Config{})
	_, chs := c.CorrectText("\ufeffTbe whale")
	if len(chs) != 1 || chs[0].Column != 1 || chs[0].Line != 1 {
		t.Fatalf("changes %+v, want one at line 1 column 1", chs)
	}
}

// TestDashJoinedRecordWord: the engine returns "tbe—the" as one word; the
// misread part is corrected inside it, the word keeps its box and the
// engine's reading goes to Alt (as for any changed word).
func TestDashJoinedRecordWord(t *testing.T) {
	c := New(lexicon.Default(), nil, Config{})
	rec := recordOf([]string{"He", "saw", "tbe—tbe", "whale"}, []float64{0.96, 0.96, 0.6, 0.96})
	rec.Words[2].Box = ocr.Box{X: 10, Y: 5, W: 80, H: 12}
	out, chs := c.CorrectRecord(rec)
	if len(out.Words) != 4 || out.Words[2].Text != "the—the" {
		t.Fatalf("words %+v, want the—the as the third of four", out.Words)
	}
	if out.Words[2].Box != rec.Words[2].Box || len(out.Words[2].Alt) != 1 || out.Words[2].Alt[0] != "tbe—tbe" {
		t.Errorf("word %+v: want its box kept and the engine's reading in Alt", out.Words[2])
	}
	if len(chs) != 2 || chs[0].Before != "tbe—" || chs[1].Column != 12 {
		t.Errorf("changes %+v, want tbe→the at columns 8 and 12", chs)
	}
	if rec.Words[2].Text != "tbe—tbe" {
		t.Errorf("input record modified: %q", rec.Words[2].Text)
	}
}

// TestDocsExampleAlone measures the docs' example alone: "rnodern" as the
// only word of a plain-text page scores 3.6 nats, under the 5 a plain-text
// word needs at the default margin (3, plus 2 without engine confidences),
// so it is kept; read by the engine at 0.9 (margin 3) it is corrected. The
// default stays (it was set on the development pages, docs/dev-correct.md);
// the documentation shows the example in context, where it is corrected.
func TestDocsExampleAlone(t *testing.T) {
	c := New(lexicon.Default(), nil, Config{})
	if got, _ := c.CorrectText("rnodern"); got != "rnodern" {
		t.Errorf("lone plain-text rnodern became %q; docs/dev-correct.md says it needs context", got)
	}
	out, _ := c.CorrectRecord(recordOf([]string{"rnodern"}, []float64{0.9}))
	if out.Words[0].Text != "modern" {
		t.Errorf("rnodern read at 0.9 became %q, want modern", out.Words[0].Text)
	}
	low := New(lexicon.Default(), nil, Config{Margin: 1})
	if got, _ := low.CorrectText("rnodern"); got != "modern" {
		t.Errorf("at margin 1, lone rnodern became %q, want modern (score 3.6 > 1+2)", got)
	}
}

// TestModelSaveAtomic: Save goes through the project's one atomic writer
// (internal/atomicfile: a temporary file renamed over the old one, the
// write-then-rename pattern of POSIX rename(2), which replaces the name in
// one step): overwriting a model leaves the new model whole, no temporary
// file beside it, mode 0644 (less the umask); a failed Save (over a folder)
// names the path.
func TestModelSaveAtomic(t *testing.T) {
	dir := t.TempDir()
	path := dir + "/m.model"
	if err := acressModel().Save(path); err != nil {
		t.Fatal(err)
	}
	m2 := DefaultModel()
	if err := m2.Save(path); err != nil {
		t.Fatal(err)
	}
	got, err := LoadModel(path)
	if err != nil || len(got.Rules()) != len(m2.Rules()) {
		t.Fatalf("overwritten model: %v, %d rules, want %d", err, len(got.Rules()), len(m2.Rules()))
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("folder holds %d entries after Save, want only the model", len(ents))
	}
	if fi, _ := os.Stat(path); fi.Mode().Perm()&^0o644 != 0 {
		t.Errorf("mode %v, want 0644 less the umask", fi.Mode().Perm())
	}
	bad := dir + "/folder"
	os.Mkdir(bad, 0o755)
	if err := m2.Save(bad); err == nil || !strings.Contains(err.Error(), bad) {
		t.Errorf("Save over a folder: %v, want an error naming %s", err, bad)
	}
}
