package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"

	"github.com/spf13/cobra"

	"recto/ocr/ledger"
)

// MergeOptions are the settings of `recto merge`.
type MergeOptions struct {
	Out string // run folder to merge into; "" means the single DIR given
}

func newMergeCommand(g *GlobalOptions) *cobra.Command {
	var o MergeOptions
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
			return runMerge(cmd.Context(), o, *g, args)
		},
	}
	cmd.Flags().StringVarP(&o.Out, "out", "o", "", "run `folder` to merge into (default: the one DIR given)")
	return cmd
}

// shardSource is one ledger to merge and the run folder its outputs are
// relative to.
type shardSource struct {
	ledger string
	runDir string
}

func findLedgers(dir string) ([]shardSource, error) {
	abs, err := filepath.Abs(dir)
	if err != nil {
		return nil, err
	}
	if fi, err := os.Stat(abs); err != nil || !fi.IsDir() {
		return nil, fmt.Errorf("merge: %q is not a folder", dir)
	}
	var out []shardSource
	if _, err := os.Stat(filepath.Join(abs, ledger.FileName)); err == nil {
		out = append(out, shardSource{filepath.Join(abs, ledger.FileName), abs})
	}
	m, _ := filepath.Glob(filepath.Join(abs, shardsDir, "*", ledger.FileName))
	sort.Strings(m)
	for _, p := range m {
		out = append(out, shardSource{p, abs})
	}
	return out, nil
}

func runMerge(ctx context.Context, o MergeOptions, g GlobalOptions, args []string) error {
	out := o.Out
	if out == "" {
		if len(args) > 1 {
			return usagef("merge: with several folders, name the destination with --out")
		}
		out = args[0]
	}
	dst, err := filepath.Abs(out)
	if err != nil {
		return err
	}
	var srcs []shardSource
	for _, a := range args {
		s, err := findLedgers(a)
		if err != nil {
			return err
		}
		if len(s) == 0 {
			return fmt.Errorf("merge: %q holds no ledger (%s or %s/*/%s)", a, ledger.FileName, shardsDir, ledger.FileName)
		}
		srcs = append(srcs, s...)
	}
	dstLedger := filepath.Join(dst, ledger.FileName)
	if err := checkWritable(dst); err != nil {
		return err
	}
	l, err := ledger.Open(dstLedger)
	if err != nil {
		return fmt.Errorf("merge: %w", err)
	}
	defer l.Close()

	var paths []string
	meta := map[string]map[string]bool{"collection": {}, "settings": {}, "truth": {}}
	for _, s := range srcs {
		if s.ledger == dstLedger {
			continue // the destination itself
		}
		paths = append(paths, s.ledger)
		sl, err := ledger.OpenReadOnly(s.ledger)
		if err != nil {
			return fmt.Errorf("merge: %w", err)
		}
		for k := range meta {
			v, err := sl.Meta(ctx, k)
			if err != nil {
				sl.Close()
				return fmt.Errorf("merge: %w", err)
			}
			meta[k][v] = true
		}
		if s.runDir != dst {
			if err := copyOutputs(ctx, sl, s.runDir, dst); err != nil {
				sl.Close()
				return err
			}
		}
		sl.Close()
	}
	for k, vals := range meta {
		if len(vals) > 1 && !g.Quiet {
			fmt.Fprintf(g.stderr, "recto: warning: the ledgers were written with different %s values; the merged report mixes them\n", k)
		}
		for v := range vals {
			if len(vals) == 1 {
				if err := l.SetMeta(ctx, k, v); err != nil {
					return fmt.Errorf("merge: %w", err)
				}
			}
		}
	}
	n, err := l.Merge(ctx, paths...)
	if err != nil {
		return fmt.Errorf("merge: %w", err)
	}
	rows, err := l.Pages(ctx)
	if err != nil {
		return fmt.Errorf("merge: %w", err)
	}
	root, _ := l.Meta(ctx, "collection")
	repDir := filepath.Join(dst, reportDir)
	if err := buildReports(repDir, dst, root, rows, cerInterval); err != nil {
		return err
	}
	failed := 0
	for _, r := range rows {
		if r.State != ledger.StateDone {
			failed++
		}
	}
	if !g.Quiet {
		fmt.Fprintf(g.stderr, "recto: merged %d ledgers (%d rows taken); %d pages, %d failed\n", len(paths), n, len(rows), failed)
	}
	fmt.Fprintln(g.stdout, filepath.Join(repDir, "report.html"))
	return nil
}

// copyOutputs copies the output files listed in a source ledger from its
// run folder into dst, skipping files already there with equal content.
func copyOutputs(ctx context.Context, src *ledger.Ledger, from, dst string) error {
	rows, err := src.Pages(ctx)
	if err != nil {
		return fmt.Errorf("merge: %w", err)
	}
	for _, r := range rows {
		for _, o := range r.Outputs {
			a := filepath.Join(from, filepath.FromSlash(o))
			b := filepath.Join(dst, filepath.FromSlash(o))
			data, err := os.ReadFile(a)
			if errors.Is(err, fs.ErrNotExist) {
				continue // listed but gone: the report will simply not link it
			}
			if err != nil {
				return fmt.Errorf("merge: %w", err)
			}
			if old, err := os.ReadFile(b); err == nil && bytes.Equal(old, data) {
				continue
			}
			if err := os.MkdirAll(filepath.Dir(b), 0o755); err != nil {
				return fmt.Errorf("merge: %w", err)
			}
			if err := writeAtomic(b, data); err != nil {
				return fmt.Errorf("merge: %q: %w", b, err)
			}
		}
	}
	return nil
}

// writeAtomic writes data to a temporary file beside name and renames it
// into place, so that a reader never sees half a file.
func writeAtomic(name string, data []byte) error {
	f, err := os.CreateTemp(filepath.Dir(name), "."+filepath.Base(name)+".tmp*")
	if err != nil {
		return err
	}
	_, err = f.Write(data)
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Chmod(f.Name(), 0o644)
	}
	if err == nil {
		err = os.Rename(f.Name(), name)
	}
	if err != nil {
		os.Remove(f.Name())
	}
	return err
}
