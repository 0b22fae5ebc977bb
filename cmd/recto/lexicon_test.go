package main

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/lexicon"
)

func TestLexiconBuildCommand(t *testing.T) {
	dir := t.TempDir()
	words := filepath.Join(dir, "words.txt")
	os.WriteFile(words, []byte("harbour\nledger\nVellmark\n"), 0o644)
	textDir := filepath.Join(dir, "text")
	os.MkdirAll(textDir, 0o755)
	os.WriteFile(filepath.Join(textDir, "a.txt"), []byte("The ledger of the harbour. The ledger the ledger the harbour."), 0o644)
	os.WriteFile(filepath.Join(textDir, "a.json"), []byte("ignored"), 0o644)
	out := filepath.Join(dir, "x.lex.gz")
	stdout, _, err := runRecto(t, "lexicon", "build", "--words", words,
		"--hunspell", "../../testdata/lexicon/hunspell-man/example.dic:../../testdata/lexicon/hunspell-man/example.aff",
		"--text", textDir, "--out", out)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(stdout, "words") {
		t.Errorf("stdout: %q", stdout)
	}
	l, err := lexicon.Load(out)
	if err != nil {
		t.Fatal(err)
	}
	if l.Count("ledger") != 3 || !l.Has("vellmark") || !l.Has("reworked") || l.Count("the") != 5 || l.Bigram("the", "ledger") != 3 {
		t.Errorf("built lexicon: ledger %d, vellmark %v, reworked %v, the %d, the ledger %d",
			l.Count("ledger"), l.Has("vellmark"), l.Has("reworked"), l.Count("the"), l.Bigram("the", "ledger"))
	}
	stdout, _, err = runRecto(t, "lexicon", "lookup", "--lexicon", out, "Ledger", "ledgr")
	if err != nil || !strings.Contains(stdout, "Ledger\tledger\tyes\t3") || !strings.Contains(stdout, "ledgr\tledgr\tno\t0") {
		t.Errorf("lookup (%v): %q", err, stdout)
	}
}

// TestLexiconBuildCompact: a lexicon built into the lexicon folder gets
// its compact form beside it (what --lang loads, lexicon/compact.go); one
// built elsewhere does not.
func TestLexiconBuildCompact(t *testing.T) {
	dir := t.TempDir()
	t.Setenv(lexicon.EnvDir, dir)
	words := filepath.Join(t.TempDir(), "words.txt")
	os.WriteFile(words, []byte("fjord\nledger\n"), 0o644)
	out := filepath.Join(dir, "xx.lex.gz")
	_, stderr, err := runRecto(t, "lexicon", "build", "--words", words, "--out", out)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(lexicon.CompactPath(out)); err != nil || !strings.Contains(stderr, lexicon.CompactPath(out)) {
		t.Fatalf("no compact form beside %s (%v); stderr %q", out, err, stderr)
	}
	sel, err := lexicon.ForLang("xx")
	if err != nil || !sel.Complete() || !sel.Lexicon.Has("fjord") {
		t.Fatalf("ForLang(xx) = %+v, %v", sel, err)
	}
	elsewhere := filepath.Join(t.TempDir(), "yy.lex.gz")
	if _, _, err := runRecto(t, "lexicon", "build", "--words", words, "--out", elsewhere); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(lexicon.CompactPath(elsewhere)); !os.IsNotExist(err) {
		t.Errorf("a compact form was written beside %s, outside the lexicon folder: %v", elsewhere, err)
	}
}

func TestLexiconBuildBadInput(t *testing.T) {
	dir := t.TempDir()
	latin1 := filepath.Join(dir, "latin1.txt")
	os.WriteFile(latin1, []byte("harbour\ncaf\xe9\n"), 0o644)
	out := filepath.Join(dir, "x.lex")
	_, _, err := runRecto(t, "lexicon", "build", "--words", latin1, "--out", out)
	var pe *lexicon.ParseError
	if !errors.As(err, &pe) || !strings.Contains(err.Error(), "latin1.txt:2") || !strings.Contains(err.Error(), "UTF-8") {
		t.Errorf("non-UTF-8 word list: %v", err)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Error("an output file was written despite the error")
	}
	if _, _, err := runRecto(t, "lexicon", "build", "--text", t.TempDir(), "--out", out); err == nil || !strings.Contains(err.Error(), "no .txt files") {
		t.Errorf("empty text folder: %v", err)
	}
	var ue *usageError
	if _, _, err := runRecto(t, "lexicon", "build", "--out", out); !errors.As(err, &ue) {
		t.Errorf("no sources: %v, want usage error", err)
	}
	if _, _, err := runRecto(t, "lexicon", "build", "--words", latin1); !errors.As(err, &ue) {
		t.Errorf("no --out: %v, want usage error", err)
	}
}
