package lexicon

import (
	"errors"
	"maps"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"sort"
	"strings"
	"testing"
)

const td = "../testdata/lexicon/"

func TestLoadSmall(t *testing.T) {
	l, err := Load(td + "small.lex")
	if err != nil {
		t.Fatal(err)
	}
	if l.Len() != 3 || l.Count("whale") != 12 || l.Count("WHALE") != 12 || l.Total() != 21 {
		t.Errorf("got len %d whale %d total %d, want 3, 12, 21", l.Len(), l.Count("whale"), l.Total())
	}
	// "Café" in the file is not in key form: it is keyed on load.
	if !l.Has("café") || l.Has("cafe") || !l.HasFold("cafe") || !l.HasFold("CAFE") {
		t.Errorf("café: Has=%v Has(cafe)=%v HasFold(cafe)=%v", l.Has("café"), l.Has("cafe"), l.HasFold("cafe"))
	}
	if got := l.Bigram("Sea", "whale"); got != 3 {
		t.Errorf("Bigram(sea, whale) = %d, want 3", got)
	}
}

func TestSaveLoadRoundTrip(t *testing.T) {
	l := New()
	l.Add("Whale", 5)
	l.Add("naïve", 2)
	l.Add("ship", 0)
	l.AddBigram("the", "whale", 4)
	dir := t.TempDir()
	for _, name := range []string{"x.lex", "x.lex.gz"} {
		p := filepath.Join(dir, name)
		if err := l.Save(p); err != nil {
			t.Fatal(err)
		}
		got, err := Load(p)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(got.Words(), l.Words()) || got.Total() != l.Total() || got.Bigram("the", "whale") != 4 || got.Count("naïve") != 2 {
			t.Errorf("%s: round trip differs: %v total %d", name, got.Words(), got.Total())
		}
	}
}

func TestLoadErrors(t *testing.T) {
	dir := t.TempDir()
	empty := filepath.Join(dir, "empty.lex")
	os.WriteFile(empty, nil, 0o644)
	tests := []struct {
		name, path string
		want       error
		msg        string
	}{
		{"bad frequency", td + "badfreq.lex", ErrBadFrequency, `lexicon: ../testdata/lexicon/badfreq.lex:3: invalid frequency "1,2"`},
		{"non-UTF-8", td + "latin1.lex", ErrNotUTF8, "latin1.lex:3: not valid UTF-8"},
		{"no header", td + "noheader.lex", ErrNotLexicon, "noheader.lex:1: not a recto lexicon"},
		{"empty", empty, ErrNotLexicon, "empty file"},
		{"missing", filepath.Join(dir, "nope.lex"), os.ErrNotExist, "nope.lex"},
		{"unreadable (a folder)", dir, nil, dir},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			l, err := Load(tt.path)
			if err == nil || l != nil {
				t.Fatalf("Load(%q) = %v, %v; want nil and an error", tt.path, l, err)
			}
			if tt.want != nil && !errors.Is(err, tt.want) {
				t.Errorf("error %v does not wrap %v", err, tt.want)
			}
			if !strings.Contains(err.Error(), tt.msg) {
				t.Errorf("error %q does not contain %q", err, tt.msg)
			}
		})
	}
}

func TestKeyAndFold(t *testing.T) {
	tests := []struct{ in, key, fold string }{
		{"Whale", "whale", "whale"},
		{"cafe\u0301", "café", "cafe"}, // NFD input is composed first
		{"ÉTÉ", "été", "ete"},
		{"Straße", "straße", "straße"}, // ß has no decomposition
		{"Øre", "øre", "øre"},
		// Fraktur's long s and the ligatures are letter forms (Unicode
		// code charts U+017F, U+FB01): they key as plain letters.
		{"Wiſſen", "wissen", "wissen"},
		{"ﬁnden", "finden", "finden"},
	}
	for _, tt := range tests {
		if got := Key(tt.in); got != tt.key {
			t.Errorf("Key(%q) = %q, want %q", tt.in, got, tt.key)
		}
		if got := Fold(tt.in); got != tt.fold {
			t.Errorf("Fold(%q) = %q, want %q", tt.in, got, tt.fold)
		}
	}
}

func TestTokens(t *testing.T) {
	got := Tokens("Call me Ishmael. The whale's sea-going 4th voyage—don't 'quote' naïve")
	want := []string{"Call", "me", "Ishmael", "The", "whale's", "sea", "going", "th", "voyage", "don't", "quote", "naïve"}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("Tokens = %q\nwant %q", got, want)
	}
}

func TestBuilderText(t *testing.T) {
	b := NewBuilder()
	b.AddWord("whale")
	b.AddWord("sea")
	text := "The whale. The whale swam; the sea. The sea the sea the sea"
	if err := b.AddText(strings.NewReader(text), "t.txt"); err != nil {
		t.Fatal(err)
	}
	l := b.Lexicon()
	// "the" occurs 6 times (>= 3, the default with a list); "swam" once: dropped.
	if l.Count("whale") != 2 || l.Count("the") != 6 || l.Has("swam") || l.Count("sea") != 4 {
		t.Errorf("counts: whale %d the %d swam %v sea %d", l.Count("whale"), l.Count("the"), l.Has("swam"), l.Count("sea"))
	}
	// Pairs: "the whale" twice; "whale the" never (a full stop lies between).
	if l.Bigram("the", "whale") != 2 || l.Bigram("whale", "the") != 0 || l.Bigram("the", "sea") != 4 {
		t.Errorf("bigrams: the whale %d, whale the %d, the sea %d", l.Bigram("the", "whale"), l.Bigram("whale", "the"), l.Bigram("the", "sea"))
	}
}

func TestBuilderBadInput(t *testing.T) {
	b := NewBuilder()
	err := b.AddWordList(td + "latin1-words.txt")
	var pe *ParseError
	if !errors.As(err, &pe) || pe.Line != 3 || !errors.Is(err, ErrNotUTF8) {
		t.Errorf("latin-1 word list: got %v, want a ParseError at line 3 wrapping ErrNotUTF8", err)
	}
	if err := b.AddText(strings.NewReader("ok\nok\nbad \xff\n"), "x.txt"); !errors.As(err, &pe) || pe.Line != 3 {
		t.Errorf("latin-1 text: got %v, want line 3", err)
	}
	if err := b.AddTextDir(t.TempDir()); err == nil || !strings.Contains(err.Error(), "no .txt files") {
		t.Errorf("empty folder: got %v", err)
	}
	if err := b.AddWordList(td + "small.lex"); err == nil || !strings.Contains(err.Error(), "small.lex:1") {
		t.Errorf("tab in word list: got %v", err)
	}
}

func expand(t *testing.T, aff, dic string) map[string][]string {
	t.Helper()
	a, err := LoadAffixes(aff)
	if err != nil {
		t.Fatal(err)
	}
	out := map[string][]string{}
	f, _ := os.ReadFile(dic)
	for i, line := range strings.Split(strings.TrimSpace(string(f)), "\n") {
		if i == 0 {
			continue
		}
		stem, flags, err := a.dicEntry(line)
		if err != nil {
			t.Fatal(err)
		}
		forms := uniq(a.Expand(stem, flags))
		out[stem] = forms
	}
	return out
}

func uniq(ws []string) []string {
	m := map[string]bool{}
	for _, w := range ws {
		m[w] = true
	}
	return slices.Sorted(maps.Keys(m))
}

// The example affix and dictionary pair of the hunspell(5) manual page
// (Németh, "hunspell - format of Hunspell dictionaries and affix files",
// section "AFFIX FILE OPTIONS"; reproduced from memory in
// testdata/lexicon/hunspell-man): the page says the pair recognises
// "hello, try, tried, work, worked, rework, reworked".
func TestHunspellManPageExample(t *testing.T) {
	b := NewBuilder()
	if err := b.AddHunspell(td+"hunspell-man/example.dic", td+"hunspell-man/example.aff"); err != nil {
		t.Fatal(err)
	}
	got := b.Lexicon().Words()
	want := []string{"hello", "rework", "reworked", "tried", "try", "work", "worked"}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("forms = %q, want %q", got, want)
	}
}

// Entries of Debian's hunspell-en-us 2020.12.07 (en_US.aff vendored whole,
// four .dic lines copied verbatim). The expected forms follow from the rules
// in that .aff and are the forms the en_US dictionary accepts; note that
// "unhappiest" is not among them because SFX T is declared without cross
// products.
func TestHunspellEnUS(t *testing.T) {
	got := expand(t, td+"en_US.aff", td+"en_US-sample.dic")
	want := map[string][]string{
		"work":  {"rework", "reworked", "reworking", "reworkings", "reworks", "work", "worked", "working", "workings", "works"},
		"happy": {"happier", "happiest", "happiness", "happy", "unhappier", "unhappiness", "unhappy"},
		// K (pro) and A (re) cross with D, S, G, N but not with V (declared N).
		"create": {"create", "created", "creates", "creating", "creation", "creative", "procreate", "procreated", "procreates", "procreating", "procreation",
			"recreate", "recreated", "recreates", "recreating", "recreation"},
	}
	for stem, w := range want {
		sort.Strings(w)
		if !reflect.DeepEqual(got[stem], w) {
			t.Errorf("%s: forms = %q\nwant %q", stem, got[stem], w)
		}
	}
	// drink/SMRBJZG: spot-check forms with the [^ey] and [^aeiou] conditions.
	for _, f := range []string{"drinks", "drink's", "drinker", "drinkable", "drinkings", "drinkers", "drinking"} {
		if !contains(got["drink"], f) {
			t.Errorf("drink: missing %q in %q", f, got["drink"])
		}
	}
}

func contains(ws []string, w string) bool {
	for _, x := range ws {
		if x == w {
			return true
		}
	}
	return false
}

func TestHunspellFlagModes(t *testing.T) {
	dir := t.TempDir()
	aff := filepath.Join(dir, "t.aff")
	dic := filepath.Join(dir, "t.dic")
	os.WriteFile(aff, []byte("SET UTF-8\nFLAG long\nSFX Aa Y 1\nSFX Aa 0 s .\nPFX Bb Y 1\nPFX Bb 0 un .\n"), 0o644)
	os.WriteFile(dic, []byte("1\ndo/AaBb\n"), 0o644)
	b := NewBuilder()
	if err := b.AddHunspell(dic, aff); err != nil {
		t.Fatal(err)
	}
	if got, want := b.Lexicon().Words(), []string{"do", "dos", "undo", "undos"}; !reflect.DeepEqual(got, want) {
		t.Errorf("FLAG long: %q, want %q", got, want)
	}
	os.WriteFile(aff, []byte("FLAG num\nSFX 12 Y 1\nSFX 12 0 s .\nNEEDAFFIX 7\n"), 0o644)
	os.WriteFile(dic, []byte("1\nrun/12,7\n"), 0o644)
	b = NewBuilder()
	if err := b.AddHunspell(dic, aff); err != nil {
		t.Fatal(err)
	}
	if got, want := b.Lexicon().Words(), []string{"runs"}; !reflect.DeepEqual(got, want) {
		t.Errorf("FLAG num with NEEDAFFIX: %q, want %q", got, want)
	}
	os.WriteFile(dic, []byte("run/12\n"), 0o644)
	if err := NewBuilder().AddHunspell(dic, aff); err == nil || !strings.Contains(err.Error(), "t.dic:1") {
		t.Errorf("missing count line: %v", err)
	}
	os.WriteFile(aff, []byte("SET BIG5\n"), 0o644)
	if err := NewBuilder().AddHunspell(dic, aff); err == nil || !strings.Contains(err.Error(), "BIG5") {
		t.Errorf("unknown SET: %v", err)
	}
}

func TestDefault(t *testing.T) {
	l := Default()
	if l.Len() < 90000 {
		t.Fatalf("embedded lexicon has %d words, want about 100,000", l.Len())
	}
	for _, w := range []string{"whale", "Congress", "the", "harpooneer"} {
		if !l.Has(w) || l.Count(w) == 0 {
			t.Errorf("embedded lexicon: %q has=%v count=%d", w, l.Has(w), l.Count(w))
		}
	}
	if l.Count("the") < l.Count("whale") || l.Bigram("of", "the") == 0 {
		t.Errorf("counts look wrong: the %d whale %d of-the %d", l.Count("the"), l.Count("whale"), l.Bigram("of", "the"))
	}
	if l.Has("tbe") || l.Has("wbale") {
		t.Error("common OCR misreadings should not be words")
	}
}
