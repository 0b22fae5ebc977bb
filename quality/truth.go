package quality

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"unicode/utf8"
)

// The ground-truth reader. Every command that reads ground truth (score,
// calibrate and run) reads it through ReadTruth and finds it with FindTruth
// or the listing in ScoreDirs, so the checks, the size limit and the
// messages are the same everywhere.

// Truth formats, as detected from a file's content.
const (
	FormatText = "text" // plain UTF-8 text
	FormatALTO = "alto" // ALTO XML, versions 2 to 4
	FormatPAGE = "page" // PAGE XML, namespaces 2010 to 2019
)

// TruthExts are the file name endings a reference page may have, longest
// first: the page's key is its path with the ending removed.
var TruthExts = []string{".alto.xml", ".page.xml", ".txt", ".xml"}

// Errors of the ground-truth reader, carried by a FileError.
var (
	// ErrNotText is returned for a text file holding NUL bytes that does not
	// look like UTF-16 or UTF-32 either.
	ErrNotText = errors.New("is not a text file (it holds NUL bytes)")
	// ErrOtherEncoding is returned for a file in a recognisable encoding
	// other than UTF-8; FileError.Hint says which and how to convert it.
	ErrOtherEncoding = errors.New("is not UTF-8")
	// ErrXML is returned for ground truth in XML that cannot be used:
	// malformed, of an unknown root element or namespace, or declaring
	// entities (which are refused, never fetched or expanded).
	ErrXML = errors.New("unusable XML ground truth")
	// ErrTwoFormats is returned when one reference page is found in two
	// files (such as p1.txt and p1.xml).
	ErrTwoFormats = errors.New("reference page found in two files")
)

// Truth is one reference page.
type Truth struct {
	Path   string // the file read
	Format string // FormatText, FormatALTO or FormatPAGE
	Text   string // the page's text: the file itself for FormatText, else the text taken from the XML
}

// TruthKey returns rel without its ground-truth ending (TruthExts) and
// whether it has one.
func TruthKey(rel string) (string, bool) {
	lower := strings.ToLower(rel)
	for _, ext := range TruthExts {
		if strings.HasSuffix(lower, ext) && len(rel) > len(ext) {
			return rel[:len(rel)-len(ext)], true
		}
	}
	return rel, false
}

// FindTruth returns the ground-truth file of the page whose path, without
// extension, is stem (a file path): stem plus one of TruthExts. It returns
// "" and no error when there is none, and a *FileError wrapping
// ErrTwoFormats, naming every file, when there is more than one.
func FindTruth(stem string) (string, error) {
	var found []string
	for _, ext := range TruthExts {
		p := stem + ext
		if _, err := os.Lstat(p); err == nil {
			found = append(found, p)
		}
	}
	switch len(found) {
	case 0:
		return "", nil
	case 1:
		return found[0], nil
	}
	return "", twoFormats(found)
}

func twoFormats(files []string) *FileError {
	q := make([]string, len(files))
	for i, f := range files {
		q[i] = fmt.Sprintf("%q", f)
	}
	return &FileError{Role: "reference", File: files[0], Offset: -1, Err: ErrTwoFormats,
		Hint: "in " + strings.Join(q, " and ") + ": keep one"}
}

// ReadTruth reads one reference page: plain UTF-8 text, ALTO or PAGE XML,
// told apart by the content (see detectXML). Errors are *FileError with
// Role "reference", naming the file and saying what is wrong: a folder, not
// a regular file, larger than MaxFileSize, another encoding than UTF-8
// (what it looks like and how to convert it), or XML that cannot be used.
func ReadTruth(p string) (*Truth, error) {
	text, fe := readText(p)
	if fe != nil {
		fe.Role = "reference"
		return nil, fe
	}
	t := &Truth{Path: p, Format: FormatText, Text: text}
	if !detectXML(p, text) {
		return t, nil
	}
	format, xtext, err := truthFromXML(text)
	if err != nil {
		return nil, &FileError{Role: "reference", File: p, Offset: -1, Err: ErrXML, Hint: err.Error()}
	}
	t.Format, t.Text = format, xtext
	return t, nil
}

// detectXML tells XML ground truth from text: a file whose content, after
// a byte order mark and white space, starts with "<?xml", and a ".xml"
// file whose content starts with "<", are XML. A ".txt" file is text unless
// it starts with the XML declaration, so a transcription that happens to
// begin with "<" is still text.
func detectXML(p, text string) bool {
	s := strings.TrimLeft(strings.TrimPrefix(text, "\uFEFF"), " \t\r\n")
	if strings.HasPrefix(s, "<?xml") {
		return true
	}
	return strings.HasSuffix(strings.ToLower(p), ".xml")
}

// readText reads a UTF-8 text file, checking its kind and size first. A
// file that is not UTF-8 but recognisably another encoding gets a hint
// saying which, with the command that converts it.
func readText(p string) (string, *FileError) {
	fail := func(off int, err error, hint string) (string, *FileError) {
		return "", &FileError{File: p, Offset: off, Err: err, Hint: hint}
	}
	fi, err := os.Stat(p)
	switch {
	case err != nil:
		return fail(-1, unwrapPath(err), "")
	case fi.IsDir():
		return fail(-1, ErrIsDirectory, "")
	case !fi.Mode().IsRegular():
		return fail(-1, ErrNotRegular, "")
	case fi.Size() > MaxFileSize:
		return fail(-1, ErrTooLarge, "")
	}
	f, err := os.Open(p)
	if err != nil {
		return fail(-1, unwrapPath(err), "")
	}
	defer f.Close()
	// One allocation of the file's size: the builder's buffer becomes the
	// string without a copy.
	var b strings.Builder
	b.Grow(int(fi.Size()))
	if _, err := io.Copy(&b, io.LimitReader(f, MaxFileSize+1)); err != nil {
		return fail(-1, unwrapPath(err), "")
	}
	if b.Len() > MaxFileSize {
		return fail(-1, ErrTooLarge, "")
	}
	s := b.String()
	if enc, hint := otherEncoding(s); enc != nil {
		off := -1
		if strings.IndexByte(s, 0) < 0 && !strings.Contains(hint, "byte order mark") {
			off = invalidUTF8([]byte(s)) // where the first byte that is not UTF-8 lies
		}
		return fail(off, enc, hint)
	}
	return s, nil
}

// otherEncoding checks that s is UTF-8 text. When it is not, it returns
// ErrOtherEncoding with what the bytes look like (UTF-32 or UTF-16 by their
// byte order mark or their zero bytes, Windows-1252 or Latin-1 by their
// bytes 0x80–0xFF), ErrNotText, or ErrInvalidUTF8 with a hint when nothing
// fits. The hints name the iconv conversion (the encoding names are those
// of GNU iconv, common practice).
func otherEncoding(s string) (error, string) {
	b := []byte(s[:min(len(s), 4)])
	switch {
	case bytes.HasPrefix(b, []byte{0xFF, 0xFE, 0, 0}), bytes.HasPrefix(b, []byte{0, 0, 0xFE, 0xFF}):
		return ErrOtherEncoding, "looks like UTF-32 (byte order mark): convert with iconv -f utf-32 -t utf-8"
	case bytes.HasPrefix(b, []byte{0xFF, 0xFE}), bytes.HasPrefix(b, []byte{0xFE, 0xFF}):
		return ErrOtherEncoding, "looks like UTF-16 (byte order mark): convert with iconv -f utf-16 -t utf-8"
	}
	if strings.IndexByte(s, 0) >= 0 {
		// UTF-16 text without a byte order mark: mostly Latin letters,
		// so every other byte is zero (Unicode Standard, section 3.9,
		// encoding forms).
		var even, odd, n int
		for i := 0; i < len(s); i++ {
			if s[i] == 0 {
				if i%2 == 0 {
					even++
				} else {
					odd++
				}
			}
			n++
		}
		switch half := n / 2; {
		case odd*10 >= half*8 && even*10 < half*2:
			return ErrOtherEncoding, "looks like UTF-16 little-endian without a byte order mark (every other byte is zero): convert with iconv -f utf-16le -t utf-8"
		case even*10 >= half*8 && odd*10 < half*2:
			return ErrOtherEncoding, "looks like UTF-16 big-endian without a byte order mark (every other byte is zero): convert with iconv -f utf-16be -t utf-8"
		}
		return ErrNotText, ""
	}
	if utf8.ValidString(s) {
		return nil, ""
	}
	// Not UTF-8. Bytes 0xA0–0xFF standing alone are ISO 8859-1 letters;
	// 0x80–0x9F are C1 controls there but curly quotes, dashes and the euro
	// sign in Windows-1252 (five of its codes, 0x81 0x8D 0x8F 0x90 0x9D, are
	// unassigned). Code charts: ISO/IEC 8859-1:1998; Microsoft's cp1252
	// table (from memory).
	c1, undefined := false, false
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && size <= 1 {
			switch c := s[i]; {
			case c == 0x81 || c == 0x8D || c == 0x8F || c == 0x90 || c == 0x9D:
				undefined = true
			case c < 0xA0:
				c1 = true
			}
		}
		i += size
	}
	switch {
	case undefined:
		return ErrInvalidUTF8, "not UTF-8, Latin-1 or Windows-1252: find the file's encoding and convert it with iconv -f ENCODING -t utf-8"
	case c1:
		return ErrOtherEncoding, "looks like Windows-1252 (Latin-1 with quotes and dashes at 0x80-0x9F): convert with iconv -f cp1252 -t utf-8"
	}
	return ErrOtherEncoding, "looks like Latin-1: convert with iconv -f latin1 -t utf-8"
}

// listTruth returns the ground-truth files under root (TruthExts), sorted,
// leaving out the directory skip (the other root) if it lies inside,
// grouped by page key: keys[i] is the '/'-separated path without ending and
// files[i] its file. A page found in more than one file (its key is put in
// twice), a folder named like a ground-truth file and a folder that cannot
// be listed are passed to bad (and the walk goes on).
func listTruth(root, skip string, bad func(*FileError)) (keys, files, twice []string, err error) {
	var all []string
	all, err = listFiles(root, skip, func(name string) bool {
		_, ok := TruthKey(name)
		return ok
	}, bad)
	if err != nil {
		return nil, nil, nil, err
	}
	byKey := map[string][]string{}
	for _, rel := range all {
		k, _ := TruthKey(rel)
		if _, ok := byKey[k]; !ok {
			keys = append(keys, k)
		}
		byKey[k] = append(byKey[k], rel)
	}
	out := keys[:0]
	for _, k := range keys {
		names := byKey[k]
		if len(names) > 1 {
			paths := make([]string, len(names))
			for i, f := range names {
				paths[i] = filepath.Join(root, filepath.FromSlash(f))
			}
			bad(twoFormats(paths))
			twice = append(twice, k)
			continue
		}
		out = append(out, k)
		files = append(files, names[0])
	}
	return out, files, twice, nil
}
