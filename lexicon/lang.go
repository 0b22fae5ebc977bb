package lexicon

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"sync"

	"recto/ocr/par"
)

// Languages. The option --lang takes the engine's language codes, "+"
// between several ("nor", "deu", "eng+deu"): Tesseract's codes, which are
// ISO 639-2/T codes with a few of the engine's own ("frk" for German set in
// Fraktur, "Fraktur" for the Fraktur script model). Each engine code names the lexicons that judge its words:
// "eng" the embedded English one, "nor" (Tesseract's one Norwegian model)
// both Bokmål ("nob") and Nynorsk ("nno"), "frk" and "Fraktur" German; any other code
// names itself. Every lexicon but English's is a file <code>.lex.gz in the
// lexicon folder (Dir), built by `recto lexicon build --lang CODE` from the
// Debian packages of Recipes, or by hand for any other language.

// EmbeddedEnglish is the name ForLang gives the embedded English lexicon
// in Selection.Files.
const EmbeddedEnglish = "embedded English (en.lex.gz)"

// engineLexicons maps an engine language code to its lexicon codes where
// they differ from the code itself.
var engineLexicons = map[string][]string{
	"nor": {"nob", "nno"},
	"frk": {"deu"},
	// The engine's Fraktur script model (Debian tesseract-ocr-script-frak)
	// reads German print in Fraktur above all.
	"Fraktur":        {"deu"},
	"script/Fraktur": {"deu"},
}

// optionalLexicons are used beside an engine code's lexicons when they
// have been built, and left out silently when not: German in the
// traditional spelling of 1901–1996 ("daß", "muß"), which print in
// Fraktur uses, for the Fraktur codes.
var optionalLexicons = map[string][]string{
	"frk":            {"deu-1901"},
	"Fraktur":        {"deu-1901"},
	"script/Fraktur": {"deu-1901"},
}

// Optional returns the lexicon codes an engine language list uses when
// they are there (optionalLexicons), in order, without repeats.
func Optional(lang string) []string {
	var out []string
	for _, c := range splitLang(lang) {
		for _, x := range optionalLexicons[c] {
			if !slices.Contains(out, x) {
				out = append(out, x)
			}
		}
	}
	return out
}

// LexiconCodes returns the lexicon codes an engine language list needs, in
// order, without repeats: "eng+nor" gives eng, nob, nno.
func LexiconCodes(lang string) []string {
	var out []string
	for _, c := range splitLang(lang) {
		codes, ok := engineLexicons[c]
		if !ok {
			codes = []string{c}
		}
		for _, x := range codes {
			if !slices.Contains(out, x) {
				out = append(out, x)
			}
		}
	}
	return out
}

func splitLang(lang string) []string {
	if strings.TrimSpace(lang) == "" {
		return []string{"eng"}
	}
	var out []string
	for _, c := range strings.Split(lang, "+") {
		if c = strings.TrimSpace(c); c != "" {
			out = append(out, c)
		}
	}
	return out
}

// EnvDir is the environment variable that overrides the lexicon folder.
const EnvDir = "RECTO_LEXICONS"

// Dir returns the folder where language lexicons are kept: $RECTO_LEXICONS
// when set, else $XDG_DATA_HOME/recto/lexicons, else
// ~/.local/share/recto/lexicons (the XDG Base Directory default).
func Dir() string {
	if d := os.Getenv(EnvDir); d != "" {
		return d
	}
	if d := os.Getenv("XDG_DATA_HOME"); d != "" {
		return filepath.Join(d, "recto", "lexicons")
	}
	if h, err := os.UserHomeDir(); err == nil {
		return filepath.Join(h, ".local", "share", "recto", "lexicons")
	}
	return filepath.Join("recto", "lexicons")
}

// Path returns the file of the lexicon for a lexicon code in Dir.
func Path(code string) string { return filepath.Join(Dir(), code+".lex.gz") }

// Selection is the lexicon chosen for a --lang value.
type Selection struct {
	Lang    string   // the engine language list as given, "eng" when empty
	Codes   []string // the lexicon codes it needs (LexiconCodes), and the optional ones found (Optional)
	Files   []string // the lexicons loaded: EmbeddedEnglish or a file path
	Missing []string // lexicon codes with no lexicon file; Lexicon is nil then

	// Lexicon holds the words of every language in Codes (Merge), nil when
	// any of them is missing: a page in a language without a lexicon must
	// not be judged or corrected by another language's words.
	Lexicon *Lexicon
}

// Complete reports whether every language of the selection has a lexicon.
func (s *Selection) Complete() bool { return s.Lexicon != nil }

// MissingNote returns the sentence a command prints once on stderr when
// lexicons are missing: which, how to build them (with the Debian
// packages their recipe needs) and what the command does without them;
// "" when the selection is complete. what is the command's own
// consequence, e.g. "correction makes only language-independent fixes".
func (s *Selection) MissingNote(what string) string {
	if s.Complete() {
		return ""
	}
	var how []string
	for _, c := range s.Missing {
		if r, ok := Recipes[c]; ok {
			how = append(how, fmt.Sprintf("%s (%s): 'recto lexicon build --lang %s' (Debian packages %s)", c, r.Name, c, strings.Join(r.Packages(), ", ")))
		} else {
			how = append(how, fmt.Sprintf("%s: build %s with 'recto lexicon build --words LIST --out %s'", c, Path(c), Path(c)))
		}
	}
	return fmt.Sprintf("no lexicon for %s in %s; %s. Build: %s", strings.Join(s.Missing, ", "), Dir(), what, strings.Join(how, "; "))
}

// loaded caches lexicon files by path for the life of the process: the
// commands and a batch run ask for the same languages many times.
var loaded sync.Map // path -> *loadEntry

type loadEntry struct {
	once sync.Once
	lex  *Lexicon
	err  error
}

func loadCached(path string) (*Lexicon, error) {
	v, _ := loaded.LoadOrStore(path, &loadEntry{})
	e := v.(*loadEntry)
	e.once.Do(func() { e.lex, e.err = loadFast(path) }) // through the compact form (compact.go)
	return e.lex, e.err
}

var merged sync.Map // strings.Join(files, "\n") -> *Lexicon

// ForLang chooses the lexicon for an engine language list (see the top of
// this file). A missing lexicon file is not an error: it is listed in
// Missing and Lexicon is nil. A lexicon file that exists but cannot be read
// is an error naming the file. English alone gives the embedded lexicon
// itself (Default), so an English run is unchanged.
func ForLang(lang string) (*Selection, error) {
	s := &Selection{Lang: strings.Join(splitLang(lang), "+"), Codes: LexiconCodes(lang)}
	for _, c := range s.Codes {
		switch p := Path(c); {
		case fileExists(p): // for English, a user's own lexicon wins
			s.Files = append(s.Files, p)
		case c == "eng":
			s.Files = append(s.Files, EmbeddedEnglish)
		default:
			s.Missing = append(s.Missing, c)
		}
	}
	if len(s.Missing) > 0 {
		return s, nil
	}
	for _, c := range Optional(lang) {
		if p := Path(c); fileExists(p) && !slices.Contains(s.Files, p) {
			s.Codes, s.Files = append(s.Codes, c), append(s.Files, p)
		}
	}
	// The files are independent: read them side by side.
	lexs := make([]*Lexicon, len(s.Files))
	errs := make([]error, len(s.Files))
	_ = par.Each(context.Background(), len(s.Files), 0, func(_, i int) { // the one worker pool
		if p := s.Files[i]; p == EmbeddedEnglish {
			lexs[i] = Default()
		} else {
			lexs[i], errs[i] = loadCached(p)
		}
	})
	if err := errors.Join(errs...); err != nil {
		return nil, err
	}
	if len(lexs) == 1 {
		s.Lexicon = lexs[0]
		return s, nil
	}
	key := strings.Join(s.Files, "\n")
	if v, ok := merged.Load(key); ok {
		s.Lexicon = v.(*Lexicon)
		return s, nil
	}
	v, _ := merged.LoadOrStore(key, Merge(lexs...))
	s.Lexicon = v.(*Lexicon)
	return s, nil
}

func fileExists(p string) bool {
	st, err := os.Stat(p)
	return err == nil && !st.IsDir()
}

// A Recipe says how `recto lexicon build --lang CODE` builds a language's
// lexicon from installed Debian packages: word lists, Hunspell
// dictionaries (whose compounding rules the lexicon keeps) and gettext
// catalogs as running text for the counts.
type Recipe struct {
	Code     string     // lexicon code, ISO 639-3 ("nob")
	Name     string     // "Norwegian Bokmål"
	Words    []Input    // plain word lists
	Hunspell []Input    // .dic files; the .aff beside each
	Catalogs CatalogSet // running text
}

// Input is one file of a recipe and the Debian package that installs it.
type Input struct {
	Path    string // absolute path
	Charset string // for word lists: "" (UTF-8) or a Hunspell SET name
	Package string // Debian package
	Licence string // the package's licence for this file, from its copyright file
}

// CatalogSet is the gettext catalogs of one locale folder, some held out.
type CatalogSet struct {
	Dir string // e.g. /usr/share/locale/nb/LC_MESSAGES
	// HeldOut are catalogs (file names) never counted: the tests render
	// pages from them, so test text is not text the counts came from.
	HeldOut []string
}

// Packages returns the Debian packages the recipe reads from, sorted.
func (r Recipe) Packages() []string {
	var ps []string
	for _, in := range append(slices.Clone(r.Words), r.Hunspell...) {
		if !slices.Contains(ps, in.Package) {
			ps = append(ps, in.Package)
		}
	}
	sort.Strings(ps)
	return ps
}

// Files returns the catalogs of the set that are counted, sorted: every
// *.mo in Dir but the held-out ones.
func (c CatalogSet) Files() ([]string, error) {
	if c.Dir == "" {
		return nil, nil
	}
	ms, err := filepath.Glob(filepath.Join(c.Dir, "*.mo"))
	if err != nil {
		return nil, err
	}
	var out []string
	for _, m := range ms {
		if !slices.Contains(c.HeldOut, filepath.Base(m)) {
			out = append(out, m)
		}
	}
	sort.Strings(out)
	return out, nil
}

// Recipes are the languages `recto lexicon build --lang` knows, by lexicon
// code. Licences are those of each package's /usr/share/doc/PKG/copyright
// (Debian bookworm). The catalogs' licences are their packages' own (GPL,
// LGPL and others); only word forms and counts are kept from them.
var Recipes = map[string]Recipe{
	"nob": {
		Code: "nob", Name: "Norwegian Bokmål",
		Words:    []Input{{Path: "/usr/share/dict/bokmaal", Charset: "ISO8859-1", Package: "wnorwegian", Licence: "GPL-2+"}},
		Hunspell: []Input{{Path: "/usr/share/hunspell/nb_NO.dic", Package: "hunspell-no", Licence: "GPL-2"}},
		Catalogs: CatalogSet{Dir: "/usr/share/locale/nb/LC_MESSAGES", HeldOut: []string{"bash.mo"}},
	},
	"nno": {
		Code: "nno", Name: "Norwegian Nynorsk",
		Words:    []Input{{Path: "/usr/share/dict/nynorsk", Charset: "ISO8859-1", Package: "wnorwegian", Licence: "GPL-2+"}},
		Hunspell: []Input{{Path: "/usr/share/hunspell/nn_NO.dic", Package: "hunspell-no", Licence: "GPL-2"}},
		Catalogs: CatalogSet{Dir: "/usr/share/locale/nn/LC_MESSAGES", HeldOut: []string{"gtk20-properties.mo"}},
	},
	"deu": {
		Code: "deu", Name: "German",
		Words:    []Input{{Path: "/usr/share/dict/ngerman", Package: "wngerman", Licence: "GPL-2+"}},
		Hunspell: []Input{{Path: "/usr/share/hunspell/de_DE.dic", Package: "hunspell-de-de", Licence: "GPL-2+"}},
		Catalogs: CatalogSet{Dir: "/usr/share/locale/de/LC_MESSAGES", HeldOut: []string{"bash.mo"}},
	},
	// German in the traditional spelling (before the 1996 reform), for
	// Fraktur print: --lang frk and Fraktur use it beside deu.
	"deu-1901": {
		Code: "deu-1901", Name: "German, traditional spelling",
		Words:    []Input{{Path: "/usr/share/dict/ogerman", Package: "wogerman", Licence: "GPL-2+"}},
		Hunspell: []Input{{Path: "/usr/share/hunspell/de_DE-1901.dic", Package: "myspell-de-de-1901", Licence: "GPL-2+"}},
		Catalogs: CatalogSet{Dir: "/usr/share/locale/de/LC_MESSAGES", HeldOut: []string{"bash.mo"}},
	},
}

// ErrNoRecipe is returned by BuildRecipe for a code Recipes lacks.
var ErrNoRecipe = errors.New("no recipe for this language")

// MissingPackageError is returned by BuildRecipe when a file of the
// recipe is not installed.
type MissingPackageError struct {
	Path    string
	Package string
}

func (e *MissingPackageError) Error() string {
	return fmt.Sprintf("lexicon: %q is missing; on Debian install the package %s", e.Path, e.Package)
}

// RecipeReport says what BuildRecipe read.
type RecipeReport struct {
	Inputs   []Input  // word lists and dictionaries read
	Catalogs []string // catalogs counted
	HeldOut  []string // catalogs left out for the tests
	Skipped  []string // catalogs that could not be read (named in progress)
	Running  int64    // running words counted in the catalogs
}

// BuildRecipe builds the lexicon of a recipe. progress, when not nil, is
// called with one line per step.
func BuildRecipe(r Recipe, opts BuildOptions, progress func(string)) (*Lexicon, *RecipeReport, error) {
	say := func(format string, a ...any) {
		if progress != nil {
			progress(fmt.Sprintf(format, a...))
		}
	}
	for _, in := range append(slices.Clone(r.Words), r.Hunspell...) {
		if !fileExists(in.Path) {
			return nil, nil, &MissingPackageError{Path: in.Path, Package: in.Package}
		}
	}
	b := NewBuilder()
	b.Options = opts
	b.Options.ListedOnly = true
	rep := &RecipeReport{HeldOut: r.Catalogs.HeldOut}
	for _, in := range r.Words {
		say("reading word list %q (%s)", in.Path, in.Package)
		if err := b.AddWordListCharset(in.Path, in.Charset); err != nil {
			return nil, nil, err
		}
		rep.Inputs = append(rep.Inputs, in)
	}
	for _, in := range r.Hunspell {
		aff := strings.TrimSuffix(in.Path, ".dic") + ".aff"
		if !fileExists(aff) {
			return nil, nil, &MissingPackageError{Path: aff, Package: in.Package}
		}
		say("expanding Hunspell dictionary %q (%s)", in.Path, in.Package)
		if err := b.AddHunspell(in.Path, aff); err != nil {
			return nil, nil, err
		}
		rep.Inputs = append(rep.Inputs, in)
	}
	cats, err := r.Catalogs.Files()
	if err != nil {
		return nil, nil, fmt.Errorf("lexicon: %w", err)
	}
	say("counting words in %d catalogs under %q", len(cats), r.Catalogs.Dir)
	for _, c := range cats {
		if _, err := b.AddCatalog(c); err != nil {
			// One unreadable catalog does not stop the build; it is named.
			say("skipping catalog: %v", err)
			rep.Skipped = append(rep.Skipped, c)
			continue
		}
		rep.Catalogs = append(rep.Catalogs, c)
	}
	rep.Running = b.Running()
	return b.Lexicon(), rep, nil
}
