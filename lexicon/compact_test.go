package lexicon

import (
	"bytes"
	"encoding/binary"
	"errors"
	"hash/crc32"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// compactSample is a lexicon file with words beyond ASCII, word pairs and
// two compounding rule sets (the second with the triple checks).
const compactSample = "recto-lexicon\t2\t6\t2\n" +
	"%compound\t3\t0\t-\n%p\tfjell\t1\n%p\tgård\t4\n%p\thus\t7\n" +
	"%compound\t2\t3\tdts\n%p\tschiff\t1\n%p\tfahrt\t4\n" +
	"fjell\t4\ngård\t2\nhus\t0\nog\t9\nstraße\t1\nikkje\t3\n" +
	"fjell\tog\t2\nog\thus\t5\n"

// compactPair writes compactSample as DIR/xx.lex.gz and returns the
// lexicon read from the text and the one read from its compact form.
func compactPair(t *testing.T, text string) (string, *Lexicon, *Lexicon) {
	t.Helper()
	dir := t.TempDir()
	l, err := read(strings.NewReader(text), "sample")
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "xx.lex.gz")
	direct, c := saveBoth(t, l, path)
	return path, direct, c
}

// saveBoth saves l to path with its compact form beside it and reads it
// back both ways: the direct load and the compact form.
func saveBoth(t *testing.T, l *Lexicon, path string) (direct, c *Lexicon) {
	t.Helper()
	if err := l.Save(path); err != nil {
		t.Fatal(err)
	}
	if err := WriteCompact(path); err != nil {
		t.Fatal(err)
	}
	direct, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	c, err = readCompact(CompactPath(path), mustReadFile(t, path))
	if err != nil {
		t.Fatal(err)
	}
	return direct, c
}

func mustReadFile(t *testing.T, path string) []byte {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return data
}

// sameAnswers fails when the two lexicons answer any of words differently
// (Has, Listed, Count, HasFold), or differ in what they hold (their files
// as written by WriteTo, which lists every word, pair, count and part).
func sameAnswers(t *testing.T, direct, compact *Lexicon, words []string) {
	t.Helper()
	bad := 0
	for _, w := range words {
		if direct.Has(w) != compact.Has(w) || direct.Listed(w) != compact.Listed(w) ||
			direct.Count(w) != compact.Count(w) || direct.HasFold(w) != compact.HasFold(w) {
			if bad++; bad <= 10 {
				t.Errorf("%q: direct Has %v Listed %v Count %d HasFold %v; compact %v %v %d %v", w,
					direct.Has(w), direct.Listed(w), direct.Count(w), direct.HasFold(w),
					compact.Has(w), compact.Listed(w), compact.Count(w), compact.HasFold(w))
			}
		}
	}
	var a, b bytes.Buffer
	if _, err := direct.WriteTo(&a); err != nil {
		t.Fatal(err)
	}
	if _, err := compact.WriteTo(&b); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Errorf("the compact form holds another lexicon: WriteTo gives %d bytes, direct %d", b.Len(), a.Len())
	}
	if direct.Len() != compact.Len() || direct.Bigrams() != compact.Bigrams() || direct.Total() != compact.Total() || direct.Compounds() != compact.Compounds() {
		t.Errorf("sizes differ: direct %d words %d pairs total %d, compact %d %d %d",
			direct.Len(), direct.Bigrams(), direct.Total(), compact.Len(), compact.Bigrams(), compact.Total())
	}
}

func TestCompactRoundTrip(t *testing.T) {
	_, direct, c := compactPair(t, compactSample)
	words := []string{"fjell", "Fjell", "gård", "GÅRD", "fjellgård", "husgård", "fjellhusgård", "gårdfjell", "og", "straße", "STRASSE",
		"schifffahrt", "schiffahrt", "schiffschiff", "ikkje", "ikke", "", "hu", "husfjell", "x"}
	sameAnswers(t, direct, c, words)
	// The answers themselves, for the record: compounds of the first rule
	// set, pairs and counts.
	if !c.Has("fjellgård") || c.Has("gårdfjell") || c.Count("og") != 9 || c.Bigram("og", "hus") != 5 || c.Bigram("hus", "og") != 0 {
		t.Errorf("compact form: fjellgård %v, gårdfjell %v, Count(og) %d, Bigram(og hus) %d",
			c.Has("fjellgård"), c.Has("gårdfjell"), c.Count("og"), c.Bigram("og", "hus"))
	}
	// Words added to a loaded compact lexicon are its own, counts added.
	c.Add("fjell", 1)
	c.Add("nyord", 2)
	if c.Count("fjell") != 5 || !c.Has("nyord") || c.Len() != direct.Len()+1 || c.Total() != direct.Total()+3 {
		t.Errorf("after Add: Count(fjell) %d, Has(nyord) %v, Len %d (direct %d)", c.Count("fjell"), c.Has("nyord"), c.Len(), direct.Len())
	}
	// An empty lexicon has a compact form too.
	_, d0, c0 := compactPair(t, "recto-lexicon\t1\t0\t0\n")
	sameAnswers(t, d0, c0, []string{"og"})
}

// TestCompactRefused: a compact form that is truncated, damaged, of another
// version or made from another lexicon file is refused with an error naming
// it and saying why; ForLang then reads the lexicon file, rebuilds the
// compact form, notes it once naming the file, and leaves the lexicon file
// as it was.
func TestCompactRefused(t *testing.T) {
	path, direct, _ := compactPair(t, compactSample)
	cp := CompactPath(path)
	good := mustReadFile(t, cp)
	src := mustReadFile(t, path)
	other := bytes.Replace(src, []byte{0}, []byte{1}, 1) // not the lexicon file the form was made from
	cases := []struct {
		name string
		form func() []byte
		src  []byte
		want error
	}{
		{"empty", func() []byte { return nil }, src, errCompactTruncated},
		{"header cut", func() []byte { return good[:20] }, src, errCompactTruncated},
		{"header only", func() []byte { return good[:compactHeader] }, src, errCompactTruncated},
		{"half", func() []byte { return good[:len(good)/2] }, src, errCompactTruncated},
		{"last byte cut", func() []byte { return good[:len(good)-1] }, src, errCompactTruncated},
		{"bytes appended", func() []byte { return append(bytes.Clone(good), 0, 0, 0, 0, 0, 0, 0, 0) }, src, errCompactDamaged},
		{"byte flipped", func() []byte {
			b := bytes.Clone(good)
			b[compactHeader+len(good)/3] ^= 0x40
			return b
		}, src, errCompactDamaged},
		{"checksum flipped", func() []byte {
			b := bytes.Clone(good)
			b[len(b)-compactTrailer] ^= 1
			return b
		}, src, errCompactDamaged},
		{"not a compact form", func() []byte { return []byte("recto-lexicon\t2\t0\t0\n" + strings.Repeat("x", 80)) }, src, errCompactDamaged},
		{"old version", func() []byte {
			b := bytes.Clone(good)
			binary.LittleEndian.PutUint32(b[16:], 0)
			return b
		}, src, errCompactVersion},
		{"newer version", func() []byte {
			b := bytes.Clone(good)
			binary.LittleEndian.PutUint32(b[16:], compactVersion+1)
			return b
		}, src, errCompactVersion},
		{"other hash function", func() []byte {
			b := bytes.Clone(good)
			b[48] ^= 1
			return b
		}, src, errCompactVersion},
		{"other lexicon file", func() []byte { return good }, other, errCompactStale},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if err := os.WriteFile(cp, c.form(), 0o644); err != nil {
				t.Fatal(err)
			}
			l, err := readCompact(cp, c.src)
			if l != nil || !errors.Is(err, c.want) || !strings.Contains(err.Error(), cp) {
				t.Fatalf("readCompact = %v, %v; want nil and an error naming %s: %v", l, err, cp, c.want)
			}
			if c.src != nil && !bytes.Equal(c.src, src) {
				return // the stale case: the lexicon file beside it is not that one
			}
			var notes []string
			defer func(old func(string)) { Note = old }(Note)
			Note = func(s string) { notes = append(notes, s) }
			lf, err := loadFast(path)
			if err != nil {
				t.Fatal(err)
			}
			sameAnswers(t, direct, lf, []string{"fjellgård", "og", "straße"})
			if len(notes) != 1 || !strings.Contains(notes[0], cp) || !strings.Contains(notes[0], path) || !strings.Contains(notes[0], "rebuilt") {
				t.Errorf("notes %q: want one naming %s and %s, saying it was rebuilt", notes, cp, path)
			}
			if _, err := readCompact(cp, src); err != nil {
				t.Errorf("after the rebuild: %v", err)
			}
			if !bytes.Equal(mustReadFile(t, path), src) {
				t.Error("the lexicon file was changed")
			}
		})
	}
	// The lexicon file rebuilt: the old compact form is stale, ForLang
	// notes it and rebuilds.
	dir := filepath.Dir(path)
	t.Setenv(EnvDir, dir)
	writeLex(t, dir, "xx", "nytt", "ord")
	var notes []string
	defer func(old func(string)) { Note = old }(Note)
	Note = func(s string) { notes = append(notes, s) }
	s, err := ForLang("xx")
	if err != nil || !s.Lexicon.Has("nytt") || s.Lexicon.Has("fjell") {
		t.Fatalf("ForLang after the lexicon file changed: %v, %v", s, err)
	}
	if len(notes) != 1 || !strings.Contains(notes[0], errCompactStale.Error()) || !strings.Contains(notes[0], cp) {
		t.Errorf("notes %q: want one saying %s is stale", notes, cp)
	}
	// Missing: written silently on the first load.
	os.Remove(cp)
	loaded.Clear()
	notes = nil
	if _, err := ForLang("xx"); err != nil || len(notes) != 0 {
		t.Errorf("ForLang without a compact form: %v, notes %q; want none", err, notes)
	}
	if _, err := readCompact(cp, mustReadFile(t, path)); err != nil {
		t.Errorf("the compact form was not written on the first load: %v", err)
	}
}

// TestCompactUnwritable: when the compact form cannot be written, ForLang
// still loads the lexicon file and says once that it reads it each time.
func TestCompactUnwritable(t *testing.T) {
	path, direct, _ := compactPair(t, compactSample)
	cp := CompactPath(path)
	os.Remove(cp)
	if err := os.Mkdir(cp, 0o755); err != nil { // a folder where the file would go
		t.Fatal(err)
	}
	var notes []string
	defer func(old func(string)) { Note = old }(Note)
	Note = func(s string) { notes = append(notes, s) }
	l, err := loadFast(path)
	if err != nil {
		t.Fatal(err)
	}
	sameAnswers(t, direct, l, []string{"fjellgård", "og"})
	if len(notes) != 1 || !strings.Contains(notes[0], path) || !strings.Contains(notes[0], "each time") {
		t.Errorf("notes %q: want one naming %s", notes, path)
	}
	if _, err := readCompact(cp, mustReadFile(t, path)); errors.Is(err, fs.ErrNotExist) || err == nil {
		t.Errorf("readCompact of a folder = %v, want an error", err)
	}
}

// TestCompactAgreement: on the words TestHunspellAgreement judges (its
// sample, drawn the same way), the lexicon read through its compact form
// answers exactly as the lexicon file read directly, and both as the
// lexicon built from the dictionary; so the agreement with Hunspell's own
// tool holds for what ForLang loads.
func TestCompactAgreement(t *testing.T) {
	langs := []struct{ code, dic string }{
		{"deu", "/usr/share/hunspell/de_DE"},
		{"nob", "/usr/share/hunspell/nb_NO"},
		{"nno", "/usr/share/hunspell/nn_NO"},
	}
	if testing.Short() {
		// 45 s under the race detector for German alone (the fold index
		// of 357,000 words built twice): the full pass runs all three;
		// TestCompactRoundTrip covers the same code in short runs.
		t.Skip("skipped in -short mode: the full pass compares deu, nob and nno")
	}
	for _, lg := range langs {
		t.Run(lg.code, func(t *testing.T) {
			if _, err := os.Stat(lg.dic + ".dic"); err != nil {
				t.Fatalf("%s.dic is missing: install the Debian package %s (scripts/setup does)", lg.dic, Recipes[lg.code].Hunspell[0].Package)
			}
			built, words := agreementSample(t, lg.code, lg.dic)
			direct, c := saveBoth(t, built, filepath.Join(t.TempDir(), lg.code+".lex.gz"))
			var all []string
			for _, w := range words {
				all = append(all, w, flipCase(w), strings.ToUpper(w))
			}
			sameAnswers(t, direct, c, all)
			diff := 0
			for _, w := range all {
				if built.Has(w) != c.Has(w) {
					diff++
				}
			}
			if diff > 0 {
				t.Errorf("%d of %d words answered differently by the built lexicon and its compact form", diff, len(all))
			}
			t.Logf("%s: %d words (with case variants) answered alike", lg.code, len(all))
		})
	}
}

// FuzzCompact: the compact-form decoder never panics, returns nil with
// every error, and a lexicon it accepts can be read without panicking or
// looping (Has, Count, Words, EachBigram). The checksum is recomputed
// after mutation, so the fuzzer reaches the table checks behind it.
func FuzzCompact(f *testing.F) {
	for _, text := range []string{compactSample, "recto-lexicon\t1\t0\t0\n", "recto-lexicon\t1\nog\t1\nog\tog\t2\n"} {
		l, err := read(strings.NewReader(text), "seed")
		if err != nil {
			f.Fatal(err)
		}
		p := filepath.Join(f.TempDir(), "seed.lex.bin")
		if err := writeCompact(p, l, nil); err != nil {
			f.Fatal(err)
		}
		data, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data[compactHeader : len(data)-compactTrailer])
	}
	f.Fuzz(func(t *testing.T, payload []byte) {
		if len(payload) > 1<<16 {
			return
		}
		data := make([]byte, compactHeader, compactHeader+len(payload)+compactTrailer)
		copy(data, compactMagic)
		binary.LittleEndian.PutUint32(data[16:], compactVersion)
		binary.LittleEndian.PutUint64(data[24:], uint64(len(payload)))
		binary.LittleEndian.PutUint32(data[40:], 0) // CRC-32C of no bytes
		binary.LittleEndian.PutUint64(data[48:], keyHash(compactMagic))
		data = append(data, payload...)
		data = binary.LittleEndian.AppendUint32(data, crcOf(payload))
		data = append(data, 0, 0, 0, 0)
		l, err := decodeCompact(data, nil)
		if err != nil {
			if l != nil {
				t.Fatal("lexicon returned with an error")
			}
			return
		}
		for _, w := range []string{"og", "fjellgård", "", "schifffahrt", "a\tb"} {
			l.Has(w)
			l.Count(w)
		}
		l.Words()
		l.EachBigram(func(string, string, int64) {})
		var buf bytes.Buffer
		l.WriteTo(&buf)
	})
}

func crcOf(b []byte) uint32 { return crc32.Checksum(b, castagnoli) }
