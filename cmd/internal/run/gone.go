package run

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"recto/cmd/internal/run/ledger"
)

// checkCollection refuses to run collection root into a run folder whose
// ledger was written for another collection, unless replace (the
// --new-collection flag) is set: the two would mix in one report.
func checkCollection(ctx context.Context, l *ledger.Ledger, root, out string, replace bool) error {
	old, err := l.Meta(ctx, "collection")
	if err != nil {
		return fmt.Errorf("run: %w", err)
	}
	if old == "" || old == root || replace {
		return nil
	}
	if _, err := os.Stat(old); err != nil {
		// The old collection is gone or moved: still another folder, but
		// say so, as a moved collection is the common case.
		return usagef("run: %q was used for the collection %q, which is no longer there; if %q is that collection moved, or to run it into this folder anyway, pass --new-collection (pages of the old one are then marked gone and left out of the reports)",
			out, old, root)
	}
	return usagef("run: %q holds the run of another collection, %q; choose another --out, or pass --new-collection to run %q into it (pages of the old one are then marked gone and left out of the reports)",
		out, old, root)
}

// markGone sets to gone every row of the ledger whose image is not among
// present (this run's pages), and lists the ones newly gone on stderr.
func markGone(ctx context.Context, l *ledger.Ledger, present []pageJob, stderr io.Writer, command string) (int, error) {
	rows, err := l.Pages(ctx)
	if err != nil {
		return 0, fmt.Errorf("run: %w", err)
	}
	have := make(map[string]bool, len(present))
	for _, p := range present {
		have[p.Rel] = true
	}
	var gone []string
	for _, r := range rows {
		if r.State != ledger.StateGone && !have[r.Rel] {
			gone = append(gone, r.Rel)
		}
	}
	if len(gone) == 0 {
		return 0, nil
	}
	if err := l.MarkGone(ctx, gone); err != nil {
		return 0, fmt.Errorf("run: %w", err)
	}
	fmt.Fprintf(stderr, "%s: %d pages of the ledger are no longer in the collection (deleted or renamed); kept as gone, left out of the reports:\n", command, len(gone))
	const most = 50
	for i, g := range gone {
		if i == most {
			fmt.Fprintf(stderr, "  ... and %d more (state gone in %s)\n", len(gone)-most, filepath.Base(l.Path()))
			break
		}
		fmt.Fprintf(stderr, "  %s\n", EscapeName(g))
	}
	return len(gone), nil
}

// present returns the rows of the pages still in the collection.
func present(rows []ledger.Page) []ledger.Page {
	out := rows[:0:0]
	for _, r := range rows {
		if r.State != ledger.StateGone {
			out = append(out, r)
		}
	}
	return out
}

// previousOutputs returns the outputs each ledger row lists.
func previousOutputs(ctx context.Context, l *ledger.Ledger) (map[string][]string, error) {
	rows, err := l.Pages(ctx)
	if err != nil {
		return nil, fmt.Errorf("run: %w", err)
	}
	m := make(map[string][]string, len(rows))
	for _, r := range rows {
		if len(r.Outputs) > 0 {
			m[r.Rel] = r.Outputs
		}
	}
	return m, nil
}

// stillThere returns the outputs of rel's last row that are still on disk.
func (st *runState) stillThere(rel string) []string {
	var out []string
	for _, o := range st.previous[rel] {
		if _, err := os.Stat(filepath.Join(st.outDir, filepath.FromSlash(o))); err == nil {
			out = append(out, o)
		}
	}
	return out
}

// dropStale removes the outputs of rel's last row that its new row does
// not list (a page no longer corrected leaves no corrected text behind).
// Only files under the run folder's output folders are touched.
func (st *runState) dropStale(rel string, keep []string) {
	k := make(map[string]bool, len(keep))
	for _, o := range keep {
		k[o] = true
	}
	for _, o := range st.previous[rel] {
		if k[o] || !(strings.HasPrefix(o, ocrDir+"/") || strings.HasPrefix(o, correctedDir+"/")) || strings.Contains(o, "..") {
			continue
		}
		os.Remove(filepath.Join(st.outDir, filepath.FromSlash(o)))
	}
}
