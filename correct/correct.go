package correct

import (
	"cmp"
	"math"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"unicode/utf8"

	"recto/lexicon"
	"recto/ocr"
)

// DefaultMargin is the margin used when Config.Margin is 0: the best
// candidate must be e^DefaultMargin times likelier than the token as read.
const DefaultMargin = 3.0

// Config tunes a Corrector. The zero value is valid and conservative.
type Config struct {
	// Margin is how much likelier, in natural-log units, the best
	// candidate must be than the token as read before the token is
	// changed; 0 means DefaultMargin. Higher is more cautious.
	Margin float64
	// MaxEdits bounds the edit distance of candidates found by search of
	// the lexicon (1 or 2); 0 means 2. Expansions through learned
	// confusions may go further.
	MaxEdits int
	// KeepHyphens leaves words hyphenated across line ends as they are;
	// by default they are joined when the joined word is in the lexicon.
	KeepHyphens bool
	// KeepSpacing turns off splitting run-together words and joining
	// split ones.
	KeepSpacing bool
	// KeepMarks leaves stray marks (tokens with no letter or digit that
	// the model takes for specks read as punctuation) in the text.
	KeepMarks bool
	// MapGlyphs rewrites punctuation glyphs the model has learned the
	// engine misreads consistently (a straight quotation mark read as a
	// curly one) to the glyph the model's ground truth has there. It is a
	// transcription convention as much as a correction, so it is off by
	// default: use it with a model trained on the collection's own ground
	// truth.
	MapGlyphs bool
	// Collection optionally adds unigram and bigram counts from the
	// collection's own text to the lexicon's for the context model.
	Collection *lexicon.Lexicon
}

// Change is one correction.
type Change struct {
	Line   int     `json:"line"`   // 1-based line in the page text
	Column int     `json:"column"` // 1-based column, in runes
	Before string  `json:"before"`
	After  string  `json:"after"`
	Score  float64 `json:"score"` // natural-log odds of After over Before; above the margin
}

// Corrector corrects OCR text with a lexicon and an error model. It is safe
// for concurrent use once New returns.
type Corrector struct {
	lex    *lexicon.Lexicon
	coll   *lexicon.Lexicon
	m      *Model
	cfg    Config
	margin float64
	edits  int
	ix     *deleteIndex
	total  float64 // unigram total, lexicon and collection
	pool   sync.Pool
	neigh  sync.Map     // lexicon word -> []neighbour
	cached atomic.Int64 // entries in neigh
}

// Tuning constants; the figures behind them are in docs/dev-correct.md.
const (
	// confWeight scales the engine's confidence, as log odds relative to
	// confCentre, into the margin: a word read at 0.97 needs e^1.3 more
	// evidence than one read at 0.9, one read at 0.5 e^2.2 less.
	confWeight = 1.0
	// sureConf is the confidence at or above which a lexicon word is not
	// questioned at all.
	sureConf = 0.9
	// strictConf is the confidence at or above which a lower-case word the
	// lexicon lacks is changed only into a word reached by undoing learned
	// confusions, each at least e^strictStepLogP likely: a word read that
	// clearly is more often a rare word than an OCR error ("ling").
	strictConf     = 0.85
	strictStepLogP = -7.0
	// listedFloor is the least unigram count a listed word gets.
	listedFloor = 1.0
	// nameConf is the confidence at or above which a capitalised word the
	// lexicon lacks is taken for a name and left alone.
	nameConf = 0.93
	// nameMargin is added to the margin for capitalised unknown words when
	// the confidence is unknown (plain text).
	nameMargin = 3.0
	// oovPenalty is subtracted from the log probability of keeping a word
	// the lexicon lacks, on top of the add-one-half unigram estimate: a
	// string never seen in open text is seldom a word.
	oovPenalty = 3.0
	// textMargin is added to the margin when the engine's confidence is
	// unknown (plain text): without it, less evidence stands behind each
	// decision.
	textMargin = 2.0
	// realWordMargin is added to the margin to replace a lexicon word by
	// another through a learned confusion ("modem" for "modern").
	realWordMargin = 1.0
	// confCentre is the confidence that leaves the margin as it is; engine
	// confidences above it raise the margin, below it lower it.
	confCentre = 0.9
	// minExpandLogP is the least likely confusion, and minExpand2LogP the
	// least likely pair of confusions, used to expand a token into
	// candidates (edit-distance search finds the rest).
	minExpandLogP  = -7.0
	minExpand2LogP = -11.0
	// clearWin is how far beyond the margin a candidate made by undoing
	// learned confusions must score for the edit-distance search to be
	// skipped.
	clearWin = 4.0
	// maxFrontier bounds the one-confusion variants expanded again.
	maxFrontier = 12
	// runningConf is the confidence under which a dash, "&" or reference
	// mark read on its own may be taken for a stray.
	runningConf = 0.5
	// pageMinWords is the least number of words a page needs for its
	// share of unknown words to set the page prior; pageRef is the share
	// at which the prior is neutral (0.03, 0.05 and 0.1 did equally well
	// on the development pages) and pageFloor the least share counted (a
	// page with no unknown word at all gets log(pageRef/pageFloor) ≈ 2.3).
	pageMinWords = 20
	pageRef      = 0.05
	pageFloor    = 0.005
	// backoff is the stupid-backoff factor (Brants et al. 2007).
	backoff = 0.4
)

var confCentreLogit = math.Log(confCentre / (1 - confCentre))

// New returns a Corrector. lex must not be modified afterwards; m nil
// means DefaultModel.
func New(lex *lexicon.Lexicon, m *Model, cfg Config) *Corrector {
	if m == nil {
		m = DefaultModel()
	}
	c := &Corrector{lex: lex, coll: cfg.Collection, m: m, cfg: cfg}
	c.margin = cfg.Margin
	if c.margin == 0 {
		c.margin = DefaultMargin
	}
	c.edits = cfg.MaxEdits
	if c.edits <= 0 || c.edits > 2 {
		c.edits = 2
	}
	c.ix = indexFor(lex)
	c.total = float64(lex.Total()) + 1
	if c.coll != nil {
		c.total += float64(c.coll.Total())
	}
	c.pool.New = func() any { return &scratch{seen: make(map[uint32]struct{})} }
	return c
}

type scratch struct {
	obs   observed
	crs   []rune
	rs    []rune
	buf   []float64
	hs    []uint64
	ids   []uint32
	seen  map[uint32]struct{}
	seenV variantSet
	lm    []neighbour // candidates with their context scores
	page  float64     // added to every margin on this page (pagePrior)
	cands []string
	logp  map[string]float64 // expansions of a known word: the confusion's log probability
	found []string
	front []frontier
	arena []byte
	vbuf  []byte
	qbuf  []byte
	top   []frontier
	pre   []uint64 // polyHash of each prefix of a word being expanded
	suf   []uint64 // polyHash of each suffix
	pow   []uint64 // powers of polyBase
}

// edit replaces tokens [i, i+n) by words.
type edit struct {
	i, n  int
	words []string // replacement tokens, punctuation included
	score float64
}

// CorrectText corrects a page of plain text and returns the corrected text
// and the changes made, in page order. White space is kept except where a
// hyphenated or split word is joined.
func (c *Corrector) CorrectText(text string) (string, []Change) {
	toks := tokenize(text)
	eds := c.run(toks)
	if len(eds) == 0 {
		return text, nil
	}
	var b strings.Builder
	b.Grow(len(text) + 16)
	changes := make([]Change, 0, len(eds))
	pos := 0
	for _, e := range eds {
		first, last := toks[e.i], toks[e.i+e.n-1]
		start, end := first.start, last.end
		repl := strings.Join(e.words, " ")
		if len(e.words) == 0 {
			start, end = strayExtent(text, pos, start, end, !last.lineEnd && e.i+e.n < len(toks))
		}
		if e.n == 2 && first.lineEnd {
			// A hyphenated word joined across a line end: the line break
			// moves after the joined word.
			if !last.lineEnd && e.i+e.n < len(toks) {
				end = toks[e.i+e.n].start
				repl += "\n"
			}
		}
		b.WriteString(text[pos:start])
		b.WriteString(repl)
		pos = end
		changes = append(changes, Change{Line: first.line, Column: first.col,
			Before: text[first.start:last.end], After: strings.Join(e.words, " "), Score: round3(e.score)})
	}
	b.WriteString(text[pos:])
	return b.String(), changes
}

// strayExtent widens the bytes [start, end) of a deleted stray to take
// white space with it, not reaching before pos: a stray alone on its line
// takes the whole line with its line break (no empty line is left, which
// could read as a paragraph break); otherwise the space after it when a
// word follows on its line (more), else the space before it.
func strayExtent(text string, pos, start, end int, more bool) (int, int) {
	isBlank := func(b byte) bool { return b == ' ' || b == '\t' || b == '\r' }
	ls := start
	for ls > pos && isBlank(text[ls-1]) {
		ls--
	}
	le := end
	for le < len(text) && isBlank(text[le]) {
		le++
	}
	if (ls == 0 || ls > pos && text[ls-1] == '\n') && le < len(text) && text[le] == '\n' {
		return ls, le + 1 // alone on its line
	}
	if more {
		return start, le
	}
	return ls, end
}

func round3(v float64) float64 { return math.Round(v*1000) / 1000 }

// CorrectRecord corrects a page record, using the engine's word
// confidences, and returns a new Record (rec is not modified) with the
// changes in page order. A changed word keeps its box and gets the engine's
// reading appended to Alt; a joined word takes over its partner's box
// (united on one line, its own across a line end) and a split word's box
// is divided in proportion to the characters. Lines and columns refer to
// rec.Text().
func (c *Corrector) CorrectRecord(rec *ocr.Record) (*ocr.Record, []Change) {
	out := *rec
	out.Words = append([]ocr.Word(nil), rec.Words...)
	for i := range out.Words {
		out.Words[i].Alt = append([]string(nil), rec.Words[i].Alt...)
	}
	if rec.TimingsMS != nil {
		out.TimingsMS = make(map[string]float64, len(rec.TimingsMS))
		for k, v := range rec.TimingsMS {
			out.TimingsMS[k] = v
		}
	}
	toks := recordTokens(rec)
	eds := c.run(toks)
	if len(eds) == 0 {
		return &out, nil
	}
	changes := make([]Change, 0, len(eds))
	words := make([]ocr.Word, 0, len(out.Words)+4)
	next := 0
	pieceWord, shift := -1, 0 // the word whose pieces are being edited, and how far its text has moved
	for _, e := range eds {
		first, last := toks[e.i], toks[e.i+e.n-1]
		if first.piece {
			// A part of a dash-joined word ("tbe—the"): its bytes are
			// replaced inside the word, which keeps its box.
			before := rec.Words[first.word].Text[first.start:first.end]
			after := strings.Join(e.words, " ")
			if pieceWord != first.word {
				words = append(words, out.Words[next:first.word]...)
				w := out.Words[first.word]
				w.Alt = append(w.Alt, w.Text)
				words = append(words, w)
				pieceWord, shift = first.word, 0
			}
			w := &words[len(words)-1]
			w.Text = w.Text[:first.start+shift] + after + w.Text[first.end+shift:]
			shift += len(after) - (first.end - first.start)
			next = first.word + 1
			changes = append(changes, Change{Line: first.line, Column: first.col, Before: before, After: after, Score: round3(e.score)})
			continue
		}
		words = append(words, out.Words[next:first.word]...)
		before := rec.Words[first.word].Text
		if e.n == 2 {
			before += " " + rec.Words[last.word].Text
		}
		w := out.Words[first.word]
		switch {
		case len(e.words) == 0:
			// A stray deleted: the word goes; changes.jsonl keeps it.
		case e.n == 1 && len(e.words) == 1:
			w.Alt = append(w.Alt, w.Text)
			w.Text = e.words[0]
			words = append(words, w)
		case e.n == 1 && len(e.words) == 2:
			w1, w2 := w, w
			total := float64(runeLen(e.words[0]) + runeLen(e.words[1]) + 1)
			w1.Box.W = int(math.Round(float64(w.Box.W) * float64(runeLen(e.words[0])) / total))
			w2.Box.X = w.Box.X + int(math.Round(float64(w.Box.W)*float64(runeLen(e.words[0])+1)/total))
			w2.Box.W = w.Box.X + w.Box.W - w2.Box.X
			w1.Alt = append(w1.Alt, w.Text)
			w2.Alt = nil
			w1.Text, w2.Text = e.words[0], e.words[1]
			words = append(words, w1, w2)
		default: // two words joined into one
			w2 := out.Words[last.word]
			if w2.Line == w.Line && w2.Block == w.Block {
				x0, y0 := min(w.Box.X, w2.Box.X), min(w.Box.Y, w2.Box.Y)
				x1, y1 := max(w.Box.X+w.Box.W, w2.Box.X+w2.Box.W), max(w.Box.Y+w.Box.H, w2.Box.Y+w2.Box.H)
				w.Box = ocr.Box{X: x0, Y: y0, W: x1 - x0, H: y1 - y0}
			}
			w.Conf = min(w.Conf, w2.Conf)
			w.Alt = append(w.Alt, w.Text+" "+w2.Text)
			w.Text = e.words[0]
			words = append(words, w)
		}
		next = last.word + 1
		changes = append(changes, Change{Line: first.line, Column: first.col, Before: before,
			After: strings.Join(e.words, " "), Score: round3(e.score)})
	}
	words = append(words, out.Words[next:]...)
	out.Words = words
	return &out, changes
}

// recordTokens makes one token per word, placed as in rec.Text().
func recordTokens(rec *ocr.Record) []token {
	toks := make([]token, 0, len(rec.Words))
	line, col := 1, 1
	for i, w := range rec.Words {
		if i > 0 {
			prev := rec.Words[i-1]
			switch {
			case w.Block != prev.Block || w.Par != prev.Par:
				line += 2
				col = 1
				toks[len(toks)-1].lineEnd = true
			case w.Line != prev.Line:
				line++
				col = 1
				toks[len(toks)-1].lineEnd = true
			default:
				col++
			}
		}
		ps := dashPieces(w.Text)
		for k, p := range ps {
			e := len(w.Text)
			if k+1 < len(ps) {
				e = ps[k+1]
			}
			t := token{line: line, col: col + utf8.RuneCountInString(w.Text[:p]), conf: w.Conf, word: i}
			if len(ps) > 1 {
				t.piece, t.start, t.end = true, p, e
			}
			t.lead, t.core, t.trail = splitToken(w.Text[p:e])
			toks = append(toks, t)
		}
		col += runeLen(w.Text)
	}
	if len(toks) > 0 {
		toks[len(toks)-1].lineEnd = true
	}
	return toks
}

// run decides the edits for a page, left to right; a corrected word is the
// left context of the next.
func (c *Corrector) run(toks []token) []edit {
	s := c.pool.Get().(*scratch)
	defer c.pool.Put(s)
	var eds []edit
	s.page = c.pagePrior(toks)
	prev := "" // lower-case left context; "" at a sentence or clause break
	for i := 0; i < len(toks); i++ {
		t := &toks[i]
		var nt *token
		if i+1 < len(toks) {
			nt = &toks[i+1]
		}
		if t.core == "" {
			if e, ok := c.mark(s, toks, i); ok {
				// A stray deleted: the words on either side are
				// neighbours again, so prev stays.
				e.i = i
				eds = append(eds, e)
				continue
			}
			if e, ok := c.glyphs(t); ok {
				e.i = i
				eds = append(eds, e)
			}
			prev = ""
			continue
		}
		if t.piece {
			// Parts of a dash-joined record word are corrected one by one,
			// never joined, split or deleted (their word keeps one box).
			e, ok := c.word(s, t, prev, "")
			if ok && len(e.words) == 1 {
				e.i = i
				c.mapEdit(&e)
				eds = append(eds, e)
				_, core, _ := splitToken(e.words[0])
				prev = c.contextAfter(lookupForm(core), t.trail)
				continue
			}
			prev = c.contextAfter(lookupForm(t.core), t.trail)
			continue
		}
		if e, ok := c.tryJoin(s, toks, i, prev); ok {
			c.mapEdit(&e)
			eds = append(eds, e)
			prev = c.contextAfter(lookupForm(e.words[0]), toks[i+1].trail)
			i++
			continue
		}
		next := ""
		if nt != nil && breaksContext(t.trail, nt.lead) == false {
			next = lookupForm(nt.core)
		}
		e, ok := c.word(s, t, prev, next)
		if ok {
			e.i = i
			c.mapEdit(&e)
			eds = append(eds, e)
			_, core, _ := splitToken(e.words[len(e.words)-1])
			prev = c.contextAfter(lookupForm(core), t.trail)
			continue
		}
		if e, ok := c.glyphs(t); ok {
			e.i = i
			eds = append(eds, e)
		}
		prev = c.contextAfter(lookupForm(t.core), t.trail)
	}
	return eds
}

// mark decides whether to delete a token with no letter or digit as a
// stray: the model's log odds that the engine read such a token where the
// page has none must clear the margin for the token's confidence.
func (c *Corrector) mark(s *scratch, toks []token, i int) (edit, bool) {
	t := &toks[i]
	if c.cfg.KeepMarks || !isMark(t.lead) {
		return edit{}, false
	}
	if i > 0 && toks[i-1].lead == t.lead && toks[i-1].core == "" || i+1 < len(toks) && toks[i+1].lead == t.lead && toks[i+1].core == "" {
		// A row of the same mark (". . .", leaders, a rule) is set so.
		return edit{}, false
	}
	if runningMark(t.lead) && (t.conf < 0 || t.conf >= runningConf) {
		// A dash or an ampersand, unless the engine hardly saw it, may
		// well be printed there.
		return edit{}, false
	}
	odds, ok := c.m.markOddsOf(t.lead)
	if !ok || odds <= c.marginFor(t.conf)+s.page {
		return edit{}, false
	}
	return edit{n: 1, score: odds}, true
}

// glyphs rewrites the punctuation glyphs of a token that the model maps.
func (c *Corrector) glyphs(t *token) (edit, bool) {
	if !c.cfg.MapGlyphs {
		return edit{}, false
	}
	w, odds, ok := c.m.mapGlyphs(t.lead+t.core+t.trail, c.margin)
	if !ok {
		return edit{}, false
	}
	return edit{n: 1, words: []string{w}, score: odds}, true
}

// mapEdit rewrites the glyphs of an edit's words that the model maps.
func (c *Corrector) mapEdit(e *edit) {
	if !c.cfg.MapGlyphs {
		return
	}
	for k, w := range e.words {
		if m, _, ok := c.m.mapGlyphs(w, c.margin); ok {
			e.words[k] = m
		}
	}
}

// contextAfter returns the left context a word leaves for the next one.
func (c *Corrector) contextAfter(w, trail string) string {
	if w == "" || breaksContext(trail, "") {
		return ""
	}
	return w
}

// breaksContext reports whether punctuation between two words cuts the
// bigram context (anything but an apostrophe or a closing quote).
func breaksContext(trail, lead string) bool {
	return strings.TrimRight(trail, "'’\"”") != "" || strings.TrimLeft(lead, "'‘\"“") != ""
}

// count returns the unigram count of w over lexicon and collection, at
// least listedFloor for a word the lexicon lists.
func (c *Corrector) count(w string) float64 {
	n := float64(c.lex.Count(w))
	if c.coll != nil {
		n += float64(c.coll.Count(w))
	}
	if n < listedFloor && c.lex.Has(w) {
		// A listed word without a count (a word-list entry never met in
		// the counted texts) is rare, not impossible: it scores like a
		// word counted once.
		n = listedFloor
	}
	return n
}

func (c *Corrector) bigram(a, b string) float64 {
	var n float64
	if c.ix.pairs.mayHave(lexicon.Key(a), lexicon.Key(b)) {
		n = float64(c.lex.Bigram(a, b))
	}
	if c.coll != nil {
		n += float64(c.coll.Bigram(a, b))
	}
	return n
}

// logUni returns log P(w) with add-one-half smoothing over lexicon and
// collection counts.
func (c *Corrector) logUni(w string) float64 {
	return math.Log((c.count(w) + 0.5) / c.total) // as in contextScorer.score
}

// logCond is the stupid-backoff score of w after p (Brants, Popat, Xu,
// Och and Dean 2007, "Large language models in machine translation"):
// the bigram relative frequency when the pair was seen, else 0.4 times the
// unigram probability. p == "" means no left context.
func (c *Corrector) logCond(p, w string) float64 {
	if p != "" {
		if nb := c.bigram(p, w); nb > 0 {
			if np := c.count(p); np >= nb {
				return math.Log(nb / np)
			}
		}
		return logBackoff + c.logUni(w)
	}
	return c.logUni(w)
}

// logBackoff is log(backoff).
var logBackoff = math.Log(backoff)

// contextScorer scores many candidates between the same neighbours: what
// depends on the neighbours alone (the left word's count, the backed-off
// score of the right word) is looked up once, and each candidate's count
// at most once. score(w) equals logContext(prev, w, next) bit for bit.
type contextScorer struct {
	c          *Corrector
	prev, next string
	prevN      float64 // count(prev)
	nextBack   float64 // log(backoff) + logUni(next)
}

func (c *Corrector) contextFor(prev, next string) contextScorer {
	x := contextScorer{c: c, prev: prev, next: next}
	if prev != "" {
		x.prevN = c.count(prev)
	}
	if next != "" {
		x.nextBack = logBackoff + c.logUni(next)
	}
	return x
}

func (x *contextScorer) score(w string) float64 {
	c := x.c
	cw, have := 0.0, false
	var v float64
	if x.prev != "" {
		if nb := c.bigram(x.prev, w); nb > 0 && x.prevN >= nb {
			v = math.Log(nb / x.prevN)
		} else {
			cw, have = c.count(w), true
			v = logBackoff + math.Log((cw+0.5)/c.total)
		}
	} else {
		cw, have = c.count(w), true
		v = math.Log((cw + 0.5) / c.total)
	}
	if x.next != "" {
		if nb := c.bigram(w, x.next); nb > 0 {
			if !have {
				cw = c.count(w)
			}
			if cw >= nb {
				return v + math.Log(nb/cw)
			}
		}
		v += x.nextBack
	}
	return v
}

// logContext scores w between prev and next.
func (c *Corrector) logContext(prev, w, next string) float64 {
	v := c.logCond(prev, w)
	if next != "" {
		v += c.logCond(w, next)
	}
	return v
}

func (c *Corrector) known(w string) bool {
	if c.lex.Has(w) {
		return true
	}
	if strings.HasSuffix(w, "'s") && c.lex.Has(w[:len(w)-2]) {
		return true
	}
	if strings.Contains(w, "-") {
		for _, p := range strings.Split(w, "-") {
			if p != "" && !c.lex.Has(p) {
				return false
			}
		}
		return true
	}
	return false
}

// pagePrior returns what a page adds to every margin: the log of how much
// less often than on a typical training page a word is misread there,
// judged by the share of its words the lexicon lacks. On a page where
// nearly every word is known, an unknown word is more likely a rare word
// than an error, and the prior odds of an error fall with the page's error
// rate (the error model's probabilities are averages over the training
// pages).
func (c *Corrector) pagePrior(toks []token) float64 {
	n, oov := 0, 0
	for i := range toks {
		t := &toks[i]
		if runeLen(t.core) < 2 {
			continue
		}
		q := lookupForm(t.core)
		if !plainWord(q) {
			continue
		}
		n++
		if !c.known(q) {
			oov++
		}
	}
	if n < pageMinWords {
		return 0
	}
	share := math.Max(float64(oov)/float64(n), pageFloor)
	return math.Max(0, math.Log(pageRef/share))
}

// marginFor returns the margin a token must clear, from its confidence.
func (c *Corrector) marginFor(conf float64) float64 {
	if conf < 0 {
		return c.margin + textMargin
	}
	p := math.Min(math.Max(conf, 0.02), 0.99)
	return math.Max(c.margin+confWeight*(math.Log(p/(1-p))-confCentreLogit), c.margin/2)
}

// word decides whether to change one token.
func (c *Corrector) word(s *scratch, t *token, prev, next string) (edit, bool) {
	if runeLen(t.core) < 2 {
		return edit{}, false
	}
	q := lookupForm(t.core)
	known := c.known(q)
	raw := t.lead + t.core + t.trail
	if protected(raw, t.core, known) || strings.HasPrefix(t.trail, "'") || strings.HasPrefix(t.trail, "’") ||
		strings.HasSuffix(t.lead, "'") || strings.HasSuffix(t.lead, "’") {
		// An apostrophe against the word marks an elision ("tellin'",
		// "'em", "'gainst") or a plural possessive: the word is as the
		// printer set it.
		return edit{}, false
	}
	margin := c.marginFor(t.conf) + s.page
	pattern := casePattern(t.core)
	upper := startsUpper(t.core)
	if known {
		if t.conf >= sureConf {
			return edit{}, false
		}
		margin += realWordMargin
	} else if upper {
		if t.conf >= nameConf {
			return edit{}, false
		}
		if t.conf < 0 {
			margin += nameMargin
		}
	}
	strict := !known && !upper && t.conf >= strictConf
	keep := c.m.logIdentity(q) + c.logContext(prev, q, next)
	if !known {
		keep -= oovPenalty
	}
	// Every candidate scores at most its channel probability (the context
	// probability is at most 1), and no channel probability exceeds that
	// of the likeliest edit that fits the token: frequent words stop here.
	c.m.prepare(&s.obs, q)
	if keep+margin >= max(s.obs.bound, c.m.spaceDel) {
		return edit{}, false
	}
	best, bestScore := "", math.Inf(-1)
	ctx := c.contextFor(prev, next)
	// scoreAll scores words likeliest-in-context first: once a word's
	// context score plus the best channel score any candidate can have
	// falls below the best so far, none of the rest can win.
	scoreAll := func(words []string) {
		s.lm = s.lm[:0]
		for _, w := range words {
			if w != q {
				s.lm = append(s.lm, neighbour{word: w, logp: ctx.score(w)})
			}
		}
		slices.SortFunc(s.lm, func(a, b neighbour) int {
			if a.logp != b.logp {
				return cmp.Compare(b.logp, a.logp)
			}
			return strings.Compare(a.word, b.word)
		})
		for _, x := range s.lm {
			if x.logp+s.obs.bound <= max(bestScore, keep+margin) {
				break
			}
			var ch float64
			ch, s.buf = c.m.logChannel(&s.obs, x.word, &s.crs, s.buf, keep+margin-x.logp)
			if v := ch + x.logp; v > bestScore || (v == bestScore && x.word < best) {
				best, bestScore = x.word, v
			}
		}
	}
	switch {
	case known:
		// The channel score of each neighbour is remembered with it (it
		// does not depend on the context), so only neighbours that could
		// still win cost a context score.
		for _, x := range c.realWordNeighbours(s, q) {
			if x.word != q && x.logp > keep+margin && x.ch > keep+margin {
				if v := x.ch + ctx.score(x.word); v > bestScore || (v == bestScore && x.word < best) {
					best, bestScore = x.word, v
				}
			}
		}
	case strict:
		scoreAll(c.expansions(s, q, false, keep+margin, strictStepLogP))
	case s.obs.n() >= longWord:
		// The search finds every word within two edits, single learned
		// confusions included; undoing confusions only adds words further
		// away, so it runs only when the search found no winner.
		s.cands = s.cands[:0]
		for _, id := range c.search(s, q) {
			s.cands = append(s.cands, c.ix.words[id])
		}
		scoreAll(s.cands)
		if bestScore-keep <= margin {
			scoreAll(c.expansions(s, q, false, keep+margin, minExpandLogP))
		}
	default:
		// Short tokens are searched within one edit only: undo learned
		// confusions first ("rnan" → "man"), and search when that gave no
		// clear winner.
		scoreAll(c.expansions(s, q, false, keep+margin, minExpandLogP))
		if bestScore-keep <= margin+clearWin {
			s.cands = s.cands[:0]
			for _, id := range c.search(s, q) {
				s.cands = append(s.cands, c.ix.words[id])
			}
			scoreAll(s.cands)
		}
	}
	var split []string
	if !known && !c.cfg.KeepSpacing && plainWord(q) {
		if w1, w2, v, ok := c.bestSplit(s, q, prev, next); ok && v > bestScore {
			best, bestScore, split = "", v, []string{w1, w2}
		}
	}
	delta := bestScore - keep
	if delta <= margin {
		return edit{}, false
	}
	if split != nil {
		return edit{n: 1, words: []string{t.lead + inPageForm(t.core, applyCase(split[0], pattern, upper)), inPageForm(t.core, applyCase(split[1], caseLower, false)) + t.trail}, score: delta}, true
	}
	trail := t.trail
	if (strings.HasPrefix(trail, "!") || strings.HasPrefix(trail, "|")) && len(best) > len(q) && strings.HasPrefix(best, q) {
		// "annua!" → "annual": the engine often reads a final l, t or i
		// as "!" or "|"; when the correction restores letters at the end,
		// the mark was one of them.
		trail = trail[1:]
	}
	return edit{n: 1, words: []string{t.lead + inPageForm(t.core, applyCase(best, pattern, upper)) + trail}, score: delta}, true
}

// identity is log P(s | s) with s kept as read.
func (o *observed) identity(m *Model) float64 {
	var v float64
	for _, r := range o.runes {
		v += m.keepLog(r)
	}
	return v
}

// search returns lexicon words within the edit distance allowed for q.
func (c *Corrector) search(s *scratch, q string) []uint32 {
	s.rs = s.rs[:0]
	for _, r := range q {
		s.rs = append(s.rs, r)
	}
	depth := 1
	if len(s.rs) >= longWord {
		depth = c.edits
	}
	s.ids = s.ids[:0]
	s.hs, s.ids = c.ix.lookup(s.rs, depth, s.hs, s.ids, s.seen)
	return s.ids
}

// expansions returns the lexicon words reached from q by undoing one or two
// learned confusions (To→From) whose probabilities together exceed floor,
// sorted. For a known q only single confusions are tried. Variants are
// built in scratch buffers and looked up without allocating.
func (c *Corrector) expansions(s *scratch, q string, known bool, floor, minStep float64) []string {
	floor = max(floor, minExpand2LogP)
	s.seenV.reset()
	if known {
		if s.logp == nil {
			s.logp = make(map[string]float64)
		}
		clear(s.logp)
	}
	found := s.found[:0]
	s.arena, s.front = s.arena[:0], s.front[:0]
	// level makes the variants of w by undoing one confusion. Each
	// variant's hash is composed from w's prefix and suffix hashes and the
	// confusion's own, so a variant's bytes are built only when it may be
	// a word or must be kept for the second level.
	level := func(w []byte, acc float64, first bool) {
		n := len(w)
		s.pre = slices.Grow(s.pre[:0], n+1)[:n+1]
		s.suf = slices.Grow(s.suf[:0], n+1)[:n+1]
		s.pow = slices.Grow(s.pow[:0], n+1)[:n+1]
		s.pre[0], s.suf[n], s.pow[0] = 0, 0, 1
		for k := 0; k < n; k++ {
			s.pre[k+1] = s.pre[k]*polyBase + uint64(w[k])
			s.pow[k+1] = s.pow[k] * polyBase
		}
		for k := n - 1; k >= 0; k-- {
			s.suf[k] = uint64(w[k])*s.pow[n-1-k] + s.suf[k+1]
		}
		for k := 0; k < n; k++ {
			if w[k]&0xc0 == 0x80 {
				continue // inside a multi-byte rune
			}
			for i := range c.m.expFirst[w[k]] {
				x := &c.m.expFirst[w[k]][i]
				if acc+x.logp <= floor || x.logp < minStep {
					break // sorted, most likely first
				}
				if !hasPrefix(w[k:], x.to) {
					continue
				}
				if s.seenV.full() {
					// Every later variant would be refused: stop.
					return
				}
				rest := n - k - len(x.to)
				ph := (s.pre[k]*x.fromPow+x.fromH)*s.pow[rest] + s.suf[k+len(x.to)]
				h := polyFinish(ph, k+len(x.from)+rest)
				if !s.seenV.add(h) {
					continue
				}
				may := c.ix.mayHave(h)
				if !may && !first {
					continue
				}
				v := append(append(append(s.vbuf[:0], w[:k]...), x.from...), w[k+len(x.to):]...)
				s.vbuf = v
				if may {
					if id, ok := c.ix.id[string(v)]; ok {
						found = append(found, c.ix.words[id])
						if known {
							s.logp[c.ix.words[id]] = acc + x.logp
						}
						continue
					}
				}
				if first {
					s.front = append(s.front, frontier{off: len(s.arena), n: len(v), logp: acc + x.logp})
					s.arena = append(s.arena, v...)
				}
			}
		}
	}
	s.qbuf = append(s.qbuf[:0], q...)
	level(s.qbuf, 0, true)
	if !known {
		// Second confusions only from the likeliest first ones: the first
		// maxFrontier of a stable sort by falling logp, picked by insertion
		// (a later variant goes after those at least as likely).
		top := s.top[:0]
		for _, f := range s.front {
			pos := len(top)
			for pos > 0 && top[pos-1].logp < f.logp {
				pos--
			}
			if pos == maxFrontier {
				continue
			}
			if len(top) < maxFrontier {
				top = append(top, frontier{})
			}
			copy(top[pos+1:], top[pos:])
			top[pos] = f
		}
		s.top = top
		for i, f := range top {
			if len(found) >= maxExpansions || i == maxFrontier || s.seenV.full() {
				break
			}
			if f.logp+c.m.expMax <= floor {
				// Sorted: no confusion lifts this or any later variant
				// above the floor.
				break
			}
			level(s.arena[f.off:f.off+f.n], f.logp, false)
		}
	}
	slices.Sort(found)
	s.found = found
	return found
}

// neighbour is a lexicon word one learned confusion away from another, with
// that confusion's log probability and the channel score log P(other |
// word); or, in scratch.lm, a candidate with its context score in logp.
type neighbour struct {
	word string
	logp float64
	ch   float64
}

// maxExpansions bounds candidates made through confusions per token.
const maxExpansions = 64

// maxCached bounds the words whose neighbours are remembered.
const maxCached = 200_000

// realWordNeighbours returns the lexicon words one likely confusion away
// from the lexicon word q with their channel scores, remembered per
// Corrector (words recur). s.obs must hold q.
func (c *Corrector) realWordNeighbours(s *scratch, q string) []neighbour {
	if v, ok := c.neigh.Load(q); ok {
		return v.([]neighbour)
	}
	var ns []neighbour
	for _, w := range c.expansions(s, q, true, minExpandLogP, minExpandLogP) {
		var ch float64
		ch, s.buf = c.m.logChannel(&s.obs, w, &s.crs, s.buf, math.Inf(-1))
		ns = append(ns, neighbour{w, s.logp[w], ch})
	}
	if c.cached.Add(1) <= maxCached {
		c.neigh.Store(q, ns)
	}
	return ns
}

// frontier is a one-confusion variant kept in scratch.arena.
type frontier struct {
	off, n int
	logp   float64
}

func hasPrefix(b []byte, p string) bool {
	if len(b) < len(p) {
		return false
	}
	for i := 0; i < len(p); i++ {
		if b[i] != p[i] {
			return false
		}
	}
	return true
}

// variantSet remembers the hashes of the variants made for one token, at
// most 2*maxExpansions, in a small open-addressing table cleared by
// generation rather than by zeroing.
type variantSet struct {
	slot [4 * maxExpansions]uint64 // hash|1, or 0 for empty
	gen  [4 * maxExpansions]uint32
	cur  uint32
	n    int
}

func (v *variantSet) reset() {
	v.cur++
	v.n = 0
	if v.cur == 0 { // wrapped: old generations would look current
		v.gen = [4 * maxExpansions]uint32{}
		v.cur = 1
	}
}

// full reports whether add refuses every hash not yet recorded.
func (v *variantSet) full() bool { return v.n >= 2*maxExpansions }

// add records h and reports whether it was new and there was room.
func (v *variantSet) add(h uint64) bool {
	h |= 1
	const mask = 4*maxExpansions - 1
	for i := uint32(h) & mask; ; i = (i + 1) & mask {
		if v.gen[i] != v.cur {
			if v.n >= 2*maxExpansions {
				return false
			}
			v.gen[i], v.slot[i] = v.cur, h
			v.n++
			return true
		}
		if v.slot[i] == h {
			return false
		}
	}
}

// polyBase is the base of polyHash, odd so that powers never vanish mod
// 2^64.
const polyBase = 0x100000001b3

// polyHash is the polynomial hash sum b[i]·polyBase^(len-1-i) mod 2^64,
// which composes: polyHash(a+b) = polyHash(a)·polyBase^len(b) +
// polyHash(b).
func polyHash(s string) uint64 {
	var h uint64
	for i := 0; i < len(s); i++ {
		h = h*polyBase + uint64(s[i])
	}
	return h
}

// polyPow returns polyBase^n mod 2^64.
func polyPow(n int) uint64 {
	p := uint64(1)
	for range n {
		p *= polyBase
	}
	return p
}

// polyFinish mixes a polynomial hash with the string's length (the
// splitmix64 finaliser, Steele, Lea and Flood 2014) so that every bit of
// the result depends on every byte: the Bloom filter and the seen-variant
// table index by low and middle bits.
func polyFinish(h uint64, n int) uint64 {
	z := h + uint64(n)*0x9e3779b97f4a7c15
	z = (z ^ z>>30) * 0xbf58476d1ce4e5b9
	z = (z ^ z>>27) * 0x94d049bb133111eb
	return z ^ z>>31
}

// wordHash is the hash the Bloom filter and the seen-variant table use.
func wordHash(s string) uint64 { return polyFinish(polyHash(s), len(s)) }

// bestSplit finds the likeliest split of q into two lexicon words.
func (c *Corrector) bestSplit(s *scratch, q, prev, next string) (string, string, float64, bool) {
	rs := []rune(q)
	if len(rs) < 3 {
		return "", "", 0, false
	}
	best := math.Inf(-1)
	var b1, b2 string
	base := s.obs.identity(c.m) + c.m.spaceDel
	// For valid UTF-8 the halves are substrings of q (no copies).
	valid := utf8.ValidString(q)
	off := 0
	for k := 1; k < len(rs); k++ {
		var w1, w2 string
		if valid {
			off += utf8.RuneLen(rs[k-1])
			w1, w2 = q[:off], q[off:]
		} else {
			w1, w2 = string(rs[:k]), string(rs[k:])
		}
		// A word with a count other than 0 is in the lexicon: Count alone
		// answers both "listed" and "counted".
		if !splitPart(w1) || !splitPart(w2) || c.lex.Count(w1) == 0 || c.lex.Count(w2) == 0 {
			continue
		}
		v := base + c.logCond(prev, w1) + c.logCond(w1, w2)
		if next != "" {
			v += c.logCond(w2, next)
		}
		if v > best {
			best, b1, b2 = v, w1, w2
		}
	}
	return b1, b2, best, b1 != ""
}

// splitPart reports whether w may be one half of a split word: two letters
// or more, or "a" or "i".
func splitPart(w string) bool {
	if w == "a" || w == "i" {
		return true
	}
	return runeLen(w) >= 2
}

// tryJoin considers joining toks[i] with toks[i+1]: a word hyphenated
// across a line end, or a word split by a stray space.
func (c *Corrector) tryJoin(s *scratch, toks []token, i int, prev string) (edit, bool) {
	if i+1 >= len(toks) {
		return edit{}, false
	}
	t, u := &toks[i], &toks[i+1]
	if t.core == "" || u.core == "" || u.lead != "" || u.piece {
		return edit{}, false
	}
	a, b := lookupForm(t.core), lookupForm(u.core)
	joined := a + b
	if !plainWord(joined) {
		return edit{}, false
	}
	next := ""
	if i+2 < len(toks) && !breaksContext(u.trail, toks[i+2].lead) {
		next = lookupForm(toks[i+2].core)
	}
	pattern, upper := casePattern(t.core), startsUpper(t.core)
	if t.lineEnd {
		// Hyphenated across a line end.
		if c.cfg.KeepHyphens || !isHyphen(t.trail) || !c.lex.Has(joined) || c.lex.Count(joined) == 0 {
			return edit{}, false
		}
		if hy := a + "-" + b; c.lex.Has(hy) && c.lex.Count(hy) >= c.lex.Count(joined) {
			return edit{}, false
		}
		keep := c.logContext(prev, a, "") + c.logContext("", b, next)
		return edit{i: i, n: 2, words: []string{t.lead + inPageForm(t.core+u.core, applyCase(joined, pattern, upper)) + u.trail},
			score: c.logContext(prev, joined, next) - keep}, true
	}
	if c.cfg.KeepSpacing || t.trail != "" {
		return edit{}, false
	}
	ka, kb := c.known(a), c.known(b)
	if (ka && kb) || !c.lex.Has(joined) || c.lex.Count(joined) == 0 {
		return edit{}, false
	}
	if protected(t.core, t.core, ka) || protected(u.core, u.core, kb) {
		return edit{}, false
	}
	if !ka && startsUpper(t.core) && t.conf >= nameConf || !kb && startsUpper(u.core) && u.conf >= nameConf {
		return edit{}, false
	}
	c.m.prepare(&s.obs, a)
	keep := s.obs.identity(c.m)
	c.m.prepare(&s.obs, b)
	keep += s.obs.identity(c.m)
	keep += c.logCond(prev, a) + c.logCond(a, b)
	if next != "" {
		keep += c.logCond(b, next)
	}
	c.m.prepare(&s.obs, joined)
	v := s.obs.identity(c.m) + c.m.spaceIns + c.logContext(prev, joined, next)
	conf := t.conf
	if u.conf >= 0 && (conf < 0 || u.conf < conf) {
		conf = u.conf
	}
	if v-keep <= c.marginFor(conf)+s.page {
		return edit{}, false
	}
	return edit{i: i, n: 2, words: []string{t.lead + inPageForm(t.core+u.core, applyCase(joined, pattern, upper)) + u.trail}, score: v - keep}, true
}

func isHyphen(trail string) bool {
	switch trail {
	case "-", "¬", "\u00ad", "‐":
		return true
	}
	return false
}

// CountText adds to coll the words of text that lex knows, and pairs of
// such words not parted by punctuation, for Config.Collection. Words lex
// does not know are not counted, so that an OCR error repeated across a
// collection gains no weight from its repeats.
func CountText(coll, lex *lexicon.Lexicon, text string) {
	prev := ""
	for _, t := range tokenize(text) {
		w := lookupForm(t.core)
		if w == "" || !lex.Has(w) {
			prev = ""
			continue
		}
		coll.Add(w, 1)
		if prev != "" && t.lead == "" {
			coll.AddBigram(prev, w, 1)
		}
		prev = w
		if breaksContext(t.trail, "") {
			prev = ""
		}
	}
}
