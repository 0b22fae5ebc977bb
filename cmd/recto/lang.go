package main

import (
	"fmt"
	"strings"

	"recto/lexicon"
)

// langHelp is the --lang paragraph of the help of triage and correct.
const langHelp = `
--lang takes the engine's language codes, "+" between several (eng, nor,
deu, eng+deu...; as 'recto ocr --lang'); without it the language recorded
in the page records by 'recto ocr' is used, else eng. It chooses the
lexicon: eng is embedded; nor uses the Bokmål and Nynorsk lexicons (nob,
nno), deu, frk and Fraktur the German one (deu; Fraktur also the
traditional spelling's, deu-1901, when built), each built once with 'recto
lexicon build --lang CODE' from the installed Debian packages. When a
language has no lexicon the command says so once on stderr, and works
without one rather than with another language's: --lexicon FILE overrides
the choice.
`

// langChoice is the language a command works in and the lexicon it chose;
// it is recorded in the command's outputs.
type langChoice struct {
	Lang     string   `json:"lang"`               // engine language list, e.g. "nor" or "eng+deu"
	From     string   `json:"from"`               // where Lang came from: "--lang", "page records" or "default"
	Lexicons []string `json:"lexicons,omitempty"` // lexicon files used ("embedded English ..." for the embedded one)
	Missing  []string `json:"missing,omitempty"`  // lexicon codes with no lexicon: none was used

	lex  *lexicon.Lexicon   // nil when Missing is not empty
	sel  *lexicon.Selection // nil with --lexicon
	note string             // the message for stderr, "" when none
}

// chooseLanguage picks the language and lexicon of a command: --lexicon
// FILE wins; else --lang; else recorded() (the language of the page
// records, "" when none); else eng. what is the command's consequence of
// a missing lexicon for the stderr note.
func chooseLanguage(lang, lexFile string, recorded func() string, what string) (*langChoice, error) {
	c := &langChoice{Lang: lang, From: "--lang"}
	if c.Lang == "" && recorded != nil {
		c.Lang, c.From = recorded(), "page records"
	}
	if c.Lang == "" {
		c.Lang, c.From = "eng", "default"
	}
	for _, code := range strings.Split(c.Lang, "+") {
		if code == "" || strings.ContainsAny(code, "/\\. ") {
			return nil, usagef("--lang %q: want engine language codes joined by + (eng, nor, eng+deu)", c.Lang)
		}
	}
	if lexFile != "" {
		l, err := lexicon.Load(lexFile)
		if err != nil {
			return nil, err
		}
		c.lex, c.Lexicons = l, []string{lexFile}
		return c, nil
	}
	sel, err := lexicon.ForLang(c.Lang)
	if err != nil {
		return nil, err
	}
	c.sel, c.lex, c.Lexicons, c.Missing = sel, sel.Lexicon, sel.Files, sel.Missing
	if !sel.Complete() {
		c.note = sel.MissingNote(what)
	}
	return c, nil
}

// describe is the one line that names the language in text reports.
func (c *langChoice) describe() string {
	s := fmt.Sprintf("language %s (%s)", c.Lang, c.From)
	if len(c.Missing) > 0 {
		return s + "; no lexicon for " + strings.Join(c.Missing, ", ")
	}
	return s + "; lexicon " + strings.Join(c.Lexicons, " + ")
}
