package run

import (
	"image"

	"recto/cmd/internal/run/ledger"
	"recto/ocr"
)

// testFaults lets the reliability tests of this package inject faults at
// the writes; nil fields (always, outside those tests) inject nothing.
var testFaults struct {
	// write is called before a page's outputs are written under dir with
	// the output name stem; an error is returned as the write's.
	write func(dir, stem string) error
	// commit is called with each group of pages before the ledger commits
	// it (ledger.Ledger.BeforeCommit).
	commit func([]ledger.Page) error
}

// applyTestFaults installs testFaults on a run's writes.
func applyTestFaults(st *runState, l *ledger.Ledger) {
	if f := testFaults.write; f != nil {
		w := st.tk.write
		st.tk.write = func(dir, stem string, r *ocr.Record, g *image.Gray, a ocr.ALTOOptions) error {
			if err := f(dir, stem); err != nil {
				return err
			}
			return w(dir, stem, r, g, a)
		}
	}
	l.BeforeCommit = testFaults.commit
}
