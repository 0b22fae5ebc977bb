package main

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"text/tabwriter"
	"unicode/utf8"

	"github.com/spf13/cobra"

	"recto/quality"
)

// ScoreOptions are the flags of recto score.
type ScoreOptions struct {
	Truth           string // ground-truth root
	OCR             string // OCR output root
	Format          string // table, json or csv
	Confusions      int    // most frequent confusions to list; 0 for none
	FoldCase        bool
	IgnorePunct     bool
	PlainTypography bool
	Jobs            int    // pages scored at once; 0 means all cores
	Plan            string // sampling plan of recto sample; "" for none
}

const scoreLong = `Score OCR text against ground truth: character and word error rates (CER,
WER) per page, per title and for the whole collection.

PAIRS
  Every *.txt, *.xml, *.alto.xml or *.page.xml file under --truth (searched
  recursively) is a reference page: plain UTF-8 text, ALTO (versions 2-4) or
  PAGE XML (2010-2019), told apart by the content. Its hypothesis is the .txt
  file at the same relative path, without the ending, under --ocr. A page
  found in two files (p1.txt and p1.xml) is reported and not scored. A title
  is the first folder under --truth; a page lying directly in --truth takes
  the name of the folder its image lies in, from the page record (.json)
  'recto ocr' wrote beside its hypothesis, as 'recto run' names it, else the
  name of --truth itself. A missing hypothesis is scored as empty text
  and listed as missing; a hypothesis that cannot be read is scored as empty
  text and reported; a *.txt under --ocr with no reference is listed as
  unmatched and not scored. If one folder lies inside the other, it is left
  out of the other's search.

NORMALISATION
  Before scoring, both texts are normalised. Always: the UTF-8 byte order
  mark (U+FEFF) is dropped; the text is put in Unicode NFC; every run of white
  space, line breaks included (CRLF is fine), becomes one space; leading and
  trailing space is trimmed. Options, each off by default:
    --fold-case          Unicode case folding ("Straße" = "STRASSE")
    --ignore-punct       delete punctuation (Unicode category P)
    --plain-typography   curly quotes and primes to ' and ", dashes and minus
                         to -, … to ..., ligatures such as "ﬁ" to letters,
                         long s "ſ" to s, Fraktur "⸗" "ꝛ" "aͤ" to - r ä
  Every report states the normalisation in force.

RATES
  CER = Levenshtein distance over Unicode code points / reference code points.
  WER = the same over space-separated words. Both may exceed 1. Titles and
  the total are micro-averaged (sum of edits / sum of reference lengths).
  Each title also gets the mean of its page CERs and a 95% interval for its
  CER: a percentile bootstrap over its pages (2000 resamples with a fixed
  seed, so runs repeat; nearest-rank 2.5th and 97.5th percentiles). A page
  with an empty reference has no CER (null in JSON, empty in CSV, "-" in
  the table).

OUTPUT (stdout)
  table  (default) readable tables: pages, titles, total
  json   one document {"normalization", "pages", "titles", "total", ...};
         pages, titles and total carry chars, char_errors, cer, words,
         word_errors, wer; pages also title, page (relative path without
         .txt) and status (ok, missing, failed); titles also pages,
         mean_cer, cer_low, cer_high; also missing, unmatched, failed and,
         with --confusions, confusions
  csv    one row per page: title,page,status,chars,char_errors,cer,words,
         word_errors,wer,normalization (the same description on every row)
  --confusions N adds the N most frequent confusions, from an optimal
  alignment: adjacent edits are grouped, so "m→rn" is one confusion; "∅"
  stands for nothing and "␣" for a space (not available with csv).

  Problems with single files go to stderr, one line each, naming the file
  (with the byte offset for text that is not UTF-8, and what it looks like:
  Latin-1, Windows-1252, UTF-16, with the iconv command that converts it);
  the other pages are still scored. 'recto run --truth' and 'recto calibrate'
  read ground truth the same way, with the same messages.

EXIT STATUS
  0    every reference page was scored against its hypothesis
  1    failure: unreadable --truth/--ocr, no reference page, nothing scored
  2    usage error: bad flag or option value
  3    partial: some hypotheses missing or failed to read, or some references
       unreadable (the rest were scored and reported)
  130  interrupted (SIGINT or SIGTERM)`

func newScoreCommand(g *GlobalOptions) *cobra.Command {
	var o ScoreOptions
	cmd := &cobra.Command{
		Use:   "score --truth DIR --ocr DIR",
		Short: "Measure CER and WER of OCR text against ground truth",
		Long:  scoreLong,
		Example: `  recto score --truth gt --ocr out
  recto score --truth gt --ocr out --format json > scores.json
  recto score --truth gt --ocr out --fold-case --plain-typography --confusions 20`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runScore(cmd.Context(), o, *g)
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.Truth, "truth", "", "ground-truth `folder` (reference *.txt pages, searched recursively)")
	f.StringVar(&o.OCR, "ocr", "", "OCR output `folder` (hypothesis *.txt pages at the same relative paths)")
	f.StringVar(&o.Format, "format", "table", "output `format`: table, json or csv")
	f.IntVar(&o.Confusions, "confusions", 0, "list the `n` most frequent confusions")
	f.BoolVar(&o.FoldCase, "fold-case", false, "fold case before scoring")
	f.BoolVar(&o.IgnorePunct, "ignore-punct", false, "ignore punctuation")
	f.BoolVar(&o.PlainTypography, "plain-typography", false, "map typographic quotes, dashes, ligatures and long s to plain ones")
	f.IntVarP(&o.Jobs, "jobs", "j", 0, "score `n` pages at once (0: one per core)")
	f.StringVar(&o.Plan, "plan", "", "sampling plan `file` of recto sample: say per title whether its interval reached the target")
	return cmd
}

func runScore(ctx context.Context, o ScoreOptions, g GlobalOptions) error {
	switch {
	case o.Truth == "":
		return usagef("score: --truth is required")
	case o.OCR == "":
		return usagef("score: --ocr is required")
	case o.Format != "table" && o.Format != "json" && o.Format != "csv":
		return usagef("score: --format %q: want table, json or csv", o.Format)
	case o.Confusions < 0:
		return usagef("score: --confusions %d: want 0 or more", o.Confusions)
	case o.Confusions > 0 && o.Format == "csv":
		return usagef("score: --confusions is not available with --format csv")
	case o.Jobs < 0:
		return checkJobs(o.Jobs)
	}
	for _, d := range [][2]string{{"--truth", o.Truth}, {"--ocr", o.OCR}} {
		if err := checkDir(d[0], d[1]); err != nil {
			return err
		}
	}
	cfg := quality.DirConfig{
		Norm:       quality.NormOptions{FoldCase: o.FoldCase, IgnorePunct: o.IgnorePunct, PlainTypography: o.PlainTypography},
		Confusions: o.Confusions,
		Workers:    o.Jobs,
	}
	rep, err := quality.ScoreDirs(ctx, o.Truth, o.OCR, cfg)
	if err != nil {
		return fmt.Errorf("score: %w", err)
	}
	for _, fe := range rep.Failed {
		g.printf("%v", fe)
	}
	for _, m := range rep.Missing {
		g.printf("hypothesis %q is missing: page %q scored as empty text",
			filepath.Join(o.OCR, filepath.FromSlash(m+".txt")), m)
	}
	for _, u := range rep.Unmatched {
		g.printf("hypothesis %q has no reference: not scored",
			filepath.Join(o.OCR, filepath.FromSlash(u)))
	}
	for _, p := range rep.Pages {
		if p.FlexSkipped > 0 {
			g.printf("page %q: %s", p.Page, quality.FlexSkippedNote)
		}
	}
	switch o.Format {
	case "json":
		err = writeScoreJSON(g.stdout, rep)
	case "csv":
		err = writeScoreCSV(g.stdout, rep)
	default:
		err = writeScoreTable(g.stdout, rep)
	}
	if err != nil {
		return fmt.Errorf("score: writing the report: %w", err)
	}
	if o.Plan != "" {
		if err := writePlanCheck(g, o.Plan, rep, o.Format == "table"); err != nil {
			return err
		}
	}
	if rep.Partial() {
		failed := len(rep.Missing) + len(rep.Failed)
		return &partialError{Failed: failed, Total: len(rep.Pages) + countRefFailures(rep), What: "pages"}
	}
	return nil
}

// countRefFailures counts the references that could not be scored (they
// are not in rep.Pages).
func countRefFailures(rep *quality.Report) int {
	n := 0
	for _, fe := range rep.Failed {
		if fe.Role == "reference" {
			n++
		}
	}
	return n
}

// rate returns c's CER or WER as a JSON value: a number, or nil for null.
func rate(v float64, ok bool) *float64 {
	if !ok {
		return nil
	}
	return &v
}

type jsonCounts struct {
	Chars      int      `json:"chars"`
	CharErrors int      `json:"char_errors"`
	CER        *float64 `json:"cer"`
	Words      int      `json:"words"`
	WordErrors int      `json:"word_errors"`
	WER        *float64 `json:"wer"`
	FlexErrors int      `json:"flex_errors"`
	FlexCER    *float64 `json:"flex_cer"`
	BagErrors  int      `json:"bag_errors"`
	BagWER     *float64 `json:"bag_wer"`
}

func toJSONCounts(c quality.Counts) jsonCounts {
	return jsonCounts{
		Chars: c.Chars, CharErrors: c.CharErrors, CER: rate(c.CER()),
		Words: c.Words, WordErrors: c.WordErrors, WER: rate(c.WER()),
		FlexErrors: c.FlexErrors, FlexCER: rate(c.FlexCER()),
		BagErrors: c.BagErrors, BagWER: rate(c.BagWER()),
	}
}

type jsonPage struct {
	Title  string `json:"title"`
	Page   string `json:"page"`
	Status string `json:"status"`
	jsonCounts
}

type jsonTitle struct {
	Title string `json:"title"`
	Pages int    `json:"pages"`
	jsonCounts
	CERMean *float64 `json:"mean_cer"`
	CERLow  *float64 `json:"cer_low"`
	CERHigh *float64 `json:"cer_high"`
}

type jsonTotal struct {
	Pages int `json:"pages"`
	jsonCounts
}

type jsonFailure struct {
	Role   string `json:"role"`
	File   string `json:"file"`
	Offset *int   `json:"offset,omitempty"`
	Error  string `json:"error"`
}

type jsonConfusion struct {
	Ref   string `json:"ref"`
	Hyp   string `json:"hyp"`
	Shown string `json:"shown"`
	Count int    `json:"count"`
}

type jsonBootstrap struct {
	Method    string  `json:"method"`
	Level     float64 `json:"level"`
	Resamples int     `json:"resamples"`
	Seed      uint64  `json:"seed"`
}

type jsonReport struct {
	Normalization string          `json:"normalization"`
	Bootstrap     jsonBootstrap   `json:"bootstrap"`
	Pages         []jsonPage      `json:"pages"`
	Titles        []jsonTitle     `json:"titles"`
	Total         jsonTotal       `json:"total"`
	Missing       []string        `json:"missing"`
	Unmatched     []string        `json:"unmatched"`
	Failed        []jsonFailure   `json:"failed"`
	Confusions    []jsonConfusion `json:"confusions,omitempty"`
}

func writeScoreJSON(w io.Writer, rep *quality.Report) error {
	out := jsonReport{
		Normalization: rep.Norm.String(),
		Bootstrap: jsonBootstrap{
			Method: "percentile bootstrap over pages, nearest rank", Level: 0.95,
			Resamples: quality.DefaultResamples, Seed: quality.DefaultSeed,
		},
		Pages:     make([]jsonPage, 0, len(rep.Pages)),
		Titles:    make([]jsonTitle, 0, len(rep.Titles)),
		Total:     jsonTotal{Pages: len(rep.Pages), jsonCounts: toJSONCounts(rep.Total)},
		Missing:   append([]string{}, rep.Missing...),
		Unmatched: append([]string{}, rep.Unmatched...),
		Failed:    make([]jsonFailure, 0, len(rep.Failed)),
	}
	for _, p := range rep.Pages {
		out.Pages = append(out.Pages, jsonPage{p.Title, p.Page, p.Status, toJSONCounts(p.Counts)})
	}
	for _, t := range rep.Titles {
		jt := jsonTitle{Title: t.Title, Pages: t.Pages, jsonCounts: toJSONCounts(t.Counts), CERMean: rate(t.MeanCER, t.MeanOK)}
		jt.CERLow, jt.CERHigh = rate(t.Low, t.IntervalOK), rate(t.High, t.IntervalOK)
		out.Titles = append(out.Titles, jt)
	}
	for _, fe := range rep.Failed {
		jf := jsonFailure{Role: fe.Role, File: fe.File, Error: fe.Err.Error()}
		if fe.Hint != "" {
			jf.Error += ": " + fe.Hint
		}
		if fe.Offset >= 0 {
			off := fe.Offset
			jf.Offset = &off
		}
		out.Failed = append(out.Failed, jf)
	}
	for _, c := range rep.Confusions {
		out.Confusions = append(out.Confusions, jsonConfusion{c.Ref, c.Hyp, c.String(), c.Count})
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(out)
}

// formatRate formats a rate for CSV: shortest decimal, empty when undefined.
func formatRate(v float64, ok bool) string {
	if !ok {
		return ""
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

func writeScoreCSV(w io.Writer, rep *quality.Report) error {
	cw := csv.NewWriter(w)
	norm := rep.Norm.String()
	cw.Write([]string{"title", "page", "status", "chars", "char_errors", "cer", "words", "word_errors", "wer", "flex_errors", "flex_cer", "bag_errors", "bag_wer", "normalization"})
	for _, p := range rep.Pages {
		cer, cok := p.CER()
		wer, wok := p.WER()
		flex, fok := p.FlexCER()
		bag, bok := p.BagWER()
		cw.Write([]string{
			p.Title, p.Page, p.Status,
			strconv.Itoa(p.Chars), strconv.Itoa(p.CharErrors), formatRate(cer, cok),
			strconv.Itoa(p.Words), strconv.Itoa(p.WordErrors), formatRate(wer, wok),
			strconv.Itoa(p.FlexErrors), formatRate(flex, fok), strconv.Itoa(p.BagErrors), formatRate(bag, bok), norm,
		})
	}
	cw.Flush()
	return cw.Error()
}

// percent formats a rate as a percentage with two decimals, or "-".
func percent(v float64, ok bool) string {
	if !ok {
		return "-"
	}
	return strconv.FormatFloat(100*v, 'f', 2, 64) + "%"
}

func writeScoreTable(w io.Writer, rep *quality.Report) error {
	var b strings.Builder
	fmt.Fprintf(&b, "Normalisation: %s\n\n", rep.Norm)

	// tabwriter aligns every column right; names and states are padded to
	// stay left, as text columns are (issue 17 part 3).
	width := len("title")
	for _, p := range rep.Pages {
		width = max(width, utf8.RuneCountInString(p.Page))
	}
	for _, t := range rep.Titles {
		width = max(width, utf8.RuneCountInString(t.Title))
	}
	name := func(s string) string { return s + strings.Repeat(" ", width-utf8.RuneCountInString(s)) }
	sw := len("status")
	for _, p := range rep.Pages {
		sw = max(sw, utf8.RuneCountInString(p.Status))
	}
	status := func(s string) string { return s + strings.Repeat(" ", sw-utf8.RuneCountInString(s)) }

	var tb strings.Builder
	tw := tabwriter.NewWriter(&tb, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "%s\t%s\tchars\tchar errors\tCER\twords\tword errors\tWER\tflex CER\tbag WER\t\n", name("page"), status("status"))
	for _, p := range rep.Pages {
		fmt.Fprintf(tw, "%s\t%s\t%d\t%d\t%s\t%d\t%d\t%s\t%s\t%s\t\n", name(p.Page), status(p.Status),
			p.Chars, p.CharErrors, percent(p.CER()), p.Words, p.WordErrors, percent(p.WER()),
			percent(p.FlexCER()), percent(p.BagWER()))
	}
	tw.Flush()
	b.WriteString(dropIndent(tb.String()))
	b.WriteString("\n")

	tb.Reset()
	tw = tabwriter.NewWriter(&tb, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "%s\tpages\tchars\tchar errors\tCER\tmean page CER\t95%% interval\twords\tword errors\tWER\tflex CER\tbag WER\t\n", name("title"))
	for _, t := range rep.Titles {
		interval := "-"
		if t.IntervalOK {
			interval = percent(t.Low, true) + " – " + percent(t.High, true)
		}
		fmt.Fprintf(tw, "%s\t%d\t%d\t%d\t%s\t%s\t%s\t%d\t%d\t%s\t%s\t%s\t\n", name(t.Title), t.Pages,
			t.Chars, t.CharErrors, percent(t.CER()), percent(t.MeanCER, t.MeanOK), interval,
			t.Words, t.WordErrors, percent(t.WER()), percent(t.FlexCER()), percent(t.BagWER()))
	}
	fmt.Fprintf(tw, "%s\t%d\t%d\t%d\t%s\t\t\t%d\t%d\t%s\t%s\t%s\t\n", name("total"), len(rep.Pages),
		rep.Total.Chars, rep.Total.CharErrors, percent(rep.Total.CER()),
		rep.Total.Words, rep.Total.WordErrors, percent(rep.Total.WER()),
		percent(rep.Total.FlexCER()), percent(rep.Total.BagWER()))
	tw.Flush()
	b.WriteString(dropIndent(tb.String()))
	fmt.Fprintf(&b, "\nTitles and total are micro-averaged; the interval is a %d-resample percentile bootstrap over pages.\n", quality.DefaultResamples)

	list := func(head string, items []string) {
		if len(items) == 0 {
			return
		}
		fmt.Fprintf(&b, "\n%s (%d):\n", head, len(items))
		for _, it := range items {
			fmt.Fprintf(&b, "  %s\n", it)
		}
	}
	list("Missing hypotheses, scored as empty text", rep.Missing)
	var failed []string
	for _, fe := range rep.Failed {
		failed = append(failed, fe.Error())
	}
	list("Unreadable files", failed)
	list("Hypotheses without a reference, not scored", rep.Unmatched)

	if len(rep.Confusions) > 0 {
		fmt.Fprintf(&b, "\nMost frequent confusions (reference→hypothesis, ∅ = nothing, ␣ = space):\n")
		tb.Reset()
		tw = tabwriter.NewWriter(&tb, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "count\tconfusion\t")
		for _, c := range rep.Confusions {
			fmt.Fprintf(tw, "%d\t%s\t\n", c.Count, c)
		}
		tw.Flush()
		b.WriteString(dropIndent(tb.String()))
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// dropIndent removes the padding tabwriter puts before the first column
// when it aligns right: the indent the lines share.
func dropIndent(s string) string {
	lines := strings.SplitAfter(s, "\n")
	indent := -1
	for _, l := range lines {
		if strings.TrimSpace(l) == "" {
			continue
		}
		n := len(l) - len(strings.TrimLeft(l, " "))
		if indent < 0 || n < indent {
			indent = n
		}
	}
	if indent <= 0 {
		return s
	}
	for i, l := range lines {
		if len(l) >= indent {
			lines[i] = l[indent:]
		}
	}
	return strings.Join(lines, "")
}

// writePlanCheck says, per title of the sampling plan, whether the
// stratified interval of the scored planned pages reached the plan's
// half-width: a section on stdout with the table, lines on stderr with
// json and csv (which keep their layout).
func writePlanCheck(g GlobalOptions, plan string, rep *quality.Report, table bool) error {
	f, err := os.Open(plan)
	if err != nil {
		return fmt.Errorf("score: --plan: %w", err)
	}
	defer f.Close()
	p, err := quality.ReadPlan(f, plan)
	if err != nil {
		return fmt.Errorf("score: %w", err)
	}
	res, err := quality.CheckPlan(p, rep.Pages, 0, 0)
	if err != nil {
		return fmt.Errorf("score: --plan %q: %w", plan, err)
	}
	line := func(r quality.TargetResult) string {
		switch {
		case !r.OK:
			return fmt.Sprintf("%s: no interval (%d of %d planned pages scored; every band needs one)", r.Title, r.Scored, r.Planned)
		case r.Reached:
			return fmt.Sprintf("%s: target reached: CER %.2f %% [%.2f, %.2f], ±%.2f points within ±%.2f (%d of %d planned pages scored)",
				r.Title, 100*r.CER, 100*r.Low, 100*r.High, 50*(r.High-r.Low), 100*p.HalfWidth, r.Scored, r.Planned)
		}
		return fmt.Sprintf("%s: target NOT reached: CER %.2f %% [%.2f, %.2f], ±%.2f points, target ±%.2f (%d of %d planned pages scored): transcribe more pages of the title",
			r.Title, 100*r.CER, 100*r.Low, 100*r.High, 50*(r.High-r.Low), 100*p.HalfWidth, r.Scored, r.Planned)
	}
	if table {
		fmt.Fprintf(g.stdout, "\nSampling plan %s (stratified 95 %% interval):\n", plan)
		for _, r := range res {
			fmt.Fprintf(g.stdout, "  %s\n", line(r))
		}
		return nil
	}
	for _, r := range res {
		g.printf("%s", line(r))
	}
	return nil
}
