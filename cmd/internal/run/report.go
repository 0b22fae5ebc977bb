package run

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"image"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	"recto/ocr"

	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/report"
)

// ReportOptions are the settings of recto report.
type ReportOptions struct {
	// TargetCER is the CER after correction each title should reach, in
	// [0, 1]; 0 means the run's own --target-cer (none if it had none).
	TargetCER float64
}

// Report rebuilds the reports of the run in dir from its ledger and
// returns the path of report.html.
func Report(ctx context.Context, dir string) (string, error) {
	return ReportWith(ctx, dir, ReportOptions{})
}

// ReportWith is Report with options.
func ReportWith(ctx context.Context, dir string, o ReportOptions) (string, error) {
	if o.TargetCER < 0 || o.TargetCER > 1 {
		return "", usagef("report: --target-cer %g: a CER must be in [0, 1] (0.03 is 3 %%)", o.TargetCER)
	}
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
	m, err := readReportMeta(ctx, l)
	if err != nil {
		return "", fmt.Errorf("report: %w", err)
	}
	if o.TargetCER > 0 {
		m.Target = o.TargetCER
	}
	reviews, err := l.Reviews(ctx)
	if err != nil {
		return "", fmt.Errorf("report: %w", err)
	}
	if err := buildPartialReports(repDir, abs, root, rows, reviews, cerInterval, partial, m); err != nil {
		return "", err
	}
	return filepath.Join(repDir, "report.html"), nil
}

// reportMeta is what the reports take from the ledger's meta beside its
// rows: the run's description and its --target-cer.
type reportMeta struct {
	About  report.About
	Target float64
	jobs   int // not from the ledger: thumbnails made at once (the run's --jobs); 0 means one per core
}

// readReportMeta reads the reports' meta; a ledger written before they
// were recorded gives the zero value (the header then says "not recorded").
func readReportMeta(ctx context.Context, l *ledger.Ledger) (reportMeta, error) {
	var m reportMeta
	a, err := l.Meta(ctx, metaAbout)
	if err != nil {
		return m, err
	}
	if a != "" {
		if err := json.Unmarshal([]byte(a), &m.About); err != nil {
			return m, fmt.Errorf("ledger meta %q: %w", metaAbout, err)
		}
	}
	t, err := l.Meta(ctx, metaTarget)
	if err != nil {
		return m, err
	}
	if t != "" {
		if m.Target, err = strconv.ParseFloat(t, 64); err != nil {
			return m, fmt.Errorf("ledger meta %q: %w", metaTarget, err)
		}
	}
	return m, nil
}

// buildReports writes the reports of rows into repDir, with the decisions
// and corrections of reviews (reviewed.go) applied, and the run's
// description m. Links to images and texts are relative to repDir where
// possible, so a copied run folder and collection keep working.
func buildReports(repDir, outDir, root string, rows []ledger.Page, reviews map[string]ledger.Review, ci report.IntervalFunc, m reportMeta) error {
	return buildPartialReports(repDir, outDir, root, rows, reviews, ci, "", m)
}

// buildPartialReports is buildReports for a report that covers part of a
// run; partial says why (a merge without all its shards).
func buildPartialReports(repDir, outDir, root string, rows []ledger.Page, reviews map[string]ledger.Review, ci report.IntervalFunc, partial string, m reportMeta) error {
	rows = present(rows) // pages gone from the collection are left out
	if err := writeFailureReports(repDir, rows); err != nil {
		return err
	}
	pages := make([]report.Page, len(rows))
	texts := make(map[string]string, len(rows))
	byRel := make(map[string]ledger.Page, len(rows))
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
		if r.State == ledger.StateDone && len(r.SHA256) >= 16 {
			p.ThumbKey = r.SHA256[:16] + "-" + strconv.Itoa(filePage(r))
			byRel[p.Rel] = r
		}
		if t := finalText(r); t != "" && r.State == ledger.StateDone {
			full := filepath.Join(outDir, filepath.FromSlash(t))
			p.Text = relLink(repDir, full)
			texts[p.Rel] = full
		}
		if rev, ok := reviews[r.Rel]; ok {
			full, err := applyReview(&p, r, rev, outDir)
			if err != nil {
				return err
			}
			if full != "" {
				p.Text = relLink(repDir, full)
				texts[p.Rel] = full
			}
		}
		pages[i] = p
	}
	name := filepath.Base(root)
	if root == "" {
		name = filepath.Base(outDir)
	}
	about := m.About
	about.Collection = name
	about.First, about.Last = pageTimes(rows)
	about.Engine = engineOf(outDir, rows)
	err := report.Write(repDir, pages, report.Options{
		Name:      name,
		Interval:  ci,
		Partial:   partial,
		About:     about,
		TargetCER: m.Target,
		Jobs:      m.jobs,
		Thumb: func(p report.Page) (image.Image, error) {
			return pageImage(byRel[p.Rel])
		},
		Snippet: func(p report.Page) string {
			return readHead(texts[p.Rel], 1024) // keyed by the escaped Rel, one to one
		},
	})
	if err != nil {
		return fmt.Errorf("run: %w", err)
	}
	// corrected/changes.jsonl beside the report folder, as recto correct
	// writes it in its --out folder.
	if err := writeChanges(filepath.Join(filepath.Dir(repDir), correctedDir), outDir, rows, reviews); err != nil {
		return fmt.Errorf("run: %w", err)
	}
	return nil
}

// pageTimes returns the first and last time a page of rows was recorded.
func pageTimes(rows []ledger.Page) (first, last time.Time) {
	for _, r := range rows {
		if r.Done.IsZero() {
			continue
		}
		if first.IsZero() || r.Done.Before(first) {
			first = r.Done
		}
		if r.Done.After(last) {
			last = r.Done
		}
	}
	return first.UTC(), last.UTC()
}

// engineOf names the engine and its version from the page record of the
// first done page of rows that has one ("" when none says).
func engineOf(outDir string, rows []ledger.Page) string {
	for _, r := range rows {
		if r.State != ledger.StateDone {
			continue
		}
		for _, o := range r.Outputs {
			if !strings.HasSuffix(o, ocr.SuffixRecord) {
				continue
			}
			rec, err := ocr.ReadRecord(filepath.Join(outDir, filepath.FromSlash(o)))
			if err != nil || rec.Engine == nil {
				return ""
			}
			return strings.TrimSpace(rec.Engine.Name + " " + rec.Engine.Version)
		}
	}
	return ""
}

// filePage is the page number of a row in its file: from its page record
// name, p0003 in box/reel-07/p0003 when the row's Rel is not the file's own
// path; 1 for a single image.
func filePage(r ledger.Page) int {
	if path.Ext(r.Rel) != "" || !strings.Contains(r.Rel, "/p") {
		return 1
	}
	n, err := strconv.Atoi(strings.TrimPrefix(path.Base(r.Rel), "p"))
	if err != nil || n < 1 {
		return 1
	}
	return n
}

// pageImage decodes the scan of a done row, for its thumbnail.
func pageImage(r ledger.Page) (image.Image, error) {
	if r.Source == "" {
		return nil, fmt.Errorf("no image")
	}
	pf, err := ocr.OpenPages(context.Background(), r.Source, ocr.DecodeOptions{MaxPixels: maxPixelsNow})
	if err != nil {
		return nil, err
	}
	defer pf.Close()
	d, err := pf.Page(context.Background(), min(filePage(r), pf.Pages()))
	if err != nil {
		return nil, err
	}
	return d.Image, nil
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
