// The context model: unigram and bigram scores over lexicon and collection
// counts, the page prior and the margin a token must clear.

package correct

import (
	"math"
	"strings"

	"recto/lexicon"
)

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
