package report

import (
	"bytes"
	"context"
	"fmt"
	"html/template"
	"math"
	"net/url"
	"path"
	"path/filepath"
	"sort"
	"strings"
	"unicode/utf8"

	"recto/ocr/par"
	"recto/quality"
)

// Chart geometry, in SVG user units (CSS pixels at 100 %).
const (
	chartW, chartH = 360.0, 180.0
	padL, padR     = 40.0, 10.0
	padT, padB     = 10.0, 30.0
	histBins       = 15   // bins of histStep, plus one overflow bin
	histStep       = 0.02 // CER per bin
	snippetRunes   = 160
	descPoints     = 40 // pages named in a scatter chart's text alternative; the rest are counted
)

// SampleHalfWidth is the half-width, as a CER fraction, to which the
// report says how many more transcribed pages would narrow a title's
// interval: ±1 point, the target the issue that asked for it names.
const SampleHalfWidth = 0.01

type barView struct {
	X, Y, W, H float64
	Class      string
	Tip        string
}

type tickView struct {
	X, Y  float64
	Label string
}

type pointView struct {
	X, Y float64
	Tip  string
}

type chartView struct {
	ID             string // element id of its title, for aria-labelledby
	Title          string // what it shows
	Desc           string // its numbers, as text: the chart's text alternative
	W, H           float64
	X0, Y0, X1, Y1 float64 // plot area corners: (X0, Y1) top-left, (X1, Y0) bottom-right
	Bars           []barView
	XTicks         []tickView
	YTicks         []tickView
	Points         []pointView
	Diag           bool
	Empty          string // message when there is nothing to draw
}

// rateCell is one rate of the titles table: its text and sort value.
type rateCell struct {
	Txt string
	V   float64
}

// rateRow is one measure of a title's rates table, before and after
// correction, each with its interval.
type rateRow struct {
	Name, Over    string // "CER", "characters"
	Before, After string
}

type titleView struct {
	Title
	Anchor    string
	Hist      chartView
	Scatter   chartView
	PredSort  float64
	BeforeTxt string // CER before, without interval (titles table)
	AfterTxt  string
	BeforeV   float64
	AfterV    float64
	Rates     []rateCell // WER, flex_cer and bag_wer before and after, in the order of rateHeads
	Rows      []rateRow  // CER, WER, flex CER, bag WER with intervals
	Decided   string     // "accept 3, correct 2, …"
	Truth     string     // "4 pages, 5,210 characters"
	Target    string     // sentence on --target-cer; "" when none was given
	Sample    string     // sentence on the pages still to transcribe for ±1 point
}

// rateHeads are the headings of the titles table's further rates.
var rateHeads = []string{"WER before", "WER after", "flex CER before", "flex CER after", "bag WER before", "bag WER after"}

type pageView struct {
	Page
	Key        float64
	KeyKind    string // "measured" or "predicted"
	Measured   string // measured CER after correction, "–" without ground truth
	MeasBefore string // measured CER before correction
	Predicted  string
	ImageURL   template.URL
	TextURL    template.URL
	ImageName  string // link text: the file's name
	TextName   string
	Thumb      template.URL // thumbnail, relative to the report; "" when none
}

type aboutRow struct {
	Name   string
	Value  string
	Code   string // a checksum or similar, set in monospace after Value
	Varies bool   // differs between runs with the same results (the times)
}

type htmlData struct {
	Name      string
	Partial   string
	About     []aboutRow
	Decisions []string
	RateHeads []string
	Total     titleView
	Titles    []titleView
	Worst     []pageView
	NoText    []pageView // blank and picture pages
	Failed    []pageView
	Warned    []pageView // pages with warnings
	Target    string     // the target CER, "" when none
	Half      string     // SampleHalfWidth in points, "1"
}

// HTML renders the self-contained report page without thumbnails (they
// live in the report folder: Write makes and shows them).
func HTML(s Summary, pages []Page, o Options) ([]byte, error) { return htmlIn("", s, pages, o) }

// htmlIn renders the report page for the report folder dir, where the
// thumbnails of the pages it lists are kept ("" for none).
func htmlIn(dir string, s Summary, pages []Page, o Options) ([]byte, error) {
	by := make(map[string][]Page)
	for _, p := range pages {
		by[p.Title] = append(by[p.Title], p)
	}
	d := htmlData{Name: Clean(o.Name), Partial: Clean(o.Partial), Decisions: Decisions, RateHeads: rateHeads,
		Half: fmt.Sprintf("%g", 100*SampleHalfWidth)}
	if d.Name == "" {
		d.Name = "Collection"
	}
	if o.TargetCER > 0 {
		d.Target = pct(o.TargetCER)
	}
	d.About = aboutRows(o.About, s.Total, d.Target)
	planned := plannedPages(pages)
	d.Total = makeTitleView(s.Total, pages, 0, o, -1)
	d.Total.Target, d.Total.Sample = "", ""
	for i, t := range s.Titles {
		n, ok := planned[t.Title]
		if !ok {
			n = -1
		}
		d.Titles = append(d.Titles, makeTitleView(t, by[t.Title], i+1, o, n))
	}
	worst := o.Worst
	if worst == 0 {
		worst = 25
	}
	var ok []pageView
	for _, p := range pages {
		v := makePageView(p)
		if len(v.Warnings) > 0 {
			d.Warned = append(d.Warned, v)
		}
		switch {
		case p.Failed:
			d.Failed = append(d.Failed, v)
		case p.Decision == "blank" || p.Decision == "picture":
			d.NoText = append(d.NoText, v)
		default:
			ok = append(ok, v)
		}
	}
	sort.SliceStable(ok, func(i, j int) bool {
		if ok[i].Key != ok[j].Key {
			return ok[i].Key > ok[j].Key
		}
		return ok[i].Rel < ok[j].Rel
	})
	if len(ok) > worst {
		ok = ok[:worst]
	}
	if o.Snippet != nil {
		for i := range ok {
			if ok[i].Snippet == "" {
				ok[i].Snippet = Clean(truncate(o.Snippet(ok[i].Page), snippetRunes))
			}
		}
	}
	d.Worst = ok
	if dir != "" {
		var listed []*pageView
		for _, list := range [][]pageView{d.Worst, d.NoText} {
			for i := range list {
				listed = append(listed, &list[i])
			}
		}
		// Each thumbnail decodes its page again: made on the one pool,
		// o.Jobs at once.
		par.Each(context.Background(), len(listed), o.Jobs, func(_, i int) {
			listed[i].Thumb = thumbnail(dir, listed[i].Page, o.Thumb)
		})
	}
	var buf bytes.Buffer
	if err := pageTmpl.Execute(&buf, d); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// aboutRows is the header block: how the figures were made.
func aboutRows(a About, total Title, target string) []aboutRow {
	unknown := "not recorded"
	or := func(s string) string {
		if s == "" {
			return unknown
		}
		return Clean(s)
	}
	var rows []aboutRow
	add := func(name, value, code string) { rows = append(rows, aboutRow{Name: name, Value: value, Code: code}) }
	add("Collection", or(a.Collection), "")
	when := unknown
	if !a.First.IsZero() {
		f, l := a.First.UTC(), a.Last.UTC()
		when = f.Format("2 January 2006, 15:04") + " UTC"
		switch {
		case l.Format("20060102") != f.Format("20060102"):
			when = f.Format("2 January 2006, 15:04") + " to " + l.Format("2 January 2006, 15:04") + " UTC"
		case l.Format("15:04") != f.Format("15:04"):
			when = f.Format("2 January 2006, 15:04") + "–" + l.Format("15:04") + " UTC"
		}
		when += " (first and last page recorded)"
	}
	add("Run", when, "")
	rows[len(rows)-1].Varies = true
	add("recto version", or(a.Recto), "")
	add("Engine", or(a.Engine), "")
	add("Languages", or(a.Lang), "")
	th := unknown
	if a.Correct > 0 || a.Rescan > 0 {
		th = fmt.Sprintf("correct when the predicted CER is above %s, rescan when above %s", pct(a.Correct), pct(a.Rescan))
		if a.RescanFactor > 0 && a.RescanFactor != 1 {
			th += fmt.Sprintf(" (the quality model lowers the rescan threshold to %s for pages read by the engine)", pct(a.RescanFactor*a.Rescan))
		}
	}
	add("Thresholds", th, "")
	add("Quality model", or(a.QualityModel), sumText(a.QualityModelSum))
	if len(a.Lexicons) == 0 {
		add("Lexicon", unknown, "")
	}
	for _, l := range a.Lexicons {
		add("Lexicon", or(l.Name), sumText(l.SHA256))
	}
	add("Normalisation for CER and WER", or(a.Normalisation), "")
	gt := "none: no page has ground truth"
	if total.CERBefore != nil {
		gt = fmt.Sprintf("%s of %s pages, %s reference characters, %s words", count(total.TruthPages), count(total.Pages),
			count(total.CERBefore.Units), count(wordsOf(total)))
	}
	add("Ground-truth sample", gt, "")
	if a.Interval != "" {
		add("Intervals", "95 %, "+Clean(a.Interval), "")
	}
	if target != "" {
		add("Target CER", target+" after correction, for each title (--target-cer)", "")
	}
	return rows
}

func wordsOf(t Title) int {
	if t.WERBefore == nil {
		return 0
	}
	return t.WERBefore.Units
}

func sumText(s string) string {
	if s == "" {
		return ""
	}
	return "SHA-256 " + Clean(s)
}

// count writes n with a comma between thousands: 12,345.
func count(n int) string {
	s := fmt.Sprint(n)
	if n < 0 {
		return s
	}
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// plannedPages returns, per title, the pages to transcribe for a 95 %
// interval of ±SampleHalfWidth as recto sample plans them
// (quality.PlanSample, from the predicted CER of the title's processed
// pages; see quality/sample.go for the rule and its source).
func plannedPages(pages []Page) map[string]int {
	var est []quality.PageEstimate
	for _, p := range pages {
		if !p.Failed && !math.IsNaN(p.PredictedCER) && p.PredictedCER >= 0 {
			est = append(est, quality.PageEstimate{Title: p.Title, Page: p.Rel, PredictedCER: p.PredictedCER})
		}
	}
	out := map[string]int{}
	plan, err := quality.PlanSample(est, quality.PlanOptions{HalfWidth: SampleHalfWidth})
	if err != nil {
		return out
	}
	for _, t := range plan.Titles {
		out[t.Title] = t.Planned
	}
	return out
}

func makePageView(p Page) pageView {
	p.Rel, p.Title, p.Page, p.Error = Clean(p.Rel), Clean(p.Title), Clean(p.Page), Clean(p.Error)
	reasons := make([]string, len(p.Reasons))
	for i, r := range p.Reasons {
		reasons[i] = Clean(r)
	}
	p.Reasons = reasons
	warnings := make([]string, len(p.Warnings))
	for i, w := range p.Warnings {
		warnings[i] = Clean(w)
	}
	p.Warnings = warnings
	p.Snippet = Clean(truncate(p.Snippet, snippetRunes))
	v := pageView{Page: p, Key: p.PredictedCER, KeyKind: "predicted", Measured: "–", MeasBefore: "–", Predicted: "–"}
	if !p.Failed {
		v.Predicted = pct(p.PredictedCER)
	}
	if before, after, ok := p.CER(); ok {
		v.Key, v.KeyKind = after, "measured"
		v.Measured, v.MeasBefore = pct(after), pct(before)
	}
	v.ImageURL, v.ImageName = fileURL(p.Image), fileName(p.Image)
	v.TextURL, v.TextName = fileURL(p.Text), fileName(p.Text)
	return v
}

// fileName is the last element of a link's path, as the link's text.
func fileName(p string) string {
	if p == "" {
		return ""
	}
	return Clean(path.Base(filepath.ToSlash(p)))
}

func truncate(s string, n int) string {
	if utf8.RuneCountInString(s) <= n {
		return s
	}
	i := 0
	for k := range s {
		if i == n {
			return s[:k] + "…"
		}
		i++
	}
	return s
}

// fileURL turns a file path into a link: relative paths stay relative (each
// segment percent-encoded), absolute paths become file:// URLs. The result
// is built only from escaped segments, so it is safe to mark as a URL.
func fileURL(path string) template.URL {
	if path == "" {
		return ""
	}
	segs := strings.Split(filepath.ToSlash(path), "/")
	for i, s := range segs {
		segs[i] = url.PathEscape(s) // the real bytes, percent-encoded: the link finds the file
	}
	joined := strings.Join(segs, "/")
	if filepath.IsAbs(path) {
		return template.URL("file://" + joined)
	}
	if !strings.HasPrefix(joined, "../") && !strings.HasPrefix(joined, "./") {
		joined = "./" + joined // a first segment with ':' must not read as a scheme
	}
	return template.URL(joined)
}

// makeTitleView prepares one title (i from 1) or, with i = 0, the whole
// collection; planned is the sampling plan's size for the title, -1 for
// none.
func makeTitleView(t Title, pages []Page, i int, o Options, planned int) titleView {
	t.Title = Clean(t.Title)
	v := titleView{Title: t, Anchor: fmt.Sprintf("t%d", i), PredSort: -1, BeforeV: -1, AfterV: -1}
	if t.MeanPredictedCER != nil {
		v.PredSort = *t.MeanPredictedCER
	}
	v.BeforeTxt, v.BeforeV = rateText(t.CERBefore)
	v.AfterTxt, v.AfterV = rateText(t.CERAfter)
	for _, m := range []*Measured{t.WERBefore, t.WERAfter, t.FlexBefore, t.FlexAfter, t.BagBefore, t.BagAfter} {
		var c rateCell
		c.Txt, c.V = rateText(m)
		v.Rates = append(v.Rates, c)
	}
	v.Rows = []rateRow{
		{"CER", "characters", intervalText(t.CERBefore), intervalText(t.CERAfter)},
		{"WER", "words", intervalText(t.WERBefore), intervalText(t.WERAfter)},
		{"flex CER", "characters", intervalText(t.FlexBefore), intervalText(t.FlexAfter)},
		{"bag WER", "words", intervalText(t.BagBefore), intervalText(t.BagAfter)},
	}
	var dec []string
	for _, d := range Decisions {
		if n := t.Decisions[d]; n > 0 {
			dec = append(dec, fmt.Sprintf("%s %d", d, n))
		}
	}
	if t.Failed > 0 {
		dec = append(dec, fmt.Sprintf("failed %d", t.Failed))
	}
	v.Decided = strings.Join(dec, ", ")
	if v.Decided == "" {
		v.Decided = "none"
	}
	v.Truth = "none"
	if t.CERBefore != nil {
		v.Truth = fmt.Sprintf("%s, %s characters, %s words", plural(t.TruthPages, "page", "pages"), count(t.CERBefore.Units), count(wordsOf(t)))
	}
	v.Target = targetSentence(t.CERAfter, o.TargetCER)
	v.Sample = sampleSentence(t, planned)
	v.Hist = histogram(pages, v.Anchor+"-hist")
	v.Scatter = scatter(pages, v.Anchor+"-scatter")
	return v
}

func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return count(n) + " " + many
}

func pct(x float64) string { return fmt.Sprintf("%.1f %%", 100*x) }

// rateText is a rate without its interval, for the titles table.
func rateText(m *Measured) (string, float64) {
	if m == nil {
		return "–", -1
	}
	return pct(m.Rate), m.Rate
}

// intervalText writes a rate with its interval: "2.3 % (95 % interval
// 1.1–4.0 %)"; "–" without a measure.
func intervalText(m *Measured) string {
	if m == nil {
		return "–"
	}
	s := pct(m.Rate)
	if m.Lo != nil && m.Hi != nil {
		s += fmt.Sprintf(" (95 %% interval %.1f–%.1f %%)", 100**m.Lo, 100**m.Hi)
	} else {
		s += " (no interval: too few pages)"
	}
	return s
}

// targetSentence says whether a title's CER after correction meets the
// declared target: met when the whole 95 % interval lies at or below it,
// missed when the whole interval lies above it, undecided otherwise.
func targetSentence(m *Measured, target float64) string {
	if target <= 0 {
		return ""
	}
	tg := pct(target)
	switch {
	case m == nil:
		return fmt.Sprintf("Target CER %s: no page of this title has ground truth, so it cannot be checked.", tg)
	case m.Lo == nil || m.Hi == nil:
		side := "below"
		if m.Rate > target {
			side = "above"
		}
		return fmt.Sprintf("Target CER %s: the measured CER after correction, %s, is %s it, but on too few pages for an interval; the target is neither confirmed nor ruled out.", tg, pct(m.Rate), side)
	case *m.Hi <= target:
		return fmt.Sprintf("Target CER %s: met. The whole 95 %% interval of the CER after correction (%.1f–%.1f %%) lies at or below it.", tg, 100**m.Lo, 100**m.Hi)
	case *m.Lo > target:
		return fmt.Sprintf("Target CER %s: not met. The whole 95 %% interval of the CER after correction (%.1f–%.1f %%) lies above it.", tg, 100**m.Lo, 100**m.Hi)
	}
	return fmt.Sprintf("Target CER %s: not yet decided. The 95 %% interval of the CER after correction (%.1f–%.1f %%) contains the target; more pages with ground truth would narrow it.", tg, 100**m.Lo, 100**m.Hi)
}

// sampleSentence says how many more transcribed pages would bring the
// title's CER to ±SampleHalfWidth at 95 %: the size of recto sample's
// plan (planned) less the pages with ground truth it has.
func sampleSentence(t Title, planned int) string {
	if planned < 0 {
		return ""
	}
	half := fmt.Sprintf("±%g point", 100*SampleHalfWidth)
	if m := t.CERAfter; m != nil && m.Lo != nil && m.Hi != nil && (*m.Hi-*m.Lo)/2 <= SampleHalfWidth {
		return fmt.Sprintf("The 95 %% interval of its CER after correction is ±%.2f points, within %s: no more pages need transcribing for that.", 50*(*m.Hi-*m.Lo), half)
	}
	if more := planned - t.TruthPages; more > 0 {
		return fmt.Sprintf("For a 95 %% interval of %s, the sampling plan of recto sample asks for %s with ground truth out of its %s; it has %d: transcribe about %s more, drawn at random within bands of predicted CER (recto sample --half-width %g chooses them).",
			half, plural(planned, "page", "pages"), plural(t.Pages, "page", "pages"), t.TruthPages, plural(more, "page", "pages"), 100*SampleHalfWidth)
	}
	return fmt.Sprintf("It has %s with ground truth, as many as the sampling plan of recto sample asks for a 95 %% interval of %s (%d), yet the interval is wider: its pages vary more than their predicted CER suggests, and more transcribed pages will narrow it.",
		plural(t.TruthPages, "page", "pages"), half, planned)
}

func plotArea(c *chartView) {
	c.W, c.H = chartW, chartH
	c.X0, c.X1 = padL, chartW-padR
	c.Y1, c.Y0 = padT, chartH-padB
}

// histogram draws the distribution of predicted CER (all processed pages)
// beside measured CER before correction (pages with ground truth).
func histogram(pages []Page, id string) chartView {
	c := chartView{ID: id, Title: "Pages by CER band: predicted CER of every processed page beside measured CER before correction of the pages with ground truth"}
	plotArea(&c)
	var pred, meas [histBins + 1]int
	n := 0
	for _, p := range pages {
		if p.Failed {
			continue
		}
		n++
		pred[bin(p.PredictedCER)]++
		if b, _, ok := p.CER(); ok {
			meas[bin(b)]++
		}
	}
	if n == 0 {
		c.Empty = "no processed pages"
		c.Desc = c.Empty + "."
		return c
	}
	top := 1
	for i := range pred {
		top = max(top, pred[i], meas[i])
	}
	bw := (c.X1 - c.X0) / float64(histBins+1)
	yOf := func(k int) float64 { return c.Y0 - (c.Y0-c.Y1)*float64(k)/float64(top) }
	var dp, dm []string
	for i := 0; i <= histBins; i++ {
		x := c.X0 + float64(i)*bw
		lo := float64(i) * histStep
		rng := fmt.Sprintf("%.0f–%.0f %%", 100*lo, 100*(lo+histStep))
		if i == histBins {
			rng = fmt.Sprintf("≥ %.0f %%", 100*lo)
		}
		if pred[i] > 0 {
			c.Bars = append(c.Bars, barView{X: x + 1, Y: yOf(pred[i]), W: bw/2 - 1, H: c.Y0 - yOf(pred[i]), Class: "pred",
				Tip: fmt.Sprintf("predicted CER %s: %d pages", rng, pred[i])})
			dp = append(dp, fmt.Sprintf("%s: %d", rng, pred[i]))
		}
		if meas[i] > 0 {
			c.Bars = append(c.Bars, barView{X: x + bw/2, Y: yOf(meas[i]), W: bw/2 - 1, H: c.Y0 - yOf(meas[i]), Class: "meas",
				Tip: fmt.Sprintf("measured CER %s: %d pages", rng, meas[i])})
			dm = append(dm, fmt.Sprintf("%s: %d", rng, meas[i]))
		}
	}
	c.Desc = "Pages by predicted CER, " + strings.Join(dp, "; ") + "."
	if len(dm) > 0 {
		c.Desc += " Pages by measured CER before correction, " + strings.Join(dm, "; ") + "."
	} else {
		c.Desc += " No page has ground truth."
	}
	for i := 0; i <= histBins; i += 5 {
		label := fmt.Sprintf("%.0f", 100*float64(i)*histStep)
		if i == histBins {
			label = "≥" + label
		}
		c.XTicks = append(c.XTicks, tickView{X: c.X0 + float64(i)*bw, Y: c.Y0 + 14, Label: label})
	}
	c.YTicks = []tickView{{X: c.X0 - 4, Y: c.Y0 + 4, Label: "0"}, {X: c.X0 - 4, Y: c.Y1 + 4, Label: fmt.Sprint(top)}}
	return c
}

func bin(cer float64) int {
	if math.IsNaN(cer) || cer < 0 {
		return 0
	}
	b := int(cer / histStep)
	return min(b, histBins)
}

// scatter plots predicted CER (x) against measured CER before correction
// (y) for the pages with ground truth; the diagonal is a perfect estimate.
func scatter(pages []Page, id string) chartView {
	c := chartView{ID: id, Title: "Predicted against measured CER before correction, one dot per page with ground truth"}
	plotArea(&c)
	type xy struct {
		x, y float64
		tip  string
	}
	var pts []xy
	top := 0.10
	for _, p := range pages {
		if b, _, ok := p.CER(); ok && !p.Failed {
			pts = append(pts, xy{p.PredictedCER, b, fmt.Sprintf("%s: predicted %s, measured %s", Clean(p.Rel), pct(p.PredictedCER), pct(b))})
			top = max(top, p.PredictedCER, b)
		}
	}
	if len(pts) == 0 {
		c.Empty = "no ground truth"
		c.Desc = "No page has ground truth."
		return c
	}
	top = math.Min(math.Ceil(top*20)/20, 1) // round up to 5 %; clip at 100 %
	sx := func(v float64) float64 { return c.X0 + (c.X1-c.X0)*math.Min(v, top)/top }
	sy := func(v float64) float64 { return c.Y0 - (c.Y0-c.Y1)*math.Min(v, top)/top }
	var d []string
	for i, p := range pts {
		c.Points = append(c.Points, pointView{X: sx(p.x), Y: sy(p.y), Tip: p.tip})
		if i < descPoints {
			d = append(d, p.tip)
		}
	}
	c.Desc = strings.Join(d, "; ") + "."
	if len(pts) > descPoints {
		c.Desc += fmt.Sprintf(" And %d more pages (listed in pages.csv).", len(pts)-descPoints)
	}
	c.Diag = true
	for _, f := range []float64{0, 0.5, 1} {
		label := fmt.Sprintf("%.0f", 100*top*f)
		c.XTicks = append(c.XTicks, tickView{X: sx(top * f), Y: c.Y0 + 14, Label: label})
		c.YTicks = append(c.YTicks, tickView{X: c.X0 - 4, Y: sy(top*f) + 4, Label: label})
	}
	return c
}

func joinReasons(r []string) string { return strings.Join(r, "; ") }

var pageTmpl = template.Must(template.New("report").Funcs(template.FuncMap{
	"pct":     pct,
	"reasons": joinReasons,
	"f1":      func(x float64) string { return fmt.Sprintf("%.1f", x) },
	"f4":      func(x float64) string { return fmt.Sprintf("%.4f", x) },
	"dec":     func(m map[string]int, k string) int { return m[k] },
	"count":   count,
}).Parse(pageHTML))
