package synth

import (
	"strings"
	"testing"
	"unicode/utf8"
)

// FuzzRender checks that Render never fails or panics on valid UTF-8 on a
// valid layout, and that truth and rest together hold exactly the input's
// non-space characters in order (line breaks and broken words only add
// white space).
func FuzzRender(f *testing.F) {
	f.Add(sample)
	f.Add("")
	f.Add("a\n\n\n\nb")
	f.Add(strings.Repeat("x", 500))
	f.Add("tab\tand\r\nCRLF\u00a0nbsp \u2028 line-sep")
	l := Layout{WidthMM: 40, HeightMM: 30, MarginMM: 3, FontSizePt: 9, DPI: 150}
	f.Fuzz(func(t *testing.T, text string) {
		if len(text) > 4000 || !utf8.ValidString(text) {
			t.Skip()
		}
		p, rest, err := Render(text, l)
		if err != nil {
			t.Fatal(err)
		}
		squash := func(s string) string { return strings.Join(strings.Fields(s), "") }
		if got, want := squash(p.Truth)+squash(rest), squash(text); got != want {
			t.Errorf("truth %q + rest %q do not rebuild %q", p.Truth, rest, text)
		}
	})
}
