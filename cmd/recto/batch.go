package main

import (
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"recto/cmd/internal/run"
	"recto/correct"
	"recto/ocr"
)

// testEngine, when set (by the tests of this package only), gives `run`
// and `demo` their engines instead of Tesseract, without preparation. The
// shipped binary has no way to set it.
var testEngine func() (ocr.Engine, error)

// addRunFlags registers the options of `recto run` on cmd.
func addRunFlags(cmd *cobra.Command, o *run.Options, prep *prepFlags) {
	f := cmd.Flags()
	prep.add(f)
	f.StringVarP(&o.Out, "out", "o", "", "run `folder` for the ledger, outputs and reports (required)")
	f.StringVar(&o.Truth, "truth", "", "ground-truth `folder`: the same relative path with .txt scores a page")
	f.IntVarP(&o.Jobs, "jobs", "j", 0, "recognise `n` pages at once (0: one per core)")
	f.StringVarP(&o.Lang, "lang", "l", "eng", "Tesseract `languages`, e.g. eng or eng+fra")
	f.IntVar(&o.PSM, "psm", 0, "Tesseract page segmentation `mode` (default: the engine's)")
	f.Float64Var(&o.DPI, "dpi", 0, "resolution to assume when a file records none (default: estimated from the size of the text, else 300)")
	f.Float64Var(&o.Rescan, "rescan", 0, "mark a page rescan when its predicted `CER` is above this (default 0.10)")
	f.Float64Var(&o.Correct, "correct", 0, "correct a page when its predicted `CER` is above this (default 0.02)")
	f.StringVar(&o.Model, "quality-model", "", "quality model `file` from 'recto calibrate' for triage (default: embedded)")
	f.StringVar(&o.CorrectionModel, "correction-model", "", "error model `file` from 'recto correct train' (default: embedded; the Fraktur one for --lang frk or Fraktur)")
	f.BoolVar(&o.KeepMarks, "keep-marks", false, "leave stray marks (tokens with no letter or digit) in the text")
	f.BoolVar(&o.MapGlyphs, "map-glyphs", false, "rewrite punctuation glyphs as the correction model's ground truth has them")
	f.StringVar(&o.Lexicon, "lexicon", "", "lexicon `file` for triage and correction (default: built in)")
	f.Float64Var(&o.TargetCER, "target-cer", 0, "CER after correction each title should reach, e.g. 0.03; report.html says per title whether it does (default: none)")
	f.Float64Var(&o.Margin, "margin", 0, fmt.Sprintf("correct a word only when the candidate is e^`m` times likelier (default %g)", correct.DefaultMargin))
	f.StringVar(&o.Shard, "shard", "", "process only share `i/n` of the pages (default: from JOB_COMPLETION_INDEX or SLURM_ARRAY_TASK_ID, else all)")
	f.IntVar(&o.ShardCount, "shard-count", 0, "number of shards when the index comes from JOB_COMPLETION_INDEX (default: $RECTO_SHARDS)")
	f.IntVar(&o.MaxPixels, "max-pixels", ocr.DefaultMaxPixels, "largest page accepted, width × height `pixels`; larger pages fail as a set-up problem, not a bad scan")
	f.BoolVar(&o.NewCollection, "new-collection", false, "run this collection into an --out folder used for another one (its pages are kept as gone)")
	oldName(cmd, "model", "quality-model")
}

func newRunCommand(g *GlobalOptions) *cobra.Command {
	var o run.Options
	var prep prepFlags
	cmd := &cobra.Command{
		Use:   "run COLLECTION --out DIR [--truth DIR]",
		Short: "Run the whole job on a collection: recognise, triage, correct, score, report",
		Long: `Run recognises every page image under COLLECTION (titles are its first-level
folders), estimates each page's quality and decides accept, correct, rescan,
blank or picture, corrects the pages marked correct, scores pages that have
ground truth (the same relative path with .txt under --truth) before and
after correction, and writes reports to DIR/report.

A ledger (DIR/ledger.db, SQLite) records every page as soon as it is done.
Run the same command again to resume: pages already done whose image and
settings are unchanged are skipped; a changed image is done again. Killing
the run loses at most the pages in flight. Only one run may use DIR at a
time.

Each page of a multi-page TIFF or PDF is a page of its own, named after
the file and a 1-based page number: page 3 of box/reel-07.tif is
box/reel-07/p0003 in the outputs, the reports and the ledger, and its ground
truth is --truth/box/reel-07/p0003.txt. Pages are decoded one at a time; a
corrupt page fails alone, named with its file and number; a rerun resumes
page by page.

Outputs: DIR/ocr/<page>.txt, .alto.xml and .json for every page, and
DIR/corrected/<page>.* for corrected pages, with DIR/corrected/changes.jsonl
listing every change as 'recto correct' lists them; reports:
DIR/report/titles.csv, titles.json, pages.csv, rescan.csv and report.html.

The page steps are those of the commands, with the same options: the
preparation options of 'recto ocr' (--no-prepare, --deskew, --denoise,
--cleanup, --binarize, --max-skew), the thresholds and --quality-model of
'recto triage', the --correction-model, --margin, --keep-marks and
--map-glyphs of 'recto correct' (pages triage marks correct are
corrected). The text, ALTO and change list are byte for byte what those
commands write for the same pages.

Scale-out: --shard i/n (or a Kubernetes Indexed Job or Slurm job array; see
the README) processes a deterministic share of the pages into
DIR/shards/<i>-of-<n>; 'recto merge DIR' combines the shards.
` + exitStatusHelp,
		Args: cobra.ExactArgs(1),
		PreRunE: func(cmd *cobra.Command, args []string) error {
			p, err := prep.options()
			if err != nil {
				return err
			}
			o.Prep, o.NoPrepare = p, prep.NoPrepare
			return o.Validate()
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Collection = args[0]
			o.Stderr, o.Quiet, o.Command = g.stderr, g.Quiet, g.prefix()
			if testEngine != nil {
				o.NewEngine, o.NoPrepare = testEngine, true
			}
			_, err := run.Run(cmd.Context(), o)
			return err
		},
	}
	addRunFlags(cmd, &o, &prep)
	return cmd
}

func newDemoCommand(g *GlobalOptions) *cobra.Command {
	var o run.DemoOptions
	cmd := &cobra.Command{
		Use:   "demo [--out DIR]",
		Short: "Generate the fictional demo collection and run the whole job on it",
		Long: `Demo generates a small fictional collection (three invented titles of eight
pages each), renders it at 300 dpi, degrades the pages at several levels,
writes ground truth for half the pages of each title, and runs the same job
as 'recto run' on it. It prints where the report is.

Layout of DIR: collection/ (the page images), truth/ (ground truth) and
run/ (the run folder: ledger, outputs, run/report/report.html). The output is
the same on every machine and every time. Running demo again reuses DIR; a
folder that was not made by demo is never touched.
` + exitStatusHelp,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Stderr, o.Quiet, o.Command = g.stderr, g.Quiet, g.prefix()
			if testEngine != nil {
				o.NewEngine, o.NoPrepare = testEngine, true
			}
			sum, err := run.Demo(cmd.Context(), o)
			var pe *partialError
			if err != nil && !errors.As(err, &pe) {
				return err
			}
			fmt.Fprintln(g.stdout, sum.Report)
			return err
		},
	}
	cmd.Flags().StringVarP(&o.Out, "out", "o", "recto-demo", "demo `folder`")
	cmd.Flags().IntVarP(&o.Jobs, "jobs", "j", 0, "recognise `n` pages at once (0: one per core)")
	return cmd
}

func newMergeCommand(g *GlobalOptions) *cobra.Command {
	var o run.MergeOptions
	cmd := &cobra.Command{
		Use:   "merge DIR... [--out DIR]",
		Short: "Combine the ledgers of sharded runs and build the reports",
		Long: `Merge combines the ledgers of sharded runs into one ledger and builds its
reports.

With one DIR, the shard ledgers in DIR/shards/*/ (written by 'recto run
--out DIR --shard i/n') are merged into DIR/ledger.db and the reports go to
DIR/report. With several DIRs, or with --out, every ledger found in them
(DIR/ledger.db and DIR/shards/*/ledger.db) is merged into --out, and the
output files the ledgers list are copied there too.

A page found in several ledgers is taken from the one where it is done; if
it is done in more than one, the most recent wins. The sources are only read.
` + exitStatusHelp,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Dirs = args
			o.Stderr, o.Quiet = g.stderr, g.Quiet
			sum, err := run.Merge(cmd.Context(), o)
			if err != nil {
				return err
			}
			fmt.Fprintln(g.stdout, sum.Report)
			return nil
		},
	}
	cmd.Flags().StringVarP(&o.Out, "out", "o", "", "run `folder` to merge into (default: the one DIR given)")
	cmd.Flags().BoolVar(&o.AllowPartial, "allow-partial", false, "merge even when shards are missing, repeated or of different settings (exit 3 otherwise); the report says it is partial")
	return cmd
}

func newReportCommand(g *GlobalOptions) *cobra.Command {
	var o run.ReportOptions
	cmd := &cobra.Command{
		Use:   "report DIR",
		Short: "Rebuild the reports of a run from its ledger",
		Long: `Report rebuilds DIR/report (titles.csv, titles.json, pages.csv, rescan.csv,
report.html) from the ledger of the run in DIR, without recognising anything.
It may run while a run is still writing DIR: it shows the pages committed so far.
--target-cer replaces the run's own target for this report.
` + exitStatusHelp,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			page, err := run.ReportWith(cmd.Context(), args[0], o)
			if err != nil {
				return err
			}
			fmt.Fprintln(g.stdout, page)
			return nil
		},
	}
	cmd.Flags().Float64Var(&o.TargetCER, "target-cer", 0, "CER after correction each title should reach, e.g. 0.03 (default: the run's --target-cer)")
	return cmd
}
