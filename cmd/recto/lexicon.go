package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"recto/lexicon"
)

// LexiconBuildOptions are the options of `recto lexicon build`.
type LexiconBuildOptions struct {
	Words    []string // plain word lists, one word per line
	Hunspell []string // Hunspell dictionaries: path of the .dic (the .aff beside it) or DIC:AFF
	Text     []string // folders (or single files) of running text to count
	Out      string   // output lexicon file
	MinText  int64    // see lexicon.BuildOptions.MinTextCount
	MinPair  int64    // see lexicon.BuildOptions.MinBigramCount
	Lang     string   // build a language's lexicon from its recipe (lexicon_lang.go)
}

func newLexiconCommand(g *GlobalOptions) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "lexicon",
		Short: "Build and inspect word lists with frequencies",
		Long: `Build and inspect lexicons: word lists with word and word-pair counts,
used by triage (lexicon hit rate) and correction.

recto embeds an English lexicon; build your own for other languages or
for the vocabulary of your collection with 'recto lexicon build'.`,
		// An unknown subcommand is a usage error (exit 2), as at the top
		// level; cobra would print the help and exit 0.
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error { return cmd.Help() },
	}
	cmd.AddCommand(newLexiconBuildCommand(g), newLexiconLookupCommand(g))
	return cmd
}

func newLexiconBuildCommand(g *GlobalOptions) *cobra.Command {
	var o LexiconBuildOptions
	cmd := &cobra.Command{
		Use:   "build (--lang CODE | --out FILE [--words LIST]... [--hunspell DIC]... [--text DIR]...)",
		Short: "Build a lexicon file from word lists, Hunspell dictionaries and running text",
		Long: `Build a lexicon file from any combination of sources:

  --words LIST     a plain word list, one word per line (for example Debian's
                   /usr/share/dict/american-english from wamerican)
  --hunspell DIC   a Hunspell dictionary; the .aff with the same name is read
                   beside it (or give DIC:AFF); prefix and suffix rules are
                   expanded into word forms
  --text DIR       a folder of running text: every *.txt file under it is
                   read and its words and word pairs counted (a single file
                   works too)

Listed words take their counts from the running text. A word seen only in
the text joins the lexicon when it occurs at least --min-count times (default
3 when a list is given, else 1); word pairs are kept from --min-pair
occurrences (default 2). All input must be UTF-8. Words are stored by key:
NFC, lower case, diacritics kept. Output ending in .gz is compressed.

  --lang CODE      build the lexicon of a language from the installed Debian
                   packages: nob (Norwegian Bokmål: wnorwegian, hunspell-no),
                   nno (Norwegian Nynorsk: the same packages), deu (German:
                   wngerman, hunspell-de-de), deu-1901 (German in the
                   traditional spelling, for Fraktur: wogerman,
                   myspell-de-de-1901). Word lists and the dictionary's
                   compounding rules give the words; the translated messages
                   of the gettext catalogs under /usr/share/locale/LL give the
                   counts. Without --out it is written where --lang finds it
                   ($RECTO_LEXICONS, else ~/.local/share/recto/lexicons), with
                   CODE.sources.md beside it (packages, versions, licences,
                   how much text was counted). --lang nor on the other
                   commands uses both nob and nno; deu serves frk and
                   Fraktur too, with deu-1901 beside it when built.

Example (the Norwegian and German lexicons):
  recto lexicon build --lang nob && recto lexicon build --lang nno && recto lexicon build --lang deu

Example (a word list from Debian's wamerican, counts from your own texts):
  recto lexicon build --words /usr/share/dict/american-english \
    --text transcriptions/ --out english.lex.gz

(The embedded English lexicon's exact rebuild command and its sources are in
lexicon/data/SOURCES.md of the source tree.)` + exitStatusHelp,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLexiconBuild(cmd.Context(), o, *g)
		},
	}
	f := cmd.Flags()
	f.StringArrayVar(&o.Words, "words", nil, "plain word list `file` (repeatable)")
	f.StringArrayVar(&o.Hunspell, "hunspell", nil, "Hunspell `dic` file, .aff beside it, or DIC:AFF (repeatable)")
	f.StringArrayVar(&o.Text, "text", nil, "`folder` of .txt running text to count (repeatable)")
	f.StringVarP(&o.Out, "out", "o", "", "output lexicon `file` (.gz to compress)")
	f.StringVar(&o.Lang, "lang", "", "build the lexicon of language `code` (nob, nno, deu, deu-1901) from the installed Debian packages")
	f.Int64Var(&o.MinText, "min-count", 0, "occurrences a text-only word needs to be kept (0: 3 with a list, else 1)")
	f.Int64Var(&o.MinPair, "min-pair", 0, "occurrences a word pair needs to be kept (0: 2)")
	return cmd
}

func runLexiconBuild(ctx context.Context, o LexiconBuildOptions, g GlobalOptions) error {
	if o.Out == "" {
		if o.Lang != "" {
			return runLexiconBuildLang(o, g)
		}
		return usagef("lexicon build: --out is required (or --lang)")
	}
	if o.Lang != "" {
		if len(o.Words)+len(o.Hunspell)+len(o.Text) > 0 {
			return usagef("lexicon build: --lang takes its sources from its recipe; give --words/--hunspell/--text without it")
		}
		return runLexiconBuildLang(o, g)
	}
	if len(o.Words)+len(o.Hunspell)+len(o.Text) == 0 {
		return usagef("lexicon build: give at least one source (--words, --hunspell or --text)")
	}
	b := lexicon.NewBuilder()
	b.Options = lexicon.BuildOptions{MinTextCount: o.MinText, MinBigramCount: o.MinPair}
	progress := func(format string, a ...any) {
		if !g.Quiet {
			g.printf(format, a...)
		}
	}
	for _, p := range o.Words {
		progress("reading word list %q", p)
		if err := b.AddWordList(p); err != nil {
			return err
		}
	}
	for _, p := range o.Hunspell {
		dic, aff := p, strings.TrimSuffix(p, filepath.Ext(p))+".aff"
		if d, a, ok := strings.Cut(p, ":"); ok && strings.HasSuffix(a, ".aff") {
			dic, aff = d, a
		}
		progress("expanding Hunspell dictionary %q with %q", dic, aff)
		if err := b.AddHunspell(dic, aff); err != nil {
			return err
		}
	}
	for _, p := range o.Text {
		if err := ctx.Err(); err != nil {
			return err
		}
		progress("counting words in %q", p)
		st, err := os.Stat(p)
		if err != nil {
			return fmt.Errorf("lexicon build: %w", err)
		}
		if st.IsDir() {
			err = b.AddTextDir(p)
		} else {
			err = b.AddTextFile(p)
		}
		if err != nil {
			return err
		}
	}
	l := b.Lexicon()
	if err := l.Save(o.Out); err != nil {
		return err
	}
	if err := writeCompactForm(o.Out, g); err != nil {
		return err
	}
	fmt.Fprintf(g.stdout, "%s: %d words, %d word pairs, %d running words counted\n", o.Out, l.Len(), l.Bigrams(), l.Total())
	return nil
}

func newLexiconLookupCommand(g *GlobalOptions) *cobra.Command {
	var path string
	cmd := &cobra.Command{
		Use:   "lookup [--lexicon FILE] WORD...",
		Short: "Show whether words are in a lexicon, with their counts",
		Long: `Print one line per word: the word, its key, whether the lexicon holds it
("yes", "folded" when only the accent-blind form matches, or "no") and its count.
Without --lexicon the embedded English lexicon is used.` + exitStatusHelp,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			lex := lexicon.Default()
			if path != "" {
				l, err := lexicon.Load(path)
				if err != nil {
					return err
				}
				lex = l
			}
			for _, w := range args {
				in := "no"
				switch {
				case lex.Has(w):
					in = "yes"
				case lex.HasFold(w):
					in = "folded"
				}
				fmt.Fprintf(g.stdout, "%s\t%s\t%s\t%d\n", w, lexicon.Key(w), in, lex.Count(w))
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&path, "lexicon", "", "lexicon `file` (default: embedded English)")
	return cmd
}

// writeCompactForm writes the compact form of a lexicon file built into
// the lexicon folder (lexicon.Dir), where --lang finds it, so that the
// first load is fast too (lexicon.WriteCompact, lexicon/compact.go). A
// lexicon written anywhere else is read by Load, which does not use one.
func writeCompactForm(out string, g GlobalOptions) error {
	dir, err1 := filepath.Abs(filepath.Dir(out))
	lexDir, err2 := filepath.Abs(lexicon.Dir())
	if err1 != nil || err2 != nil || dir != lexDir {
		return nil
	}
	if err := lexicon.WriteCompact(out); err != nil {
		return fmt.Errorf("lexicon build: %w", err)
	}
	if !g.Quiet {
		g.printf("wrote the compact form %q (what --lang loads)", lexicon.CompactPath(out))
	}
	return nil
}
