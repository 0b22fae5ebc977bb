// Command fitquality fits the page-quality model that recto embeds
// (quality/model/default.json) on the project's synthetic corpus, judges it
// on the corpus's held-out pages, and can vendor a small held-out sample
// for the regression test in package quality.
//
//	go run ./cmd/corpus -out /work/corpus            # the corpus (see docs/dev-synth.md)
//	go run ./cmd/fitquality -corpus /work/corpus \
//	    -out quality/model/default.json -sample testdata/triage
//
// The corpus layout is DIR/ocr/{fit,heldout}/<id>.json (page records from
// recto's OCR) and DIR/truth/{fit,heldout}/<id>.txt. Only "fit" pages are
// used for fitting; "heldout" pages are never seen by the fit. Fitting is
// deterministic: the cross-validation folds come from -seed.
package main

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"recto/internal/atomicfile"
	"recto/lexicon"
	"recto/quality"
)

func main() {
	if err := run(os.Args[1:], os.Stdout, os.Stderr); err != nil {
		fmt.Fprintln(os.Stderr, "fitquality:", err)
		os.Exit(1)
	}
}

func run(args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("fitquality", flag.ContinueOnError)
	corpus := fs.String("corpus", "/work/corpus", "corpus `folder` written by cmd/corpus")
	out := fs.String("out", "", "write the fitted model to this `file` (e.g. quality/model/default.json)")
	seed := fs.Int64("seed", 1, "`seed` of the cross-validation folds")
	sample := fs.String("sample", "", "vendor a held-out sample (page .json + truth .txt) into this `folder`")
	sampleN := fs.Int("sample-n", 40, "pages in the vendored sample")
	offset := fs.Float64("offset", 0, "regression target is log(CER + `offset`) (0: the quality.Fit default)")
	correct := fs.Float64("correct", 0, "correct threshold for the report (0: the default)")
	if err := fs.Parse(args); err != nil {
		return err
	}
	lex := lexicon.Default()
	load := func(split string) ([]quality.Sample, error) {
		s, problems, err := quality.LoadSamples(context.Background(), filepath.Join(*corpus, "ocr", split), filepath.Join(*corpus, "truth", split), lex, 0)
		for _, p := range problems {
			fmt.Fprintf(stderr, "skipped: %v\n", p)
		}
		return s, err
	}
	fit, err := load("fit")
	if err != nil {
		return err
	}
	held, err := load("heldout")
	if err != nil {
		return err
	}
	m, err := quality.Fit(fit, quality.FitOptions{Seed: *seed, Offset: *offset, Source: "recto synthetic corpus (cmd/corpus), split \"fit\""})
	if err != nil {
		return err
	}
	m.Fit.HeldOut = len(held)
	m.Fit.Command = fmt.Sprintf("go run ./cmd/fitquality -corpus CORPUS -out quality/model/default.json -seed %d", *seed)
	fmt.Fprintf(stdout, "fitted on %d pages (%d as text), judged on %d held-out pages\n", m.Fit.Pages, m.Fit.TextPages, len(held))
	fmt.Fprintf(stdout, "ridge penalty: record %.3g, text %.3g\n", m.Record.Lambda, m.Text.Lambda)
	fmt.Fprintf(stdout, "rescan cut (chosen on out-of-fold predictions for the fit pages, recall goal %.2f): estimate above %.1f%% with a page record, %.1f%% as text\n\n",
		m.Fit.RecallGoal, 100*m.Record.RescanFactor*m.Fit.Rescan, 100*m.Text.RescanFactor*m.Fit.Rescan)

	th := quality.Thresholds{Correct: *correct}
	report(stdout, "embedded model, page records", m, held, false, th)
	report(stdout, "embedded model, plain text only", m, held, true, th)
	baselines(stdout, held)

	if *out != "" {
		if err := m.Save(*out); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "\nmodel written to %s\n", *out)
	}
	if *sample != "" {
		return vendor(*corpus, *sample, held, *sampleN, stdout)
	}
	return nil
}

func report(w io.Writer, name string, m *quality.Model, held []quality.Sample, textOnly bool, th quality.Thresholds) {
	s := held
	if textOnly {
		s = make([]quality.Sample, len(held))
		for i, x := range held {
			x.Record = quality.Features{}
			s[i] = x
		}
	}
	e := quality.Evaluate(m, s, th)
	met, lines := quality.Targets{}.Check(e)
	fmt.Fprintf(w, "%s (%d held-out pages):\n", name, e.Pages)
	fmt.Fprintf(w, "  MAE %.4f; rescan: %d true, %d false alarms, %d missed; %d clean pages; decisions %v\n",
		e.MAE, e.TruePos, e.FalsePos, e.FalseNeg, e.Clean, e.Decisions)
	if e.EmptyTruth > 0 {
		fmt.Fprintf(w, "  pages with empty ground truth: %d, decided blank or picture: %d\n", e.EmptyTruth, e.EmptyAsBlank)
	}
	for _, l := range lines {
		fmt.Fprintf(w, "  %s\n", l)
	}
	// Pages above the threshold that were not flagged, and how many of
	// them have no recognised text at all (from text alone such a page
	// cannot be told from a blank one).
	var missed, empty []string
	for _, x := range s {
		if x.EmptyTruth || x.CER <= e.RescanAbove {
			continue
		}
		f := x.Record
		if !f.FromRecord {
			f = x.Text
		}
		if v := quality.Triage(f, m, th); v.Decision != quality.DecisionRescan {
			missed = append(missed, fmt.Sprintf("%s (CER %.3f, estimate %.3f, %s)", x.ID, x.CER, v.PredictedCER, v.Decision))
			if f.Tokens == 0 {
				empty = append(empty, x.ID)
			}
		}
	}
	if len(missed) > 0 {
		fmt.Fprintf(w, "  missed: %s; of these %d with no recognised text\n", strings.Join(missed, ", "), len(empty))
	}
	fmt.Fprintf(w, "  all targets met: %v\n\n", met)
}

// baselines prints single-feature rank correlations for comparison.
func baselines(w io.Writer, held []quality.Sample) {
	var cer, conf, lex, garb []float64
	for _, s := range held {
		if s.Record.Blank || !s.Record.FromRecord || s.EmptyTruth {
			continue
		}
		cer = append(cer, s.CER)
		conf = append(conf, 1-s.Record.MeanConf)
		lex = append(lex, 1-s.Record.LexHit)
		garb = append(garb, s.Record.Garbage)
	}
	fmt.Fprintf(w, "baselines on the same held-out pages (Spearman with measured CER):\n")
	fmt.Fprintf(w, "  1 - mean word confidence   %.3f\n", quality.Spearman(conf, cer))
	fmt.Fprintf(w, "  share of words not in lexicon %.3f\n", quality.Spearman(lex, cer))
	fmt.Fprintf(w, "  share of garbage tokens    %.3f\n", quality.Spearman(garb, cer))
	// Rescan by mean confidence alone, at the threshold that gives recall
	// of at least 0.95 on these pages (an optimistic baseline).
	type pc struct{ score, cer float64 }
	var ps []pc
	for i := range cer {
		ps = append(ps, pc{conf[i], cer[i]})
	}
	sort.Slice(ps, func(i, j int) bool { return ps[i].score > ps[j].score })
	bad := 0
	for _, p := range ps {
		if p.cer > quality.DefaultRescan {
			bad++
		}
	}
	tp, fp := 0, 0
	for _, p := range ps {
		if bad == 0 || float64(tp)/float64(bad) >= 0.95 {
			break
		}
		if p.cer > quality.DefaultRescan {
			tp++
		} else {
			fp++
		}
	}
	if tp+fp > 0 {
		fmt.Fprintf(w, "  mean confidence alone, best cut for recall >= 0.95: precision %.3f\n", float64(tp)/float64(tp+fp))
	}
}

// vendor copies n held-out pages spread evenly over the range of measured
// CER (page record and ground truth) into dir/ocr and dir/truth.
func vendor(corpus, dir string, held []quality.Sample, n int, w io.Writer) error {
	s := append([]quality.Sample(nil), held...)
	sort.Slice(s, func(i, j int) bool {
		if s[i].CER != s[j].CER {
			return s[i].CER < s[j].CER
		}
		return s[i].ID < s[j].ID
	})
	n = min(n, len(s))
	picked := map[int]bool{}
	for k := 0; k < n; k++ {
		picked[int(math.Round(float64(k)*float64(len(s)-1)/float64(max(n-1, 1))))] = true
	}
	for _, sub := range []string{"ocr", "truth"} {
		if err := os.MkdirAll(filepath.Join(dir, sub), 0o755); err != nil {
			return err
		}
		// Pages of an older sample would stay behind and be judged with
		// the new ones: refuse rather than delete anything.
		if old, _ := filepath.Glob(filepath.Join(dir, sub, "*.*")); len(old) > 0 {
			return fmt.Errorf("%q already holds %d files: remove the old sample first", filepath.Join(dir, sub), len(old))
		}
	}
	count := 0
	manifest := manifestLines(corpus)
	var list strings.Builder
	list.WriteString(manifest[""])
	for i := range s {
		if !picked[i] {
			continue
		}
		id := s[i].ID
		list.WriteString(manifest[filepath.Base(id)])
		base := filepath.Base(id)
		copies := [][2]string{
			{filepath.Join(corpus, "ocr", "heldout", base+".json"), filepath.Join(dir, "ocr", base+".json")},
			{filepath.Join(corpus, "truth", "heldout", base+".txt"), filepath.Join(dir, "truth", base+".txt")},
		}
		for _, c := range copies {
			data, err := os.ReadFile(c[0])
			if err != nil {
				return err
			}
			if strings.HasSuffix(c[0], ".json") { // same record, without indentation
				var buf bytes.Buffer
				if err := json.Compact(&buf, data); err != nil {
					return fmt.Errorf("%q: %w", c[0], err)
				}
				data = append(buf.Bytes(), '\n')
			}
			if err := atomicfile.Write(c[1], data); err != nil {
				return err
			}
		}
		count++
	}
	if err := atomicfile.Write(filepath.Join(dir, "MANIFEST.tsv"), []byte(list.String())); err != nil {
		return err
	}
	fmt.Fprintf(w, "vendored %d held-out pages into %s (CER %s)\n", count, dir, strings.TrimSpace(fmt.Sprintf("%.3f..%.3f", s[0].CER, s[len(s)-1].CER)))
	return nil
}

// manifestLines maps page ids to their MANIFEST.tsv line ("" to the header).
func manifestLines(corpus string) map[string]string {
	m := map[string]string{}
	data, err := os.ReadFile(filepath.Join(corpus, "MANIFEST.tsv"))
	if err != nil {
		return m
	}
	for i, line := range strings.Split(strings.TrimSpace(string(data)), "\n") {
		id, _, _ := strings.Cut(line, "\t")
		if i == 0 {
			id = ""
		}
		m[id] = line + "\n"
	}
	return m
}
