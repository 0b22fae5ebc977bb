// Package fname writes file names as text that shows every byte: the form
// in which the batch run's reports and ledger hold names that may not be
// UTF-8 (file names on Unix are bytes).
package fname

import (
	"fmt"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Escape returns a file name as text that shows every byte: valid,
// printable UTF-8 stays as it is; a backslash becomes `\\`; a byte that is
// not UTF-8 becomes `\xHH`; a control or other invisible character becomes
// `\xHH` (below U+0080) or `\u{HHHH}`. Two different names always give two
// different texts, and Unescape gives the bytes back.
func Escape(s string) string {
	if !needsEscape(s) {
		return s
	}
	var b strings.Builder
	for i := 0; i < len(s); {
		r, n := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && n <= 1:
			fmt.Fprintf(&b, `\x%02x`, s[i])
		case r == '\\':
			b.WriteString(`\\`)
		case r < utf8.RuneSelf && !unicode.IsPrint(r):
			fmt.Fprintf(&b, `\x%02x`, r)
		case r >= utf8.RuneSelf && !unicode.IsPrint(r):
			fmt.Fprintf(&b, `\u{%04x}`, r)
		default:
			b.WriteString(s[i : i+n])
		}
		i += n
	}
	return b.String()
}

func needsEscape(s string) bool {
	if !utf8.ValidString(s) {
		return true
	}
	for _, r := range s {
		if r == '\\' || !unicode.IsPrint(r) {
			return true
		}
	}
	return false
}

// Unescape reverses Escape.
func Unescape(s string) (string, error) {
	if !strings.Contains(s, `\`) {
		return s, nil
	}
	var b strings.Builder
	for i := 0; i < len(s); i++ {
		if s[i] != '\\' {
			b.WriteByte(s[i])
			continue
		}
		switch {
		case strings.HasPrefix(s[i:], `\\`):
			b.WriteByte('\\')
			i++
		case strings.HasPrefix(s[i:], `\x`) && i+4 <= len(s):
			v, err := strconv.ParseUint(s[i+2:i+4], 16, 8)
			if err != nil {
				return "", fmt.Errorf("bad escape %q in %q", s[i:i+4], s)
			}
			b.WriteByte(byte(v))
			i += 3
		case strings.HasPrefix(s[i:], `\u{`):
			end := strings.IndexByte(s[i:], '}')
			if end < 0 {
				return "", fmt.Errorf("unterminated escape in %q", s)
			}
			v, err := strconv.ParseUint(s[i+3:i+end], 16, 32)
			if err != nil {
				return "", fmt.Errorf("bad escape %q in %q", s[i:i+end+1], s)
			}
			b.WriteRune(rune(v))
			i += end
		default:
			return "", fmt.Errorf("bad escape at byte %d of %q", i, s)
		}
	}
	return b.String(), nil
}
