package lexicon

import (
	"encoding/binary"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

func TestLexiconCodes(t *testing.T) {
	for _, c := range []struct{ lang, want string }{
		{"", "eng"},
		{"eng", "eng"},
		{"nor", "nob nno"},
		{"eng+nor+deu", "eng nob nno deu"},
		{"deu+frk", "deu"}, // Fraktur is judged as German
		{"Fraktur", "deu"},
		{"fra", "fra"},
	} {
		if got := strings.Join(LexiconCodes(c.lang), " "); got != c.want {
			t.Errorf("LexiconCodes(%q) = %q, want %q", c.lang, got, c.want)
		}
	}
	// Fraktur print uses the traditional spelling: its lexicon is used
	// when built, never required.
	if got := strings.Join(Optional("eng+frk"), " "); got != "deu-1901" {
		t.Errorf("Optional(eng+frk) = %q, want deu-1901", got)
	}
	if got := Optional("deu"); len(got) != 0 {
		t.Errorf("Optional(deu) = %q, want none", got)
	}
}

// writeLex saves a small lexicon of words under code in dir.
func writeLex(t *testing.T, dir, code string, words ...string) {
	t.Helper()
	l := New()
	for i, w := range words {
		l.Add(w, int64(i+1))
	}
	if err := l.Save(filepath.Join(dir, code+".lex.gz")); err != nil {
		t.Fatal(err)
	}
}

func TestForLang(t *testing.T) {
	dir := t.TempDir()
	t.Setenv(EnvDir, dir)
	s, err := ForLang("eng")
	if err != nil || s.Lexicon != Default() || s.Files[0] != EmbeddedEnglish {
		t.Fatalf("ForLang(eng) = %+v, %v; want the embedded lexicon itself", s, err)
	}
	s, err = ForLang("nor")
	if err != nil {
		t.Fatal(err)
	}
	if s.Complete() || !slices.Equal(s.Missing, []string{"nob", "nno"}) {
		t.Fatalf("ForLang(nor) with no files: missing %v, complete %v", s.Missing, s.Complete())
	}
	note := s.MissingNote("correction makes only language-independent fixes")
	for _, want := range []string{"nob", "nno", "recto lexicon build --lang nob", "wnorwegian", "hunspell-no", "language-independent"} {
		if !strings.Contains(note, want) {
			t.Errorf("note %q lacks %q", note, want)
		}
	}
	writeLex(t, dir, "nob", "og", "tre", "het")
	s, _ = ForLang("eng+nor")
	if s.Complete() || !slices.Equal(s.Missing, []string{"nno"}) {
		t.Fatalf("one of two Norwegian lexicons: missing %v, complete %v; want nno missing, no lexicon", s.Missing, s.Complete())
	}
	writeLex(t, dir, "nno", "og", "ikkje")
	s, err = ForLang("eng+nor")
	if err != nil || !s.Complete() {
		t.Fatalf("ForLang(eng+nor) = %+v, %v", s, err)
	}
	l := s.Lexicon
	for _, w := range []string{"og", "ikkje", "the", "whale", "Tre"} {
		if !l.Has(w) {
			t.Errorf("merged lexicon lacks %q", w)
		}
	}
	if got, want := l.Count("og"), int64(1+1)+Default().Count("og"); got != want {
		t.Errorf("Count(og) = %d, want %d (counts of all languages added)", got, want)
	}
	if again, _ := ForLang("eng+nor"); again.Lexicon != l {
		t.Error("a second ForLang did not reuse the merged lexicon")
	}
	// Fraktur: German alone until the traditional-spelling lexicon is
	// built, then both.
	fdir := t.TempDir()
	t.Setenv(EnvDir, fdir)
	writeLex(t, fdir, "deu", "dass", "und")
	if s, err := ForLang("frk"); err != nil || !s.Complete() || len(s.Files) != 1 || s.Lexicon.Has("daß") {
		t.Fatalf("ForLang(frk) without deu-1901: %+v, %v; want deu alone", s, err)
	}
	writeLex(t, fdir, "deu-1901", "daß", "und")
	if s, err := ForLang("frk"); err != nil || !s.Complete() || len(s.Files) != 2 || !s.Lexicon.Has("daß") || !s.Lexicon.Has("dass") {
		t.Fatalf("ForLang(frk) with deu-1901: %+v, %v; want both", s, err)
	}
	t.Setenv(EnvDir, dir)
	// A lexicon file that is not one is an error naming it, not "missing".
	if err := os.WriteFile(filepath.Join(dir, "deu.lex.gz"), []byte("not a lexicon\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := ForLang("deu"); !errors.Is(err, ErrNotLexicon) || !strings.Contains(err.Error(), "deu.lex.gz") {
		t.Errorf("ForLang(deu) with a bad file: %v, want ErrNotLexicon naming the file", err)
	}
}

// Merge reads its inputs through; its answers must equal those of a
// copy made word by word (the obvious slow version).
func TestMergeLayers(t *testing.T) {
	a, b := New(), New()
	a.Add("hus", 3)
	a.Add("og", 5)
	a.AddBigram("og", "hus", 2)
	b.Add("og", 7)
	b.Add("ikkje", 1)
	b.AddBigram("og", "hus", 1)
	b.AddBigram("og", "ikkje", 4)
	m := Merge(a, b)
	m.Add("gard", 2) // its own word
	if m.Count("og") != 12 || m.Count("gard") != 2 || m.Total() != 18 || m.Len() != 4 {
		t.Errorf("merged counts: og %d gard %d total %d len %d; want 12 2 18 4", m.Count("og"), m.Count("gard"), m.Total(), m.Len())
	}
	if m.Bigram("og", "hus") != 3 || m.Bigrams() != 2 {
		t.Errorf("pairs: og hus %d, %d pairs; want 3, 2", m.Bigram("og", "hus"), m.Bigrams())
	}
	got := map[string]int64{}
	m.EachBigram(func(k1, k2 string, n int64) { got[k1+" "+k2] += n })
	if len(got) != 2 || got["og hus"] != 3 || got["og ikkje"] != 4 {
		t.Errorf("EachBigram = %v", got)
	}
	if !slices.Equal(m.Words(), []string{"gard", "hus", "ikkje", "og"}) || !m.HasFold("IKKJE") || !m.Listed("hus") {
		t.Errorf("Words = %v", m.Words())
	}
	p := filepath.Join(t.TempDir(), "m.lex")
	if err := m.Save(p); err != nil {
		t.Fatal(err)
	}
	back, err := Load(p)
	if err != nil || back.Count("og") != 12 || back.Bigram("og", "hus") != 3 || back.Len() != 4 {
		t.Errorf("saved merge read back: %v", err)
	}
	if a.Count("gard") != 0 || a.Count("og") != 5 {
		t.Error("Merge modified its input")
	}
}

func TestCleanMessage(t *testing.T) {
	// Typical gettext messages (coreutils/bash style, common practice).
	for _, c := range []struct{ in, want string }{
		{"kan ikke åpne %s: %s", "kan ikke åpne"},
		{"bruk: %1$s [VALG]... FIL", "bruk"},
		{"  -n, --number   nummerer alle linjer", "nummerer alle linjer"},
		{"verdien av $HOME er %-10.3lf", "verdien av er"},
		{"_Fil og &Avbryt", "Fil og Avbryt"},
	} {
		if got := strings.Join(Tokens(CleanMessage(c.in)), " "); got != c.want {
			t.Errorf("CleanMessage(%q) words = %q, want %q", c.in, got, c.want)
		}
	}
}

// moFile builds a catalog in the MO layout of the GNU gettext manual
// (section 10.3 "The Format of GNU MO Files"): header of seven 32-bit
// words, then the two string tables, then the strings.
func moFile(bo binary.ByteOrder, pairs [][2]string) []byte {
	n := len(pairs)
	origTab := 28
	transTab := origTab + 8*n
	off := transTab + 8*n
	var strs []byte
	hdr := make([]byte, off)
	put := func(at int, v int) { bo.PutUint32(hdr[at:], uint32(v)) }
	put(0, moMagic)
	put(8, n)
	put(12, origTab)
	put(16, transTab)
	for i, p := range pairs {
		for k, s := range p {
			tab := origTab
			if k == 1 {
				tab = transTab
			}
			put(tab+8*i, len(s))
			put(tab+8*i+4, off+len(strs))
			strs = append(append(strs, s...), 0)
		}
	}
	return append(hdr, strs...)
}

func TestReadCatalog(t *testing.T) {
	dir := t.TempDir()
	pairs := [][2]string{
		{"", "Content-Type: text/plain; charset=UTF-8\n"},
		{"file", "fil"},
		{"%d file\x00%d files", "%d fil\x00%d filer"},
	}
	for _, bo := range []binary.ByteOrder{binary.LittleEndian, binary.BigEndian} {
		p := filepath.Join(dir, "x.mo")
		if err := os.WriteFile(p, moFile(bo, pairs), 0o644); err != nil {
			t.Fatal(err)
		}
		got, err := ReadCatalog(p)
		if err != nil || !slices.Equal(got, []string{"fil", "%d fil", "%d filer"}) {
			t.Errorf("%v: ReadCatalog = %q, %v", bo, got, err)
		}
	}
	latin := [][2]string{{"", "Content-Type: text/plain; charset=ISO-8859-1\n"}, {"blue", "bl\xe5"}}
	p := filepath.Join(dir, "l.mo")
	os.WriteFile(p, moFile(binary.LittleEndian, latin), 0o644)
	if got, err := ReadCatalog(p); err != nil || !slices.Equal(got, []string{"blå"}) {
		t.Errorf("ISO-8859-1 catalog: %q, %v", got, err)
	}
	bad := moFile(binary.LittleEndian, pairs)
	for name, data := range map[string][]byte{"short": bad[:10], "magic": append([]byte{1, 2, 3, 4}, bad[4:]...), "truncated": bad[:len(bad)-12]} {
		p := filepath.Join(dir, name+".mo")
		os.WriteFile(p, data, 0o644)
		if _, err := ReadCatalog(p); !errors.Is(err, ErrCatalog) || !strings.Contains(err.Error(), name+".mo") {
			t.Errorf("%s: error %v, want ErrCatalog naming the file", name, err)
		}
	}
}

// A real installed catalog read by ReadCatalog against gettext's own
// msgunfmt (GNU gettext 0.21, Debian package gettext), which decompiles it
// to a PO file: every translation ReadCatalog returns appears there.
func TestReadCatalogMsgunfmt(t *testing.T) {
	const mo = "/usr/share/locale/nb/LC_MESSAGES/bash.mo"
	if _, err := exec.LookPath("msgunfmt"); err != nil {
		t.Skip("msgunfmt (Debian package gettext) is not installed")
	}
	if _, err := os.Stat(mo); err != nil {
		t.Skipf("%s is not installed (Debian package bash)", mo)
	}
	out, err := exec.Command("msgunfmt", "--no-wrap", mo).Output()
	if err != nil {
		t.Fatal(err)
	}
	// The PO file: each msgstr (or msgstr[n]) "..." with its continuation
	// lines; C escapes are Go's.
	var po []string
	cur := -1
	for _, line := range strings.Split(string(out), "\n") {
		switch {
		case strings.HasPrefix(line, "msgstr"):
			q := line[strings.IndexByte(line, '"'):]
			v, err := strconv.Unquote(q)
			if err != nil {
				t.Fatalf("msgunfmt line %q: %v", line, err)
			}
			po = append(po, v)
			cur = len(po) - 1
		case strings.HasPrefix(line, "\"") && cur >= 0:
			v, err := strconv.Unquote(line)
			if err != nil {
				t.Fatalf("msgunfmt line %q: %v", line, err)
			}
			po[cur] += v
		default:
			cur = -1
		}
	}
	var want []string
	for _, m := range po[1:] { // less the header
		if m != "" {
			want = append(want, m)
		}
	}
	msgs, err := ReadCatalog(mo)
	if err != nil {
		t.Fatal(err)
	}
	if len(msgs) < 500 {
		t.Fatalf("%d messages from %s, want hundreds", len(msgs), mo)
	}
	slices.Sort(want)
	got := slices.Clone(msgs)
	slices.Sort(got)
	if !slices.Equal(got, want) {
		t.Errorf("ReadCatalog gave %d translations, msgunfmt %d; they differ", len(got), len(want))
	}
}
