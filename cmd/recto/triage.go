package main

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"text/tabwriter"
	"unicode/utf8"

	"github.com/spf13/cobra"

	"recto/cmd/internal/run/report"
	"recto/internal/atomicfile"
	"recto/lexicon"
	"recto/ocr"
	"recto/ocr/par"
	"recto/quality"
)

// TriageOptions are the options of `recto triage`.
type TriageOptions struct {
	Format     string  // table, json or csv
	RescanList string  // CSV file to write the pages to rescan to; "" for none
	Model      string  // model file from `recto calibrate`; "" for the embedded one
	Lexicon    string  // lexicon file; "" to choose by Lang
	Lang       string  // engine language list ("nor", "eng+deu"); "" for the page records' own, else eng
	Rescan     float64 // rescan above this predicted CER (fraction)
	Correct    float64 // correct above this predicted CER (fraction)
	Jobs       int     // pages read in parallel; 0 means GOMAXPROCS
}

func newTriageCommand(g *GlobalOptions) *cobra.Command {
	var o TriageOptions
	cmd := &cobra.Command{
		Use:   "triage OCRDIR",
		Short: "Estimate page quality without ground truth and decide accept, correct or rescan",
		Long: `Estimate each page's character error rate (CER) from the OCR output alone
and decide what to do with it:

  accept    predicted CER at or below --correct (default 2%)
  correct   above --correct, at or below --rescan (default 10%)
  rescan    above --rescan: scan the page again
  blank     no text and no ink
  picture   ink but almost no text (an illustration): not sent for rescanning

Estimates near --rescan are uncertain, so the model carries a safety margin
chosen when it was fitted: a page is also sent for rescanning when its
estimate lies within that margin below --rescan (the embedded model, with a
page record: above 0.71 x --rescan, i.e. 7.1% for 10%), and its reasons say
so. A page found blank
on a very noisy scan is sent for rescanning too: its text may be lost.

OCRDIR is a folder written by 'recto ocr': every <name>.json page record is
read (word confidences, boxes); a page with only <name>.txt is judged from
its text, with less evidence. Pages are named as in 'recto score': the
title is the first folder under OCRDIR, the page its path without extension.

Each page gets plain-language reasons (share of words under confidence 60,
share of words in the lexicon, share of garbage-looking words...). A
summary per title follows. --rescan-list writes the pages to rescan as CSV
(title, page, image, predicted_cer, reasons) for the scanning station, in
the same format as the rescan.csv of 'recto run'.

OUTPUT (stdout)
  table  (default) the pages, then the titles
  json   {"pages", "titles", "failed"}; pages carry title, page, image,
         predicted_cer, decision, reasons
  csv    one row per page: title,page,image,decision,predicted_cer,reasons

The estimate comes from a model fitted on recto's synthetic corpus; fit one
on your own ground-truthed pages with 'recto calibrate' and pass it with
--quality-model.
` + langHelp + `
Without a lexicon for the language, the share of words in the lexicon
and unknown words among the suspect words are not used: the estimate
rests on confidences, garbage rules and the character mix, and each
page's reasons say so.` + exitStatusHelp,
		Args: cobra.ExactArgs(1),
		PreRunE: func(cmd *cobra.Command, args []string) error {
			if err := checkFormat(&o.Format, "table", "json", "csv"); err != nil {
				return err
			}
			if err := (quality.Thresholds{Rescan: o.Rescan, Correct: o.Correct}).Validate(); err != nil {
				return usagef("%v", err)
			}
			if err := checkJobs(o.Jobs); err != nil {
				return err
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			return runTriage(cmd.Context(), o, *g, args[0])
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.Format, "format", "table", "output `format`: table, json or csv")
	f.StringVar(&o.RescanList, "rescan-list", "", "write the pages to rescan to this CSV `file`")
	f.StringVar(&o.Model, "quality-model", "", "quality model `file` from 'recto calibrate' (default: embedded)")
	f.StringVar(&o.Lexicon, "lexicon", "", "lexicon `file` (default: the one of --lang)")
	f.StringVarP(&o.Lang, "lang", "l", "", "engine `languages` of the pages, e.g. nor or eng+deu (default: as recorded by recto ocr, else eng)")
	f.Float64Var(&o.Rescan, "rescan", quality.DefaultRescan, "rescan above this predicted CER, a `fraction` (0.10 = 10%)")
	f.Float64Var(&o.Correct, "correct", quality.DefaultCorrect, "correct above this predicted CER, a `fraction` (0.02 = 2%)")
	f.IntVarP(&o.Jobs, "jobs", "j", 0, "read `n` pages at once (0: one per core)")
	oldName(cmd, "model", "quality-model")
	return cmd
}

// triagePage is one page of the report.
type triagePage struct {
	Title        string   `json:"title"`
	Page         string   `json:"page"`
	PredictedCER float64  `json:"predicted_cer"`
	Decision     string   `json:"decision"`
	Reasons      []string `json:"reasons"`
	Image        string   `json:"image"` // page image recorded by recto ocr; "" for a page known by its text only
	Error        string   `json:"-"`
}

// triageTitle is the summary of one title.
type triageTitle struct {
	Title     string  `json:"title"`
	Pages     int     `json:"pages"`
	Accept    int     `json:"accept"`
	Correct   int     `json:"correct"`
	Rescan    int     `json:"rescan"`
	Blank     int     `json:"blank"`
	Picture   int     `json:"picture"`
	Failed    int     `json:"failed"`
	MeanPred  float64 `json:"mean_predicted_cer"` // over pages with text (not blank, picture or failed)
	textPages int
}

type triageFailure struct {
	Title string `json:"title"`
	Page  string `json:"page"`
	Error string `json:"error"`
}

type triageReport struct {
	Language *langChoice     `json:"language"`
	Pages    []triagePage    `json:"pages"`
	Titles   []triageTitle   `json:"titles"`
	Failed   []triageFailure `json:"failed,omitempty"`
}

func runTriage(ctx context.Context, o TriageOptions, g GlobalOptions, dir string) error {
	if err := checkDir("OCRDIR", dir); err != nil {
		return err
	}
	pages, err := quality.FindOCRPages(dir)
	if err != nil {
		return err
	}
	m := quality.DefaultModel()
	if o.Model != "" {
		if m, err = quality.LoadModel(o.Model); err != nil {
			return err
		}
	}
	lc, err := chooseLanguage(o.Lang, o.Lexicon, func() string { return recordedLang(pages) },
		"triage does not use the lexicon features (share of words in the lexicon, unknown words among suspect words)")
	if err != nil {
		return err
	}
	if lc.note != "" {
		g.printf("%s", lc.note)
	}
	lex := lc.lex
	th := quality.Thresholds{Rescan: o.Rescan, Correct: o.Correct}
	root := filepath.Base(filepath.Clean(dir))
	if abs, err := filepath.Abs(dir); err == nil {
		root = filepath.Base(abs)
	}

	results := make([]triagePage, len(pages))
	if err := par.Each(ctx, len(pages), o.Jobs, func(_, i int) {
		results[i] = triageOne(pages[i], root, lex, m, th)
	}); err != nil {
		return err
	}

	rep := triageReport{Language: lc, Pages: []triagePage{}}
	titles := map[string]*triageTitle{}
	textOnly := 0
	for i, r := range results {
		t := titles[r.Title]
		if t == nil {
			t = &triageTitle{Title: r.Title}
			titles[r.Title] = t
		}
		t.Pages++
		if r.Error != "" {
			t.Failed++
			rep.Failed = append(rep.Failed, triageFailure{r.Title, r.Page, r.Error})
			g.printf("%s", r.Error)
			continue
		}
		if pages[i].JSON == "" {
			textOnly++
		}
		switch r.Decision {
		case quality.DecisionAccept:
			t.Accept++
		case quality.DecisionCorrect:
			t.Correct++
		case quality.DecisionRescan:
			t.Rescan++
		case quality.DecisionBlank:
			t.Blank++
		case quality.DecisionPicture:
			t.Picture++
		}
		if r.Decision != quality.DecisionBlank && r.Decision != quality.DecisionPicture {
			t.MeanPred += r.PredictedCER
			t.textPages++
		}
		rep.Pages = append(rep.Pages, r)
	}
	for _, t := range titles {
		if t.textPages > 0 {
			t.MeanPred /= float64(t.textPages)
		}
		rep.Titles = append(rep.Titles, *t)
	}
	sort.Slice(rep.Titles, func(i, j int) bool { return rep.Titles[i].Title < rep.Titles[j].Title })
	if textOnly > 0 && !g.Quiet {
		g.printf("%d of %d pages have no .json page record; judged from their .txt alone (no confidences)", textOnly, len(pages))
	}

	if o.RescanList != "" {
		if err := writeRescanList(o.RescanList, rep.Pages); err != nil {
			return err
		}
	}
	switch o.Format {
	case "json":
		enc := json.NewEncoder(g.stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(rep); err != nil {
			return err
		}
	case "csv":
		if err := writeTriageCSV(g.stdout, rep); err != nil {
			return err
		}
	default:
		writeTriageText(g.stdout, rep, th)
	}
	switch n := len(rep.Failed); {
	case n == len(pages):
		return fmt.Errorf("none of the %d pages in %q could be read", n, dir)
	case n > 0:
		return &partialError{Failed: n, Total: len(pages), What: "pages"}
	}
	return nil
}

// triageOne reads and judges one page; a failure is recorded in the result.
func triageOne(p quality.OCRPage, root string, lex *lexicon.Lexicon, m *quality.Model, th quality.Thresholds) triagePage {
	title, page := p.TitlePage(root)
	r := triagePage{Title: title, Page: page, Reasons: []string{}}
	rec, text, err := p.Read()
	if err != nil {
		r.Error = err.Error()
		return r
	}
	var f quality.Features
	fl := lex
	if fl == nil { // no lexicon for the language: no word counts against the page for being unknown
		fl = lexicon.AcceptAll()
	}
	if rec != nil {
		f = quality.PageFeatures(rec, fl)
		r.Image = rec.Source
		if !strings.Contains(p.Rel, "/") {
			r.Title = quality.SourceTitle(rec.Source, r.Title)
		}
	} else {
		f = quality.TextFeatures(text, fl)
	}
	f.NoLexicon = lex == nil
	v := quality.Triage(f, m, th)
	r.PredictedCER, r.Decision, r.Reasons = v.PredictedCER, v.Decision, v.Reasons
	return r
}

// writeColumns writes rows as a table with two spaces between columns:
// the first text columns left-aligned, the others (numbers) right-aligned,
// widths counted in characters.
func writeColumns(w io.Writer, rows [][]string, text int) {
	var width []int
	for _, r := range rows {
		for i, c := range r {
			if i >= len(width) {
				width = append(width, 0)
			}
			width[i] = max(width[i], utf8.RuneCountInString(c))
		}
	}
	for _, r := range rows {
		var b strings.Builder
		for i, c := range r {
			pad := strings.Repeat(" ", width[i]-utf8.RuneCountInString(c))
			switch {
			case i < text && i == len(r)-1:
				b.WriteString(c)
			case i < text:
				b.WriteString(c + pad + "  ")
			case i == len(r)-1:
				b.WriteString(pad + c)
			default:
				b.WriteString(pad + c + "  ")
			}
		}
		fmt.Fprintln(w, b.String())
	}
}

func writeTriageText(w io.Writer, rep triageReport, th quality.Thresholds) {
	tw := tabwriter.NewWriter(w, 0, 8, 2, ' ', 0)
	fmt.Fprintln(tw, "TITLE\tPAGE\tPREDICTED CER\tDECISION\tREASONS")
	for _, p := range rep.Pages {
		fmt.Fprintf(tw, "%s\t%s\t%.1f%%\t%s\t%s\n", p.Title, p.Page, 100*p.PredictedCER, p.Decision, strings.Join(p.Reasons, "; "))
	}
	tw.Flush()
	fmt.Fprintln(w)
	// The title (text) left-aligned, the numbers right-aligned.
	rows := [][]string{{"TITLE", "PAGES", "ACCEPT", "CORRECT", "RESCAN", "BLANK", "PICTURE", "FAILED", "MEAN PREDICTED CER"}}
	for _, t := range rep.Titles {
		rows = append(rows, []string{t.Title, strconv.Itoa(t.Pages), strconv.Itoa(t.Accept), strconv.Itoa(t.Correct), strconv.Itoa(t.Rescan),
			strconv.Itoa(t.Blank), strconv.Itoa(t.Picture), strconv.Itoa(t.Failed), fmt.Sprintf("%.1f%%", 100*t.MeanPred)})
	}
	writeColumns(w, rows, 1)
	if rep.Language != nil {
		fmt.Fprintf(w, "\n%s\n", rep.Language.describe())
	}
}

// writeTriageCSV writes one row per page.
func writeTriageCSV(w io.Writer, rep triageReport) error {
	cw := csv.NewWriter(w)
	cw.Write([]string{"title", "page", "image", "decision", "predicted_cer", "reasons"})
	for _, p := range rep.Pages {
		cw.Write([]string{p.Title, p.Page, p.Image, p.Decision, strconv.FormatFloat(p.PredictedCER, 'f', 4, 64), strings.Join(p.Reasons, "; ")})
	}
	cw.Flush()
	return cw.Error()
}

// writeRescanList writes the pages decided rescan as CSV, with the writer
// of the run's rescan.csv.
func writeRescanList(path string, pages []triagePage) error {
	var rows []report.Page
	for _, p := range pages {
		rows = append(rows, report.Page{Title: p.Title, Page: p.Page, Rel: p.Image,
			Decision: p.Decision, PredictedCER: p.PredictedCER, Reasons: p.Reasons})
	}
	data, err := report.RescanCSV(rows)
	if err == nil {
		err = atomicfile.Write(path, data)
	}
	if err != nil {
		return fmt.Errorf("--rescan-list: %w", err)
	}
	return nil
}

// recordedLang returns the language recorded in the first page record
// among pages that has one ("" when none does): the language 'recto ocr
// --lang' read the pages in.
func recordedLang(pages []quality.OCRPage) string {
	for _, p := range pages {
		if p.JSON == "" {
			continue
		}
		if rec, err := ocr.ReadRecord(p.JSON); err == nil && rec.Lang != "" {
			return rec.Lang
		}
	}
	return ""
}
