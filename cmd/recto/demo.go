package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"strings"

	"github.com/spf13/cobra"
	"golang.org/x/sync/errgroup"

	"recto/ocr/synth"
)

// DemoOptions are the settings of `recto demo`.
type DemoOptions struct {
	Out  string // demo folder; "" means ./recto-demo
	Jobs int    // pages in parallel; 0 means GOMAXPROCS
}

// demoMarker marks a folder as made by `recto demo`, which may then reuse it.
const demoMarker = ".recto-demo"

// demoPage is one page of the demo collection before rendering.
type demoPage struct {
	Title string // title folder name (the title's short name)
	Name  string // file name without extension, e.g. "page-01"
	Truth bool   // ground truth is written for this page

	title synth.Title // the title it belongs to
	index int         // its page index in title, from 0
}

// demoPages lists the pages of synth.Demo(): ground truth for every other
// text page of each title (half of them: the first, third, ...; a blank
// page has nothing to transcribe).
func demoPages() []demoPage {
	var out []demoPage
	for _, t := range synth.Demo() {
		text := 0
		for i, body := range t.Pages {
			p := demoPage{Title: t.ID, Name: fmt.Sprintf("page-%02d", i+1), title: t, index: i}
			if strings.TrimSpace(body) != "" {
				p.Truth = text%2 == 0
				text++
			}
			out = append(out, p)
		}
	}
	return out
}

// renderDemoPage renders and degrades one page; it returns the PNG bytes
// (with the resolution recorded) and the page's ground truth.
var renderDemoPage = func(p demoPage) ([]byte, string, error) {
	pg, err := p.title.Page(p.index)
	if err != nil {
		return nil, "", err
	}
	var buf bytes.Buffer
	if err := synth.WritePNG(&buf, pg.Image, pg.DPI); err != nil {
		return nil, "", err
	}
	return buf.Bytes(), pg.Truth + "\n", nil
}

func newDemoCommand(g *GlobalOptions) *cobra.Command {
	var o DemoOptions
	cmd := &cobra.Command{
		Use:   "demo [--out DIR]",
		Short: "Generate the fictional demo collection and run the whole job on it",
		Long: `Demo generates a small fictional collection (three invented titles of eight
pages each), renders it at 300 dpi, degrades the pages at several levels,
writes ground truth for half the pages of each title, and runs the same job
as 'recto run' on it. It prints where the report is.

Layout of DIR: collection/ (the page images), truth/ (ground truth) and
run/ (the run folder: ledger, outputs, run/report/report.html). The output is
the same on every machine and every time. Running demo again reuses DIR; a
folder that was not made by demo is never touched.
` + exitStatusHelp,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runDemo(cmd.Context(), o, *g)
		},
	}
	cmd.Flags().StringVarP(&o.Out, "out", "o", "recto-demo", "demo `folder`")
	cmd.Flags().IntVarP(&o.Jobs, "jobs", "j", 0, "recognise `n` pages in parallel (default: number of CPUs)")
	return cmd
}

// claimDemoFolder creates dir, or accepts it when it is empty or was made
// by demo; any other folder is refused, so that demo never overwrites
// someone's files.
func claimDemoFolder(dir string) error {
	entries, err := os.ReadDir(dir)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return fmt.Errorf("demo: cannot create %q: %w", dir, errors.Unwrap(err))
		}
	case err != nil:
		return fmt.Errorf("demo: %q: %w", dir, errors.Unwrap(err))
	case len(entries) > 0:
		if _, err := os.Stat(filepath.Join(dir, demoMarker)); err != nil {
			return fmt.Errorf("demo: %q already exists and was not made by 'recto demo'; choose another --out (nothing was changed)", dir)
		}
	}
	return os.WriteFile(filepath.Join(dir, demoMarker), []byte("made by recto demo; safe to delete with the folder\n"), 0o644)
}

func runDemo(ctx context.Context, o DemoOptions, g GlobalOptions) error {
	dir := o.Out
	if dir == "" {
		dir = "recto-demo"
	}
	if err := claimDemoFolder(dir); err != nil {
		return err
	}
	coll, truth, runDir := filepath.Join(dir, "collection"), filepath.Join(dir, "truth"), filepath.Join(dir, "run")
	pages := demoPages()
	stamp := demoStamp(pages)
	if old, _ := os.ReadFile(filepath.Join(dir, demoMarker+"-collection")); string(old) == stamp {
		if !g.Quiet {
			fmt.Fprintf(g.stderr, "recto: reusing the demo collection in %s\n", coll)
		}
	} else {
		if !g.Quiet {
			fmt.Fprintf(g.stderr, "recto: writing the demo collection (%d pages) to %s\n", len(pages), coll)
		}
		if err := writeDemo(ctx, pages, coll, truth, o.Jobs); err != nil {
			return err
		}
		if err := writeAtomic(filepath.Join(dir, demoMarker+"-collection"), []byte(stamp)); err != nil {
			return fmt.Errorf("demo: %w", err)
		}
	}
	ro := RunOptions{Out: runDir, Truth: truth, Jobs: o.Jobs, Lang: "eng"}
	if err := ro.finalize(); err != nil {
		return err
	}
	err := runRun(ctx, ro, g, []string{coll})
	var pe *partialError
	if err != nil && !errors.As(err, &pe) {
		return err
	}
	fmt.Fprintln(g.stdout, filepath.Join(runDir, reportDir, "report.html"))
	return err
}

// demoStamp identifies the generated collection: a rerun with the same
// stamp and the stamp file present skips rendering.
func demoStamp(pages []demoPage) string {
	h := sha256.New()
	for _, p := range pages {
		k := p.title.Kinds[p.index]
		fmt.Fprintf(h, "%q %q %v %q %+v %+v %q\n", p.Title, p.Name, p.Truth, k.Name, k.D, p.title.Layout, p.title.Pages[p.index])
	}
	return fmt.Sprintf("demo collection %x\n", h.Sum(nil))
}

// writeDemo renders the pages in parallel and writes images and ground truth.
func writeDemo(ctx context.Context, pages []demoPage, coll, truth string, jobs int) error {
	if jobs == 0 {
		jobs = runtime.GOMAXPROCS(0)
	}
	var g errgroup.Group
	g.SetLimit(jobs)
	for _, p := range pages {
		g.Go(func() error {
			if err := ctx.Err(); err != nil {
				return err
			}
			img, gt, err := renderDemoPage(p)
			if err != nil {
				return fmt.Errorf("demo: page %s/%s: %w", p.Title, p.Name, err)
			}
			if err := writeIfChanged(filepath.Join(coll, p.Title, p.Name+".png"), img); err != nil {
				return err
			}
			if p.Truth {
				return writeIfChanged(filepath.Join(truth, p.Title, p.Name+".txt"), []byte(gt))
			}
			return nil
		})
	}
	return g.Wait()
}

// writeIfChanged writes data to name (via a temporary file) unless the file
// already holds exactly data, so a second demo finds the pages unchanged.
func writeIfChanged(name string, data []byte) error {
	if old, err := os.ReadFile(name); err == nil && bytes.Equal(old, data) {
		return nil
	}
	if err := os.MkdirAll(filepath.Dir(name), 0o755); err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	if err := writeAtomic(name, data); err != nil {
		return fmt.Errorf("demo: %q: %w", name, err)
	}
	return nil
}
