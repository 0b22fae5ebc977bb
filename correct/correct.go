package correct

import (
	"math"
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
	// Vocabulary optionally holds the collection's own vocabulary
	// (vocabulary.go): a change of a word it lists is not made but
	// reported with Blocked set. The lexicon given to New should hold
	// these words too (lexicon.Merge), so that they count as known.
	Vocabulary *lexicon.Lexicon
}

// Change is one correction.
type Change struct {
	Line   int     `json:"line"`   // 1-based line in the page text
	Column int     `json:"column"` // 1-based column, in runes
	Before string  `json:"before"`
	After  string  `json:"after"`
	Score  float64 `json:"score"` // natural-log odds of After over Before; above the margin
	// Blocked, when not empty, says why the change was not made
	// (BlockedVocabulary): the text keeps Before.
	Blocked string `json:"blocked,omitempty"`
}

// Corrector corrects OCR text with a lexicon and an error model. It is safe
// for concurrent use once New returns.
type Corrector struct {
	lex       *lexicon.Lexicon
	coll      *lexicon.Lexicon
	m         *Model
	cfg       Config
	margin    float64
	edits     int
	ix        *deleteIndex
	compounds bool    // the lexicon compounds (lexicon.Compounds)
	total     float64 // unigram total, lexicon and collection
	pool      sync.Pool
	neigh     sync.Map     // lexicon word -> []neighbour
	cached    atomic.Int64 // entries in neigh
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
	// rareConf is the confidence at or above which a lower-case word the
	// lexicon lacks is not questioned at all.
	rareConf = 0.96
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
	c.compounds = lex.Compounds()
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
	i, n    int
	words   []string // replacement tokens, punctuation included
	score   float64
	blocked bool // reported, not made (blockVocabulary)
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
		if e.blocked {
			changes = append(changes, Change{Line: first.line, Column: first.col, Before: text[first.start:last.end],
				After: strings.Join(e.words, " "), Score: round3(e.score), Blocked: BlockedVocabulary})
			continue
		}
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
		if first.piece && e.blocked {
			changes = append(changes, Change{Line: first.line, Column: first.col, Before: rec.Words[first.word].Text[first.start:first.end],
				After: strings.Join(e.words, " "), Score: round3(e.score), Blocked: BlockedVocabulary})
			continue
		}
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
		before := rec.Words[first.word].Text
		if e.n == 2 {
			before += " " + rec.Words[last.word].Text
		}
		if e.blocked {
			changes = append(changes, Change{Line: first.line, Column: first.col, Before: before,
				After: strings.Join(e.words, " "), Score: round3(e.score), Blocked: BlockedVocabulary})
			continue
		}
		words = append(words, out.Words[next:first.word]...)
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
		t.sentence = i == 0 || endsSentence(toks[i-1].trail) || toks[i-1].core == "" && endsSentence(toks[i-1].lead)
		var nt *token
		if i+1 < len(toks) {
			nt = &toks[i+1]
		}
		if t.core == "" {
			if e, ok := c.barWord(s, toks, i, prev); ok {
				e.i = i
				eds = append(eds, e)
				prev = c.contextAfter("i", e.words[0][strings.Index(e.words[0], "I")+1:])
				continue
			}
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
	c.blockVocabulary(toks, eds)
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
	if _, learned := c.m.markOdds[t.lead]; !learned && t.conf >= sureConf {
		// A mark the model never saw often enough to learn, read
		// clearly: the pool's odds are an average over specks, and a
		// mark the engine is sure of is printed more often than not
		// ("->", "-!-", "*;" on the Debian-font pages, all in the truth).
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
