package main

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"recto/internal/atomicfile"
	"recto/ocr"
	"recto/ocr/tesseract"
	"recto/quality"
)

// errNoEngine is returned by recogniseAll when this build has no engine
// (built without cgo or with the notesseract tag).
var errNoEngine = errors.New("the recognition engine is not available in this build")

// cerSpread summarises the CER of the recognised pages that have text.
type cerSpread struct {
	Pages     int            `json:"pages"` // pages with a non-empty truth
	Min       float64        `json:"min"`
	P10       float64        `json:"p10"`
	P25       float64        `json:"p25"`
	Median    float64        `json:"median"`
	P75       float64        `json:"p75"`
	P90       float64        `json:"p90"`
	Max       float64        `json:"max"`
	Histogram map[string]int `json:"histogram"` // pages per CER band, e.g. "0.02-0.05"
}

// kindSummary is the mean CER of the pages of one kind.
type kindSummary struct {
	Kind    string  `json:"kind"`
	Pages   int     `json:"pages"`
	MeanCER float64 `json:"mean_cer"`
}

// cerBands are the histogram bands' upper bounds.
var cerBands = []float64{0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 0.9, math.Inf(1)}

// recogniseAll runs recto's OCR (page preparation, then Tesseract) on every
// rendered page with o.Workers engines, writes DIR/ocr/<split>/<id>.{txt,
// json,alto.xml} and DIR/ocr/CER.tsv, and fills the OCR part of sum.
func recogniseAll(ctx context.Context, o buildOptions, plans []pagePlan, sum *summary) error {
	var paths []string
	var idx []int
	for i, p := range plans {
		if _, err := os.Stat(p.imagePath(o.Out)); err == nil {
			paths = append(paths, p.imagePath(o.Out))
			idx = append(idx, i)
		}
	}
	if len(paths) == 0 {
		return errors.New("no rendered pages to recognise")
	}
	ocrDir := filepath.Join(o.Out, "ocr")
	start := time.Now()
	results, err := ocr.RunBatch(ctx, paths, ocr.BatchConfig{
		Jobs: o.Workers,
		NewEngine: func() (ocr.Engine, error) {
			e, err := tesseract.New(tesseract.Config{Lang: o.Lang})
			if errors.Is(err, ocr.ErrEngineUnavailable) {
				return nil, fmt.Errorf("%w: %v", errNoEngine, err)
			}
			return e, err
		},
		Done: func(r *ocr.Result) error {
			p := plans[idx[r.Index]]
			return ocr.WriteOutputs(ocrDir, p.Split+"/"+p.ID, r.Record, nil)
		},
	})
	if err != nil {
		return err
	}
	type row struct {
		plan     pagePlan
		c        quality.Counts
		engineMS float64
	}
	var rows []row
	done := 0
	var scratch quality.Scratch
	for r := range results {
		done++
		p := plans[idx[r.Index]]
		if r.Err != nil {
			sum.OCRFailed++
			fmt.Fprintf(os.Stderr, "corpus: %v\n", r.Err)
			continue
		}
		truth, err := os.ReadFile(p.truthPath(o.Out))
		if err != nil {
			sum.OCRFailed++
			fmt.Fprintf(os.Stderr, "corpus: %v\n", err)
			continue
		}
		rows = append(rows, row{p, scratch.Compare(string(truth), r.Record.Text(), quality.NormOptions{}), r.Record.TimingsMS["engine"]})
		if done%25 == 0 {
			fmt.Fprintf(os.Stderr, "corpus: recognised %d/%d pages (%.0f s)\n", done, len(paths), time.Since(start).Seconds())
		}
	}
	sum.OCRPages = len(rows)
	sum.OCRSeconds = time.Since(start).Seconds()
	sort.Slice(rows, func(i, j int) bool { return rows[i].plan.ID < rows[j].plan.ID })

	var b strings.Builder
	b.WriteString("id\tsplit\tkind\tseverity\tchars\tchar_errors\tcer\twer\tengine_ms\n")
	var cers []float64
	byKind := map[string][]float64{}
	for _, r := range rows {
		cer, ok := r.c.CER()
		wer, _ := r.c.WER()
		sev := "-"
		if r.plan.Severity >= 0 {
			sev = fmt.Sprintf("%.4f", r.plan.Severity)
		}
		cs, ws := "-", "-"
		if ok {
			cs, ws = fmt.Sprintf("%.4f", cer), fmt.Sprintf("%.4f", wer)
			cers = append(cers, cer)
			byKind[r.plan.Kind] = append(byKind[r.plan.Kind], cer)
		}
		fmt.Fprintf(&b, "%s\t%s\t%s\t%s\t%d\t%d\t%s\t%s\t%.0f\n", r.plan.ID, r.plan.Split, r.plan.Kind, sev, r.c.Chars, r.c.CharErrors, cs, ws, r.engineMS)
	}
	if err := atomicfile.Write(filepath.Join(ocrDir, "CER.tsv"), []byte(b.String())); err != nil {
		return err
	}
	if len(cers) > 0 {
		sum.CER = spread(cers)
		var kinds []string
		for k := range byKind {
			kinds = append(kinds, k)
		}
		sort.Strings(kinds)
		for _, k := range kinds {
			v := byKind[k]
			var s float64
			for _, x := range v {
				s += x
			}
			sum.CERByKind = append(sum.CERByKind, kindSummary{Kind: k, Pages: len(v), MeanCER: s / float64(len(v))})
		}
		fmt.Fprintf(os.Stderr, "corpus: CER over %d pages: min %.3f, p10 %.3f, p25 %.3f, median %.3f, p75 %.3f, p90 %.3f, max %.3f\n",
			sum.CER.Pages, sum.CER.Min, sum.CER.P10, sum.CER.P25, sum.CER.Median, sum.CER.P75, sum.CER.P90, sum.CER.Max)
	}
	return nil
}

// spread computes quantiles (nearest rank) and the band histogram of v.
func spread(v []float64) *cerSpread {
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	q := func(p float64) float64 {
		i := int(math.Ceil(p*float64(len(s)))) - 1
		return s[min(max(i, 0), len(s)-1)]
	}
	h := map[string]int{}
	for _, x := range s {
		lo := 0.0
		for _, hi := range cerBands {
			if x < hi {
				name := fmt.Sprintf("%g-%g", lo, hi)
				if math.IsInf(hi, 1) {
					name = fmt.Sprintf("%g+", lo)
				}
				h[name]++
				break
			}
			lo = hi
		}
	}
	return &cerSpread{Pages: len(s), Min: s[0], P10: q(0.1), P25: q(0.25), Median: q(0.5), P75: q(0.75), P90: q(0.9), Max: s[len(s)-1], Histogram: h}
}
