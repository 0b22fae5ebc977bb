package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"sync/atomic"
	"time"

	"github.com/mattn/go-isatty"
	"github.com/spf13/cobra"

	"recto/cmd/internal/cli"
	"recto/internal/atomicfile"
	"recto/ocr"
	"recto/ocr/tesseract"
	"recto/quality"
)

// Engine hooks, swapped for a fake in tests (the C library is optional).
var (
	newEngine      = tesseract.New
	tessLanguages  = tesseract.Languages
	progressPeriod = 5 * time.Second // plain progress lines when stderr is not a terminal
)

// OCROptions are the flags of `recto ocr`.
type OCROptions struct {
	Out        string
	Lang       string
	Jobs       int
	PSM        int
	DPI        float64
	MaxPixels  int
	KeepImages bool
	NoPrepare  bool
	Deskew     string
	Denoise    string
	Cleanup    string
	Binarize   string
	MaxSkew    float64
}

// AddFlags registers the options on fs.
func (o *OCROptions) AddFlags(c *cobra.Command) {
	f := c.Flags()
	f.StringVarP(&o.Out, "out", "o", "", "write outputs under `dir` (required)")
	f.StringVarP(&o.Lang, "lang", "l", "eng", "Tesseract `languages`, e.g. eng or eng+deu")
	f.IntVarP(&o.Jobs, "jobs", "j", 0, "recognise `n` pages at once (0: one per core)")
	f.IntVar(&o.PSM, "psm", 0, "Tesseract page segmentation `mode` 1-13 (0: Tesseract's default, 3)")
	f.Float64Var(&o.DPI, "dpi", ocr.DefaultDPI, "resolution of images without a resolution tag, in `dpi`")
	f.IntVar(&o.MaxPixels, "max-pixels", ocr.DefaultMaxPixels, "refuse images larger than `n` pixels")
	f.BoolVar(&o.KeepImages, "keep-images", false, "also write the prepared image as <name>.prepared.png")
	f.BoolVar(&o.NoPrepare, "no-prepare", false, "hand the greyscale page to Tesseract without preparation")
	f.StringVar(&o.Deskew, "deskew", "auto", "straighten skewed pages: `auto`, on or off")
	f.StringVar(&o.Denoise, "denoise", "auto", "remove speckle noise: `auto`, on or off")
	f.StringVar(&o.Cleanup, "cleanup", "auto", "clear borders and specks after binarisation: `auto`, on or off")
	f.StringVar(&o.Binarize, "binarize", "auto", "binarisation `method`: auto (Sauvola where light is uneven, Otsu on denoised pages, grey otherwise), otsu, sauvola or none")
	f.Float64Var(&o.MaxSkew, "max-skew", 0, "largest skew searched, in `degrees` (0: the preparation default)")
	c.MarkFlagRequired("out")
}

// options checks the flag values and turns them into library options.
func (o *OCROptions) options() (ocr.Options, tesseract.Config, error) {
	var prep ocr.PrepOptions
	for _, m := range []struct {
		flag, val string
		dst       *ocr.Mode
	}{{"deskew", o.Deskew, &prep.Deskew}, {"denoise", o.Denoise, &prep.Denoise}, {"cleanup", o.Cleanup, &prep.Cleanup}} {
		switch strings.ToLower(m.val) {
		case "auto", "":
			*m.dst = ocr.Auto
		case "on":
			*m.dst = ocr.On
		case "off":
			*m.dst = ocr.Off
		default:
			return ocr.Options{}, tesseract.Config{}, usagef("--%s %q: want auto, on or off", m.flag, m.val)
		}
	}
	switch b := strings.ToLower(o.Binarize); b {
	case "auto", "":
		prep.Binarize = ""
	case "otsu", "sauvola", "none":
		prep.Binarize = b
	default:
		return ocr.Options{}, tesseract.Config{}, usagef("--binarize %q: want auto, otsu, sauvola or none", o.Binarize)
	}
	if o.MaxSkew < 0 || o.MaxSkew > 45 {
		return ocr.Options{}, tesseract.Config{}, usagef("--max-skew %g: want 0 to 45 degrees", o.MaxSkew)
	}
	prep.MaxSkew = o.MaxSkew
	if o.Jobs < 0 {
		return ocr.Options{}, tesseract.Config{}, usagef("--jobs %d: want 0 (one per core) or more", o.Jobs)
	}
	if o.Jobs == 0 {
		o.Jobs = runtime.GOMAXPROCS(0)
	}
	if o.PSM < 0 || o.PSM > 13 {
		return ocr.Options{}, tesseract.Config{}, usagef("--psm %d: want 0 to 13", o.PSM)
	}
	if o.DPI < 70 || o.DPI > 2400 {
		return ocr.Options{}, tesseract.Config{}, usagef("--dpi %g: want 70 to 2400", o.DPI)
	}
	if o.MaxPixels < 1 {
		return ocr.Options{}, tesseract.Config{}, usagef("--max-pixels %d: want 1 or more", o.MaxPixels)
	}
	if o.Lang == "" {
		return ocr.Options{}, tesseract.Config{}, usagef("--lang is empty")
	}
	return ocr.Options{
			Prep:      prep,
			NoPrepare: o.NoPrepare,
			DPI:       o.DPI,
			MaxPixels: o.MaxPixels,
			KeepImage: o.KeepImages,
			Lang:      o.Lang,
		}, tesseract.Config{
			Lang: o.Lang,
			PSM:  o.PSM,
		}, nil
}

func newOCRCommand(g *GlobalOptions) *cobra.Command {
	var o OCROptions
	c := &cobra.Command{
		Use:   "ocr IN --out DIR",
		Short: "Prepare page images and recognise them with Tesseract",
		Long: `Prepare page images and recognise them with Tesseract.

IN is a page image or a folder searched recursively for TIFF, PNG and JPEG
files (.tif .tiff .png .jpg .jpeg, any case; hidden files and folders are
skipped). For each page, under DIR and keeping IN's folder structure:

  <name>.txt       the text, lines in reading order, blocks apart by a blank line
  <name>.alto.xml  ALTO v4: blocks, lines and words with confidences and
                   boxes in pixels of the original image
  <name>.json      the page record: source and SHA-256, size and resolution,
                   skew, binarisation, noise, confidences, boxes and timings
  <name>.prepared.png   with --keep-images: the image handed to Tesseract

<name> is the image's name without its extension, or with it when two images
in one folder share a name (p1.tif and p1.png give p1.tif.txt and p1.png.txt).
DIR/failures.tsv lists the pages that failed (title, page, image, error;
pages named as in 'recto score'), with a header
line; it is written on every run. Files under IN are only read. DIR may lie
inside IN: it is skipped while searching; DIR may not be IN itself.

Pages are prepared before recognition (greyscale, denoise, deskew,
binarisation, clean-up; each step decides on its own under "auto") unless
--no-prepare is given. Each worker has its own Tesseract engine running on
one thread.
` + exitStatusHelp,
		Example: `  recto ocr scans/ --out text/
  recto ocr scans/ --out text/ --lang eng+deu --jobs 2 --deskew on --binarize sauvola
  recto ocr page-0007.tif --out text/ --keep-images`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runOCR(cmd.Context(), o, *g, args)
		},
	}
	o.AddFlags(c)
	return c
}

// page is one input image and the name of its outputs under --out.
type page struct {
	path string // as found: IN joined with the relative path
	rel  string // output name relative to --out, without suffix, "/"-separated
}

func runOCR(ctx context.Context, o OCROptions, g GlobalOptions, args []string) error {
	if ctx == nil {
		ctx = context.Background()
	}
	opts, cfg, err := o.options()
	if err != nil {
		return err
	}
	// A missing language is the user's to fix: fail before any work.
	have, err := tessLanguages()
	if err != nil {
		return err // names the engine's problem, e.g. ocr.ErrEngineUnavailable
	}
	for _, l := range strings.Split(cfg.Lang, "+") {
		if !contains(have, l) {
			return usagef("ocr: --lang %q: language %q is not installed (installed: %s); on Debian install the package %s",
				cfg.Lang, l, strings.Join(have, ", "), tesseract.DebianPackage(l))
		}
	}

	in := args[0]
	pages, err := findPages(in, o.Out)
	if err != nil {
		return err
	}
	if len(pages) == 0 {
		return fmt.Errorf("ocr: no page images (.tif, .tiff, .png, .jpg, .jpeg) under %q", in)
	}

	// One level of parallelism: pages run in parallel. imaging v1.6.2, the
	// release on the module proxy, has no SetMaxProcs (it is on its master
	// branch only); preparation code must not fan out within a page.
	if err := os.MkdirAll(o.Out, 0o755); err != nil {
		return fmt.Errorf("ocr: %w", err)
	}

	paths := make([]string, len(pages))
	for i, p := range pages {
		paths[i] = p.path
	}
	prog := newProgress(g, len(pages))
	results, err := ocr.RunBatch(ctx, paths, ocr.BatchConfig{
		Jobs:      o.Jobs,
		NewEngine: func() (ocr.Engine, error) { return newEngine(cfg) },
		Options:   opts,
		Done: func(r *ocr.Result) error {
			return ocr.WriteOutputs(o.Out, pages[r.Index].rel, r.Record, r.Prepared)
		},
	})
	if err != nil {
		var ml *tesseract.MissingLanguageError
		if errors.As(err, &ml) {
			return &usageError{Err: err}
		}
		return fmt.Errorf("ocr: %w", err)
	}
	var failures []ocr.Result
	for r := range results {
		r.Prepared = nil
		if r.Err != nil {
			failures = append(failures, r)
			prog.fail(r.Err)
		} else {
			for _, w := range r.Record.Warnings {
				prog.warn(r.Path, w)
			}
			prog.done()
		}
	}
	prog.finish()
	sort.Slice(failures, func(i, j int) bool { return failures[i].Index < failures[j].Index })
	rootName := filepath.Base(in)
	if abs, err := filepath.Abs(in); err == nil {
		rootName = filepath.Base(abs)
	}
	if err := writeFailures(filepath.Join(o.Out, "failures.tsv"), rootName, pages, failures); err != nil {
		return err
	}
	if ctx.Err() != nil {
		return ctx.Err()
	}
	switch {
	case len(failures) == len(pages):
		return fmt.Errorf("ocr: all %d pages failed (listed in %q)", len(pages), filepath.Join(o.Out, "failures.tsv"))
	case len(failures) > 0:
		return &partialError{Failed: len(failures), Total: len(pages), What: "pages"}
	}
	return nil
}

// imageExt lists the suffixes of page images, lower case.
var imageExt = map[string]bool{".tif": true, ".tiff": true, ".png": true, ".jpg": true, ".jpeg": true}

// findPages lists the page images under in (or in itself when it is a
// file), sorted, with their output names; out is skipped when it lies
// inside in. Hidden files and folders (names starting with ".") are
// skipped, so are files with other suffixes.
func findPages(in, out string) ([]page, error) {
	info, err := os.Stat(in)
	if err != nil {
		return nil, fmt.Errorf("ocr: %w", err)
	}
	if !info.IsDir() {
		// A single file is taken whatever its suffix; decoding judges it.
		return []page{{path: in, rel: strings.TrimSuffix(filepath.Base(in), filepath.Ext(in))}}, nil
	}
	absIn, err := filepath.Abs(in)
	if err != nil {
		return nil, fmt.Errorf("ocr: %w", err)
	}
	absOut, err := filepath.Abs(out)
	if err != nil {
		return nil, fmt.Errorf("ocr: %w", err)
	}
	if absIn == absOut {
		return nil, usagef("ocr: --out %q is the input folder; choose another folder so that no input is overwritten", out)
	}
	var found []string
	err = filepath.WalkDir(in, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return fmt.Errorf("ocr: %w", err)
		}
		name := d.Name()
		if d.IsDir() {
			if path != in && strings.HasPrefix(name, ".") {
				return fs.SkipDir
			}
			if abs, err := filepath.Abs(path); err == nil && abs == absOut {
				return fs.SkipDir
			}
			return nil
		}
		if strings.HasPrefix(name, ".") || !d.Type().IsRegular() && d.Type()&fs.ModeSymlink == 0 {
			return nil
		}
		if imageExt[strings.ToLower(filepath.Ext(name))] {
			found = append(found, path)
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	sort.Strings(found)
	// Output names: the relative path without its suffix, or with it when
	// two images in one folder share the stem.
	stems := map[string]int{}
	for _, p := range found {
		rel, _ := filepath.Rel(in, p)
		stems[strings.TrimSuffix(rel, filepath.Ext(rel))]++
	}
	pages := make([]page, len(found))
	for i, p := range found {
		rel, _ := filepath.Rel(in, p)
		stem := strings.TrimSuffix(rel, filepath.Ext(rel))
		if stems[stem] == 1 {
			rel = stem
		}
		pages[i] = page{path: p, rel: filepath.ToSlash(rel)}
	}
	return pages, nil
}

// writeFailures writes the failures list: a header line, then one line per
// failed page, "title<TAB>page<TAB>image<TAB>error" (the page named as in
// recto score, after its output name; rootName is the title of images in
// IN itself), tabs and line breaks in the message replaced by spaces.
func writeFailures(path, rootName string, pages []page, failures []ocr.Result) error {
	var b strings.Builder
	b.WriteString("title\tpage\timage\terror\n")
	clean := strings.NewReplacer("\t", " ", "\n", " ", "\r", " ")
	for _, f := range failures {
		title, pg := quality.TitlePage(pages[f.Index].rel, rootName)
		for _, c := range []string{title, pg, f.Path} {
			b.WriteString(clean.Replace(c))
			b.WriteByte('\t')
		}
		b.WriteString(clean.Replace(cli.Message("recto ocr", f.Err)))
		b.WriteByte('\n')
	}
	return atomicfile.Write(path, []byte(b.String()))
}

func contains(list []string, s string) bool {
	for _, v := range list {
		if v == s {
			return true
		}
	}
	return false
}

// progress reports on stderr: one line per failed page always; counts
// redrawn in place on a terminal, or a plain line every progressPeriod
// otherwise; nothing but failures under --quiet.
type progress struct {
	w            io.Writer
	prefix       string // "recto ocr"
	quiet, tty   bool
	total        int
	ok, failed   atomic.Int64
	start, last  time.Time
	lastLineOpen bool
}

func newProgress(g GlobalOptions, total int) *progress {
	p := &progress{w: g.stderr, prefix: g.prefix(), quiet: g.Quiet, total: total, start: time.Now()}
	p.last = p.start
	if f, ok := g.stderr.(*os.File); ok {
		p.tty = isatty.IsTerminal(f.Fd())
	}
	return p
}

func (p *progress) status() string {
	n := p.ok.Load() + p.failed.Load()
	el := time.Since(p.start).Seconds()
	rate := 0.0
	if el > 0 {
		rate = float64(n) / el * 60
	}
	return fmt.Sprintf("%s: %d/%d pages, %d failed, %.1f pages/min", p.prefix, n, p.total, p.failed.Load(), rate)
}

func (p *progress) clearLine() {
	if p.lastLineOpen {
		fmt.Fprint(p.w, "\r\033[K")
		p.lastLineOpen = false
	}
}

func (p *progress) fail(err error) {
	p.failed.Add(1)
	p.clearLine()
	fmt.Fprintf(p.w, "%s: %s\n", p.prefix, cli.Message(p.prefix, err))
	p.tick()
}

// warn reports something about a page that did not stop it; shown even
// under --quiet, like failures.
func (p *progress) warn(path, msg string) {
	p.clearLine()
	fmt.Fprintf(p.w, "%s: warning: %q: %s\n", p.prefix, path, msg)
}

func (p *progress) done() {
	p.ok.Add(1)
	p.tick()
}

func (p *progress) tick() {
	if p.quiet {
		return
	}
	if p.tty {
		fmt.Fprint(p.w, "\r\033[K"+p.status())
		p.lastLineOpen = true
		return
	}
	if time.Since(p.last) >= progressPeriod {
		p.last = time.Now()
		fmt.Fprintln(p.w, p.status())
	}
}

func (p *progress) finish() {
	p.clearLine()
	if p.quiet {
		return
	}
	fmt.Fprintf(p.w, "%s in %.1fs\n", p.status(), time.Since(p.start).Seconds())
}
