package run

import (
	"bytes"
	"context"
	"crypto/sha256"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"recto/cmd/internal/cli"
	"recto/ocr"
	"recto/ocr/par"
	"recto/ocr/synth"
)

// DemoOptions are the settings of `recto demo`; the zero value means the
// defaults.
type DemoOptions struct {
	Out  string // demo folder; "" means ./recto-demo
	Jobs int    // pages in parallel; 0 means GOMAXPROCS

	Stderr    io.Writer                  // progress and messages; nil means none
	Quiet     bool                       // only failures on Stderr
	Command   string                     // prefix of the lines on Stderr; "" means "recto demo"
	NewEngine func() (ocr.Engine, error) // as in Options
	NoPrepare bool                       // as in Options
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
	return writeAtomic(filepath.Join(dir, demoMarker), []byte("made by recto demo; safe to delete with the folder\n"))
}

// Demo writes the demo collection under o.Out and runs the job on it. The
// summary's Report names the report; a partial run returns it with a
// *cli.PartialError.
func Demo(ctx context.Context, o DemoOptions) (Summary, error) {
	dir := o.Out
	if dir == "" {
		dir = "recto-demo"
	}
	stderr := o.Stderr
	if stderr == nil {
		stderr = io.Discard
	}
	if o.Command == "" {
		o.Command = "recto demo"
	}
	if err := cli.CheckJobs(o.Jobs); err != nil { // before anything is written
		return Summary{}, err
	}
	if err := claimDemoFolder(dir); err != nil {
		return Summary{}, err
	}
	coll, truth, runDir := filepath.Join(dir, "collection"), filepath.Join(dir, "truth"), filepath.Join(dir, "run")
	pages := demoPages()
	stamp := demoStamp(pages)
	if old, _ := os.ReadFile(filepath.Join(dir, demoMarker+"-collection")); string(old) == stamp {
		if !o.Quiet {
			fmt.Fprintf(stderr, "%s: reusing the demo collection in %s\n", o.Command, coll)
		}
	} else {
		if !o.Quiet {
			fmt.Fprintf(stderr, "%s: writing the demo collection (%d pages) to %s\n", o.Command, len(pages), coll)
		}
		if err := writeDemo(ctx, pages, coll, truth, o.Jobs); err != nil {
			return Summary{}, err
		}
		if err := writeAtomic(filepath.Join(dir, demoMarker+"-collection"), []byte(stamp)); err != nil {
			return Summary{}, fmt.Errorf("demo: %w", err)
		}
	}
	return Run(ctx, Options{Collection: coll, Out: runDir, Truth: truth, Jobs: o.Jobs, Lang: "eng",
		Stderr: o.Stderr, Quiet: o.Quiet, Command: o.Command, NewEngine: o.NewEngine, NoPrepare: o.NoPrepare})
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
	return par.EachErr(ctx, len(pages), jobs, func(_, i int) error {
		p := pages[i]
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
