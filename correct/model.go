package correct

import (
	"bytes"
	"compress/gzip"
	_ "embed"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strings"
	"sync"
	"unicode/utf8"

	"recto/internal/atomicfile"
)

// ModelVersion is the version of the model file format written by this build.
// LoadModel refuses any other version.
const ModelVersion = 2

// modelFormat names the file format inside the (gzip-compressed) JSON.
const modelFormat = "recto-correct-model"

// ErrModelVersion is wrapped by LoadModel when the file is a correction model
// of a version this build does not read.
var ErrModelVersion = errors.New("unsupported model version")

// ErrNotModel is wrapped by LoadModel when the file is not a correction model
// (not gzip, not JSON, wrong format name, or inconsistent counts).
var ErrNotModel = errors.New("not a correction model")

// Rule is one learned confusion: the correct string From was read as To.
// Either side may be empty (an insertion or a deletion), never both. Strings
// are lower case; a space stands for a word boundary the engine lost or added.
type Rule struct {
	From string `json:"from"` // correct text (reference side)
	To   string `json:"to"`   // what the engine read (hypothesis side)
	N    int64  `json:"n"`    // times seen in training
}

// Model is a character-level error model in the generalised-edit form of
// Brill and Moore (2000): P(To | From) for substrings of up to three
// characters, estimated from aligned pairs of ground truth and OCR output as
// N(From→To) / N(From), where N(From) counts From in the reference text.
// A Model is immutable once built and safe for concurrent use.
type Model struct {
	rules   []Rule           // sorted by From, then To
	context map[string]int64 // N(From) for every From in rules ("" = reference characters)
	chars   int64            // reference characters seen (= context[""])
	pairs   int              // training pairs
	words   int64            // reference words seen

	// compiled tables, built once by compile
	byTo     map[string][]crule // key: To (non-empty, no space); rules ending an observed substring
	del      map[rune]float64   // log P(deleted | x)
	keep     map[rune]float64   // log P(x read as x)
	subFloor float64            // log probability of an unseen one-character substitution
	insFloor float64            // log probability of an unseen one-character insertion
	delFloor float64            // log probability of an unseen one-character deletion
	keepDef  float64            // log P(x read as x) for characters never seen in training
	spaceDel float64            // log P(a space between words is lost)
	spaceIns float64            // log P(a space is added inside a word), per character
	expand   []expansion        // rewrites To→From for candidate expansion, most likely first
	expFirst [256][]expansion   // expand by first byte of To
	expMax   float64            // largest logp in expand (-Inf if none)
	maxLogp  float64            // the likeliest confusion or unseen edit, log probability
	maxEdit  float64            // the likeliest deletion or unseen edit, log probability

	// token-level counts (see marks.go) and what compileTokens makes of them
	marks    map[string]MarkStat
	glyphs   []GlyphStat
	markOdds map[string]float64 // log odds that a mark read alone is a stray
	markPool float64            // the same for marks seen too rarely to have their own; -Inf if none
	glyphMap map[rune]glyphSub
}

// crule is a compiled rule: From as runes and its log probability.
type crule struct {
	from []rune
	to   int // length of To in runes
	logp float64
}

// expansion rewrites an observed substring back to its likely source.
type expansion struct {
	to, from string
	logp     float64
	fromH    uint64 // polyHash of from
	fromPow  uint64 // polyBase^len(from)
}

// modelFile is the on-disk form of a Model.
type modelFile struct {
	Format  string              `json:"format"`
	Version int                 `json:"version"`
	Pairs   int                 `json:"pairs"`
	Words   int64               `json:"words"`
	Chars   int64               `json:"chars"`
	Context map[string]int64    `json:"context"`
	Rules   []Rule              `json:"rules"`
	Marks   map[string]MarkStat `json:"marks"`
	Glyphs  []GlyphStat         `json:"glyphs"`
}

//go:embed default.model
var defaultModelData []byte

//go:embed frk.model
var frakturModelData []byte

// embedded reads an embedded model file once.
type embedded struct {
	name string
	data []byte
	once sync.Once
	m    *Model
}

func (e *embedded) model() *Model {
	e.once.Do(func() {
		m, err := readModel(bytes.NewReader(e.data))
		if err != nil {
			panic("correct: embedded " + e.name + ": " + err.Error())
		}
		e.m = m
	})
	return e.m
}

var (
	defaultEmbedded = &embedded{name: "model", data: defaultModelData}
	frakturEmbedded = &embedded{name: "Fraktur model", data: frakturModelData}
)

// DefaultModel returns the model embedded in the binary, trained on the
// project's synthetic corpus. It panics only if the embedded file is broken,
// which the package tests rule out.
func DefaultModel() *Model { return defaultEmbedded.model() }

// FrakturModel returns the embedded error model for German print in
// Fraktur, trained on pages set in the Blankenburg blackletter (Debian
// fonts-blankenburg, OFL-1.1) and read by Tesseract's frk model (see
// docs/readme-languages.md). It panics only if the embedded file is broken,
// which the package tests rule out.
func FrakturModel() *Model { return frakturEmbedded.model() }

// ModelForLang returns the embedded error model for an engine language
// list ("eng", "deu+frk", "script/Fraktur") and its name: the Fraktur
// model when the list holds one of the engine's Fraktur models (frk,
// Fraktur, script/Fraktur), else the default model, whose confusions are
// those of Tesseract on Roman type.
func ModelForLang(lang string) (*Model, string) {
	for _, c := range strings.Split(lang, "+") {
		switch strings.TrimSpace(c) {
		case "frk", "Fraktur", "script/Fraktur":
			return FrakturModel(), "embedded Fraktur (frk.model)"
		}
	}
	return DefaultModel(), "embedded (default.model)"
}

// LoadModel reads a model written by Save. A file that is not a model, is
// corrupt, or comes from another format version gives an error naming it.
func LoadModel(path string) (*Model, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("correct: %w", err)
	}
	defer f.Close()
	m, err := readModel(f)
	if err != nil {
		return nil, fmt.Errorf("correct: %q: %w", path, err)
	}
	return m, nil
}

func readModel(r io.Reader) (*Model, error) {
	zr, err := gzip.NewReader(r)
	if err != nil {
		return nil, fmt.Errorf("%w (not gzip-compressed: %v)", ErrNotModel, err)
	}
	data, err := io.ReadAll(io.LimitReader(zr, 256<<20))
	if err != nil {
		return nil, fmt.Errorf("%w (truncated or corrupt: %v)", ErrNotModel, err)
	}
	var mf modelFile
	if err := json.Unmarshal(data, &mf); err != nil {
		return nil, fmt.Errorf("%w (bad JSON: %v)", ErrNotModel, err)
	}
	if mf.Format != modelFormat {
		return nil, fmt.Errorf("%w (format %q, want %q)", ErrNotModel, mf.Format, modelFormat)
	}
	if mf.Version != ModelVersion {
		return nil, fmt.Errorf("%w: file has version %d, this build reads version %d", ErrModelVersion, mf.Version, ModelVersion)
	}
	if mf.Chars <= 0 {
		return nil, fmt.Errorf("%w (no training characters)", ErrNotModel)
	}
	for i, r := range mf.Rules {
		if r.N <= 0 || (r.From == "" && r.To == "") || !utf8.ValidString(r.From) || !utf8.ValidString(r.To) {
			return nil, fmt.Errorf("%w (rule %d %q→%q: invalid)", ErrNotModel, i, r.From, r.To)
		}
		if r.From != "" && mf.Context[r.From] < r.N {
			return nil, fmt.Errorf("%w (rule %q→%q seen %d times but %q only %d times)", ErrNotModel, r.From, r.To, r.N, r.From, mf.Context[r.From])
		}
	}
	for tok, st := range mf.Marks {
		if !isMark(tok) || !utf8.ValidString(tok) || st.N <= 0 || st.Kept < 0 || st.Kept > st.N {
			return nil, fmt.Errorf("%w (mark %q seen %d times, kept %d: invalid)", ErrNotModel, tok, st.N, st.Kept)
		}
	}
	for i, g := range mf.Glyphs {
		r, n := utf8.DecodeRuneInString(g.Read)
		t, tn := utf8.DecodeRuneInString(g.Truth)
		if g.N <= 0 || n == 0 || n != len(g.Read) || !isGlyph(r) || tn != len(g.Truth) || t == utf8.RuneError && g.Truth != "" {
			return nil, fmt.Errorf("%w (glyph %d %q against %q: invalid)", ErrNotModel, i, g.Read, g.Truth)
		}
	}
	m := newModel(mf.Rules, mf.Context, mf.Chars, mf.Words, mf.Pairs)
	m.withTokens(mf.Marks, mf.Glyphs)
	return m, nil
}

// withTokens sets the token-level counts and compiles them.
func (m *Model) withTokens(marks map[string]MarkStat, glyphs []GlyphStat) {
	m.marks = make(map[string]MarkStat, len(marks))
	for k, v := range marks {
		m.marks[k] = v
	}
	m.glyphs = append([]GlyphStat(nil), glyphs...)
	m.compileTokens()
}

// Save writes the model to path (gzip-compressed JSON, versioned).
func (m *Model) Save(path string) error {
	var buf bytes.Buffer
	if err := m.write(&buf); err != nil {
		return fmt.Errorf("correct: %q: %w", path, err)
	}
	if err := atomicfile.Write(path, buf.Bytes()); err != nil {
		return fmt.Errorf("correct: %w", err)
	}
	return nil
}

func (m *Model) write(w io.Writer) error {
	ctx := make(map[string]int64, len(m.context))
	for k, v := range m.context {
		ctx[k] = v
	}
	mf := modelFile{Format: modelFormat, Version: ModelVersion, Pairs: m.pairs, Words: m.words, Chars: m.chars, Context: ctx, Rules: m.rules,
		Marks: m.marks, Glyphs: m.glyphs}
	data, err := json.Marshal(mf)
	if err != nil {
		return err
	}
	zw, _ := gzip.NewWriterLevel(w, gzip.BestCompression)
	if _, err := zw.Write(data); err != nil {
		return err
	}
	return zw.Close()
}

// Rules returns the model's confusions, most frequent first (ties by From, To).
func (m *Model) Rules() []Rule {
	rs := append([]Rule(nil), m.rules...)
	sort.SliceStable(rs, func(i, j int) bool { return rs[i].N > rs[j].N })
	return rs
}

// Prob returns the model's estimate of P(to | from): the probability that
// the correct string from is read as to, N(from→to) / (N(from) + 20). It
// is 0 for unseen rules.
func (m *Model) Prob(from, to string) float64 {
	i := sort.Search(len(m.rules), func(i int) bool {
		r := m.rules[i]
		return r.From > from || (r.From == from && r.To >= to)
	})
	if i < len(m.rules) && m.rules[i].From == from && m.rules[i].To == to {
		return float64(m.rules[i].N) / (float64(m.contextCount(from)) + contextPrior)
	}
	return 0
}

// contextPrior is added to N(From) when estimating P(To | From), so that a
// confusion seen once in a context seen twice does not get probability
// one-half: the estimate shrinks towards zero where evidence is thin.
const contextPrior = 20

func (m *Model) contextCount(from string) int64 {
	if from == "" {
		return m.chars
	}
	if n := m.context[from]; n > 0 {
		return n
	}
	return 1
}

// Pairs returns the number of aligned pairs the model was trained on.
func (m *Model) Pairs() int { return m.pairs }

// Chars returns the number of reference characters the model was trained on.
func (m *Model) Chars() int64 { return m.chars }

// newModel builds a model from rule counts and compiles its lookup tables.
func newModel(rules []Rule, context map[string]int64, chars, words int64, pairs int) *Model {
	rs := append([]Rule(nil), rules...)
	sort.Slice(rs, func(i, j int) bool {
		if rs[i].From != rs[j].From {
			return rs[i].From < rs[j].From
		}
		return rs[i].To < rs[j].To
	})
	ctx := make(map[string]int64, len(context))
	for k, v := range context {
		ctx[k] = v
	}
	m := &Model{rules: rs, context: ctx, chars: chars, words: words, pairs: pairs}
	m.compile()
	m.compileTokens()
	return m
}

// alphabet is the assumed number of distinct characters an unseen
// substitution or insertion may produce (add-one-half smoothing as in
// Kernighan, Church and Gale 1990, over lower-case letters, digits and
// common punctuation).
const alphabet = 40

func (m *Model) compile() {
	chars := float64(max(m.chars, 1))
	m.byTo = make(map[string][]crule)
	m.del = make(map[rune]float64)
	m.keep = make(map[rune]float64)
	errs := make(map[rune]int64) // one-character From: times read as something else
	var spaceDel, spaceIns, spaceN int64
	for _, r := range m.rules {
		switch {
		case r.From == " " && r.To == "":
			spaceDel += r.N
		case r.From == "" && r.To == " ":
			spaceIns += r.N
		}
		if r.From == " " {
			spaceN = m.context[" "]
		}
		if containsSpace(r.From) || containsSpace(r.To) {
			continue
		}
		p := float64(r.N) / (float64(m.contextCount(r.From)) + contextPrior)
		if p <= 0 || p >= 1 {
			p = math.Min(math.Max(p, 1e-12), 0.999)
		}
		lp := math.Log(p)
		if fr := []rune(r.From); len(fr) == 1 {
			errs[fr[0]] += r.N
		}
		if r.To == "" {
			if fr := []rune(r.From); len(fr) == 1 {
				m.del[fr[0]] = lp
			}
			continue
		}
		m.byTo[r.To] = append(m.byTo[r.To], crule{from: []rune(r.From), to: utf8.RuneCountInString(r.To), logp: lp})
		if r.From != "" {
			m.expand = append(m.expand, expansion{to: r.To, from: r.From, logp: lp})
		}
	}
	for k, n := range m.context {
		rs := []rune(k)
		if len(rs) != 1 || n <= 0 {
			continue
		}
		ok := float64(n-errs[rs[0]]) / float64(n)
		m.keep[rs[0]] = math.Log(math.Max(ok, 0.5))
	}
	m.keepDef = math.Log(0.99)
	// Unseen edits: add-one-half over an alphabet of typical size, relative
	// to the average character frequency.
	avg := chars / alphabet
	m.subFloor = math.Log(0.5 / (avg + 0.5*alphabet))
	m.delFloor = m.subFloor
	m.insFloor = math.Log(0.5 / (chars + 0.5*alphabet))
	if spaceN <= 0 {
		spaceN = max(m.words, 1)
	}
	m.spaceDel = math.Log((float64(spaceDel) + 0.5) / (float64(spaceN) + 1))
	m.spaceIns = math.Log((float64(spaceIns) + 0.5) / (chars + 1))
	m.maxLogp = max(m.subFloor, m.insFloor, m.delFloor, m.spaceDel, m.spaceIns)
	for _, x := range m.byTo {
		for _, r := range x {
			m.maxLogp = max(m.maxLogp, r.logp)
		}
	}
	m.maxEdit = max(m.subFloor, m.insFloor, m.delFloor)
	for _, v := range m.del {
		m.maxEdit = max(m.maxEdit, v)
	}
	m.maxLogp = max(m.maxLogp, m.maxEdit)
	sort.SliceStable(m.expand, func(i, j int) bool { return m.expand[i].logp > m.expand[j].logp })
	// A confusion widened by a matching neighbour ("th"→"tli") rewrites
	// nothing its narrow form ("h"→"li") does not: expand by the narrow one.
	have := make(map[[2]string]bool, len(m.expand))
	for _, x := range m.expand {
		have[[2]string{x.to, x.from}] = true
	}
	kept := m.expand[:0]
	for _, x := range m.expand {
		to, from := x.to, x.from
		for len(to) > 0 && len(from) > 0 && to[0] == from[0] {
			to, from = to[1:], from[1:]
		}
		for len(to) > 0 && len(from) > 0 && to[len(to)-1] == from[len(from)-1] {
			to, from = to[:len(to)-1], from[:len(from)-1]
		}
		if (to != x.to || from != x.from) && to != "" && have[[2]string{to, from}] {
			continue
		}
		kept = append(kept, x)
	}
	m.expand = kept
	m.expMax = math.Inf(-1)
	for i := range m.expand {
		x := &m.expand[i]
		x.fromH, x.fromPow = polyHash(x.from), polyPow(len(x.from))
		m.expMax = max(m.expMax, x.logp)
		m.expFirst[x.to[0]] = append(m.expFirst[x.to[0]], *x)
	}
}

func containsSpace(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] == ' ' {
			return true
		}
	}
	return false
}
