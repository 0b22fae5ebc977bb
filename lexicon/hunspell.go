package lexicon

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"os"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"golang.org/x/text/encoding"
	"golang.org/x/text/encoding/charmap"
)

// Hunspell support: the subset of the affix file format described in the
// hunspell(5) manual page that produces word forms.
//
//   - SET: UTF-8, or one of ISO8859-1 … ISO8859-15, KOI8-R, KOI8-U,
//     microsoft-cp1251 (decoded to UTF-8); anything else is an error.
//   - FLAG: the default (one character per flag), "long" (two characters),
//     "num" (comma-separated decimal numbers) and "UTF-8" (one code point).
//   - AF flag aliases; PFX and SFX tables with strip, add, condition and
//     the cross-product switch; continuation flags on an affix (twofold
//     affixes) for one more suffix or prefix.
//   - NEEDAFFIX (the stem alone is not a word), FORBIDDENWORD and
//     ONLYINCOMPOUND (never a word on its own) are honoured.
//   - Compounding (compound.go): COMPOUNDFLAG, COMPOUNDBEGIN,
//     COMPOUNDMIDDLE, COMPOUNDEND (or COMPOUNDLAST), COMPOUNDMIN,
//     COMPOUNDWORDMAX, COMPOUNDPERMITFLAG, COMPOUNDFORBIDFLAG,
//     ONLYINCOMPOUND, CHECKCOMPOUNDDUP, CHECKCOMPOUNDTRIPLE,
//     SIMPLIFIEDTRIPLE and CIRCUMFIX.
//
// REP/MAP/ICONV, morphology, COMPOUNDRULE, CHECKCOMPOUNDPATTERN/CASE/REP
// and case rules (KEEPCASE etc.) are not used (Unsupported lists the ones
// a file declares): lexicon keys are lower case, so case rules do not apply.

// ErrHunspell wraps errors in Hunspell affix and dictionary files.
var ErrHunspell = errors.New("hunspell")

type flagMode int

const (
	flagChar flagMode = iota
	flagLong
	flagNum
	flagUTF8
)

type affixRule struct {
	strip, add string
	cont       []string // continuation flags
	cond       []condElem
}

type affixClass struct {
	prefix bool
	cross  bool
	rules  []affixRule
}

// condElem is one position of an affix condition: a set of runes, negated
// or not; any == true matches every rune.
type condElem struct {
	any   bool
	neg   bool
	runes []rune
}

func (c condElem) match(r rune) bool {
	if c.any {
		return true
	}
	in := false
	for _, x := range c.runes {
		if x == r {
			in = true
			break
		}
	}
	return in != c.neg
}

// Affixes is a parsed Hunspell affix file.
type Affixes struct {
	mode         flagMode
	dec          *encoding.Decoder // nil for UTF-8
	aliases      [][]string        // AF table, 1-based in dictionaries
	classes      map[string]*affixClass
	needAffix    string
	forbidden    string
	onlyCompound string

	// Compounding (see compound.go); "" for a flag the file does not set.
	compoundFlag, compoundBegin, compoundMiddle, compoundEnd string
	compoundPermit, compoundForbid, circumfix                string
	compoundMin                                              int // COMPOUNDMIN; 0 when not set (the default, 3, applies)
	compoundMax                                              int // COMPOUNDWORDMAX; 0 unlimited
	checkDup, checkTriple, simplifiedTriple                  bool
	unsupported                                              []string // directives declared that change acceptance and are not implemented
}

// LoadAffixes reads a Hunspell .aff file.
func LoadAffixes(path string) (*Affixes, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("lexicon: %w", err)
	}
	a := &Affixes{classes: map[string]*affixClass{}}
	// SET must be known before the rest is decoded; it is usually the first line.
	for _, line := range bytes.Split(data, []byte{'\n'}) {
		f := strings.Fields(string(line))
		if len(f) >= 2 && f[0] == "SET" {
			if err := a.setEncoding(f[1]); err != nil {
				return nil, &ParseError{File: path, Err: err}
			}
			break
		}
	}
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(make([]byte, 0, 1<<16), 1<<20)
	n := 0
	pending := map[string]int{} // affix flag -> rules still expected
	for sc.Scan() {
		n++
		line, err := a.decode(sc.Bytes())
		if err != nil {
			return nil, &ParseError{File: path, Line: n, Err: err}
		}
		if i := strings.IndexByte(line, '#'); i == 0 {
			continue
		}
		f := strings.Fields(line)
		if len(f) == 0 {
			continue
		}
		if err := a.directive(f, pending); err != nil {
			return nil, &ParseError{File: path, Line: n, Err: err}
		}
	}
	if err := sc.Err(); err != nil {
		return nil, &ParseError{File: path, Line: n + 1, Err: err}
	}
	return a, nil
}

func (a *Affixes) setEncoding(name string) error {
	switch strings.ToUpper(name) {
	case "UTF-8", "UTF8":
		return nil
	}
	tables := map[string]*charmap.Charmap{
		"ISO8859-1": charmap.ISO8859_1, "ISO8859-2": charmap.ISO8859_2, "ISO8859-3": charmap.ISO8859_3,
		"ISO8859-4": charmap.ISO8859_4, "ISO8859-5": charmap.ISO8859_5, "ISO8859-6": charmap.ISO8859_6,
		"ISO8859-7": charmap.ISO8859_7, "ISO8859-8": charmap.ISO8859_8, "ISO8859-9": charmap.ISO8859_9,
		"ISO8859-10": charmap.ISO8859_10, "ISO8859-13": charmap.ISO8859_13, "ISO8859-14": charmap.ISO8859_14,
		"ISO8859-15": charmap.ISO8859_15, "KOI8-R": charmap.KOI8R, "KOI8-U": charmap.KOI8U,
		"MICROSOFT-CP1251": charmap.Windows1251,
	}
	cm, ok := tables[strings.ToUpper(name)]
	if !ok {
		return fmt.Errorf("%w: unsupported character set SET %s", ErrHunspell, name)
	}
	a.dec = cm.NewDecoder()
	return nil
}

func (a *Affixes) decode(b []byte) (string, error) {
	if a.dec == nil {
		if !utf8.Valid(b) {
			return "", fmt.Errorf("%w (the affix file declares UTF-8)", ErrNotUTF8)
		}
		return string(b), nil
	}
	return a.dec.String(string(b))
}

// flagField returns the field that holds the flag a directive names
// (PSEUDOROOT is the older name of NEEDAFFIX, COMPOUNDLAST of
// COMPOUNDEND), nil for a directive that names none.
func (a *Affixes) flagField(directive string) *string {
	return map[string]*string{"NEEDAFFIX": &a.needAffix, "PSEUDOROOT": &a.needAffix,
		"FORBIDDENWORD": &a.forbidden, "ONLYINCOMPOUND": &a.onlyCompound,
		"COMPOUNDFLAG": &a.compoundFlag, "COMPOUNDBEGIN": &a.compoundBegin,
		"COMPOUNDMIDDLE": &a.compoundMiddle, "COMPOUNDEND": &a.compoundEnd, "COMPOUNDLAST": &a.compoundEnd,
		"COMPOUNDPERMITFLAG": &a.compoundPermit, "COMPOUNDFORBIDFLAG": &a.compoundForbid, "CIRCUMFIX": &a.circumfix}[directive]
}

func (a *Affixes) directive(f []string, pending map[string]int) error {
	switch f[0] {
	case "FLAG":
		if len(f) < 2 {
			return fmt.Errorf("%w: FLAG without a value", ErrHunspell)
		}
		switch f[1] {
		case "long":
			a.mode = flagLong
		case "num":
			a.mode = flagNum
		case "UTF-8":
			a.mode = flagUTF8
		default:
			return fmt.Errorf("%w: unknown FLAG type %q", ErrHunspell, f[1])
		}
	case "AF":
		if len(f) < 2 {
			return fmt.Errorf("%w: AF without a value", ErrHunspell)
		}
		if len(a.aliases) == 0 {
			if _, err := strconv.Atoi(f[1]); err == nil {
				a.aliases = append(a.aliases, nil) // the count line; aliases are 1-based
				return nil
			}
		}
		fl, err := a.parseFlags(f[1])
		if err != nil {
			return err
		}
		a.aliases = append(a.aliases, fl)
	case "NEEDAFFIX", "PSEUDOROOT", "FORBIDDENWORD", "ONLYINCOMPOUND": // without a flag: ignored
		if len(f) >= 2 {
			*a.flagField(f[0]) = f[1]
		}
	case "COMPOUNDFLAG", "COMPOUNDBEGIN", "COMPOUNDMIDDLE", "COMPOUNDEND", "COMPOUNDLAST",
		"COMPOUNDPERMITFLAG", "COMPOUNDFORBIDFLAG", "CIRCUMFIX":
		if len(f) < 2 {
			return fmt.Errorf("%w: %s without a flag", ErrHunspell, f[0])
		}
		*a.flagField(f[0]) = f[1]
	case "COMPOUNDMIN", "COMPOUNDWORDMAX":
		n, err := strconv.Atoi(nth(f, 1))
		if err != nil || n < 1 {
			return fmt.Errorf("%w: %s needs a positive number", ErrHunspell, f[0])
		}
		if f[0] == "COMPOUNDMIN" {
			a.compoundMin = n
		} else {
			a.compoundMax = n
		}
	case "CHECKCOMPOUNDDUP":
		a.checkDup = true
	case "CHECKCOMPOUNDTRIPLE":
		a.checkTriple = true
	case "SIMPLIFIEDTRIPLE":
		a.simplifiedTriple = true
	case "COMPOUNDRULE", "CHECKCOMPOUNDPATTERN", "CHECKCOMPOUNDCASE", "CHECKCOMPOUNDREP", "COMPOUNDMORESUFFIXES", "FORCEUCASE", "COMPOUNDSYLLABLE":
		if !slices.Contains(a.unsupported, f[0]) {
			a.unsupported = append(a.unsupported, f[0])
		}
	case "PFX", "SFX":
		return a.affixLine(f, pending)
	}
	return nil
}

func (a *Affixes) affixLine(f []string, pending map[string]int) error {
	if len(f) < 4 {
		return fmt.Errorf("%w: %s line needs at least 4 fields", ErrHunspell, f[0])
	}
	flag := f[1]
	if pending[flag] == 0 {
		// Header: PFX flag cross_product count
		cnt, err := strconv.Atoi(f[3])
		if err != nil || cnt < 0 || (f[2] != "Y" && f[2] != "N") {
			return fmt.Errorf("%w: bad %s header (want %s FLAG Y|N COUNT)", ErrHunspell, f[0], f[0])
		}
		a.classes[flag] = &affixClass{prefix: f[0] == "PFX", cross: f[2] == "Y"}
		pending[flag] = cnt
		return nil
	}
	cls := a.classes[flag]
	if cls.prefix != (f[0] == "PFX") {
		return fmt.Errorf("%w: %s rule for flag %q declared as the other kind", ErrHunspell, f[0], flag)
	}
	if len(f) < 5 {
		f = append(f, ".") // condition may be omitted
	}
	r := affixRule{strip: f[2], add: f[3]}
	if r.strip == "0" {
		r.strip = ""
	}
	if add, cont, ok := strings.Cut(r.add, "/"); ok {
		r.add = add
		fl, err := a.flagsOrAlias(cont)
		if err != nil {
			return err
		}
		r.cont = fl
	}
	if r.add == "0" {
		r.add = ""
	}
	cond, err := parseCondition(f[4])
	if err != nil {
		return err
	}
	r.cond = cond
	cls.rules = append(cls.rules, r)
	pending[flag]--
	return nil
}

func parseCondition(s string) ([]condElem, error) {
	if s == "." {
		return nil, nil
	}
	var out []condElem
	rs := []rune(s)
	for i := 0; i < len(rs); i++ {
		switch rs[i] {
		case '.':
			out = append(out, condElem{any: true})
		case '[':
			j := i + 1
			e := condElem{}
			if j < len(rs) && rs[j] == '^' {
				e.neg = true
				j++
			}
			for j < len(rs) && rs[j] != ']' {
				e.runes = append(e.runes, rs[j])
				j++
			}
			if j == len(rs) {
				return nil, fmt.Errorf("%w: condition %q has an unclosed [", ErrHunspell, s)
			}
			out = append(out, e)
			i = j
		default:
			out = append(out, condElem{runes: []rune{rs[i]}})
		}
	}
	return out, nil
}

// parseFlags splits a flag string according to the FLAG mode.
func (a *Affixes) parseFlags(s string) ([]string, error) {
	var out []string
	switch a.mode {
	case flagLong:
		rs := []rune(s)
		if len(rs)%2 != 0 {
			return nil, fmt.Errorf("%w: odd number of characters in long flags %q", ErrHunspell, s)
		}
		for i := 0; i < len(rs); i += 2 {
			out = append(out, string(rs[i:i+2]))
		}
	case flagNum:
		for _, p := range strings.Split(s, ",") {
			if _, err := strconv.Atoi(p); err != nil {
				return nil, fmt.Errorf("%w: bad numeric flag %q", ErrHunspell, p)
			}
			out = append(out, p)
		}
	default:
		for _, r := range s {
			out = append(out, string(r))
		}
	}
	return out, nil
}

// flagsOrAlias resolves s as an AF alias number when aliases are defined.
func (a *Affixes) flagsOrAlias(s string) ([]string, error) {
	if len(a.aliases) > 0 {
		i, err := strconv.Atoi(s)
		if err != nil || i < 1 || i >= len(a.aliases) {
			return nil, fmt.Errorf("%w: unknown flag alias %q", ErrHunspell, s)
		}
		return a.aliases[i], nil
	}
	return a.parseFlags(s)
}

func containsFlag(fs []string, f string) bool {
	if f == "" {
		return false
	}
	for _, x := range fs {
		if x == f {
			return true
		}
	}
	return false
}

// applySuffix applies a suffix rule: the condition is matched against the
// end of the stem, the strip string removed from the end, add appended.
func applySuffix(stem string, r affixRule) (string, bool) {
	rs := []rune(stem)
	if len(r.cond) > len(rs) || !strings.HasSuffix(stem, r.strip) || len(r.strip) >= len(stem) && r.strip != "" {
		return "", false
	}
	base := len(rs) - len(r.cond)
	for i, c := range r.cond {
		if !c.match(rs[base+i]) {
			return "", false
		}
	}
	return stem[:len(stem)-len(r.strip)] + r.add, true
}

func matchPrefixCond(stem string, r affixRule) bool {
	rs := []rune(stem)
	if len(r.cond) > len(rs) {
		return false
	}
	for i, c := range r.cond {
		if !c.match(rs[i]) {
			return false
		}
	}
	return true
}

// applyPrefix removes strip from the start of word and prepends add.
func applyPrefix(word string, r affixRule) (string, bool) {
	if !strings.HasPrefix(word, r.strip) || (r.strip != "" && len(r.strip) >= len(word)) {
		return "", false
	}
	return r.add + word[len(r.strip):], true
}

// AddHunspell expands a Hunspell dictionary (.dic, with its .aff) into word
// forms and adds them as known words. A malformed line is an error naming
// the file and line.
func (b *Builder) AddHunspell(dicPath, affPath string) error {
	aff, err := LoadAffixes(affPath)
	if err != nil {
		return err
	}
	b.addCompounding(aff)
	return aff.ReadDicForms(dicPath, func(f Form) { b.addForm(f) })
}

// ReadDic reads a Hunspell .dic file and calls fn with every word form of
// every entry that is a word on its own (see ReadDicForms).
func (a *Affixes) ReadDic(path string, fn func(form string)) error {
	return a.ReadDicForms(path, func(f Form) {
		if f.Alone {
			fn(f.Word)
		}
	})
}

// ReadDicForms reads a Hunspell .dic file and calls fn with every form of
// every entry, with where it may stand (ExpandForms). The first line (the
// approximate entry count) is required.
func (a *Affixes) ReadDicForms(path string, fn func(Form)) error {
	n, err := scanLines(path, func(n int, raw []byte) error {
		line, err := a.decode(raw)
		if err != nil {
			return err
		}
		if n == 1 {
			if _, err := strconv.Atoi(strings.TrimSpace(line)); err != nil {
				return fmt.Errorf("%w: first line must be the entry count, found %q", ErrHunspell, line)
			}
			return nil
		}
		stem, flags, err := a.dicEntry(line)
		if err != nil || stem == "" {
			return err
		}
		for _, f := range a.ExpandForms(stem, flags) {
			fn(f)
		}
		return nil
	})
	if err != nil {
		return err
	}
	if n == 0 {
		return &ParseError{File: path, Err: fmt.Errorf("%w: empty dictionary", ErrHunspell)}
	}
	return nil
}

// dicEntry splits a .dic line into its stem and flags. Morphological fields
// after a tab (or after a space followed by "xx:") are dropped; "\/" is a
// slash inside the word.
func (a *Affixes) dicEntry(line string) (string, []string, error) {
	if i := strings.IndexByte(line, '\t'); i >= 0 {
		line = line[:i]
	}
	for i := strings.IndexByte(line, ' '); i >= 0; {
		rest := line[i+1:]
		if len(rest) >= 3 && rest[2] == ':' {
			line = line[:i]
			break
		}
		j := strings.IndexByte(rest, ' ')
		if j < 0 {
			break
		}
		i += 1 + j
	}
	line = strings.TrimSpace(line)
	if line == "" || line[0] == '#' {
		return "", nil, nil
	}
	var stem strings.Builder
	var flagStr string
	for i := 0; i < len(line); i++ {
		if line[i] == '\\' && i+1 < len(line) && line[i+1] == '/' {
			stem.WriteByte('/')
			i++
			continue
		}
		if line[i] == '/' {
			flagStr = line[i+1:]
			break
		}
		stem.WriteByte(line[i])
	}
	if flagStr == "" {
		return stem.String(), nil, nil
	}
	fl, err := a.flagsOrAlias(flagStr)
	if err != nil {
		return "", nil, err
	}
	return stem.String(), fl, nil
}

// nth returns f[i], or "" when f is shorter.
func nth(f []string, i int) string {
	if i < len(f) {
		return f[i]
	}
	return ""
}
