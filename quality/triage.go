package quality

import (
	"fmt"
	"math"

	"recto/lexicon"
	"recto/ocr"
)

// Decisions made by Triage.
const (
	DecisionAccept  = "accept"  // predicted CER at or below Thresholds.Correct: use as it is
	DecisionCorrect = "correct" // predicted CER above Correct, at or below Rescan: worth correcting
	DecisionRescan  = "rescan"  // predicted CER above Rescan: scan the page again
	DecisionBlank   = "blank"   // no text and no ink: nothing to do
	DecisionPicture = "picture" // ink but (almost) no text: an illustration, not an OCR failure
)

// Default thresholds on predicted CER.
const (
	DefaultRescan  = 0.10 // rescan above 10 % CER (common practice: text beyond this is costly to correct by hand)
	DefaultCorrect = 0.02 // correct above 2 % CER (common practice: 98 % character accuracy counts as good OCR)
)

// Picture-page limits (our own rule of thumb, not fitted: the synthetic
// corpus has no picture pages). A page record that is not blank, has fewer
// than PictureMaxTokens tokens of which fewer than PictureMaxWords are
// lexicon words, and a clean scan (noise under PictureMaxNoise grey levels,
// so that text on it would have been read) is taken for an illustration,
// unless its ink has the shape of text (ocr.InkShape.LooksLikeText, in
// records that carry it): then the reading failed.
// The same page on a noisy scan is taken for unreadable text and sent for
// rescanning: on the synthetic corpus, text pages the engine could not
// read had noise of 18 grey levels and more, clean pages about 6 to 10.
const (
	PictureMaxTokens = 20
	PictureMaxWords  = 3
	PictureMaxNoise  = 15.0
)

// NearBlankMaxChars: a clean scan (noise under PictureMaxNoise) on which
// fewer characters than this were recognised (a page number, a stray
// mark) is decided blank rather than picture (our own rule of thumb).
const NearBlankMaxChars = 6

// Thresholds are the predicted-CER limits of the decisions, as fractions
// (0.10 = 10 %). The zero value means the defaults; a zero field means its
// default.
type Thresholds struct {
	Rescan  float64 // rescan when predicted CER > Rescan; 0 means DefaultRescan
	Correct float64 // correct when predicted CER > Correct; 0 means DefaultCorrect
}

func (t Thresholds) withDefaults() Thresholds {
	if t.Rescan == 0 {
		t.Rescan = DefaultRescan
	}
	if t.Correct == 0 {
		t.Correct = DefaultCorrect
	}
	return t
}

// Validate reports a threshold outside (0, 1] or Correct above Rescan.
func (t Thresholds) Validate() error {
	t = t.withDefaults()
	if !(t.Rescan > 0 && t.Rescan <= 1) || !(t.Correct > 0 && t.Correct <= 1) {
		return fmt.Errorf("quality: thresholds must lie in (0, 1], got rescan %v, correct %v", t.Rescan, t.Correct)
	}
	if t.Correct > t.Rescan {
		return fmt.Errorf("quality: correct threshold %v is above rescan threshold %v", t.Correct, t.Rescan)
	}
	return nil
}

// Verdict is Triage's judgement of one page.
type Verdict struct {
	PredictedCER float64  `json:"predicted_cer"` // in [0, 1]; 0 for blank pages
	Decision     string   `json:"decision"`      // accept, correct, rescan, blank or picture
	Reasons      []string `json:"reasons"`       // plain-language evidence that explains the decision, in a fixed order (see reasons)
}

// TriageRecord triages a page record as a run does: Triage on the
// record's features (PageFeatures) with lexicon lex. Unlike PageFeatures,
// lex nil here means the page's language has no lexicon: the features are
// computed with lexicon.AcceptAll and marked NoLexicon, so the lexicon
// features carry no evidence.
func TriageRecord(rec *ocr.Record, lex *lexicon.Lexicon, m *Model, t Thresholds) Verdict {
	var f Features
	if lex == nil {
		f = PageFeatures(rec, lexicon.AcceptAll())
		f.NoLexicon = true
	} else {
		f = PageFeatures(rec, lex)
	}
	return Triage(f, m, t)
}

// Triage predicts a page's CER with m (nil means DefaultModel) and decides
// what to do with the page. Blank pages and pictures get their own
// decisions and are never sent for rescanning; a page record marked blank
// on a noisy scan (noise of PictureMaxNoise or more) is not taken for
// blank but sent for rescanning, as its text may have been lost. When the
// record carries the shape of the page's ink (Features.InkMeasured), a page
// whose ink looks like text but yields almost no words is a failed reading
// and is sent for rescanning, never decided picture or nearly blank; so is
// a page whose ink looks like text too small for the resolution
// (Features.SmallTextInk) and on which few words are read with confidence.
func Triage(f Features, m *Model, t Thresholds) Verdict {
	if m == nil {
		m = DefaultModel()
	}
	t = t.withDefaults()
	if f.Blank && f.FromRecord && f.Noise >= PictureMaxNoise {
		// The preparation found no ink, but on a scan this noisy text can
		// drown in the noise: a blank page cannot be told from a lost one.
		return Verdict{PredictedCER: 1, Decision: DecisionRescan,
			Reasons: []string{fmt.Sprintf("no ink found, but the scan is too noisy to call the page blank (noise %.0f grey levels): its text may be lost", f.Noise)}}
	}
	if f.Blank {
		r := []string{"page is blank"}
		if !f.FromRecord {
			r = []string{"page is blank: its text is empty (plain text only: a page whose text was lost looks the same)"}
		}
		return Verdict{Decision: DecisionBlank, Reasons: r}
	}
	words := int(math.Round(f.LexHit * float64(f.LexWords)))
	if f.NoLexicon {
		words = f.LexWords // every word of letters counts as a word
	}
	few := f.Tokens < PictureMaxTokens && words < PictureMaxWords
	if f.FromRecord && f.InkMeasured && f.TextLikeInk && few {
		// The image shows text; the reading did not: a failed reading
		// (resolution, preparation, a damaged scan), not a picture and
		// not a blank page.
		return Verdict{PredictedCER: 1, Decision: DecisionRescan,
			Reasons: []string{fmt.Sprintf("ink has the shape of text (%s of letter-sized marks) but %s read, %s in the lexicon: the reading failed",
				plural(f.InkLines, "line"), plural(f.Tokens, "word"), plural(words, "word"))}}
	}
	if f.FromRecord && f.InkMeasured && f.SmallTextInk && confidentTokens(f) < PictureMaxTokens {
		// Lines of marks too small for letters at this resolution, and
		// almost nothing read: print scanned at too low a resolution for
		// the engine, not a picture.
		return Verdict{PredictedCER: 1, Decision: DecisionRescan,
			Reasons: []string{fmt.Sprintf("ink has the shape of text too small to read (lines of marks 2-3 pixels tall) but %s read, %s in the lexicon: rescan at a higher resolution",
				plural(f.Tokens, "word"), plural(words, "word"))}}
	}
	if f.FromRecord && f.Chars > 0 && f.Chars < NearBlankMaxChars && f.Noise < PictureMaxNoise {
		return Verdict{Decision: DecisionBlank, Reasons: []string{fmt.Sprintf("page is nearly blank: %s recognised on a clean scan", plural(f.Chars, "character"))}}
	}
	if f.FromRecord && f.InkMeasured && !f.TextLikeInk && f.Noise < PictureMaxNoise {
		// The image shows no text: whatever the engine made of the
		// picture's texture (hatching, foliage, a signature) or of a
		// caption, a page with fewer than PictureMaxTokens words read
		// with confidence is a picture.
		if sure := confidentTokens(f); sure < PictureMaxTokens {
			r := fmt.Sprintf("ink that does not have the shape of text and almost no text read (%s, %s in the lexicon): a picture or ornament",
				plural(f.Tokens, "word"), plural(words, "word"))
			if !few {
				r = fmt.Sprintf("ink that does not have the shape of text and few words read with confidence (%d of %s at confidence %d or more, %s in the lexicon): a picture or ornament, perhaps with a caption",
					sure, plural(f.Tokens, "word"), int(LowConfidence*100), plural(words, "word"))
			}
			return Verdict{PredictedCER: m.PredictCER(f), Decision: DecisionPicture, Reasons: []string{r}}
		}
	}
	if f.FromRecord && !f.InkMeasured && few && f.Noise < PictureMaxNoise {
		r := fmt.Sprintf("clean scan with ink but almost no text (%s, %s in the lexicon): a picture or ornament",
			plural(f.Tokens, "word"), plural(words, "word"))
		return Verdict{PredictedCER: m.PredictCER(f), Decision: DecisionPicture, Reasons: []string{r}}
	}
	if f.Tokens == 0 {
		// Ink but nothing recognised, on a noisy scan: the model has no
		// evidence to weigh, and the page's text is lost.
		return Verdict{PredictedCER: 1, Decision: DecisionRescan,
			Reasons: []string{fmt.Sprintf("ink found but no text recognised (scan noise %.0f grey levels)", f.Noise)}}
	}
	v := Verdict{PredictedCER: m.PredictCER(f)}
	cut := m.rescanCut(&f, t.Rescan)
	switch {
	case v.PredictedCER > cut:
		v.Decision = DecisionRescan
	case v.PredictedCER > t.Correct:
		v.Decision = DecisionCorrect
	default:
		v.Decision = DecisionAccept
	}
	v.Reasons = reasons(f, m, v.Decision != DecisionAccept)
	if v.Decision == DecisionRescan && v.PredictedCER <= t.Rescan {
		v.Reasons = append(v.Reasons, fmt.Sprintf("estimate within the model's margin below the %s rescan threshold (rescan above %.1f%%)",
			pct(t.Rescan), 100*cut))
	}
	return v
}

// reasons turns the features into plain sentences that explain the
// decision, always in the same order: word confidence, lexicon, OCR
// garbage, characters that are not letters, stray marks at line ends,
// single characters. worse is true when the page was not accepted. A
// sentence is given only when its features moved the estimate the way of
// the decision: for a page not accepted, the evidence that raised it (and a
// defect sentence only when the defect is present); for an accepted page,
// the confidence and lexicon evidence that lowered it (an absent defect
// explains nothing: no "0% of lines start or end with a stray mark"). When
// no sentence qualifies, the confidence and lexicon sentences are given,
// the evidence staff can check by eye.
func reasons(f Features, m *Model, worse bool) []string {
	type reason struct {
		text    string
		weight  float64 // the features' share of the prediction (log units, relative to an average page)
		defect  bool    // a sentence about a defect (not the confidence or lexicon evidence)
		present bool    // the defect is present on the page
	}
	delta := map[string]float64{}
	for _, c := range m.Contributions(f) {
		delta[c.Term] += c.Delta
	}
	group := func(names ...string) float64 {
		s := 0.0
		for _, n := range names {
			s += delta[n]
		}
		return s
	}
	var rs []reason
	if f.FromRecord {
		rs = append(rs, reason{text: fmt.Sprintf("%s of words under confidence %d", pct(f.LowConf), int(LowConfidence*100)),
			weight: group("low_conf", "sqrt_low_conf", "mean_conf", "conf_x_miss", "conf_under_30", "conf_under_90", "char_doubt", "sqrt_suspect_doubt")})
	}
	lex := group("lex_miss", "sqrt_lex_miss", "lex_miss_chars", "suspect")
	if f.NoLexicon {
		rs = append(rs, reason{text: "no lexicon for the language: not used (share of words in the lexicon, unknown words among suspect words)", weight: lex})
	} else if f.LexWords > 0 {
		rs = append(rs, reason{text: fmt.Sprintf("%s of words in the lexicon", pct(f.LexHit)), weight: lex})
	} else {
		rs = append(rs, reason{text: "no words of letters to check against the lexicon", weight: lex})
	}
	rs = append(rs,
		reason{fmt.Sprintf("%s of words look like OCR garbage", pct(f.Garbage)), group("garbage", "sqrt_garbage"), true, f.Garbage > 0},
		reason{fmt.Sprintf("%s of characters are not letters", pct(1-f.Letters)), group("non_letter", "punct", "symbols", "digits"), true, f.Letters < 1},
		reason{fmt.Sprintf("%s of lines start or end with a stray mark (%s of words have no letter or digit)", pct(f.EdgeJunk), pct(f.Stray)),
			group("stray", "sqrt_stray", "edge_junk"), true, f.EdgeJunk > 0 || f.Stray > 0},
		reason{fmt.Sprintf("%s of words are single characters", pct(f.Short)), group("short"), true, f.Short > 0.15},
	)
	out := make([]string, 0, len(rs)+1)
	for _, r := range rs {
		switch {
		case r.defect && worse && r.present && r.weight > 0:
			out = append(out, r.text)
		case !r.defect && worse && r.weight > 0, !r.defect && !worse && r.weight <= 0:
			out = append(out, r.text)
		}
	}
	if len(out) == 0 {
		for _, r := range rs {
			if !r.defect {
				out = append(out, r.text)
			}
		}
	}
	if !f.FromRecord {
		out = append(out, "plain text only: no word confidences")
	}
	return out
}

// confidentTokens is the number of tokens read with confidence
// LowConfidence or more (from the share under it).
func confidentTokens(f Features) int {
	return int(math.Round(float64(f.Tokens) * (1 - f.LowConf)))
}

func pct(x float64) string { return fmt.Sprintf("%.0f%%", 100*x) }

func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}
