package run

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"unicode/utf8"

	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/report"
)

// Report rebuilds the reports of the run in dir from its ledger and
// returns the path of report.html.
func Report(ctx context.Context, dir string) (string, error) {
	abs, err := filepath.Abs(dir)
	if err != nil {
		return "", err
	}
	lp := filepath.Join(abs, ledger.FileName)
	if _, err := os.Stat(lp); errors.Is(err, fs.ErrNotExist) {
		if m, _ := filepath.Glob(filepath.Join(abs, shardsDir, "*", ledger.FileName)); len(m) > 0 {
			return "", fmt.Errorf("report: %q holds %d shard ledgers but no merged one: run 'recto merge %s' first", dir, len(m), dir)
		}
		return "", fmt.Errorf("report: %q is not a run folder (no %s)", dir, ledger.FileName)
	}
	l, err := ledger.OpenReadOnly(lp)
	if err != nil {
		return "", fmt.Errorf("report: %w", err)
	}
	defer l.Close()
	rows, err := l.Pages(ctx)
	if err != nil {
		return "", fmt.Errorf("report: %w", err)
	}
	root, err := l.Meta(ctx, "collection")
	if err != nil {
		return "", fmt.Errorf("report: %w", err)
	}
	repDir := filepath.Join(abs, reportDir)
	partial, err := l.Meta(ctx, metaPartial)
	if err != nil {
		return "", fmt.Errorf("report: %w", err)
	}
	if err := buildPartialReports(repDir, abs, root, rows, cerInterval, partial); err != nil {
		return "", err
	}
	return filepath.Join(repDir, "report.html"), nil
}

// buildReports writes the reports of rows into repDir. Links to images and
// texts are relative to repDir where possible, so a copied run folder and
// collection keep working.
func buildReports(repDir, outDir, root string, rows []ledger.Page, ci report.IntervalFunc) error {
	return buildPartialReports(repDir, outDir, root, rows, ci, "")
}

// buildPartialReports is buildReports for a report that covers part of a
// run; partial says why (a merge without all its shards).
func buildPartialReports(repDir, outDir, root string, rows []ledger.Page, ci report.IntervalFunc, partial string) error {
	rows = present(rows) // pages gone from the collection are left out
	if err := writeFailureReports(repDir, rows); err != nil {
		return err
	}
	pages := make([]report.Page, len(rows))
	texts := make(map[string]string, len(rows))
	for i, r := range rows {
		p := report.Page{
			Rel: EscapeName(r.Rel), Title: EscapeName(r.Title), Page: EscapeName(r.Page), // names.go
			Failed: r.State != ledger.StateDone, Error: r.Error, Setup: isSetup(r), Warnings: r.Warnings,
			Decision: r.Decision, PredictedCER: r.PredictedCER, Reasons: r.Reasons, Corrections: r.Corrections,
			HasTruth: r.HasTruth, RefChars: r.RefChars, RefWords: r.RefWords,
			CharErrs: r.CharErrs, WordErrs: r.WordErrs, CharErrsAfter: r.CharErrsAf, WordErrsAfter: r.WordErrsAf,
			OrderFree: r.FlexErrs >= 0 && r.BagErrs >= 0 && r.FlexErrsAf >= 0 && r.BagErrsAf >= 0,
			FlexErrs:  r.FlexErrs, FlexErrsAfter: r.FlexErrsAf, BagErrs: r.BagErrs, BagErrsAfter: r.BagErrsAf,
			Image: relLink(repDir, r.Source),
		}
		if t := finalText(r); t != "" && r.State == ledger.StateDone {
			full := filepath.Join(outDir, filepath.FromSlash(t))
			p.Text = relLink(repDir, full)
			texts[p.Rel] = full
		}
		pages[i] = p
	}
	name := filepath.Base(root)
	if root == "" {
		name = filepath.Base(outDir)
	}
	err := report.Write(repDir, pages, report.Options{
		Name:     name,
		Interval: ci,
		Partial:  partial,
		Snippet: func(p report.Page) string {
			return readHead(texts[p.Rel], 1024) // keyed by the escaped Rel, one to one
		},
	})
	if err != nil {
		return fmt.Errorf("run: %w", err)
	}
	// corrected/changes.jsonl beside the report folder, as recto correct
	// writes it in its --out folder.
	if err := writeChanges(filepath.Join(filepath.Dir(repDir), correctedDir), outDir, rows); err != nil {
		return fmt.Errorf("run: %w", err)
	}
	return nil
}

func relLink(from, to string) string {
	if to == "" {
		return ""
	}
	if r, err := filepath.Rel(from, to); err == nil {
		return r
	}
	return to
}

// readHead returns up to n bytes from the start of a file, cut at a rune
// boundary; "" when it cannot be read.
func readHead(name string, n int) string {
	if name == "" {
		return ""
	}
	f, err := os.Open(name)
	if err != nil {
		return ""
	}
	defer f.Close()
	buf := make([]byte, n)
	k, _ := f.Read(buf)
	buf = buf[:k]
	for len(buf) > 0 && !utf8.Valid(buf) && len(buf) > k-utf8.UTFMax {
		buf = buf[:len(buf)-1]
	}
	return string(buf)
}
