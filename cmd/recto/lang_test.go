package main

import (
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"
	"unicode"

	"recto/correct"
	"recto/lexicon"
	"recto/ocr"
)

// With no lexicon for the language (an empty lexicon folder), triage
// says which features it could not use and correction changes no word,
// only stray marks (issue 12, part 1); each says so once on stderr and
// records the language. The pages are the vendored triage sample (English
// renders, testdata/triage/SOURCES.md), judged as if they were Norwegian.
func TestLangWithoutLexicon(t *testing.T) {
	t.Setenv(lexicon.EnvDir, t.TempDir())
	const pages = "../../testdata/triage/ocr"
	out, stderr, err := runRecto(t, "triage", "--lang", "nor", "--format", "json", pages)
	if err != nil {
		t.Fatalf("%v\n%s", err, stderr)
	}
	if n := strings.Count(stderr, "no lexicon for nob, nno"); n != 1 {
		t.Errorf("stderr names the missing lexicons %d times, want once:\n%s", n, stderr)
	}
	for _, want := range []string{"recto lexicon build --lang nob", "wnorwegian", "hunspell-no", "lexicon features"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, stderr)
		}
	}
	var rep struct {
		Language langChoice `json:"language"`
		Pages    []struct {
			Decision string   `json:"decision"`
			Reasons  []string `json:"reasons"`
		} `json:"pages"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Language.Lang != "nor" || rep.Language.From != "--lang" || strings.Join(rep.Language.Missing, ",") != "nob,nno" {
		t.Errorf("language recorded as %+v", rep.Language)
	}
	said := 0
	for _, p := range rep.Pages {
		for _, r := range p.Reasons {
			if strings.Contains(r, "lexicon") && !strings.HasPrefix(r, "no lexicon for the language") && !strings.Contains(r, "picture") {
				t.Errorf("a reason uses the lexicon that is not there: %q", r)
			}
			if strings.HasPrefix(r, "no lexicon for the language") {
				said++
			}
		}
	}
	if said == 0 {
		t.Error("no page's reasons say the lexicon features were not used")
	}

	// Correction: English lexicon (the baseline) against none.
	changes := func(lang string) []changeLine {
		out, stderr, err := runRecto(t, "correct", "--lang", lang, "--dry-run", pages)
		if err != nil {
			t.Fatalf("correct --lang %s: %v\n%s", lang, err, stderr)
		}
		if lang == "nor" && strings.Count(stderr, "no lexicon for nob, nno") != 1 {
			t.Errorf("correct --lang nor: stderr does not name the missing lexicons once:\n%s", stderr)
		}
		var cs []changeLine
		for _, line := range strings.Split(strings.TrimSpace(out), "\n") {
			if line == "" {
				continue
			}
			var c changeLine
			if err := json.Unmarshal([]byte(line), &c); err != nil {
				t.Fatalf("%q: %v", line, err)
			}
			if c.Lang != lang {
				t.Errorf("change %+v records language %q, want %q", c, c.Lang, lang)
			}
			cs = append(cs, c)
		}
		return cs
	}
	isWord := func(s string) bool { return strings.ContainsFunc(s, unicode.IsLetter) }
	words := func(cs []changeLine) (n int) {
		for _, c := range cs {
			if isWord(c.Before) || isWord(c.After) {
				n++
			}
		}
		return n
	}
	eng, nor := changes("eng"), changes("nor")
	if words(eng) == 0 {
		t.Fatal("the English lexicon changes no word on these pages: the comparison below proves nothing")
	}
	if n := words(nor); n != 0 {
		t.Errorf("without a lexicon %d words were changed, want none (English lexicon: %d)", n, words(eng))
	}
	t.Logf("word changes: %d with the English lexicon, %d without a lexicon; stray marks without: %d", words(eng), words(nor), len(nor))
}

// The collection vocabulary in recto correct (issue 12, part 4): a word
// read with confidence 0.91 three times on two pages ("wbale", an
// invented dialect spelling on invented pages) is not changed with
// --collection, and changes.jsonl lists the change it stopped; without
// --collection the corrector changes it (b read for h, a learned
// confusion).
func TestCollectionVocabularyBlocks(t *testing.T) {
	in := t.TempDir()
	line := func(ws ...string) []ocr.Word {
		var out []ocr.Word
		for i, w := range ws {
			out = append(out, ocr.Word{Text: w, Conf: 0.91, Box: ocr.Box{X: 60 * i, Y: 10, W: 50, H: 20}})
		}
		return out
	}
	pages := map[string][]ocr.Word{
		"p1": line("the", "old", "wbale", "came", "into", "the", "harbour", "and", "the", "wbale", "rested"),
		"p2": line("they", "saw", "the", "wbale", "again", "near", "the", "pier", "at", "dawn"),
	}
	for name, ws := range pages {
		rec := &ocr.Record{Version: ocr.RecordVersion, Lang: "eng", Width: 800, Height: 100, DPI: 300, Words: ws}
		if err := ocr.WriteOutputs(in, name, rec, nil); err != nil {
			t.Fatal(err)
		}
	}
	read := func(args ...string) []changeLine {
		out, stderr, err := runRecto(t, append([]string{"correct", in, "--dry-run"}, args...)...)
		if err != nil {
			t.Fatalf("%v\n%s", err, stderr)
		}
		var cs []changeLine
		for _, l := range strings.Split(strings.TrimSpace(out), "\n") {
			var c changeLine
			if l != "" && json.Unmarshal([]byte(l), &c) == nil && c.Before == "wbale" {
				cs = append(cs, c)
			}
		}
		return cs
	}
	plain := read()
	if len(plain) != 3 || plain[0].Blocked != "" {
		t.Fatalf("without --collection: %+v, want wbale changed 3 times", plain)
	}
	saved := filepath.Join(t.TempDir(), "vocab.lex")
	coll := read("--collection", "--save-vocabulary", saved)
	if len(coll) != 3 {
		t.Fatalf("with --collection: %+v, want 3 blocked changes listed", coll)
	}
	for _, c := range coll {
		if c.Blocked != correct.BlockedVocabulary || c.After != plain[0].After {
			t.Errorf("change %+v: want blocked %q", c, correct.BlockedVocabulary)
		}
	}
	v, err := lexicon.Load(saved)
	if err != nil || v.Count("wbale") != 3 {
		t.Errorf("saved vocabulary: %v, wbale count %d, want 3", err, v.Count("wbale"))
	}
}
