package run

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"syscall"

	"recto/cmd/internal/cli"
	"recto/cmd/internal/run/ledger"
	"recto/ocr"
)

// Failures are sorted by whose fault they are. Only a problem of the image
// itself (the file holds no readable image: empty, truncated, not an image)
// sends the page to the scanning station (rescan.csv, exit status 3).
// Everything else is the system's or the set-up's (a full or read-only
// disk, a name too long, two names that clash, a ground-truth path that is
// a folder, an image over the pixel limit, a variant this build cannot
// decode, the engine): the scan is fine, the page is listed in
// failures.csv with how to fix it, and the run exits with status 4.

// classify says whose fault err is and returns the message to record,
// with the fix for a set-up problem.
func classify(path string, err error) (ledger.Problem, string) {
	msg := err.Error()
	var de *ocr.DecodeError
	switch {
	case errors.Is(err, ocr.ErrTooLarge):
		return ledger.ProblemSetup, msg + fmt.Sprintf(": the scan may be fine; raise the limit with --max-pixels (now %d)", maxPixelsNow)
	case errors.Is(err, ocr.ErrUnsupported):
		return ledger.ProblemSetup, msg + ": this build cannot decode it; use a build with the engine (cgo) or convert the file"
	case errors.Is(err, ocr.ErrEmptyFile), errors.Is(err, ocr.ErrNotImage), errors.Is(err, ocr.ErrMalformed):
		return ledger.ProblemImage, msg
	case errors.As(err, &de) && de.Kind == nil:
		return ledger.ProblemSetup, msg + ioFix(err)
	}
	return ledger.ProblemSetup, msg + ioFix(err)
}

// maxPixelsNow is the pixel limit named in messages; Run sets it.
var maxPixelsNow = ocr.DefaultMaxPixels

// ioFix names the fix for a system error, "" when err is none of them.
func ioFix(err error) string {
	switch {
	case errors.Is(err, syscall.ENOSPC), errors.Is(err, syscall.EDQUOT):
		return " (the disk is full: free some space and run again; finished pages are kept)"
	case errors.Is(err, syscall.EROFS):
		return " (the folder is on a read-only file system: choose another --out)"
	case errors.Is(err, fs.ErrPermission):
		return " (permission denied: fix the permissions of the file or folder)"
	case errors.Is(err, syscall.ENAMETOOLONG):
		return " (a name is too long for the output folder: shorten the image's name or choose an --out on a file system that allows it)"
	case errors.Is(err, syscall.EISDIR):
		return " (a folder where a file is expected: rename or move the folder)"
	case errors.Is(err, fs.ErrNotExist):
		return " (the file went away during the run: run again)"
	}
	return ""
}

// isSetup reports whether a failed row is a set-up or system failure.
func isSetup(r ledger.Page) bool {
	return r.State == ledger.StateFailed && r.Problem != ledger.ProblemImage
}

// failuresCSV lists the pages that failed for a set-up or system reason
// (not the scan's fault), with the message that says how to fix it.
func failuresCSV(rows []ledger.Page) ([]byte, error) {
	return namesCSV([]string{"title", "page", "image", "error"}, rows, func(r ledger.Page) []string {
		if !isSetup(r) {
			return nil
		}
		return []string{r.Error}
	})
}

// warningsCSV lists every warning a step gave, one row per warning.
func warningsCSV(rows []ledger.Page) ([]byte, error) {
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	w.Write([]string{"title", "page", "image", "warning"})
	for _, r := range rows {
		if r.State == ledger.StateGone {
			continue
		}
		for _, m := range r.Warnings {
			w.Write([]string{csvCell(EscapeName(r.Title)), csvCell(EscapeName(r.Page)), csvCell(EscapeName(r.Rel)), csvCell(m)})
		}
	}
	w.Flush()
	return buf.Bytes(), w.Error()
}

func namesCSV(head []string, rows []ledger.Page, f func(ledger.Page) []string) ([]byte, error) {
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	w.Write(head)
	for _, r := range rows {
		extra := f(r)
		if extra == nil {
			continue
		}
		rec := []string{csvCell(EscapeName(r.Title)), csvCell(EscapeName(r.Page)), csvCell(EscapeName(r.Rel))}
		for _, e := range extra {
			rec = append(rec, csvCell(e))
		}
		w.Write(rec)
	}
	w.Flush()
	return buf.Bytes(), w.Error()
}

// csvCell keeps a spreadsheet from running a cell as a formula (leading
// =, +, -, @; OWASP, "CSV Injection", common practice) and shows control
// characters escaped.
func csvCell(s string) string {
	s = strings.ToValidUTF8(s, "\uFFFD")
	if s != "" && strings.ContainsRune("=+-@\t\r", rune(s[0])) {
		return "'" + s
	}
	return s
}

// writeFailureReports writes failures.csv and warnings.csv into repDir.
func writeFailureReports(repDir string, rows []ledger.Page) error {
	for _, f := range []struct {
		name string
		make func([]ledger.Page) ([]byte, error)
	}{{"failures.csv", failuresCSV}, {"warnings.csv", warningsCSV}} {
		data, err := f.make(rows)
		if err != nil {
			return err
		}
		if err := os.MkdirAll(repDir, 0o755); err != nil {
			return err
		}
		if err := writeAtomic(filepath.Join(repDir, f.name), data); err != nil {
			return fmt.Errorf("run: %w", err)
		}
	}
	return nil
}

// SetupError is returned by Run when pages failed for set-up or system
// reasons (exit status 4).
type SetupError = cli.SetupError
