package lexicon

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
	"unsafe"

	"golang.org/x/text/unicode/norm"

	"recto/internal/atomicfile"
)

// The lexicon file format (version 1).
//
// A lexicon file is UTF-8 text, optionally gzip-compressed as a whole (the
// loader recognises the gzip magic bytes; Save compresses when the name ends
// in ".gz"). Lines end in "\n"; fields are separated by one TAB.
//
//	recto-lexicon<TAB>1<TAB>WORDS<TAB>BIGRAMS      header, first line: format version and entry counts
//	# any text                                   comment, ignored
//	WORD<TAB>COUNT                                a word (its Key) and its unigram count
//	WORD1<TAB>WORD2<TAB>COUNT                     a word pair (Keys) and its bigram count
//
// Version 2 adds compounding, for lexicons built from Hunspell
// dictionaries that compound (compound.go). A line starting with "%" is a
// directive:
//
//	%compound<TAB>MIN<TAB>MAX<TAB>CHECKS         starts the rules of one dictionary: COMPOUNDMIN, COMPOUNDWORDMAX (0: unlimited), and the checks in force as letters (d CHECKCOMPOUNDDUP, t CHECKCOMPOUNDTRIPLE, s SIMPLIFIEDTRIPLE; "-" for none)
//	%p<TAB>PART<TAB>ROLES                        a compound part (its Key) of the last %compound: ROLES is the sum of 1 (may begin), 2 (middle), 4 (end)
//
// Save writes version 1 when the lexicon has no compounding.
//
// Blank lines are ignored. COUNT is a non-negative decimal integer (0 for a
// word that came from a word list and was never seen in running text). Words
// are stored in key form (see Key); a word that is not in key form is keyed
// when loaded. WORDS and BIGRAMS are hints for pre-sizing and are not checked.
// Save writes words sorted, then bigrams sorted, so that output is
// reproducible.
const (
	fileMagic   = "recto-lexicon"
	fileVersion = 2 // the newest version read; Save writes 1 unless compounding needs 2
)

// Errors wrapped by ParseError.
var (
	// ErrNotLexicon is returned by Load when the first line is not a recto
	// lexicon header.
	ErrNotLexicon = errors.New("not a recto lexicon (build one with `recto lexicon build`)")
	// ErrVersion is returned by Load for a lexicon file of an unknown version.
	ErrVersion = errors.New("unsupported lexicon version")
	// ErrBadFrequency is returned when a count is not a non-negative integer.
	ErrBadFrequency = errors.New("invalid frequency")
	// ErrBadLine is returned for a line with the wrong number of fields or an
	// empty word.
	ErrBadLine = errors.New("malformed line")
	// ErrNotUTF8 is returned when input text is not valid UTF-8.
	ErrNotUTF8 = errors.New("not valid UTF-8")
)

// ParseError reports a problem at a line of an input file: a lexicon, a word
// list, a Hunspell dictionary or a text file.
type ParseError struct {
	File string // file name as given
	Line int    // line number, from 1; 0 when the problem is the whole file
	Err  error  // what is wrong
}

func (e *ParseError) Error() string {
	if e.Line == 0 {
		return fmt.Sprintf("lexicon: %s: %v", e.File, e.Err)
	}
	return fmt.Sprintf("lexicon: %s:%d: %v", e.File, e.Line, e.Err)
}

func (e *ParseError) Unwrap() error { return e.Err }

// Load reads a lexicon file (see the format above). It returns nil and an
// error naming the file, and the line where relevant, when the file cannot
// be read, is not a lexicon, is not UTF-8, or has a malformed line.
func Load(path string) (*Lexicon, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("lexicon: %w", err)
	}
	defer f.Close()
	l, err := read(f, path)
	if err != nil {
		return nil, err
	}
	return l, nil
}

// read parses a lexicon from r; name is used in errors. The whole
// (decompressed) file is held as one string and the map keys are substrings
// of it, so loading allocates little beyond the maps themselves.
func read(r io.Reader, name string) (*Lexicon, error) {
	br := bufio.NewReaderSize(r, 1<<16)
	var src io.Reader = br
	if magic, _ := br.Peek(2); len(magic) == 2 && magic[0] == 0x1f && magic[1] == 0x8b {
		zr, err := gzip.NewReader(br)
		if err != nil {
			return nil, &ParseError{File: name, Err: fmt.Errorf("bad gzip data: %w", err)}
		}
		defer zr.Close()
		src = zr
	}
	data, err := io.ReadAll(src)
	if err != nil {
		return nil, &ParseError{File: name, Err: err}
	}
	if !utf8.Valid(data) {
		return nil, &ParseError{File: name, Line: badLine(data), Err: ErrNotUTF8}
	}
	text := unsafe.String(unsafe.SliceData(data), len(data)) // data is never written again
	var l *Lexicon
	n := 0
	for len(text) > 0 {
		n++
		line := text
		if i := strings.IndexByte(text, '\n'); i >= 0 {
			line, text = text[:i], text[i+1:]
		} else {
			text = ""
		}
		if l == nil {
			h, err := parseHeader([]byte(line))
			if err != nil {
				return nil, &ParseError{File: name, Line: n, Err: err}
			}
			// Each entry takes at least 4 bytes ("w\t0\n"): never trust a
			// size hint beyond what the data can hold.
			limit := len(data) / 4
			l = &Lexicon{words: newStore(min(h[0], limit)), bigrams: newStore(min(h[1], limit))}
			continue
		}
		if len(line) == 0 || line[0] == '#' {
			continue
		}
		if line[0] == '%' {
			if err := l.parseDirective(line); err != nil {
				return nil, &ParseError{File: name, Line: n, Err: err}
			}
			continue
		}
		if err := l.parseLine(line); err != nil {
			return nil, &ParseError{File: name, Line: n, Err: err}
		}
	}
	if l == nil {
		return nil, &ParseError{File: name, Err: fmt.Errorf("empty file: %w", ErrNotLexicon)}
	}
	return l, nil
}

// parseHeader checks the header line and returns the size hints.
func parseHeader(line []byte) ([2]int, error) {
	var hint [2]int
	f := bytes.Split(line, []byte{'\t'})
	if string(f[0]) != fileMagic {
		return hint, ErrNotLexicon
	}
	if len(f) < 2 {
		return hint, fmt.Errorf("%w: header without version", ErrVersion)
	}
	if v, err := strconv.Atoi(string(f[1])); err != nil || v < 1 || v > fileVersion {
		return hint, fmt.Errorf("%w %q (this build reads %d)", ErrVersion, f[1], fileVersion)
	}
	for i := 0; i < 2 && i+2 < len(f); i++ {
		if v, err := strconv.Atoi(string(f[i+2])); err == nil && v > 0 && v < 1<<26 {
			hint[i] = v
		}
	}
	return hint, nil
}

// parseDirective reads a %compound or %p line (version 2).
func (l *Lexicon) parseDirective(line string) error {
	f := strings.Split(line, "\t")
	switch {
	case f[0] == "%p" && len(f) == 3:
		if len(l.comp) == 0 {
			return fmt.Errorf("%w: compound part before any %%compound line", ErrBadLine)
		}
		r, err := strconv.Atoi(f[2])
		if err != nil || r < 1 || r > 7 || f[1] == "" {
			return fmt.Errorf("%w: want %%p<TAB>PART<TAB>ROLES (1-7)", ErrBadLine)
		}
		l.comp[len(l.comp)-1].parts.m[keyOf(f[1])] |= int64(r)
	case f[0] == "%compound" && len(f) == 4:
		mn, err1 := strconv.Atoi(f[1])
		mx, err2 := strconv.Atoi(f[2])
		if err1 != nil || err2 != nil || mn < 1 || mx < 0 || strings.Trim(f[3], "dts-") != "" {
			return fmt.Errorf("%w: want %%compound<TAB>MIN<TAB>MAX<TAB>CHECKS", ErrBadLine)
		}
		l.comp = append(l.comp, &compounding{min: mn, max: mx, dup: strings.Contains(f[3], "d"),
			triple: strings.Contains(f[3], "t"), simplified: strings.Contains(f[3], "s"), parts: newStore(0)})
	default:
		return fmt.Errorf("%w: unknown directive %q", ErrBadLine, f[0])
	}
	return nil
}

func (l *Lexicon) parseLine(line string) error {
	t1 := strings.IndexByte(line, '\t')
	if t1 < 0 {
		return fmt.Errorf("%w: want WORD<TAB>COUNT or WORD1<TAB>WORD2<TAB>COUNT", ErrBadLine)
	}
	rest := line[t1+1:]
	t2 := strings.IndexByte(rest, '\t')
	var words, num string
	if t2 < 0 {
		words, num = line[:t1], rest
	} else {
		words, num = line[:t1+1+t2], rest[t2+1:]
		if strings.IndexByte(num, '\t') >= 0 {
			return fmt.Errorf("%w: more than 3 fields", ErrBadLine)
		}
	}
	c, ok := parseCount(num)
	if !ok {
		return fmt.Errorf("%w %q", ErrBadFrequency, num)
	}
	if t2 < 0 {
		if words == "" {
			return fmt.Errorf("%w: empty word", ErrBadLine)
		}
		w := keyOf(words)
		l.words.m[w] += c
		l.total += c
		return nil
	}
	w1, w2 := words[:t1], words[t1+1:]
	if w1 == "" || w2 == "" {
		return fmt.Errorf("%w: empty word", ErrBadLine)
	}
	if k1, k2 := keyOf(w1), keyOf(w2); k1 != w1 || k2 != w2 {
		words = k1 + pairSep + k2
	}
	l.bigrams.m[words] += c
	return nil
}

// parseCount parses a non-negative decimal count.
func parseCount(s string) (int64, bool) {
	if s == "" || len(s) > 18 {
		return 0, false
	}
	var c int64
	for i := 0; i < len(s); i++ {
		d := s[i] - '0'
		if d > 9 {
			return 0, false
		}
		c = c*10 + int64(d)
	}
	return c, true
}

// keyOf returns Key(s), skipping the normalisation for the common case of
// lower-case ASCII, which is already in key form.
func keyOf(s string) string {
	ascii := true
	for i := 0; i < len(s); i++ {
		if c := s[i]; c >= utf8.RuneSelf {
			ascii = false
		} else if 'A' <= c && c <= 'Z' {
			return Key(s)
		}
	}
	if ascii {
		return s
	}
	// Words with letters beyond ASCII (æ, ø, å, ß...): a file written by
	// Save holds keys already, so check before normalising: no upper-case
	// letter and NFC (the quick check is far cheaper than the conversion).
	for _, r := range s {
		if unicode.IsUpper(r) || unicode.IsTitle(r) {
			return Key(s)
		}
	}
	if !norm.NFC.IsNormalString(s) {
		return Key(s)
	}
	return s
}

// Save writes the lexicon to path in the lexicon file format, gzip-compressed
// when path ends in ".gz". It writes through internal/atomicfile (a
// temporary file in the same folder, fsync, rename), so a failed Save
// leaves no partial file.
func (l *Lexicon) Save(path string) error {
	err := atomicfile.WriteFunc(path, func(w io.Writer) error {
		var zw *gzip.Writer
		if filepath.Ext(path) == ".gz" {
			zw, _ = gzip.NewWriterLevel(w, gzip.BestCompression)
			w = zw
		}
		bw := bufio.NewWriterSize(w, 1<<16)
		if err := l.write(bw); err != nil {
			return err
		}
		if err := bw.Flush(); err != nil {
			return err
		}
		if zw != nil {
			return zw.Close()
		}
		return nil
	})
	if err != nil {
		return fmt.Errorf("lexicon: %w", err)
	}
	return nil
}

// WriteTo writes the lexicon in the (uncompressed) file format to w.
func (l *Lexicon) WriteTo(w io.Writer) (int64, error) {
	cw := &countWriter{w: w}
	bw := bufio.NewWriter(cw)
	if err := l.write(bw); err != nil {
		return cw.n, err
	}
	err := bw.Flush()
	return cw.n, err
}

type countWriter struct {
	w io.Writer
	n int64
}

func (c *countWriter) Write(p []byte) (int, error) {
	n, err := c.w.Write(p)
	c.n += int64(n)
	return n, err
}

func (l *Lexicon) write(w *bufio.Writer) error {
	l = l.flat()
	version := 1
	if len(l.comp) > 0 {
		version = 2
	}
	fmt.Fprintf(w, "%s\t%d\t%d\t%d\n", fileMagic, version, l.words.len(), l.bigrams.len())
	for _, c := range l.comp {
		checks := ""
		for _, x := range []struct {
			on bool
			c  string
		}{{c.dup, "d"}, {c.triple, "t"}, {c.simplified, "s"}} {
			if x.on {
				checks += x.c
			}
		}
		if checks == "" {
			checks = "-"
		}
		fmt.Fprintf(w, "%%compound\t%d\t%d\t%s\n", c.min, c.max, checks)
		for _, k := range c.parts.sortedKeys() {
			if _, err := fmt.Fprintf(w, "%%p\t%s\t%d\n", k, c.role(k)); err != nil {
				return err
			}
		}
	}
	var buf []byte
	for _, k := range l.Words() {
		buf = append(buf[:0], k...)
		buf = append(buf, '\t')
		n, _ := l.words.get(k)
		buf = strconv.AppendInt(buf, n, 10)
		buf = append(buf, '\n')
		if _, err := w.Write(buf); err != nil {
			return err
		}
	}
	for _, k := range l.bigrams.sortedKeys() {
		buf = buf[:0]
		for i := 0; i < len(k); i++ {
			buf = append(buf, k[i])
		}
		buf = append(buf, '\t')
		n, _ := l.bigrams.get(k)
		buf = strconv.AppendInt(buf, n, 10)
		buf = append(buf, '\n')
		if _, err := w.Write(buf); err != nil {
			return err
		}
	}
	return nil
}
