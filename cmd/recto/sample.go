package main

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"recto/quality"
)

// SampleOptions are the flags of recto sample.
type SampleOptions struct {
	Estimates       string
	Out             string
	HalfWidth       float64 // points
	Seed            int64
	PredictionError float64
}

const sampleLong = `Plan which pages to transcribe so that each title's CER is known to a
target precision: "CER of each title to ±1 point at 95 %".

  --estimates is the CSV of 'recto triage --format csv' or a run's
  report/pages.csv: one row per page with its title, page and predicted
  CER. Pages decided blank or picture, and failed pages, are left out.

  For each title the number of pages follows the textbook rule for
  stratified random sampling (W. G. Cochran, Sampling Techniques, 3rd ed.,
  1977): from the spread of predicted CER across the title's pages, plus the
  prediction's own error (--prediction-error, relative), raised so that the
  target is reached in 90 % of samples, with the finite-population
  correction. Pages, not characters, are the sampling unit (errors cluster
  within pages). Pages are drawn at random with --seed, stratified by
  predicted-CER band (under 2 %, 2-5 %, 5-10 %, 10-20 %, 20 % and more; at
  least 8 pages per band, small bands merged), so bad pages are
  represented.

  --out gets one CSV row per page to transcribe. After transcription,
  'recto score --plan FILE' says per title whether the interval reached
  the target.`

func newSampleCommand(g *GlobalOptions) *cobra.Command {
	o := SampleOptions{}
	cmd := &cobra.Command{
		Use:   "sample --estimates FILE --out PLAN",
		Short: "Plan how many and which pages to transcribe for a target CER precision",
		Long:  sampleLong,
		Example: `  recto triage ocr --format csv > estimates.csv
  recto sample --estimates estimates.csv --half-width 1 --out plan.csv
  recto score --truth gt --ocr ocr --plan plan.csv`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error { return runSample(o, *g) },
	}
	f := cmd.Flags()
	f.StringVar(&o.Estimates, "estimates", "", "`file` of predicted CER per page (CSV of recto triage or a run's report/pages.csv)")
	f.StringVarP(&o.Out, "out", "o", "", "`file` to write the plan to (CSV, one row per page to transcribe)")
	f.Float64Var(&o.HalfWidth, "half-width", 1, "target half-width of each title's 95 % interval, in CER `points`")
	f.Int64Var(&o.Seed, "seed", int64(quality.DefaultSeed), "`seed` of the random draw (1 or more)")
	f.Float64Var(&o.PredictionError, "prediction-error", 0.5, "error of the predicted CER, relative to it (0.5: a page predicted at 4 % lies within about 2-6 %)")
	return cmd
}

func runSample(o SampleOptions, g GlobalOptions) error {
	switch {
	case o.Estimates == "" || o.Out == "":
		return usagef("sample: --estimates and --out are required")
	case !(o.HalfWidth > 0 && o.HalfWidth < 100):
		return usagef("sample: --half-width %g: want CER points between 0 and 100", o.HalfWidth)
	case o.Seed < 1:
		return usagef("sample: --seed %d: want 1 or more", o.Seed)
	case o.PredictionError < 0:
		return usagef("sample: --prediction-error %g: want 0 or more", o.PredictionError)
	}
	f, err := os.Open(o.Estimates)
	if err != nil {
		return fmt.Errorf("sample: %w", err)
	}
	defer f.Close()
	pages, skipped, err := quality.ReadEstimates(f, o.Estimates)
	if err != nil {
		return fmt.Errorf("sample: %w", err)
	}
	if skipped > 0 {
		g.printf("%d pages without a prediction or decided blank or picture are left out", skipped)
	}
	pe := o.PredictionError
	if pe == 0 {
		pe = -1 // none
	}
	plan, err := quality.PlanSample(pages, quality.PlanOptions{HalfWidth: o.HalfWidth / 100, Seed: uint64(o.Seed), PredictionError: pe})
	if err != nil {
		return fmt.Errorf("sample: %w", err)
	}
	var buf bytes.Buffer
	if err := quality.WritePlan(&buf, plan); err != nil {
		return fmt.Errorf("sample: %w", err)
	}
	if err := writeFileAtomic(o.Out, buf.Bytes()); err != nil {
		return fmt.Errorf("sample: %w", err)
	}
	return writeSampleTable(g.stdout, plan, o)
}

func writeSampleTable(w io.Writer, plan *quality.SamplePlan, o SampleOptions) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "Sampling plan: CER of each title to ±%g points at 95 %%, seed %d, written to %s\n\n", o.HalfWidth, plan.Seed, o.Out)
	fmt.Fprintln(tw, "title\tpages\tplanned\tbands (predicted CER: pages/planned)")
	total := 0
	for _, t := range plan.Titles {
		bands := ""
		for i, s := range t.Strata {
			if i > 0 {
				bands += ", "
			}
			bands += fmt.Sprintf("%g-%g %%: %d/%d", 100*s.Low, 100*s.High, s.Pages, s.Sampled)
		}
		fmt.Fprintf(tw, "%s\t%d\t%d\t%s\n", t.Title, t.Pages, t.Planned, bands)
		total += t.Planned
	}
	fmt.Fprintf(tw, "\ntotal pages to transcribe: %d\n", total)
	return tw.Flush()
}
