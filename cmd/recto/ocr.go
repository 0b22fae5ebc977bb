package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"recto/cmd/internal/cli"
	"recto/cmd/internal/progress"
	"recto/cmd/internal/run"
	"recto/internal/atomicfile"
	"recto/ocr"
	"recto/ocr/tesseract"
	"recto/quality"
)

// Engine hooks, swapped for a fake in tests (the C library is optional).
var (
	newEngine     = tesseract.New
	tessLanguages = tesseract.Languages
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
	prepFlags
}

// prepFlags are the preparation options, shared by recto ocr and recto run.
type prepFlags struct {
	NoPrepare bool
	Deskew    string
	Denoise   string
	Cleanup   string
	Binarize  string
	MaxSkew   float64
}

// add registers the preparation flags on f.
func (o *prepFlags) add(f *pflag.FlagSet) {
	f.BoolVar(&o.NoPrepare, "no-prepare", false, "hand the greyscale page to Tesseract without preparation")
	f.StringVar(&o.Deskew, "deskew", "auto", "straighten skewed pages: `auto`, on or off")
	f.StringVar(&o.Denoise, "denoise", "auto", "remove speckle noise: `auto`, on or off")
	f.StringVar(&o.Cleanup, "cleanup", "auto", "clear borders and specks after binarisation: `auto`, on or off")
	f.StringVar(&o.Binarize, "binarize", "auto", "binarisation `method`: auto (Sauvola where light is uneven, Otsu on denoised pages, grey otherwise), otsu, sauvola or none")
	f.Float64Var(&o.MaxSkew, "max-skew", 0, "largest skew searched, in `degrees` (0: the preparation default)")
}

// options checks the values and turns them into the library's options.
func (o *prepFlags) options() (ocr.PrepOptions, error) {
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
			return ocr.PrepOptions{}, usagef("--%s %q: want auto, on or off", m.flag, m.val)
		}
	}
	switch b := strings.ToLower(o.Binarize); b {
	case "auto", "":
		prep.Binarize = ""
	case "otsu", "sauvola", "none":
		prep.Binarize = b
	default:
		return ocr.PrepOptions{}, usagef("--binarize %q: want auto, otsu, sauvola or none", o.Binarize)
	}
	if o.MaxSkew < 0 || o.MaxSkew > 45 {
		return ocr.PrepOptions{}, usagef("--max-skew %g: want 0 to 45 degrees", o.MaxSkew)
	}
	prep.MaxSkew = o.MaxSkew
	return prep, nil
}

// AddFlags registers the options on fs.
func (o *OCROptions) AddFlags(c *cobra.Command) {
	f := c.Flags()
	f.StringVarP(&o.Out, "out", "o", "", "write outputs under `folder` (required)")
	f.StringVarP(&o.Lang, "lang", "l", "eng", "Tesseract `languages`, e.g. eng or eng+deu")
	f.IntVarP(&o.Jobs, "jobs", "j", 0, "recognise `n` pages at once (0: one per core)")
	f.IntVar(&o.PSM, "psm", 0, "Tesseract page segmentation `mode` 1-13 (0: Tesseract's default, 3)")
	f.Float64Var(&o.DPI, "dpi", 0, "resolution of images without a resolution tag, in `dpi` (default: estimated from the size of the text, else 300)")
	f.IntVar(&o.MaxPixels, "max-pixels", ocr.DefaultMaxPixels, "refuse images larger than `n` pixels")
	f.BoolVar(&o.KeepImages, "keep-images", false, "also write the prepared image as <name>.prepared.png")
	o.prepFlags.add(f)
	c.MarkFlagRequired("out")
}

// options checks the flag values and turns them into library options.
func (o *OCROptions) options() (ocr.Options, tesseract.Config, error) {
	prep, err := o.prepFlags.options()
	if err != nil {
		return ocr.Options{}, tesseract.Config{}, err
	}
	if o.Jobs < 0 {
		return ocr.Options{}, tesseract.Config{}, checkJobs(o.Jobs)
	}
	if o.Jobs == 0 {
		o.Jobs = runtime.GOMAXPROCS(0)
	}
	if o.PSM < 0 || o.PSM > 13 {
		return ocr.Options{}, tesseract.Config{}, usagef("--psm %d: want 0 to 13", o.PSM)
	}
	if o.DPI != 0 && (o.DPI < 70 || o.DPI > 2400) {
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

IN is a page file or a folder searched recursively for page files (TIFF,
PNG, JPEG, BMP, GIF, WebP, JPEG 2000, PNM and PDF: .tif .tiff .png .jpg
.jpeg .bmp .gif .webp .jp2 .j2k .pnm .pbm .pgm .ppm .pdf, any case; hidden
files and folders are skipped), the same list as 'recto run'. For each page, under DIR and keeping IN's folder structure:

  <name>.txt       the text, lines in reading order, blocks apart by a blank line
  <name>.alto.xml  ALTO v4: blocks, lines and words with confidences and
                   boxes in pixels of the original image
  <name>.json      the page record: source and SHA-256, size and resolution,
                   skew, binarisation, noise, confidences, boxes and timings
  <name>.prepared.png   with --keep-images: the image handed to Tesseract

<name> is the image's name without its extension, or with it when two images
in one folder share a name (p1.tif and p1.png give p1.tif.txt and p1.png.txt).
Each page of a multi-page TIFF or PDF is a page: page 3 of reel-07.tif is
reel-07/p0003 (reel-07/p0003.txt, ...), decoded one page at a time.
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
	// filePage is the page's number in a multi-page file (from 1), 0 for
	// a single image; rel is then ocr.PageName's, "box/reel-07/p0003".
	filePage int
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
	// "script/Fraktur" is the Fraktur.traineddata Debian installs.
	cfg.Lang = strings.Join(tesseract.ResolveScripts(strings.Split(cfg.Lang, "+"), have), "+")
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
		return fmt.Errorf("no page files (%s) under %q", strings.Join(ocr.PageExtensions(), " "), in)
	}

	// One level of parallelism: pages run in parallel. imaging v1.6.2, the
	// release on the module proxy, has no SetMaxProcs (it is on its master
	// branch only); preparation code must not fan out within a page.
	if err := os.MkdirAll(o.Out, 0o755); err != nil {
		return fmt.Errorf("ocr: %w", err)
	}

	paths := make([]string, len(pages))
	filePages := make([]int, len(pages))
	for i, p := range pages {
		paths[i], filePages[i] = p.path, p.filePage
	}
	prog := progress.New(g.stderr, g.prefix(), g.Quiet, len(pages))
	results, err := ocr.RunBatch(ctx, paths, ocr.BatchConfig{
		Jobs:      o.Jobs,
		NewEngine: func() (ocr.Engine, error) { return newEngine(cfg) },
		Options:   opts,
		Pages:     filePages,
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
			prog.Message(g.prefix() + ": " + cli.Message(g.prefix(), r.Err))
			prog.Add(true)
		} else {
			for _, w := range r.Record.Warnings {
				prog.Message(fmt.Sprintf("%s: warning: %q: %s", g.prefix(), r.Path, w))
			}
			prog.Add(false)
		}
	}
	prog.Finish()
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

// findPages lists the page files under in (or in itself when it is a
// file) with their output names, through the run's walker (one list of
// formats for every command); out is skipped when it lies inside in.
func findPages(in, out string) ([]page, error) {
	info, err := os.Stat(in)
	if err != nil {
		return nil, checkDir("IN", in)
	}
	if !info.IsDir() {
		// A single file is taken whatever its suffix; decoding judges it.
		if n := ocr.CountPages(context.Background(), in); n > 1 {
			var pages []page
			for k := 1; k <= n; k++ {
				pages = append(pages, page{path: in, rel: ocr.PageName(filepath.Base(in), k, n), filePage: k})
			}
			return pages, nil
		}
		return []page{{path: in, rel: strings.TrimSuffix(filepath.Base(in), filepath.Ext(in))}}, nil
	}
	absIn, err := filepath.Abs(in)
	if err != nil {
		return nil, err
	}
	absOut, err := filepath.Abs(out)
	if err != nil {
		return nil, err
	}
	if absIn == absOut {
		return nil, usagef("--out %q is the input folder; choose another folder so that no input is overwritten", out)
	}
	imgs, _, err := run.FindImages(in, out)
	if err != nil {
		return nil, err
	}
	var pages []page
	for _, im := range imgs {
		// Every page of a multi-page TIFF or PDF, named as recto run names it.
		if n := ocr.CountPages(context.Background(), im.Path); n > 1 {
			for k := 1; k <= n; k++ {
				pages = append(pages, page{path: im.Path, rel: ocr.PageName(im.Rel, k, n), filePage: k})
			}
			continue
		}
		pages = append(pages, page{path: im.Path, rel: im.Stem})
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
