package lexicon

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"os"
	"regexp"
	"strings"
	"unicode/utf8"
)

// Message catalogs as running text. The translated messages of GNU gettext
// catalogs (the .mo files programs install under
// /usr/share/locale/<language>/LC_MESSAGES) are help texts, menus and
// error messages written by translators: running text in the language,
// shipped by Debian for Bokmål, Nynorsk, German and many more.
//
// The binary MO format (Drepper, Miller, Haible et al., "GNU gettext
// utilities", section 10.3 "The Format of GNU MO Files", gettext 0.21):
// a magic number 0x950412de written in the byte order of the machine that
// made the file, a format revision (major revision 0 or 1), the number of
// strings N, the offsets of the original and of the translation string
// tables; each table holds N pairs (length, offset) of NUL-terminated
// strings. A translation with plural forms holds them separated by NUL.
// The entry with an empty original is the header (charset and so on).

// ErrCatalog is wrapped by the errors of ReadCatalog for a file that is
// not a gettext MO catalog or is truncated.
var ErrCatalog = errors.New("not a gettext MO catalog")

const moMagic = 0x950412de

// ReadCatalog returns the translated messages of a gettext MO catalog, in
// the file's order, plural forms as separate messages, the header entry
// left out. Translations are returned as UTF-8: a catalog whose header
// names a single-byte charset (ISO-8859-1 ...) is decoded; an unknown
// charset or invalid UTF-8 is an error naming the file.
func ReadCatalog(path string) ([]string, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("lexicon: %w", err)
	}
	bad := func(format string, a ...any) error {
		return &ParseError{File: path, Err: fmt.Errorf("%w: "+format, append([]any{ErrCatalog}, a...)...)}
	}
	if len(data) < 20 {
		return nil, bad("%d bytes, too short for the header", len(data))
	}
	var bo binary.ByteOrder
	switch {
	case binary.LittleEndian.Uint32(data) == moMagic:
		bo = binary.LittleEndian
	case binary.BigEndian.Uint32(data) == moMagic:
		bo = binary.BigEndian
	default:
		return nil, bad("bad magic number")
	}
	if rev := bo.Uint32(data[4:]) >> 16; rev > 1 {
		return nil, bad("major revision %d (this build reads 0 and 1)", rev)
	}
	n, origTab, transTab := int(bo.Uint32(data[8:])), int(bo.Uint32(data[12:])), int(bo.Uint32(data[16:]))
	str := func(tab, i int) (string, error) {
		at := tab + 8*i
		if tab < 0 || at < 0 || at+8 > len(data) {
			return "", bad("string table entry %d lies outside the file", i)
		}
		l, off := int(bo.Uint32(data[at:])), int(bo.Uint32(data[at+4:]))
		if off < 0 || l < 0 || off+l > len(data) {
			return "", bad("string %d lies outside the file", i)
		}
		return string(data[off : off+l]), nil
	}
	if n < 0 || n > len(data)/8 {
		return nil, bad("%d strings cannot fit in %d bytes", n, len(data))
	}
	var out []string
	var dec Affixes // its decoder, set from the header's charset (the header comes first: its original sorts first)
	for i := 0; i < n; i++ {
		orig, err := str(origTab, i)
		if err != nil {
			return nil, err
		}
		tr, err := str(transTab, i)
		if err != nil {
			return nil, err
		}
		if orig == "" { // the header
			if cs := headerCharset(tr); cs != "" && !strings.EqualFold(cs, "UTF-8") && !strings.EqualFold(cs, "ASCII") {
				// Single-byte sets by their Hunspell SET names ("ISO-8859-1" -> "ISO8859-1").
				if err := dec.setEncoding(strings.Replace(strings.ToUpper(cs), "ISO-", "ISO", 1)); err != nil {
					return nil, &ParseError{File: path, Err: fmt.Errorf("catalog charset %s: %w", cs, err)}
				}
			}
			continue
		}
		for _, form := range strings.Split(tr, "\x00") {
			if form == "" {
				continue
			}
			if dec.dec != nil {
				if form, err = dec.dec.String(form); err != nil {
					return nil, &ParseError{File: path, Err: fmt.Errorf("message %d: %w", i, err)}
				}
			}
			if !utf8.ValidString(form) {
				return nil, &ParseError{File: path, Err: fmt.Errorf("message %d: %w", i, ErrNotUTF8)}
			}
			out = append(out, form)
		}
	}
	return out, nil
}

// headerCharset returns the charset named in a catalog header's
// Content-Type line, "" when none.
func headerCharset(h string) string {
	for _, line := range strings.Split(h, "\n") {
		if k, v, ok := strings.Cut(line, ":"); ok && strings.EqualFold(strings.TrimSpace(k), "Content-Type") {
			if _, cs, ok := strings.Cut(v, "charset="); ok {
				return strings.TrimSpace(cs)
			}
		}
	}
	return ""
}

// Program messages hold more than words: printf directives ("%s",
// "%1$d", "%-10.3lf"), command-line options ("--help", "-n"), placeholders
// written in capitals ("FILE", "DIR"), shell variables ("$HOME") and
// mnemonic markers ("_Fil", "&Avbryt"). CleanMessage removes what would
// otherwise count as words of the language: the directives, options,
// placeholders and variables; mnemonic markers split nothing (they are not
// letters) so they need no treatment.
var (
	msgDirective = regexp.MustCompile(`%[0-9]*\$?[-+ #0']*[0-9*]*(?:\.[0-9*]+)?(?:hh|h|ll|l|L|q|j|z|t|I64)?[a-zA-Z%]|%<[A-Z0-9a-z]+>`)
	msgOption    = regexp.MustCompile(`(?:^|[\s(\[,'"«])--?[A-Za-z][-A-Za-z0-9_]*(?:=\S*)?`)
	msgVariable  = regexp.MustCompile(`\$\{?[A-Za-z_][A-Za-z0-9_]*\}?`)
	msgCapitals  = regexp.MustCompile(`\b[A-Z][A-Z0-9_]+\b`)
)

// CleanMessage returns a catalog message with printf directives, options,
// variables and capitalised placeholders replaced by spaces (see above).
func CleanMessage(s string) string {
	s = msgDirective.ReplaceAllString(s, " ")
	s = msgOption.ReplaceAllString(s, " ")
	s = msgVariable.ReplaceAllString(s, " ")
	return msgCapitals.ReplaceAllString(s, " ")
}

// AddCatalog counts the words and word pairs of the translated messages of
// a gettext MO catalog (ReadCatalog), each message cleaned by CleanMessage
// and counted as text of its own (no pair spans two messages). It returns
// the number of running words counted.
func (b *Builder) AddCatalog(path string) (int64, error) {
	msgs, err := ReadCatalog(path)
	if err != nil {
		return 0, err
	}
	var buf bytes.Buffer
	for _, m := range msgs {
		buf.WriteString(CleanMessage(m))
		buf.WriteString("\n\n")
	}
	before := b.running
	if err := b.AddText(&buf, path); err != nil {
		return 0, err
	}
	return b.running - before, nil
}
