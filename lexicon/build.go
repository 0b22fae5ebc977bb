package lexicon

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"unicode"
	"unicode/utf8"

	"recto/internal/walk"
)

// Tokens splits running text into words as the lexicon counts them: maximal
// runs of letters (Unicode categories L and M), where a single apostrophe
// (U+0027 or U+2019, stored as U+0027) between two letters stays inside the
// word ("whale's", "don't"). Digits, hyphens, punctuation and spaces separate
// words, so "sea-going" gives "sea" and "going", and "4th" gives "th".
func Tokens(text string) []string {
	var out []string
	scanWords(text, func(w string, _ bool) { out = append(out, w) })
	return out
}

// scanWords calls fn for each word of text (see Tokens). newSpan is true
// when sentence punctuation (. ! ? ; :), a paragraph break or the start of
// the text lies between this word and the previous one, so that bigrams are
// not counted across it.
func scanWords(text string, fn func(word string, newSpan bool)) {
	var b strings.Builder
	span := true
	newlines := 0
	i := 0
	flush := func() {
		if b.Len() > 0 {
			fn(b.String(), span)
			span = false
			b.Reset()
		}
	}
	for i < len(text) {
		r, size := utf8.DecodeRuneInString(text[i:])
		switch {
		case unicode.IsLetter(r) || (unicode.IsMark(r) && b.Len() > 0):
			b.WriteRune(r)
			newlines = 0
		case (r == '\'' || r == '\u2019') && b.Len() > 0:
			next, _ := utf8.DecodeRuneInString(text[i+size:])
			if unicode.IsLetter(next) {
				b.WriteByte('\'')
			} else {
				flush()
			}
		default:
			flush()
			switch r {
			case '.', '!', '?', ';', ':':
				span = true
			case '\n':
				newlines++
				if newlines >= 2 {
					span = true
				}
			case ' ', '\t', '\r':
			default:
				newlines = 0
			}
		}
		i += size
	}
	flush()
}

// BuildOptions control how a Builder turns its sources into a lexicon.
// The zero value gives the defaults.
type BuildOptions struct {
	// MinTextCount is how often a word seen only in running text (not in
	// any word list or dictionary given) must occur to join the lexicon.
	// 0 means 3 when a word list or dictionary was given, else 1.
	MinTextCount int64
	// MinBigramCount is how often a word pair must occur in running text to
	// be kept. 0 means 2.
	MinBigramCount int64
	// ListedOnly keeps a word seen only in running text only when a
	// dictionary given accepts it as a compound: the word lists and
	// dictionaries decide what is a word, the text gives counts. The
	// language recipes set it, because translated program messages hold
	// untranslated English ("of", "the") that must not become words of
	// the language.
	ListedOnly bool
}

// A Builder collects words from word lists, Hunspell dictionaries and
// running text and produces a Lexicon. Sources can be combined: listed words
// get their counts from the running text.
type Builder struct {
	Options BuildOptions

	listed  map[string]struct{} // keys from word lists and dictionaries
	counts  map[string]int64    // keys counted in running text
	bigrams map[string]int64    // pair keys counted in running text

	compounds []*compounding // one per Hunspell dictionary that compounds
	cur       *compounding   // the dictionary being read
	running   int64          // running words counted so far
}

// NewBuilder returns an empty Builder with default options.
func NewBuilder() *Builder {
	return &Builder{listed: map[string]struct{}{}, counts: map[string]int64{}, bigrams: map[string]int64{}}
}

// AddWord adds one word to the list of known words.
func (b *Builder) AddWord(w string) {
	if w != "" {
		b.listed[Key(w)] = struct{}{}
	}
}

// AddWordList reads a plain word list: UTF-8 text, one word per line (such
// as Debian's wamerican /usr/share/dict/american-english). Leading and
// trailing spaces are trimmed and blank lines skipped. A line holding a tab
// or inner space, or bytes that are not UTF-8, is an error naming the line.
func (b *Builder) AddWordList(path string) error {
	return eachLine(path, func(n int, line []byte) error {
		line = bytes.TrimSpace(line)
		if len(line) == 0 {
			return nil
		}
		if bytes.ContainsAny(line, " \t") {
			return fmt.Errorf("%w: word list line holds more than one word %q", ErrBadLine, line)
		}
		b.AddWord(string(line))
		return nil
	})
}

// AddText counts words and word pairs of running text read from r; name is
// used in errors. Text that is not UTF-8 is an error naming the line.
func (b *Builder) AddText(r io.Reader, name string) error {
	data, err := io.ReadAll(r)
	if err != nil {
		return fmt.Errorf("lexicon: reading %q: %w", name, err)
	}
	if !utf8.Valid(data) {
		return &ParseError{File: name, Line: badLine(data), Err: ErrNotUTF8}
	}
	var prev string
	scanWords(string(data), func(w string, newSpan bool) {
		k := Key(w)
		b.counts[k]++
		b.running++
		if !newSpan && prev != "" {
			b.bigrams[prev+pairSep+k]++
		}
		prev = k
	})
	return nil
}

// AddTextFile counts the words of one text file (see AddText).
func (b *Builder) AddTextFile(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("lexicon: %w", err)
	}
	defer f.Close()
	return b.AddText(f, path)
}

// AddTextDir counts the words of every file named *.txt (any case) under
// dir, listed by the one walker (internal/walk: in lexical order, hidden
// files and folders left out, no symbolic link to a folder followed).
// Other files are ignored. It returns an error when dir holds no .txt file.
func (b *Builder) AddTextDir(dir string) error {
	files, _, err := walk.Files(dir, walk.Options{Match: func(name string) bool { return strings.EqualFold(filepath.Ext(name), ".txt") }})
	if err != nil {
		return fmt.Errorf("lexicon: %w", err)
	}
	if len(files) == 0 {
		return fmt.Errorf("lexicon: no .txt files in %q", dir)
	}
	for _, f := range files {
		if err := b.AddTextFile(filepath.Join(dir, filepath.FromSlash(f))); err != nil {
			return err
		}
	}
	return nil
}

// Running returns the number of running words counted so far.
func (b *Builder) Running() int64 { return b.running }

// AddWordListCharset reads a plain word list (see AddWordList) in the
// given single-byte character set, "ISO8859-1" for instance (the
// spelling of Hunspell's SET). Debian's wnorwegian lists are ISO 8859-1.
func (b *Builder) AddWordListCharset(path, charset string) error {
	if charset == "" {
		return b.AddWordList(path)
	}
	var a Affixes
	if err := a.setEncoding(charset); err != nil {
		return fmt.Errorf("lexicon: %q: %w", path, err)
	}
	if a.dec == nil {
		return b.AddWordList(path)
	}
	data, err := os.ReadFile(path)
	if err != nil {
		return fmt.Errorf("lexicon: %w", err)
	}
	for n, line := range bytes.Split(data, []byte{'\n'}) {
		w, err := a.dec.String(string(bytes.TrimSpace(line)))
		if err != nil {
			return &ParseError{File: path, Line: n + 1, Err: err}
		}
		if w == "" {
			continue
		}
		if strings.ContainsAny(w, " \t") {
			return &ParseError{File: path, Line: n + 1, Err: fmt.Errorf("%w: word list line holds more than one word %q", ErrBadLine, w)}
		}
		b.AddWord(w)
	}
	return nil
}

// Lexicon returns the lexicon built from the sources added so far.
func (b *Builder) Lexicon() *Lexicon {
	minText := b.Options.MinTextCount
	if minText <= 0 {
		minText = 1
		if len(b.listed) > 0 {
			minText = 3
		}
	}
	minPair := b.Options.MinBigramCount
	if minPair <= 0 {
		minPair = 2
	}
	l := New()
	l.comp = b.compounds
	for k := range b.listed {
		l.words.m[k] = b.counts[k]
		l.total += b.counts[k]
	}
	accepted := func(k string) bool {
		if !b.Options.ListedOnly {
			return true
		}
		for _, c := range b.compounds {
			if c.accepts(k) {
				return true
			}
		}
		return false
	}
	for k, c := range b.counts {
		if _, ok := b.listed[k]; !ok && c >= minText && accepted(k) {
			l.words.m[k] = c
			l.total += c
		}
	}
	for k, c := range b.bigrams {
		if c < minPair {
			continue
		}
		w1, w2, _ := strings.Cut(k, pairSep)
		if _, ok := l.words.m[w1]; !ok {
			continue
		}
		if _, ok := l.words.m[w2]; !ok {
			continue
		}
		l.bigrams.m[k] = c
	}
	return l
}

// eachLine calls fn for every line of the file at path, checking UTF-8, and
// wraps fn's errors in a ParseError naming the file and line.
func eachLine(path string, fn func(n int, line []byte) error) error {
	_, err := scanLines(path, func(n int, line []byte) error {
		if !utf8.Valid(line) {
			return fmt.Errorf("%w (convert the file with iconv first)", ErrNotUTF8)
		}
		return fn(n, line)
	})
	return err
}

// scanLines calls fn for every line of the file at path (lines up to 1 MiB,
// bytes as they are) and returns how many lines it read; fn's errors and
// read errors come wrapped in a ParseError naming the file and line.
func scanLines(path string, fn func(n int, line []byte) error) (int, error) {
	f, err := os.Open(path)
	if err != nil {
		return 0, fmt.Errorf("lexicon: %w", err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 0, 1<<16), 1<<20)
	n := 0
	for sc.Scan() {
		n++
		if err := fn(n, sc.Bytes()); err != nil {
			return n, &ParseError{File: path, Line: n, Err: err}
		}
	}
	if err := sc.Err(); err != nil {
		return n, &ParseError{File: path, Line: n + 1, Err: err}
	}
	return n, nil
}

// badLine returns the 1-based line of the first invalid UTF-8 byte in data.
func badLine(data []byte) int {
	line := 1
	for len(data) > 0 {
		r, size := utf8.DecodeRune(data)
		if r == utf8.RuneError && size <= 1 {
			return line
		}
		if data[0] == '\n' {
			line++
		}
		data = data[size:]
	}
	return line
}
