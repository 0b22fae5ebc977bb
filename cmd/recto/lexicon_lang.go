package main

import (
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"recto/internal/atomicfile"
	"recto/lexicon"
)

// runLexiconBuildLang builds the lexicon of one language from its recipe
// (lexicon.Recipes): the installed Debian word lists, Hunspell dictionaries
// and gettext catalogs. Without --out it writes lexicon.Path(code), where
// --lang finds it, and a <code>.sources.md beside it saying what was read.
func runLexiconBuildLang(o LexiconBuildOptions, g GlobalOptions) error {
	r, ok := lexicon.Recipes[o.Lang]
	if !ok {
		var known []string
		for c := range lexicon.Recipes {
			known = append(known, c)
		}
		sort.Strings(known)
		return usagef("lexicon build: no recipe for --lang %q (known: %s); build any other language with --words/--hunspell/--text --out %s",
			o.Lang, strings.Join(known, ", "), lexicon.Path(o.Lang))
	}
	out := o.Out
	if out == "" {
		out = lexicon.Path(r.Code)
		if err := os.MkdirAll(filepath.Dir(out), 0o755); err != nil {
			return fmt.Errorf("lexicon build: %w", err)
		}
	}
	progress := func(s string) {
		if !g.Quiet {
			fmt.Fprintln(g.stderr, s)
		}
	}
	l, rep, err := lexicon.BuildRecipe(r, lexicon.BuildOptions{MinTextCount: o.MinText, MinBigramCount: o.MinPair}, progress)
	if err != nil {
		return err
	}
	if err := l.Save(out); err != nil {
		return err
	}
	if err := writeCompactForm(out, g); err != nil {
		return err
	}
	src := strings.TrimSuffix(strings.TrimSuffix(out, ".gz"), ".lex") + ".sources.md"
	if err := writeSourcesFile(src, recipeSources(r, rep, l)); err != nil {
		return fmt.Errorf("lexicon build: %w", err)
	}
	fmt.Fprintf(g.stdout, "%s: %s, %d words, %d word pairs, %d running words counted from %d catalogs (%d held out); sources in %s\n",
		out, r.Name, l.Len(), l.Bigrams(), l.Total(), len(rep.Catalogs), len(rep.HeldOut), src)
	return nil
}

// recipeSources is the <code>.sources.md written beside a recipe's lexicon.
func recipeSources(r lexicon.Recipe, rep *lexicon.RecipeReport, l *lexicon.Lexicon) string {
	var b strings.Builder
	fmt.Fprintf(&b, "# Lexicon %s (%s)\n\nBuilt %s by `recto lexicon build --lang %s`: %d words, %d word pairs, compounds: %v.\n\n",
		r.Code, r.Name, time.Now().UTC().Format(time.RFC3339), r.Code, l.Len(), l.Bigrams(), l.Compounds())
	b.WriteString("| input | Debian package | version | licence |\n| --- | --- | --- | --- |\n")
	for _, in := range rep.Inputs {
		fmt.Fprintf(&b, "| `%s` | %s | %s | %s (see /usr/share/doc/%s/copyright) |\n", in.Path, in.Package, packageVersion(in.Package), in.Licence, in.Package)
	}
	fmt.Fprintf(&b, "\nWord and word-pair counts: %d running words of the translated messages of %d gettext catalogs in `%s`\n"+
		"(each catalog's licence is its package's: see /usr/share/doc/PACKAGE/copyright; only word forms and counts are kept).\n"+
		"Held out for tests, never counted: %s.\n\n", rep.Running, len(rep.Catalogs), r.Catalogs.Dir, strings.Join(rep.HeldOut, ", "))
	for _, c := range rep.Catalogs {
		fmt.Fprintf(&b, "- %s\n", filepath.Base(c))
	}
	if len(rep.Skipped) > 0 {
		fmt.Fprintf(&b, "\nSkipped (unreadable): %s\n", strings.Join(rep.Skipped, ", "))
	}
	return b.String()
}

// packageVersion asks dpkg for an installed package's version; "?" when
// it cannot say.
func packageVersion(pkg string) string {
	out, err := exec.Command("dpkg-query", "-W", "-f=${Version}", pkg).Output()
	if err != nil || len(out) == 0 {
		return "?"
	}
	return string(out)
}

// writeSourcesFile writes text to path through the one atomic writer
// (internal/atomicfile).
func writeSourcesFile(path, text string) error { return atomicfile.Write(path, []byte(text)) }
