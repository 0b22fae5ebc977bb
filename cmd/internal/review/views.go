package review

import (
	"context"
	"fmt"
	"net/http"
	"net/url"
	"sort"
	"strconv"
	"strings"
	"time"

	"recto/cmd/internal/run"
	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/report"
	"recto/ocr"
)

// filter is the overview's choice of pages, carried from the overview to
// the page view so next and previous follow it.
type filter struct {
	Title    string // "" for every title
	Decision string // a decision, "failed", "reviewed", "unreviewed" or "" for all
	Sort     string // "name", "predicted", "predicted-asc", "measured", "measured-asc"
}

// Sorts lists the overview's orders with their labels.
var sorts = []struct{ Key, Label string }{
	{"name", "name"},
	{"predicted", "predicted CER, worst first"},
	{"predicted-asc", "predicted CER, best first"},
	{"measured", "measured CER, worst first"},
	{"measured-asc", "measured CER, best first"},
}

func filterOf(r *http.Request) filter {
	q := r.URL.Query()
	f := filter{Title: q.Get("title"), Decision: q.Get("decision"), Sort: q.Get("sort")}
	known := false
	for _, s := range sorts {
		known = known || s.Key == f.Sort
	}
	if !known {
		f.Sort = "name"
	}
	return f
}

// query returns f as URL query parameters (without a leading ?).
func (f filter) query() string {
	q := url.Values{}
	if f.Title != "" {
		q.Set("title", f.Title)
	}
	if f.Decision != "" {
		q.Set("decision", f.Decision)
	}
	if f.Sort != "name" && f.Sort != "" {
		q.Set("sort", f.Sort)
	}
	return q.Encode()
}

// item is one page as the overview and the page view's neighbours see it.
type item struct {
	Row      ledger.Page
	Decision string // the reviewed decision, else triage's; "failed" for a failed page
	Reviewed bool
	CER      float64 // measured CER after correction; -1 without ground truth
}

// items returns every page of the run with its reviewed state, and the
// reviews.
func (s *Server) items(ctx context.Context) ([]item, map[string]ledger.Review, error) {
	rows, err := s.pages(ctx)
	if err != nil {
		return nil, nil, err
	}
	revs, err := s.l.Reviews(ctx)
	if err != nil {
		return nil, nil, err
	}
	return items(rows, revs), revs, nil
}

func items(rows []ledger.Page, revs map[string]ledger.Review) []item {
	out := make([]item, len(rows))
	for i, r := range rows {
		it := item{Row: r, Decision: r.Decision, CER: -1}
		if r.State != ledger.StateDone {
			it.Decision = "failed"
		}
		if rv, ok := revs[r.Rel]; ok && r.State == ledger.StateDone {
			if rv.Decision != "" {
				it.Decision = rv.Decision
			}
			it.Reviewed = rv.Decision != "" || len(rv.Corrections) > 0
		}
		if r.HasTruth && r.RefChars > 0 {
			it.CER = float64(r.CharErrsAf) / float64(r.RefChars)
		}
		out[i] = it
	}
	return out
}

// choose returns the items f selects, in f's order; keep is always
// included (the page being looked at). With walk, a decision filter also
// takes the pages triage decided so: the walk from page to page does not
// change under the reviewer's feet when a page's decision leaves the
// filter.
func choose(all []item, f filter, keep string, walk bool) []item {
	var out []item
	for _, it := range all {
		if it.Row.Rel != keep {
			if f.Title != "" && it.Row.Title != f.Title {
				continue
			}
			switch f.Decision {
			case "":
			case "reviewed":
				if !it.Reviewed {
					continue
				}
			case "unreviewed":
				if it.Reviewed {
					continue
				}
			default:
				if it.Decision != f.Decision && !(walk && it.Row.Decision == f.Decision && it.Row.State == ledger.StateDone) {
					continue
				}
			}
		}
		out = append(out, it)
	}
	less := func(a, b item) bool { return a.Row.Rel < b.Row.Rel }
	switch f.Sort {
	case "predicted": // failed pages (no prediction) last
		less = func(a, b item) bool { return done(a) && (!done(b) || a.Row.PredictedCER > b.Row.PredictedCER) }
	case "predicted-asc":
		less = func(a, b item) bool { return done(a) && (!done(b) || a.Row.PredictedCER < b.Row.PredictedCER) }
	case "measured": // pages without ground truth last
		less = func(a, b item) bool { return a.CER > b.CER }
	case "measured-asc":
		less = func(a, b item) bool { return (a.CER >= 0 && b.CER < 0) || (a.CER >= 0 && a.CER < b.CER) }
	}
	sort.SliceStable(out, func(i, j int) bool { return less(out[i], out[j]) })
	return out
}

func done(it item) bool { return it.Row.State == ledger.StateDone }

func pct(x float64) string { return strconv.FormatFloat(100*x, 'f', 1, 64) + " %" }

// card is one thumbnail of the overview.
type card struct {
	Rel, Name, Title, Decision string
	Reviewed, Failed           bool
	Pred, CER                  string
	Link, Thumb                string
}

// titleRow is one line of the overview's titles table.
type titleRow struct {
	Title              string
	Pages, Failed, Rev int
	Decisions          []int // counts in the order of report.Decisions
	Pred, CER          string
}

type overviewData struct {
	Name      string
	Nonce     string
	Titles    []titleRow
	Total     titleRow
	Decisions []string // report.Decisions
	Filters   []string // decision filter values
	Sorts     []struct{ Key, Label string }
	F         filter
	Cards     []card
	Count     int
	All       int
	ReadOnly  bool
	CSRF      string
	User      string
}

func (s *Server) overview(w http.ResponseWriter, r *http.Request) {
	all, _, err := s.items(r.Context())
	if err != nil {
		http.Error(w, "recto review: "+err.Error(), http.StatusInternalServerError)
		return
	}
	f := filterOf(r)
	d := overviewData{Name: s.name(), Nonce: randomHex(16), Decisions: report.Decisions, Sorts: sorts, F: f,
		All: len(all), ReadOnly: s.o.ReadOnly, CSRF: s.csrf, User: s.user,
		Filters: append(append([]string{}, report.Decisions...), "failed", "reviewed", "unreviewed")}
	d.Titles, d.Total = titles(all)
	fq := f.query()
	for _, it := range choose(all, f, "", false) {
		c := card{Rel: it.Row.Rel, Name: report.Clean(run.EscapeName(it.Row.Page)), Title: report.Clean(run.EscapeName(it.Row.Title)),
			Decision: it.Decision, Reviewed: it.Reviewed, Failed: it.Row.State != ledger.StateDone,
			Link: "/page?p=" + url.QueryEscape(it.Row.Rel) + amp(fq)}
		if !c.Failed {
			c.Pred = pct(it.Row.PredictedCER)
			c.Thumb = "/thumb?p=" + url.QueryEscape(it.Row.Rel)
		}
		if it.CER >= 0 {
			c.CER = pct(it.CER)
		}
		d.Cards = append(d.Cards, c)
	}
	d.Count = len(d.Cards)
	s.render(w, "overview", d, d.Nonce)
}

func amp(q string) string {
	if q == "" {
		return ""
	}
	return "&" + q
}

// name is the collection's name for headings.
func (s *Server) name() string {
	if s.root != "" {
		return report.Clean(run.EscapeName(lastElem(s.root)))
	}
	return report.Clean(run.EscapeName(lastElem(s.dir)))
}

func lastElem(p string) string {
	p = strings.TrimRight(p, "/")
	if i := strings.LastIndexByte(p, '/'); i >= 0 {
		return p[i+1:]
	}
	return p
}

// titles sums the items per title: decisions as reviewed, mean predicted
// CER, measured CER after correction pooled over the pages with ground
// truth (character edits over reference characters, as the reports pool it).
func titles(all []item) ([]titleRow, titleRow) {
	type acc struct {
		row           titleRow
		pred          float64
		done          int
		errs, chars   int
		decisionIndex map[string]int
	}
	by := map[string]*acc{}
	var names []string
	total := &acc{row: titleRow{Title: "(all)"}}
	add := func(a *acc, it item) {
		if a.row.Decisions == nil {
			a.row.Decisions = make([]int, len(report.Decisions))
		}
		a.row.Pages++
		if it.Row.State != ledger.StateDone {
			a.row.Failed++
			return
		}
		if it.Reviewed {
			a.row.Rev++
		}
		for i, d := range report.Decisions {
			if d == it.Decision {
				a.row.Decisions[i]++
			}
		}
		a.pred += it.Row.PredictedCER
		a.done++
		if it.Row.HasTruth {
			a.errs += it.Row.CharErrsAf
			a.chars += it.Row.RefChars
		}
	}
	for _, it := range all {
		a, ok := by[it.Row.Title]
		if !ok {
			a = &acc{row: titleRow{Title: report.Clean(run.EscapeName(it.Row.Title))}}
			by[it.Row.Title] = a
			names = append(names, it.Row.Title)
		}
		add(a, it)
		add(total, it)
	}
	sort.Strings(names)
	fin := func(a *acc) titleRow {
		a.row.Pred, a.row.CER = "–", "–"
		if a.done > 0 {
			a.row.Pred = pct(a.pred / float64(a.done))
		}
		if a.chars > 0 {
			a.row.CER = pct(float64(a.errs) / float64(a.chars))
		}
		if a.row.Decisions == nil {
			a.row.Decisions = make([]int, len(report.Decisions))
		}
		return a.row
	}
	var out []titleRow
	for _, n := range names {
		out = append(out, fin(by[n]))
	}
	return out, fin(total)
}

// wordView is one word of the page text.
type wordView struct {
	Text    string
	Low     bool   // read with confidence below ocr.ConfidentWord
	Box     string // "x,y,w,h" in original pixels
	Conf    string
	Changed string // the correction's after text when a correction starts at this word
	Key     string // that correction's key
}

type changeView struct {
	Key, Before, After, Score string
	State                     string // accepted, rejected or blocked
	Why                       string // for a blocked change, why
	Where                     string // "line 3, column 7"
}

type entryView struct {
	When   string `json:"when"`
	Who    string `json:"who"`
	What   string `json:"what"`
	Note   string `json:"note"`
	Undone bool   `json:"undone"`
}

type pageData struct {
	Nonce, CSRF              string
	Name, Rel, Page, Title   string
	RelQ                     string // the page key, URL-escaped
	Key                      string // the page key as the ledger has it
	Self                     string // this page's address, filter included
	Pos, Count               int
	Prev, Next, Back         string
	Decision, Triage         string
	Reviewed                 bool
	Who, At, Note            string
	Decisions                []string
	Pred                     string
	Reasons                  []string
	HasTruth                 bool
	CERBefore, CERAfter      string
	Failed                   bool
	Error                    string
	Width, Height            int
	Paras                    [][][]wordView
	Changes                  []changeView
	Last                     int64
	ReadOnly                 bool
	History                  []entryView
	Outputs                  []struct{ Name, Link string }
	Keys                     []struct{ Key, What string }
	Filter                   string
	MeanConf                 string
	LowWords, Words, Blocked int
	Problem                  string
	Missing                  []string // what of the page could not be read, and why
}

// keys are the keyboard shortcuts, listed on the page.
var keys = []struct{ Key, What string }{
	{"a", "decision accept"}, {"c", "decision correct"}, {"r", "decision rescan"},
	{"j or →", "next page"}, {"k or ←", "previous page"},
	{"u", "undo the last change on this page"}, {"n", "write a note (Enter stores it with the decision)"},
	{"g", "show or hide the ground truth"},
	{"+ / −", "zoom in / out"}, {"0", "fit the image to the width"},
	{"Esc", "back to the overview"},
}

func (s *Server) pageView(w http.ResponseWriter, r *http.Request) {
	ctx := r.Context()
	row, found := s.rowOf(w, r)
	if !found {
		return
	}
	all, revs, err := s.items(ctx)
	if err != nil {
		http.Error(w, "recto review: "+err.Error(), http.StatusInternalServerError)
		return
	}
	f := filterOf(r)
	fq := f.query()
	list := choose(all, f, row.Rel, true)
	d := pageData{Nonce: randomHex(16), CSRF: s.csrf, Name: s.name(), Rel: report.Clean(run.EscapeName(row.Rel)),
		Page: report.Clean(run.EscapeName(row.Page)), Title: report.Clean(run.EscapeName(row.Title)),
		RelQ: url.QueryEscape(row.Rel), Key: row.Rel, Self: "/page?p=" + url.QueryEscape(row.Rel) + amp(fq), Count: len(list), Back: "/" + q(fq), Decisions: Decisions,
		ReadOnly: s.o.ReadOnly, Keys: keys, Filter: fq, Triage: row.Decision, Decision: row.Decision,
		Failed: row.State != ledger.StateDone, Error: report.Clean(row.Error), Problem: string(row.Problem)}
	for i, it := range list {
		if it.Row.Rel != row.Rel {
			continue
		}
		d.Pos = i + 1
		if i > 0 {
			d.Prev = "/page?p=" + url.QueryEscape(list[i-1].Row.Rel) + amp(fq)
		}
		if i+1 < len(list) {
			d.Next = "/page?p=" + url.QueryEscape(list[i+1].Row.Rel) + amp(fq)
		}
	}
	rev := revs[row.Rel]
	d.Last = rev.Last
	if rev.Decision != "" {
		d.Decision, d.Reviewed, d.Note = rev.Decision, true, rev.Note
	}
	if rev.Who != "" {
		d.Who, d.At = rev.Who, rev.At.Local().Format("2006-01-02 15:04")
	}
	for _, x := range row.Reasons {
		d.Reasons = append(d.Reasons, report.Clean(x))
	}
	for _, o := range row.Outputs {
		d.Outputs = append(d.Outputs, struct{ Name, Link string }{report.Clean(run.EscapeName(o)),
			"/file?p=" + url.QueryEscape(row.Rel) + "&name=" + url.QueryEscape(o)})
	}
	if !d.Failed {
		d.Pred = pct(row.PredictedCER)
		d.MeanConf = pct(row.MeanConf)
		if row.HasTruth && row.RefChars > 0 {
			d.HasTruth = true
			d.CERBefore = pct(float64(row.CharErrs) / float64(row.RefChars))
			d.CERAfter = pct(float64(row.CharErrsAf) / float64(row.RefChars))
		}
		changes, err := s.changes(row)
		if err != nil {
			d.Missing = append(d.Missing, "corrections: "+report.Clean(err.Error()))
		}
		at := map[[2]int]run.ChangeLine{}
		for _, c := range changes {
			cv := changeView{Key: c.Key(), Before: report.Clean(c.Before), After: report.Clean(c.After),
				Score: strconv.FormatFloat(c.Score, 'f', 1, 64), State: ledger.Accepted,
				Where: fmt.Sprintf("line %d, column %d", c.Line, c.Column)}
			switch {
			case c.Blocked != "":
				cv.State, cv.Why = "blocked", report.Clean(c.Blocked)
				d.Blocked++
			case rev.Rejected(cv.Key):
				cv.State = ledger.Rejected
			}
			if c.Blocked == "" {
				at[[2]int{c.Line, c.Column}] = c
			}
			d.Changes = append(d.Changes, cv)
		}
		rec, err := s.record(row)
		if err != nil {
			d.Missing = append(d.Missing, "text and boxes: "+report.Clean(err.Error()))
		}
		if rec != nil {
			d.Width, d.Height = rec.Width, rec.Height
			d.Paras = paragraphs(rec, at)
			d.Words = len(rec.Words)
			for _, wd := range rec.Words {
				if wd.Conf < ocr.ConfidentWord {
					d.LowWords++
				}
			}
		}
	}
	if d.History, err = s.history(ctx, row.Rel); err != nil {
		http.Error(w, "recto review: "+err.Error(), http.StatusInternalServerError)
		return
	}
	s.render(w, "page", d, d.Nonce)
}

// history returns the page's last 20 review entries, newest first.
func (s *Server) history(ctx context.Context, rel string) ([]entryView, error) {
	log, err := s.l.ReviewLog(ctx, rel)
	if err != nil {
		return nil, err
	}
	var out []entryView
	for i := len(log) - 1; i >= 0 && len(out) < 20; i-- {
		e := log[i]
		what := e.Kind + ": " + e.Old + " → " + e.New
		if e.Kind == ledger.KindCorrection {
			b, a, _ := strings.Cut(e.Item, "\x1f")
			if k := strings.SplitN(b, ":", 3); len(k) == 3 {
				b = k[2]
			}
			what = fmt.Sprintf("correction %s → %s: %s", b, a, e.New)
		}
		if e.Undoes != 0 {
			what = "undo (" + what + ")"
		}
		out = append(out, entryView{When: e.At.Local().Format(time.DateTime), Who: e.Who,
			What: report.Clean(what), Note: report.Clean(e.Note), Undone: e.UndoneBy != 0})
	}
	return out, nil
}

func q(s string) string {
	if s == "" {
		return ""
	}
	return "?" + s
}

// paragraphs lays the record's words out as Record.Text does (a blank
// line between blocks and paragraphs, a line break between lines), each
// word placed by line and column as correction places its changes.
func paragraphs(rec *ocr.Record, at map[[2]int]run.ChangeLine) [][][]wordView {
	var paras [][][]wordView
	line, col := 1, 1
	for i, w := range rec.Words {
		switch {
		case i == 0:
			paras = [][][]wordView{{{}}}
		default:
			prev := rec.Words[i-1]
			switch {
			case w.Block != prev.Block || w.Par != prev.Par:
				line, col = line+2, 1
				paras = append(paras, [][]wordView{{}})
			case w.Line != prev.Line:
				line, col = line+1, 1
				p := &paras[len(paras)-1]
				*p = append(*p, []wordView{})
			default:
				col++
			}
		}
		wv := wordView{Text: report.Clean(w.Text), Low: w.Conf < ocr.ConfidentWord,
			Box:  fmt.Sprintf("%d,%d,%d,%d", w.Box.X, w.Box.Y, w.Box.W, w.Box.H),
			Conf: strconv.Itoa(int(100*w.Conf + 0.5))}
		if c, ok := at[[2]int{line, col}]; ok {
			wv.Changed, wv.Key = report.Clean(c.After), c.Key()
		}
		p := paras[len(paras)-1]
		p[len(p)-1] = append(p[len(p)-1], wv)
		col += len([]rune(w.Text))
	}
	return paras
}
