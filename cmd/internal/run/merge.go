package run

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"recto/cmd/internal/run/ledger"
	"recto/internal/atomicfile"
)

// MergeOptions are the settings of `recto merge`.
type MergeOptions struct {
	Dirs []string // run folders to merge (at least one)
	Out  string   // run folder to merge into; "" means the single folder in Dirs

	// AllowPartial merges even when shards are missing, repeated or of
	// different settings; the reports then say they are partial.
	AllowPartial bool

	Stderr io.Writer // messages; nil means none
	Quiet  bool
}

// MergeSummary counts what a merge did.
type MergeSummary struct {
	Ledgers int    // source ledgers merged
	Taken   int    // rows taken from them
	Pages   int    // pages in the merged ledger
	Failed  int    // of which failed
	Partial string // why the merge is partial; "" when every shard was there once
	Report  string // path of report.html
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

// Merge combines the ledgers found in o.Dirs into o.Out and builds its reports.
func Merge(ctx context.Context, o MergeOptions) (MergeSummary, error) {
	var sum MergeSummary
	args := o.Dirs
	stderr := o.Stderr
	if stderr == nil {
		stderr = io.Discard
	}
	if len(args) == 0 {
		return sum, usagef("merge: name at least one run folder")
	}
	out := o.Out
	if out == "" {
		if len(args) > 1 {
			return sum, usagef("merge: with several folders, name the destination with --out")
		}
		out = args[0]
	}
	dst, err := filepath.Abs(out)
	if err != nil {
		return sum, err
	}
	var srcs []shardSource
	for _, a := range args {
		s, err := findLedgers(a)
		if err != nil {
			return sum, err
		}
		if len(s) == 0 {
			return sum, fmt.Errorf("merge: %q holds no ledger (%s or %s/*/%s)", a, ledger.FileName, shardsDir, ledger.FileName)
		}
		srcs = append(srcs, s...)
	}
	dstLedger := filepath.Join(dst, ledger.FileName)
	// Every shard once, all of one run: checked before anything is written.
	problems, err := checkShards(ctx, srcs, dstLedger)
	if err != nil {
		return sum, err
	}
	if len(problems) > 0 {
		if !o.AllowPartial {
			return sum, &shardsError{problems: problems}
		}
		sum.Partial = strings.Join(problems, "; ")
		fmt.Fprintf(stderr, "recto merge: warning: partial merge (--allow-partial): %s\n", sum.Partial)
	}
	if err := checkWritable(dst); err != nil {
		return sum, err
	}
	l, err := ledger.Open(dstLedger)
	if err != nil {
		return sum, fmt.Errorf("merge: %w", err)
	}
	defer l.Close()

	var paths []string
	meta := map[string]map[string]bool{"collection": {}, "settings": {}, "truth": {}, metaAbout: {}, metaTarget: {}}
	for _, s := range srcs {
		if s.ledger == dstLedger {
			continue // the destination itself
		}
		paths = append(paths, s.ledger)
		sl, err := ledger.OpenReadOnly(s.ledger)
		if err != nil {
			return sum, fmt.Errorf("merge: %w", err)
		}
		for k := range meta {
			v, err := sl.Meta(ctx, k)
			if err != nil {
				sl.Close()
				return sum, fmt.Errorf("merge: %w", err)
			}
			meta[k][v] = true
		}
		if s.runDir != dst {
			if err := copyOutputs(ctx, sl, s.runDir, dst); err != nil {
				sl.Close()
				return sum, err
			}
		}
		sl.Close()
	}
	for k, vals := range meta {
		for v := range vals {
			if len(vals) == 1 {
				if err := l.SetMeta(ctx, k, v); err != nil {
					return sum, fmt.Errorf("merge: %w", err)
				}
			}
		}
	}
	n, err := l.Merge(ctx, paths...)
	if err != nil {
		return sum, fmt.Errorf("merge: %w", err)
	}
	rows, err := l.Pages(ctx)
	if err != nil {
		return sum, fmt.Errorf("merge: %w", err)
	}
	root, _ := l.Meta(ctx, "collection")
	repDir := filepath.Join(dst, reportDir)
	if err := l.SetMeta(ctx, metaPartial, sum.Partial); err != nil {
		return sum, fmt.Errorf("merge: %w", err)
	}
	reviews, err := l.Reviews(ctx)
	if err != nil {
		return sum, fmt.Errorf("merge: %w", err)
	}
	m, err := readReportMeta(ctx, l)
	if err != nil {
		return sum, fmt.Errorf("merge: %w", err)
	}
	if err := buildPartialReports(repDir, dst, root, rows, reviews, cerInterval, sum.Partial, m); err != nil {
		return sum, err
	}
	sum.Ledgers, sum.Taken, sum.Pages = len(paths), n, len(rows)
	for _, r := range rows {
		if r.State != ledger.StateDone {
			sum.Failed++
		}
	}
	if !o.Quiet {
		fmt.Fprintf(stderr, "recto merge: merged %d ledgers (%d rows taken); %d pages, %d failed\n", len(paths), n, len(rows), sum.Failed)
	}
	sum.Report = filepath.Join(repDir, "report.html")
	return sum, nil
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

// writeAtomic writes name through the one atomic writer.
func writeAtomic(name string, data []byte) error { return atomicfile.Write(name, data) }
