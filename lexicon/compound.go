package lexicon

import (
	"slices"
	"strings"
	"unicode/utf8"
)

// Compounding as the hunspell(5) manual page describes it (Németh,
// "hunspell - format of Hunspell dictionaries and affix files", Debian
// libhunspell-dev 1.7.1, section "OPTIONS FOR COMPOUNDING"):
//
//   - a word signed with COMPOUNDFLAG may stand anywhere in a compound;
//     COMPOUNDBEGIN, COMPOUNDMIDDLE and COMPOUNDEND (COMPOUNDLAST) allow
//     one position each; "affixes with COMPOUNDFLAG also permit compounding
//     of affixed words", so a form's flags are its stem's and its affixes'
//     continuation flags together;
//   - "prefixes are allowed at the beginning of compounds, suffixes at the
//     end by default; affixes with COMPOUNDPERMITFLAG may be inside";
//     suffixes with COMPOUNDFORBIDFLAG forbid compounding of the affixed
//     word, stems with it never begin or continue one;
//   - every part has at least COMPOUNDMIN letters (default 3), a compound
//     at most COMPOUNDWORDMAX parts (default unlimited);
//   - ONLYINCOMPOUND: the form is a compound part, never a word alone;
//   - CHECKCOMPOUNDDUP forbids a part repeated ("foofoo");
//     CHECKCOMPOUNDTRIPLE forbids three equal letters across a boundary
//     ("foo|ox", "xo|oof"); SIMPLIFIEDTRIPLE then allows the two-letter
//     form ("Schiff|fahrt" written "Schiffahrt");
//   - CIRCUMFIX: an affix with this flag is valid only together with an
//     affix of the other kind that has it too.
//
// Twofold suffixes are not allowed inside compounds (COMPOUNDMORESUFFIXES
// is not implemented). Parts are compared by Key, so case is ignored.

// Roles of a form in a compound: where it may stand.
const (
	RoleBegin  uint8 = 1 << iota // first part
	RoleMiddle                   // neither first nor last
	RoleEnd                      // last part
)

// Form is one word form of a Hunspell dictionary entry.
type Form struct {
	Word  string
	Alone bool  // a word on its own (not NEEDAFFIX, FORBIDDENWORD, ONLYINCOMPOUND, circumfix half)
	Roles uint8 // RoleBegin|RoleMiddle|RoleEnd: where it may stand in a compound
}

// Expand returns the word forms of a dictionary stem with the given flags
// that are words on their own: the stem itself (unless flagged NEEDAFFIX,
// FORBIDDENWORD or ONLYINCOMPOUND), each prefix and suffix whose condition
// matches, suffixes named by a suffix's continuation flags, and
// prefix+suffix combinations when both classes allow cross products.
// Forms are returned in order of generation and may repeat.
func (a *Affixes) Expand(stem string, flags []string) []string {
	var out []string
	for _, f := range a.ExpandForms(stem, flags) {
		if f.Alone {
			out = append(out, f.Word)
		}
	}
	return out
}

// ExpandForms returns every form of a stem, words and compound parts, with
// its roles (see the rules above). Forms that are neither a word nor a
// part are left out.
func (a *Affixes) ExpandForms(stem string, flags []string) []Form {
	has := func(fs []string, fl string) bool { return fl != "" && slices.Contains(fs, fl) }
	if has(flags, a.forbidden) {
		return nil
	}
	stemOnly := has(flags, a.onlyCompound)
	stemForbid := has(flags, a.compoundForbid)
	roles := func(conts ...[]string) uint8 {
		var r uint8
		for _, fs := range append([][]string{flags}, conts...) {
			if has(fs, a.compoundFlag) {
				r |= RoleBegin | RoleMiddle | RoleEnd
			}
			if has(fs, a.compoundBegin) {
				r |= RoleBegin
			}
			if has(fs, a.compoundMiddle) {
				r |= RoleMiddle
			}
			if has(fs, a.compoundEnd) {
				r |= RoleEnd
			}
		}
		if stemForbid {
			r &^= RoleBegin | RoleMiddle
		}
		return r
	}
	var out []Form
	emit := func(w string, alone bool, r uint8) {
		if alone || r != 0 {
			out = append(out, Form{Word: w, Alone: alone, Roles: r})
		}
	}
	if !has(flags, a.needAffix) {
		emit(stem, !stemOnly, roles())
	}
	type derived struct {
		word  string
		cross bool
		cont  []string
	}
	var suffixed []derived
	for _, fl := range flags {
		cls := a.classes[fl]
		if cls == nil || cls.prefix {
			continue
		}
		for _, r := range cls.rules {
			w, ok := applySuffix(stem, r)
			if !ok {
				continue
			}
			suffixed = append(suffixed, derived{w, cls.cross, r.cont})
			if !has(r.cont, a.circumfix) {
				alone := !stemOnly && !has(r.cont, a.onlyCompound) && !has(r.cont, a.needAffix)
				ro := roles(r.cont)
				if has(r.cont, a.compoundForbid) {
					ro = 0
				}
				if !has(r.cont, a.compoundPermit) {
					ro &= RoleEnd
				}
				emit(w, alone, ro)
			}
			for _, cf := range r.cont { // twofold suffixes: one more level, never in compounds
				c2 := a.classes[cf]
				if c2 == nil || c2.prefix {
					continue
				}
				for _, r2 := range c2.rules {
					if w2, ok := applySuffix(w, r2); ok && !has(r2.cont, a.circumfix) {
						emit(w2, !stemOnly && !has(r2.cont, a.onlyCompound) && !has(r2.cont, a.needAffix), 0)
					}
				}
			}
		}
	}
	for _, fl := range flags {
		cls := a.classes[fl]
		if cls == nil || !cls.prefix {
			continue
		}
		for _, r := range cls.rules {
			if !matchPrefixCond(stem, r) {
				continue
			}
			w, ok := applyPrefix(stem, r)
			if !ok {
				continue
			}
			if !has(r.cont, a.circumfix) {
				alone := !stemOnly && !has(r.cont, a.onlyCompound) && !has(r.cont, a.needAffix)
				ro := roles(r.cont)
				if !has(r.cont, a.compoundPermit) {
					ro &= RoleBegin
				}
				emit(w, alone, ro)
			}
			if !cls.cross {
				continue
			}
			for _, s := range suffixed {
				if !s.cross || has(r.cont, a.circumfix) != has(s.cont, a.circumfix) {
					continue
				}
				w2, ok := applyPrefix(s.word, r)
				if !ok {
					continue
				}
				alone := !stemOnly && !has(r.cont, a.onlyCompound) && !has(s.cont, a.onlyCompound) &&
					!has(r.cont, a.needAffix) && !has(s.cont, a.needAffix)
				ro := roles(r.cont, s.cont)
				if has(s.cont, a.compoundForbid) {
					ro = 0
				}
				if !has(r.cont, a.compoundPermit) {
					ro &^= RoleMiddle | RoleEnd
				}
				if !has(s.cont, a.compoundPermit) {
					ro &^= RoleBegin | RoleMiddle
				}
				emit(w2, alone, ro)
			}
		}
	}
	return out
}

// Compounding returns the compounding rules of the affix file, or nil when
// it declares no compound flag.
func (a *Affixes) compounding() *compounding {
	if a.compoundFlag == "" && a.compoundBegin == "" && a.compoundMiddle == "" && a.compoundEnd == "" {
		return nil
	}
	c := &compounding{min: a.compoundMin, max: a.compoundMax, dup: a.checkDup, triple: a.checkTriple, simplified: a.simplifiedTriple}
	if c.min == 0 {
		c.min = 3 // the manual page's default
	}
	return c
}

// Unsupported lists the directives of the affix file that change which
// words Hunspell accepts and that this package does not implement.
func (a *Affixes) Unsupported() []string { return slices.Clone(a.unsupported) }

// compounding holds one dictionary's compound rules and parts.
type compounding struct {
	min, max                int
	dup, triple, simplified bool
	parts                   store // Key -> roles (RoleBegin|RoleMiddle|RoleEnd), OR-ed, never summed
}

// role returns the roles of a part, 0 for a key that is no part.
func (c *compounding) role(k string) uint8 {
	r := c.parts.m[k]
	if t := c.parts.t; t != nil {
		if i := t.find(k); i >= 0 {
			r |= t.vals[i]
		}
	}
	return uint8(r)
}

// accepts reports whether key (a Key) is a compound of parts.
func (c *compounding) accepts(key string) bool {
	if c.parts.len() == 0 || utf8.RuneCountInString(key) < 2*c.min {
		return false
	}
	return c.rest(key, RoleBegin, 1, "")
}

// rest reports whether s splits into a part with role need followed by a
// valid remainder (or by a last part); n counts the parts so far
// including this one, prev is the part before.
func (c *compounding) rest(s string, need uint8, n int, prev string) bool {
	runes := 0
	for i := range s {
		if i == 0 {
			runes++
			continue
		}
		if runes >= c.min {
			head, tail := s[:i], s[i:]
			if c.role(head)&need != 0 && !(c.dup && head == prev) {
				last, _ := utf8.DecodeLastRuneInString(head)
				if !c.triple || !tripleAt(head, tail) {
					if c.tail(tail, head, n) {
						return true
					}
				}
				// SIMPLIFIEDTRIPLE: "Schiffahrt" is Schiff|fahrt with one f dropped.
				if c.simplified && c.triple && endsDouble(head) {
					if c.tail(string(last)+tail, head, n) {
						return true
					}
				}
			}
		}
		runes++
	}
	return false
}

// tail reports whether s, after head, is a last part or a middle part
// followed by more.
func (c *compounding) tail(s, head string, n int) bool {
	if utf8.RuneCountInString(s) < c.min {
		return false
	}
	if c.max > 0 && n+1 > c.max {
		return false
	}
	if c.role(s)&RoleEnd != 0 && !(c.dup && s == head) {
		return true
	}
	if c.max > 0 && n+2 > c.max {
		return false
	}
	return c.rest(s, RoleMiddle, n+1, head)
}

// tripleAt reports whether three equal letters meet across the boundary
// between head and tail ("foo|ox", "xo|oof").
func tripleAt(head, tail string) bool {
	h1, n1 := utf8.DecodeLastRuneInString(head)
	h2, _ := utf8.DecodeLastRuneInString(head[:len(head)-n1])
	t1, m1 := utf8.DecodeRuneInString(tail)
	t2, _ := utf8.DecodeRuneInString(tail[m1:])
	return h1 == t1 && ((len(head) > n1 && h2 == h1) || (len(tail) > m1 && t2 == t1))
}

func endsDouble(s string) bool {
	r1, n1 := utf8.DecodeLastRuneInString(s)
	r2, _ := utf8.DecodeLastRuneInString(s[:len(s)-n1])
	return len(s) > n1 && r1 == r2
}

// addCompounding records the compound rules of an affix file (once per
// dictionary).
func (b *Builder) addCompounding(a *Affixes) {
	b.cur = a.compounding()
	if b.cur != nil {
		b.cur.parts = newStore(0)
		b.compounds = append(b.compounds, b.cur)
	}
}

// addForm adds a Hunspell form: a word when it stands alone, a part when
// it has roles and the dictionary compounds. Forms with a hyphen are left
// out: tokens are split at hyphens before look-up.
func (b *Builder) addForm(f Form) {
	if strings.ContainsRune(f.Word, '-') {
		return
	}
	if f.Alone {
		b.AddWord(f.Word)
	}
	if f.Roles != 0 && b.cur != nil {
		b.cur.parts.m[Key(f.Word)] |= int64(f.Roles)
	}
}
