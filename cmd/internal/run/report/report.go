// Package report builds the reports of a batch run from its per-page
// results: titles.csv and titles.json (one row per title), pages.csv,
// rescan.csv (the work list for the scanning station) and report.html, a
// single self-contained page that opens offline (inline CSS, a few lines of
// inline JavaScript to sort the titles table, charts as inline SVG).
//
// Every string that comes from a page (file names, OCR text, error
// messages) reaches the HTML through html/template, which escapes it for
// its context; control characters and invalid UTF-8 are replaced by U+FFFD
// first, so the page stays well-formed whatever the OCR produced. CSV cells
// that a spreadsheet would run as a formula (leading =, +, -, @) are
// prefixed with an apostrophe.
//
// A title's measured CER is pooled: character edits summed over its pages
// with ground truth, divided by their reference characters summed. Report
// output depends only on its input (no clock, no map order), so equal
// inputs give byte-identical files.
package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"image"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	"recto/internal/atomicfile"
	"recto/quality"
)

// Decisions lists the triage decisions in report order.
var Decisions = []string{"accept", "correct", "rescan", "blank", "picture"}

// Page is one page's results as the report needs them.
type Page struct {
	Rel   string // path relative to the collection root, slash-separated
	Title string // first-level folder
	Page  string // page name within the title

	Failed bool   // the page could not be processed
	Error  string // why, when Failed
	Setup  bool   // failed for a set-up or system reason, not the scan's: not on the rescan list

	Decision     string   // one of Decisions; "" when Failed
	PredictedCER float64  // estimated CER in [0, 1]
	Reasons      []string // why the decision was taken
	Corrections  int      // words changed by correction

	HasTruth      bool // ground truth was scored
	RefChars      int  // reference characters
	RefWords      int  // reference words
	CharErrs      int  // character edits before correction
	WordErrs      int  // word edits before correction
	CharErrsAfter int  // character edits after correction
	WordErrsAfter int  // word edits after correction

	// Order-free errors (quality.Counts, see quality/flex.go and bag.go):
	// errors of the flexible character accuracy over RefChars and
	// bag-of-words errors over RefWords, before and after correction.
	// OrderFree says they were measured (pages of ledgers written before
	// they were lack them).
	OrderFree     bool
	FlexErrs      int
	FlexErrsAfter int
	BagErrs       int
	BagErrsAfter  int

	Image   string // link to the page image, relative to the report folder or absolute
	Text    string // link to the final text, relative to the report folder; "" when none
	Snippet string // start of the final OCR text, shown for the worst pages

	Warnings []string // what a step said about the page that did not stop it

	// ThumbKey names the page's thumbnail in the report folder
	// (thumbs/<ThumbKey>.png), made once by Options.Thumb; it must change
	// when the image does (the run uses the image's SHA-256 and page
	// number). "" means no thumbnail.
	ThumbKey string

	// Reviewed is who confirmed or changed the decision, or judged the
	// corrections, in recto review; "" when nobody did. Decision,
	// Reasons and Corrections are then the reviewed ones.
	Reviewed   string
	ReviewNote string // the reviewer's note, may be ""
}

// CER returns the page's measured CER before and after correction; ok is
// false without ground truth or with an empty reference.
func (p Page) CER() (before, after float64, ok bool) {
	if !p.HasTruth || p.RefChars == 0 {
		return 0, 0, false
	}
	n := float64(p.RefChars)
	return float64(p.CharErrs) / n, float64(p.CharErrsAfter) / n, true
}

// IntervalFunc returns a confidence interval for a pooled error rate (CER,
// WER, flex_cer, bag_wer), given the errors and reference units of each
// page. ok is false when no interval can be given (e.g. too few pages).
type IntervalFunc func(errs, chars []int) (lo, hi float64, ok bool)

// Named is a file the run used, with its SHA-256 (hex).
type Named struct {
	Name   string `json:"name"`
	SHA256 string `json:"sha256,omitempty"`
}

// About says how the run's figures were made; the HTML report opens with
// it. Every field may be empty (a ledger written before it was recorded).
// The run keeps it in its ledger as JSON, without the times, which come
// from the pages.
type About struct {
	Collection   string    `json:"collection,omitempty"`    // the collection folder
	First        time.Time `json:"-"`                       // first page recorded (UTC); zero when unknown
	Last         time.Time `json:"-"`                       // last page recorded (UTC)
	Recto        string    `json:"recto,omitempty"`         // recto version of the run
	Engine       string    `json:"engine,omitempty"`        // recognition engine and version, "Tesseract 5.3.0"
	Lang         string    `json:"lang,omitempty"`          // engine languages, "eng+deu"
	Correct      float64   `json:"correct,omitempty"`       // predicted CER above which a page is corrected
	Rescan       float64   `json:"rescan,omitempty"`        // predicted CER above which a page is rescanned
	RescanFactor float64   `json:"rescan_factor,omitempty"` // the quality model's factor on Rescan for page records; 0 or 1 means none

	QualityModel    string  `json:"quality_model,omitempty"` // file name, or "embedded (...)"
	QualityModelSum string  `json:"quality_model_sha256,omitempty"`
	Lexicons        []Named `json:"lexicons,omitempty"`

	Normalisation string `json:"normalisation,omitempty"` // of the texts before CER and WER
	Interval      string `json:"interval,omitempty"`      // how the 95 % intervals are made
}

// Options tune the reports. The zero value is valid.
type Options struct {
	Name     string       // collection name shown in the HTML heading; "" means "Collection"
	Interval IntervalFunc // 95 % confidence intervals for measured rates; nil means none
	Worst    int          // worst pages listed in the HTML; 0 means 25
	Partial  string       // when not "", the report covers part of the run: why (shown at the top of the HTML)
	About    About        // how the figures were made: the HTML's header

	// TargetCER is the CER (after correction) the institution declared
	// for each title, in [0, 1]; 0 means none: the HTML says per title
	// whether its 95 % interval lies below it.
	TargetCER float64

	// Thumb returns a page's image for its thumbnail; the HTML calls it
	// only for the pages it lists with a ThumbKey whose thumbnail is not
	// in the report folder yet, from Jobs goroutines at once. nil means no
	// thumbnails are made (those already made are still shown).
	Thumb func(Page) (image.Image, error)
	// Jobs is how many thumbnails are made at once (Thumb is called from
	// that many goroutines); 0 means one per core.
	Jobs int

	// Snippet returns the start of a page's final text; the HTML calls it
	// only for the worst pages it lists whose Snippet is empty. nil means
	// no text beyond what Page.Snippet holds.
	Snippet func(Page) string
}

// Measured is a pooled error rate over the pages with ground truth.
type Measured struct {
	Rate   float64  `json:"rate"`            // errors / units
	Lo     *float64 `json:"lo,omitempty"`    // interval low end, when known
	Hi     *float64 `json:"hi,omitempty"`    // interval high end, when known
	Errors int      `json:"errors"`          // edits summed over pages
	Units  int      `json:"units"`           // reference characters or words summed
	Pages  int      `json:"pages,omitempty"` // pages measured
}

// Title sums one title's pages (or, as Total, the whole collection's).
type Title struct {
	Title            string         `json:"title"`
	Pages            int            `json:"pages"`
	Failed           int            `json:"failed"`
	Decisions        map[string]int `json:"decisions"`
	MeanPredictedCER *float64       `json:"mean_predicted_cer"` // nil when no page was processed
	TruthPages       int            `json:"truth_pages"`
	CERBefore        *Measured      `json:"cer_before,omitempty"` // nil without ground truth
	CERAfter         *Measured      `json:"cer_after,omitempty"`
	WERBefore        *Measured      `json:"wer_before,omitempty"`
	WERAfter         *Measured      `json:"wer_after,omitempty"`
	Corrections      int            `json:"corrections"`
	Reviewed         int            `json:"reviewed"` // pages reviewed in recto review

	// Order-free rates, pooled like CER and WER; nil without ground truth
	// or when a page with ground truth lacks them (older ledgers).
	FlexBefore *Measured `json:"flex_cer_before,omitempty"`
	FlexAfter  *Measured `json:"flex_cer_after,omitempty"`
	BagBefore  *Measured `json:"bag_wer_before,omitempty"`
	BagAfter   *Measured `json:"bag_wer_after,omitempty"`
}

// Summary is the whole report's data.
type Summary struct {
	Titles []Title `json:"titles"` // sorted by name
	Total  Title   `json:"total"`  // all pages; Title is "(all)"
}

// Summarise sums pages per title.
func Summarise(pages []Page, o Options) Summary {
	by := make(map[string][]Page)
	for _, p := range pages {
		by[p.Title] = append(by[p.Title], p)
	}
	names := make([]string, 0, len(by))
	for n := range by {
		names = append(names, n)
	}
	sort.Strings(names)
	var s Summary
	for _, n := range names {
		s.Titles = append(s.Titles, sumTitle(n, by[n], o))
	}
	s.Total = sumTitle("(all)", pages, o)
	return s
}

func sumTitle(name string, pages []Page, o Options) Title {
	t := Title{Title: name, Pages: len(pages), Decisions: make(map[string]int)}
	for _, d := range Decisions {
		t.Decisions[d] = 0
	}
	var predSum float64
	var processed int
	var ce, cc, ceA, we, wc, weA, fe, feA, be, beA []int
	orderFree := true
	for _, p := range pages {
		if p.Failed {
			t.Failed++
			continue
		}
		processed++
		predSum += p.PredictedCER
		t.Decisions[p.Decision]++
		t.Corrections += p.Corrections
		if p.Reviewed != "" {
			t.Reviewed++
		}
		if p.HasTruth {
			t.TruthPages++
			ce, cc, ceA = append(ce, p.CharErrs), append(cc, p.RefChars), append(ceA, p.CharErrsAfter)
			we, wc, weA = append(we, p.WordErrs), append(wc, p.RefWords), append(weA, p.WordErrsAfter)
			fe, feA = append(fe, p.FlexErrs), append(feA, p.FlexErrsAfter)
			be, beA = append(be, p.BagErrs), append(beA, p.BagErrsAfter)
			orderFree = orderFree && p.OrderFree
		}
	}
	if processed > 0 {
		m := predSum / float64(processed)
		t.MeanPredictedCER = &m
	}
	t.CERBefore = measure(ce, cc, o.Interval)
	t.CERAfter = measure(ceA, cc, o.Interval)
	t.WERBefore = measure(we, wc, o.Interval)
	t.WERAfter = measure(weA, wc, o.Interval)
	if orderFree {
		t.FlexBefore = measure(fe, cc, o.Interval)
		t.FlexAfter = measure(feA, cc, o.Interval)
		t.BagBefore = measure(be, wc, o.Interval)
		t.BagAfter = measure(beA, wc, o.Interval)
	}
	return t
}

func measure(errs, units []int, ci IntervalFunc) *Measured {
	m := Measured{Pages: len(errs)}
	for i := range errs {
		m.Errors += errs[i]
		m.Units += units[i]
	}
	if m.Units == 0 {
		return nil
	}
	m.Rate = float64(m.Errors) / float64(m.Units)
	if ci != nil {
		if lo, hi, ok := ci(errs, units); ok {
			m.Lo, m.Hi = &lo, &hi
		}
	}
	return &m
}

// Write builds every report into dir (created if missing). Each file is
// written to a temporary name and renamed, so a reader never sees half a
// report.
func Write(dir string, pages []Page, o Options) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	pages = sortedPages(pages)
	s := Summarise(pages, o)
	files := []struct {
		name  string
		build func() ([]byte, error)
	}{
		{"titles.csv", func() ([]byte, error) { return TitlesCSV(s) }},
		{"titles.json", func() ([]byte, error) { return TitlesJSON(s) }},
		{"pages.csv", func() ([]byte, error) { return PagesCSV(pages) }},
		{"rescan.csv", func() ([]byte, error) { return RescanCSV(pages) }},
		{"report.html", func() ([]byte, error) { return htmlIn(dir, s, pages, o) }},
	}
	for _, f := range files {
		data, err := f.build()
		if err != nil {
			return fmt.Errorf("report: %s: %w", f.name, err)
		}
		if err := writeFileAtomic(filepath.Join(dir, f.name), data); err != nil {
			return err
		}
	}
	return nil
}

func sortedPages(pages []Page) []Page {
	out := append([]Page(nil), pages...)
	sort.Slice(out, func(i, j int) bool { return out[i].Rel < out[j].Rel })
	return out
}

func writeFileAtomic(path string, data []byte) error {
	if err := atomicfile.Write(path, data); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	return nil
}

// TitlesJSON renders the summary as indented JSON.
func TitlesJSON(s Summary) ([]byte, error) {
	b, err := json.MarshalIndent(s, "", "  ")
	if err != nil {
		return nil, err
	}
	return append(b, '\n'), nil
}

func f4(x float64) string { return strconv.FormatFloat(x, 'f', 4, 64) }

func optF4(p *float64) string {
	if p == nil {
		return ""
	}
	return f4(*p)
}

// cell makes a text cell safe to open in a spreadsheet: a leading =, +, -,
// @, tab or carriage return would start a formula, so it gets an apostrophe.
func cell(s string) string {
	s = Clean(s)
	if s != "" && strings.ContainsRune("=+-@\t\r", rune(s[0])) {
		return "'" + s
	}
	return s
}

func writeCSV(rows [][]string) ([]byte, error) {
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	if err := w.WriteAll(rows); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// Column names follow the vocabulary every recto output shares (see the
// README's change notes): a page is keyed by title and page (its path
// relative to the collection without extension) with the image file in a
// column of its own; status is ok or failed; a rate is cer or wer with its
// interval as cer_low and cer_high, and _before or _after appended where
// both exist; chars and words count the reference.

// titleHead is the header of titles.csv; titleJSON has the same keys.
var titleHead = append(append([]string{"title", "pages", "failed"}, Decisions...),
	"mean_predicted_cer", "truth_pages", "chars", "words",
	"char_errors_before", "cer_before", "cer_low_before", "cer_high_before",
	"char_errors_after", "cer_after", "cer_low_after", "cer_high_after",
	"word_errors_before", "wer_before", "word_errors_after", "wer_after", "corrections", "reviewed",
	"flex_errors_before", "flex_cer_before", "flex_errors_after", "flex_cer_after",
	"bag_errors_before", "bag_wer_before", "bag_errors_after", "bag_wer_after")

// titleJSON is a Title as titles.json has it: flat, with the column names
// of titles.csv; a figure without ground truth is null.
type titleJSON struct {
	Title            string         `json:"title"`
	Pages            int            `json:"pages"`
	Failed           int            `json:"failed"`
	Decisions        map[string]int `json:"decisions"`
	MeanPredictedCER *float64       `json:"mean_predicted_cer"`
	TruthPages       int            `json:"truth_pages"`
	Chars            *int           `json:"chars"`
	Words            *int           `json:"words"`
	CharErrorsBefore *int           `json:"char_errors_before"`
	CERBefore        *float64       `json:"cer_before"`
	CERLowBefore     *float64       `json:"cer_low_before"`
	CERHighBefore    *float64       `json:"cer_high_before"`
	CharErrorsAfter  *int           `json:"char_errors_after"`
	CERAfter         *float64       `json:"cer_after"`
	CERLowAfter      *float64       `json:"cer_low_after"`
	CERHighAfter     *float64       `json:"cer_high_after"`
	WordErrorsBefore *int           `json:"word_errors_before"`
	WERBefore        *float64       `json:"wer_before"`
	WordErrorsAfter  *int           `json:"word_errors_after"`
	WERAfter         *float64       `json:"wer_after"`
	Corrections      int            `json:"corrections"`
	Reviewed         int            `json:"reviewed"`
	FlexErrorsBefore *int           `json:"flex_errors_before"`
	FlexCERBefore    *float64       `json:"flex_cer_before"`
	FlexErrorsAfter  *int           `json:"flex_errors_after"`
	FlexCERAfter     *float64       `json:"flex_cer_after"`
	BagErrorsBefore  *int           `json:"bag_errors_before"`
	BagWERBefore     *float64       `json:"bag_wer_before"`
	BagErrorsAfter   *int           `json:"bag_errors_after"`
	BagWERAfter      *float64       `json:"bag_wer_after"`
}

// MarshalJSON writes t flat, as titles.json has it.
func (t Title) MarshalJSON() ([]byte, error) { return json.Marshal(flat(t)) }

// flat spreads t's measured rates into columns.
func flat(t Title) titleJSON {
	j := titleJSON{Title: t.Title, Pages: t.Pages, Failed: t.Failed, Decisions: t.Decisions,
		MeanPredictedCER: t.MeanPredictedCER, TruthPages: t.TruthPages, Corrections: t.Corrections, Reviewed: t.Reviewed}
	parts := func(m *Measured) (units, errs *int, rate, lo, hi *float64) {
		if m == nil {
			return nil, nil, nil, nil, nil
		}
		u, e, r := m.Units, m.Errors, m.Rate
		return &u, &e, &r, m.Lo, m.Hi
	}
	j.Chars, j.CharErrorsBefore, j.CERBefore, j.CERLowBefore, j.CERHighBefore = parts(t.CERBefore)
	_, j.CharErrorsAfter, j.CERAfter, j.CERLowAfter, j.CERHighAfter = parts(t.CERAfter)
	j.Words, j.WordErrorsBefore, j.WERBefore, _, _ = parts(t.WERBefore)
	_, j.WordErrorsAfter, j.WERAfter, _, _ = parts(t.WERAfter)
	_, j.FlexErrorsBefore, j.FlexCERBefore, _, _ = parts(t.FlexBefore)
	_, j.FlexErrorsAfter, j.FlexCERAfter, _, _ = parts(t.FlexAfter)
	_, j.BagErrorsBefore, j.BagWERBefore, _, _ = parts(t.BagBefore)
	_, j.BagErrorsAfter, j.BagWERAfter, _, _ = parts(t.BagAfter)
	return j
}

func optInt(p *int) string {
	if p == nil {
		return ""
	}
	return strconv.Itoa(*p)
}

// TitlesCSV renders one row per title and a last row for the whole collection.
func TitlesCSV(s Summary) ([]byte, error) {
	rows := [][]string{titleHead}
	for _, t := range append(append([]Title(nil), s.Titles...), s.Total) {
		j := flat(t)
		r := []string{cell(t.Title), strconv.Itoa(t.Pages), strconv.Itoa(t.Failed)}
		for _, d := range Decisions {
			r = append(r, strconv.Itoa(t.Decisions[d]))
		}
		r = append(r, optF4(t.MeanPredictedCER), strconv.Itoa(t.TruthPages), optInt(j.Chars), optInt(j.Words),
			optInt(j.CharErrorsBefore), optF4(j.CERBefore), optF4(j.CERLowBefore), optF4(j.CERHighBefore),
			optInt(j.CharErrorsAfter), optF4(j.CERAfter), optF4(j.CERLowAfter), optF4(j.CERHighAfter),
			optInt(j.WordErrorsBefore), optF4(j.WERBefore), optInt(j.WordErrorsAfter), optF4(j.WERAfter),
			strconv.Itoa(t.Corrections), strconv.Itoa(t.Reviewed),
			optInt(j.FlexErrorsBefore), optF4(j.FlexCERBefore), optInt(j.FlexErrorsAfter), optF4(j.FlexCERAfter),
			optInt(j.BagErrorsBefore), optF4(j.BagWERBefore), optInt(j.BagErrorsAfter), optF4(j.BagWERAfter))
		rows = append(rows, r)
	}
	return writeCSV(rows)
}

// PagesCSV renders one row per page.
func PagesCSV(pages []Page) ([]byte, error) {
	rows := [][]string{{"title", "page", "image", "status", "decision", "predicted_cer", "reasons",
		"corrections", "chars", "char_errors_before", "char_errors_after", "cer_before", "cer_after",
		"words", "word_errors_before", "word_errors_after", "wer_before", "wer_after", "error", "reviewed", "review_note",
		"flex_errors_before", "flex_errors_after", "flex_cer_before", "flex_cer_after",
		"bag_errors_before", "bag_errors_after", "bag_wer_before", "bag_wer_after"}}
	for _, p := range pages {
		status := quality.StatusOK
		if p.Failed {
			status = quality.StatusFailed
		}
		r := []string{cell(p.Title), cell(p.Page), cell(p.Rel), status, p.Decision, "", cell(strings.Join(p.Reasons, "; ")),
			strconv.Itoa(p.Corrections), "", "", "", "", "", "", "", "", "", "", cell(p.Error), cell(p.Reviewed), cell(p.ReviewNote),
			"", "", "", "", "", "", "", ""}
		if !p.Failed {
			r[5] = f4(p.PredictedCER)
		}
		if p.HasTruth {
			r[8], r[13] = strconv.Itoa(p.RefChars), strconv.Itoa(p.RefWords)
			errRates(r[9:], p.CharErrs, p.CharErrsAfter, p.RefChars)
			errRates(r[14:], p.WordErrs, p.WordErrsAfter, p.RefWords)
			if p.OrderFree {
				errRates(r[21:], p.FlexErrs, p.FlexErrsAfter, p.RefChars)
				errRates(r[25:], p.BagErrs, p.BagErrsAfter, p.RefWords)
			}
		}
		rows = append(rows, r)
	}
	return writeCSV(rows)
}

// errRates fills four cells of a pages.csv row: errors before and after
// correction, then both as rates over units (empty when units is 0).
func errRates(r []string, before, after, units int) {
	r[0], r[1] = strconv.Itoa(before), strconv.Itoa(after)
	if units > 0 {
		n := float64(units)
		r[2], r[3] = f4(float64(before)/n), f4(float64(after)/n)
	}
}

// RescanHead is the header of every rescan list recto writes (the run's
// rescan.csv and 'recto triage --rescan-list').
var RescanHead = []string{"title", "page", "image", "predicted_cer", "reasons"}

// RescanCSV lists the pages to scan again: those triage marked rescan and
// those that could not be read at all.
func RescanCSV(pages []Page) ([]byte, error) {
	rows := [][]string{RescanHead}
	for _, p := range pages {
		switch {
		case p.Failed && !p.Setup:
			rows = append(rows, []string{cell(p.Title), cell(p.Page), cell(p.Rel), "", cell("unreadable: " + p.Error)})
		case p.Decision == "rescan":
			rows = append(rows, []string{cell(p.Title), cell(p.Page), cell(p.Rel), f4(p.PredictedCER), cell(strings.Join(p.Reasons, "; "))})
		}
	}
	return writeCSV(rows)
}

// Clean replaces what must not appear in HTML, XML or CSV text: invalid
// UTF-8, C0 and C1 control characters other than tab and newline,
// and the non-characters U+FFFE and U+FFFF. Each becomes U+FFFD.
func Clean(s string) string {
	if utf8.ValidString(s) && strings.IndexFunc(s, bad) < 0 {
		return s // fast path: nearly every string is clean
	}
	var b strings.Builder
	b.Grow(len(s))
	for _, r := range s { // invalid UTF-8 comes out as U+FFFD
		if bad(r) {
			r = utf8.RuneError
		}
		b.WriteRune(r)
	}
	return b.String()
}

func bad(r rune) bool {
	if r == '\t' || r == '\n' {
		return false
	}
	return r < 0x20 || (r >= 0x7f && r <= 0x9f) || r == 0xFFFE || r == 0xFFFF
}
