package main

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"

	"github.com/spf13/cobra"

	"recto/lexicon"
	"recto/quality"
)

// CalibrateOptions are the options of `recto calibrate`.
type CalibrateOptions struct {
	OCR, Truth, Out string
	Lexicon         string
	Holdout         float64 // share of pages held out for the report
	Seed            int64   // seed of the hold-out split and the folds
	Rescan, Correct float64 // thresholds declared before fitting
	Targets         quality.Targets
	Format          string
	Jobs            int // pages read at once; 0: one per core
}

func newCalibrateCommand(g *GlobalOptions) *cobra.Command {
	var o CalibrateOptions
	cmd := &cobra.Command{
		Use:   "calibrate --ocr DIR --truth DIR --out MODEL",
		Short: "Refit the quality estimator on a ground-truthed sample",
		Long: `Refit the page-quality estimator used by 'recto triage' on your own pages.

--ocr is a folder written by 'recto ocr' (page records <name>.json, or
<name>.txt); --truth holds the exact transcription of each page at the same
relative path as <name>.txt. Each page's CER is measured against its ground
truth.

Before fitting, --holdout of the pages (default 30%) are set aside by a
shuffle with --seed; the model is fitted on the rest only and judged on the
held-out pages: Spearman rank correlation of predicted against measured CER,
mean absolute error, precision and recall of 'rescan' at the --rescan
threshold (declared before fitting), and the share of clean pages (CER < 1%)
accepted. The report says plainly whether each declared target was met.

The rescan cut is chosen on the fitting pages only: the lowest margin below
--rescan at which cross-validated estimates (each page estimated by a model
that did not see it) catch --target-recall + 0.03 of the fitting pages above
--rescan (never below half of --rescan). The report gives the cut.
The model written to --out is the one that was judged; use it with
'recto triage --quality-model MODEL'.

OUTPUT (stdout)
  table  (default) the figures in words
  json   {"model", "pages", "fitted", "held_out", "skipped",
         "held_out_evaluation", "targets_met", "record_rescan_cut",
         "text_rescan_cut", "checks"}; undefined figures are -1
  csv    a header and one row: model,pages,fitted,held_out,skipped,spearman,
         mae,precision,recall,clean_accepted,true_pos,false_pos,false_neg,
         record_rescan_cut,text_rescan_cut,targets_met (undefined: empty)` + exitStatusHelp,
		Args: cobra.NoArgs,
		PreRunE: func(cmd *cobra.Command, args []string) error {
			if o.OCR == "" || o.Truth == "" || o.Out == "" {
				return usagef("calibrate: --ocr, --truth and --out are required")
			}
			if err := checkJobs(o.Jobs); err != nil {
				return err
			}
			if !(o.Holdout > 0 && o.Holdout < 1) {
				return usagef("--holdout %v: want a share strictly between 0 and 1", o.Holdout)
			}
			if err := checkFormat(&o.Format, "table", "json", "csv"); err != nil {
				return err
			}
			if err := (quality.Thresholds{Rescan: o.Rescan, Correct: o.Correct}).Validate(); err != nil {
				return usagef("calibrate: %v", err)
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			return runCalibrate(cmd.Context(), o, *g)
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.OCR, "ocr", "", "`folder` of OCR output (page records or text)")
	f.StringVar(&o.Truth, "truth", "", "`folder` of ground truth, <page>.txt at the same relative paths")
	f.StringVarP(&o.Out, "out", "o", "", "write the fitted model to this `file` (JSON)")
	f.StringVar(&o.Lexicon, "lexicon", "", "lexicon `file` (default: embedded English)")
	f.Float64Var(&o.Holdout, "holdout", 0.3, "`share` of pages held out for the report")
	f.Int64Var(&o.Seed, "seed", 1, "seed `n` of the hold-out split and cross-validation folds")
	f.Float64Var(&o.Rescan, "rescan", quality.DefaultRescan, "rescan threshold declared before fitting, a `fraction` of CER")
	f.Float64Var(&o.Correct, "correct", quality.DefaultCorrect, "correct threshold declared before fitting, a `fraction` of CER")
	f.Float64Var(&o.Targets.Spearman, "target-spearman", 0.9, "declared target: minimum Spearman rank correlation")
	f.Float64Var(&o.Targets.Recall, "target-recall", 0.95, "declared target: minimum recall of rescan")
	f.Float64Var(&o.Targets.Precision, "target-precision", 0.85, "declared target: minimum precision of rescan")
	f.Float64Var(&o.Targets.CleanAccept, "target-clean", 0.95, "declared target: minimum share of clean pages accepted")
	f.StringVar(&o.Format, "format", "table", "report `format`: table, json or csv")
	f.IntVarP(&o.Jobs, "jobs", "j", 0, "read `n` pages at once (0: one per core)")
	return cmd
}

// calibrateReport is the JSON form of the report.
type calibrateReport struct {
	Model      string             `json:"model"`
	Pages      int                `json:"pages"`
	Fitted     int                `json:"fitted"`
	HeldOut    int                `json:"held_out"`
	Skipped    int                `json:"skipped"`
	Evaluation quality.Evaluation `json:"held_out_evaluation"`
	TargetsMet bool               `json:"targets_met"`
	RecordCut  float64            `json:"record_rescan_cut"` // estimate above which a page with a record is sent for rescanning
	TextCut    float64            `json:"text_rescan_cut"`   // the same for a page known only by its text
	Checks     []string           `json:"checks"`
}

func runCalibrate(ctx context.Context, o CalibrateOptions, g GlobalOptions) error {
	lex := lexicon.Default()
	if o.Lexicon != "" {
		var err error
		if lex, err = lexicon.Load(o.Lexicon); err != nil {
			return err
		}
	}
	for _, d := range [][2]string{{"--ocr", o.OCR}, {"--truth", o.Truth}} {
		if err := checkDir(d[0], d[1]); err != nil {
			return err
		}
	}
	samples, problems, err := quality.LoadSamples(ctx, o.OCR, o.Truth, lex, o.Jobs)
	if err != nil {
		return err
	}
	for _, p := range problems {
		g.printf("skipped: %v", p)
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	fit, held := quality.Split(samples, o.Holdout, o.Seed)
	m, err := quality.Fit(fit, quality.FitOptions{Seed: o.Seed, Source: fmt.Sprintf("recto calibrate --ocr %q --truth %q", o.OCR, o.Truth),
		Rescan: o.Rescan, Recall: o.Targets.Recall})
	if err != nil {
		return fmt.Errorf("calibrate: %w (%d usable pages, %d held out)", err, len(samples), len(held))
	}
	m.Fit.Holdout, m.Fit.HeldOut = o.Holdout, len(held)
	m.Fit.Command = fmt.Sprintf("recto calibrate --ocr %q --truth %q --out %q --holdout %v --seed %d", o.OCR, o.Truth, o.Out, o.Holdout, o.Seed)
	th := quality.Thresholds{Rescan: o.Rescan, Correct: o.Correct}
	ev := quality.Evaluate(m, held, th)
	met, checks := o.Targets.Check(ev)
	if err := m.Save(o.Out); err != nil {
		return err
	}
	rep := calibrateReport{Model: o.Out, Pages: len(samples) + len(problems), Fitted: len(fit), HeldOut: len(held),
		Skipped: len(problems), Evaluation: ev, TargetsMet: met, Checks: checks,
		RecordCut: factorOf(m.Record) * th.Rescan, TextCut: factorOf(m.Text) * th.Rescan}
	switch o.Format {
	case "json":
		enc := json.NewEncoder(g.stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(jsonSafe(rep)); err != nil {
			return err
		}
	case "csv":
		if err := writeCalibrateCSV(g.stdout, rep); err != nil {
			return err
		}
	default:
		writeCalibrateText(g.stdout, rep)
	}
	if len(problems) > 0 {
		return &partialError{Failed: len(problems), Total: rep.Pages, What: "pages"}
	}
	return nil
}

// jsonSafe replaces NaN figures (undefined) by -1 so the report encodes;
// the text report prints them as "n/a".
func jsonSafe(r calibrateReport) calibrateReport {
	e := &r.Evaluation
	for _, p := range []*float64{&e.Spearman, &e.MAE, &e.Precision, &e.Recall, &e.CleanAccepted} {
		if math.IsNaN(*p) {
			*p = -1
		}
	}
	return r
}

func writeCalibrateCSV(w io.Writer, r calibrateReport) error {
	e := r.Evaluation
	fig := func(x float64) string {
		if math.IsNaN(x) {
			return ""
		}
		return strconv.FormatFloat(x, 'f', 4, 64)
	}
	cw := csv.NewWriter(w)
	cw.Write([]string{"model", "pages", "fitted", "held_out", "skipped", "spearman", "mae", "precision", "recall",
		"clean_accepted", "true_pos", "false_pos", "false_neg", "record_rescan_cut", "text_rescan_cut", "targets_met"})
	cw.Write([]string{r.Model, strconv.Itoa(r.Pages), strconv.Itoa(r.Fitted), strconv.Itoa(r.HeldOut), strconv.Itoa(r.Skipped),
		fig(e.Spearman), fig(e.MAE), fig(e.Precision), fig(e.Recall), fig(e.CleanAccepted),
		strconv.Itoa(e.TruePos), strconv.Itoa(e.FalsePos), strconv.Itoa(e.FalseNeg),
		fig(r.RecordCut), fig(r.TextCut), strconv.FormatBool(r.TargetsMet)})
	cw.Flush()
	return cw.Error()
}

func writeCalibrateText(w io.Writer, r calibrateReport) {
	e := r.Evaluation
	fmt.Fprintf(w, "pages: %d usable, %d skipped; fitted on %d, judged on %d held out\n", r.Pages-r.Skipped, r.Skipped, r.Fitted, r.HeldOut)
	fmt.Fprintf(w, "model written to %s\n\n", r.Model)
	fmt.Fprintf(w, "held-out pages only:\n")
	fmt.Fprintf(w, "  mean absolute error of predicted CER  %s\n", fmtFig(e.MAE, true))
	fmt.Fprintf(w, "  rescan (measured CER > %.0f%%; decided when the estimate is above %.1f%% with a page record, %.1f%% as text): %d true, %d false alarms, %d missed\n",
		100*e.RescanAbove, 100*r.RecordCut, 100*r.TextCut, e.TruePos, e.FalsePos, e.FalseNeg)
	fmt.Fprintf(w, "  clean pages (CER < 1%%): %d\n", e.Clean)
	if e.EmptyTruth > 0 {
		fmt.Fprintf(w, "  pages with empty ground truth: %d, of which decided blank or picture: %d\n", e.EmptyTruth, e.EmptyAsBlank)
	}
	keys := make([]string, 0, len(e.Decisions))
	for k := range e.Decisions {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	fmt.Fprintf(w, "  decisions:")
	for _, k := range keys {
		fmt.Fprintf(w, " %s %d", k, e.Decisions[k])
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w)
	for _, c := range r.Checks {
		fmt.Fprintf(w, "  %s\n", c)
	}
	if r.TargetsMet {
		fmt.Fprintln(w, "\nAll declared targets were met on the held-out pages.")
	} else {
		fmt.Fprintln(w, "\nThe declared targets were NOT all met on the held-out pages.")
	}
}

// factorOf returns l's rescan factor (0 is read as 1).
func factorOf(l quality.Linear) float64 {
	if l.RescanFactor == 0 {
		return 1
	}
	return l.RescanFactor
}

func fmtFig(x float64, percent bool) string {
	if math.IsNaN(x) {
		return "n/a"
	}
	if percent {
		return fmt.Sprintf("%.1f%%", 100*x)
	}
	return fmt.Sprintf("%.3f", x)
}
