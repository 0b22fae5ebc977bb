package correct

import (
	"strings"
	"testing"

	"recto/lexicon"
)

// TestLongS checks the basic long-s rule on words whose spelling in
// Fraktur print is well known (Duden's rules, from memory): a long s
// inside a word and at its start, a round s at its end.
func TestLongS(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"Wissen ist Macht, das Haus.", "Wiſſen iſt Macht, das Haus."},
		{"sich selbst", "ſich ſelbſt"},
		{"Los! so? es", "Los! ſo? es"},
		{"Straße, Sonne", "Straße, Sonne"}, // ß and capitals are kept
		{"", ""},
	} {
		if got := LongS(c.in); got != c.want {
			t.Errorf("LongS(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

// TestFrakturForms: a word read with a long s or a ligature is looked up
// with plain letters (a known word is left as the page has it), and a
// correction of a long-s word is written back with the long s.
func TestFrakturForms(t *testing.T) {
	b := lexicon.NewBuilder()
	for _, w := range []string{"sich", "wissen", "finden", "zu", "und", "der", "die", "ist", "schon", "lassen", "wir", "zeit"} {
		b.AddWord(w)
	}
	if err := b.AddText(strings.NewReader(strings.Repeat("wir wissen und finden sich zu der zeit ", 20)), "test"); err != nil {
		t.Fatal(err)
	}
	lex := b.Lexicon()
	c := New(lex, DefaultModel(), Config{})
	out, ch := c.CorrectText("Wir wiſſen und ﬁnden ſich zu der Zeit.\n")
	if len(ch) != 0 || out != "Wir wiſſen und ﬁnden ſich zu der Zeit.\n" {
		t.Errorf("known words in their Fraktur forms were changed: %q %v", out, ch)
	}
	if got := lookupForm("Wiſſen"); got != "wissen" {
		t.Errorf("lookupForm(Wiſſen) = %q", got)
	}
	if got := inPageForm("laſſeu", "lassen"); got != "laſſen" {
		t.Errorf("inPageForm(laſſeu, lassen) = %q, want laſſen", got)
	}
	if got := inPageForm("lassen", "lassen"); got != "lassen" {
		t.Errorf("inPageForm without a long s = %q", got)
	}
	if !strings.Contains(trainForm("Wiſſen ﬁnden"), "wissen finden") {
		t.Errorf("trainForm does not fold the Fraktur forms: %q", trainForm("Wiſſen ﬁnden"))
	}
}

// TestModelForLang: --lang frk, Fraktur and script/Fraktur choose the
// embedded Fraktur model, every other list the default one; the Fraktur
// model knows the confusion the engine's frk model makes of Blankenburg's
// ß, which it draws as a long s with a z (`tesseract -l frk` read "daß"
// as "daſz" on such a page: Tesseract 5.3.0, Debian fonts-blankenburg 0.1-3,
// checked by hand on 3 Dec 2026), far above the default model.
func TestModelForLang(t *testing.T) {
	for _, c := range []struct {
		lang    string
		fraktur bool
	}{{"frk", true}, {"deu+frk", true}, {"Fraktur", true}, {"script/Fraktur", true}, {"deu", false}, {"eng", false}, {"", false}} {
		m, name := ModelForLang(c.lang)
		if (m == FrakturModel()) != c.fraktur || (m == DefaultModel()) == c.fraktur || name == "" {
			t.Errorf("ModelForLang(%q) = %s, want the Fraktur model: %v", c.lang, name, c.fraktur)
		}
	}
	f, d := FrakturModel(), DefaultModel()
	if pf, pd := f.Prob("ß", "sz"), d.Prob("ß", "sz"); !(pf > 0.05 && pf > 10*pd) {
		t.Errorf("P(ß→sz): Fraktur model %.4g, default %.4g; want the Fraktur model above 0.05 and 10× the default", pf, pd)
	}
}
