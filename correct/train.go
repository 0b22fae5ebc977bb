package correct

import (
	"strings"
	"unicode"
	"unicode/utf8"

	"golang.org/x/text/unicode/norm"

	"recto/lexicon"
	"recto/quality"
)

// Pair is one training example: the ground truth of a page (or line) and
// what the engine read there.
type Pair struct {
	Ref string // ground truth
	Hyp string // OCR output
}

// TrainOptions tunes Train. The zero value is valid.
type TrainOptions struct {
	// MinCount drops confusions of more than two characters in all seen
	// fewer times than this; 0 means 2. One-character confusions are kept
	// at any count.
	MinCount int
	// Prior lists confusions known beforehand (such as Classic); each
	// gets a pseudo-count of PriorRate times the count of its From in the
	// reference text, on top of what the pairs show, so that it has some
	// probability even when the training pages never show it.
	Prior []Rule
	// PriorRate is the prior probability of each Prior confusion; 0 means
	// 0.002.
	PriorRate float64
}

// Classic lists the OCR confusions of letter shapes that every engine is
// known to make (common practice: rn/m, cl/d, li/h, vv/w, ii/u, 0/o, 1/l/I,
// 5/s, e/c, in both directions where both occur), for TrainOptions.Prior.
var Classic = []Rule{
	{From: "m", To: "rn"}, {From: "rn", To: "m"}, {From: "d", To: "cl"}, {From: "cl", To: "d"},
	{From: "h", To: "li"}, {From: "li", To: "h"}, {From: "w", To: "vv"}, {From: "u", To: "ii"},
	{From: "o", To: "0"}, {From: "l", To: "1"}, {From: "i", To: "1"}, {From: "i", To: "l"},
	{From: "l", To: "i"}, {From: "s", To: "5"}, {From: "e", To: "c"}, {From: "c", To: "e"},
	{From: "h", To: "b"}, {From: "m", To: "in"}, {From: "m", To: "ni"}, {From: "n", To: "ri"},
}

// maxRule is the longest From or To learned, in characters.
const maxRule = 3

// Train learns an error model from aligned pairs. Both sides are put in
// NFC, lower-cased and have runs of white space collapsed to one space;
// each pair is aligned with a Levenshtein alignment (quality.Align), and every maximal run
// of differences of at most three characters a side becomes a confusion,
// counted alone and widened by one matching neighbour on either side
// (longer runs are skipped as garbage)
// (Brill and Moore 2000, "An improved error model for noisy channel
// spelling correction"). P(To | From) is then N(From→To) / (N(From) + 20),
// with N(From) counted over the reference text (see Model.Prob).
func Train(pairs []Pair, o TrainOptions) *Model {
	minCount := int64(o.MinCount)
	if minCount <= 0 {
		minCount = 2
	}
	counts := make(map[[2]string]int64)
	var refs [][]rune
	var words int64
	var sc quality.Scratch
	var ops, wops []quality.Op
	marks := make(map[string]*MarkStat)
	glyphs := make(map[[2]rune]int64)
	add := func(from, to string) {
		if from == to || utf8.RuneCountInString(from) > maxRule || utf8.RuneCountInString(to) > maxRule {
			return
		}
		counts[[2]string{from, to}]++
	}
	for _, p := range pairs {
		ref, hyp := []rune(trainForm(p.Ref)), []rune(trainForm(p.Hyp))
		words += int64(len(strings.Fields(string(ref))))
		refs = append(refs, ref)
		ops = sc.Align(ref, hyp, ops[:0])
		learnGlyphs(ops, glyphs)
		learnOps(ops, add)
		wops = learnMarks(&sc, p.Ref, p.Hyp, marks, wops)
	}
	// Count every From in the reference text.
	need := make(map[string]int64)
	for k := range counts {
		if k[0] != "" {
			need[k[0]] = 0
		}
	}
	for _, r := range o.Prior {
		if r.From != "" {
			need[r.From] = 0
		}
	}
	var chars int64
	for _, ref := range refs {
		chars += int64(len(ref))
		for i := range ref {
			for l := 1; l <= maxRule && i+l <= len(ref); l++ {
				s := string(ref[i : i+l])
				if l == 1 {
					need[s]++
					continue
				}
				if _, ok := need[s]; ok {
					need[s]++
				}
			}
		}
	}
	rate := o.PriorRate
	if rate <= 0 {
		rate = 0.002
	}
	for _, r := range o.Prior {
		if r.From == "" || r.From == r.To {
			continue
		}
		if pseudo := int64(rate*float64(need[r.From]) + 0.5); pseudo > 0 {
			counts[[2]string{r.From, r.To}] += pseudo
		}
	}
	var rules []Rule
	for k, n := range counts {
		from, to := k[0], k[1]
		if utf8.RuneCountInString(from)+utf8.RuneCountInString(to) > 2 && n < minCount && !inPrior(o.Prior, from, to) {
			continue
		}
		if from != "" && need[from] < n {
			continue // cannot happen with consistent input; keeps the model loadable
		}
		rules = append(rules, Rule{From: from, To: to, N: n})
	}
	ctx := make(map[string]int64)
	for _, r := range rules {
		if r.From != "" {
			ctx[r.From] = need[r.From]
		}
	}
	for s, n := range need {
		if utf8.RuneCountInString(s) == 1 && n > 0 {
			ctx[s] = n
		}
	}
	m := newModel(rules, ctx, max(chars, 1), words, len(pairs))
	ms := make(map[string]MarkStat, len(marks))
	for k, v := range marks {
		ms[k] = *v
	}
	m.withTokens(ms, glyphStats(glyphs))
	return m
}

// trainForm is the form texts are compared in: NFC, lower case, white space
// runs collapsed to one space, except that line breaks are kept (as "\n",
// read as spaces by learnOps), and the long s and ligatures folded to plain
// letters as words are looked up (lexicon.FoldForms): on a Fraktur page "ſ" read
// as "f" is learned as s→f, the confusion the corrector meets.
func trainForm(s string) string {
	s = lexicon.FoldForms(strings.ToLower(norm.NFC.String(s)))
	var b strings.Builder
	b.Grow(len(s))
	space, nl := false, false
	for _, r := range s {
		if unicode.IsSpace(r) {
			space = true
			if r == '\n' {
				nl = true
			}
			continue
		}
		if space && b.Len() > 0 {
			if nl {
				b.WriteByte('\n')
			} else {
				b.WriteByte(' ')
			}
		}
		space, nl = false, false
		b.WriteRune(r)
	}
	return b.String()
}

// learnOps passes every confusion in an alignment to add: each maximal run
// of non-matching operations (line breaks count as spaces), alone and
// widened by one matching neighbour on each side. Runs longer than maxRule
// a side are skipped.
func learnOps(ops []quality.Op, add func(from, to string)) {
	sp := func(r rune) rune {
		if r == '\n' {
			return ' '
		}
		return r
	}
	for i := range ops {
		ops[i].R, ops[i].H = sp(ops[i].R), sp(ops[i].H)
	}
	var from, to []rune
	for s := 0; s < len(ops); {
		if ops[s].Kind == quality.OpMatch {
			s++
			continue
		}
		e := s
		from, to = from[:0], to[:0]
		for e < len(ops) && ops[e].Kind != quality.OpMatch {
			if ops[e].R != 0 {
				from = append(from, ops[e].R)
			}
			if ops[e].H != 0 {
				to = append(to, ops[e].H)
			}
			e++
		}
		if len(from) > maxRule || len(to) > maxRule {
			// Longer runs are lost lines, smudges or misread blocks, not
			// character confusions: the error model learns nothing there.
			s = e
			continue
		}
		f, t := string(from), string(to)
		add(f, t)
		if s > 0 && ops[s-1].R != ' ' {
			c := string(ops[s-1].R)
			add(c+f, c+t)
		}
		if e < len(ops) && ops[e].R != ' ' {
			c := string(ops[e].R)
			add(f+c, t+c)
		}
		s = e
	}
}

func inPrior(prior []Rule, from, to string) bool {
	for _, r := range prior {
		if r.From == from && r.To == to {
			return true
		}
	}
	return false
}
