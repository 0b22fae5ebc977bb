package main

import (
	"bufio"
	"compress/gzip"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"hash/fnv"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"time"

	"recto/correct"
	"recto/internal/atomicfile"
	"recto/ocr/par"
	"recto/ocr/synth"
)

// Page geometry of the corpus: a small text block, so the engine takes well
// under a second per page.
const (
	pageWidthMM  = 100
	pageHeightMM = 90
	marginMM     = 8
	kindShare    = 0.25 // share of pages degraded by a named kind; the rest by Level(t), t uniform in [0, 1]
	fitPercent   = 70   // share of ids in the "fit" split
)

// fontChoices are the Go fonts pages are set in, with weights. Small caps
// are left out: their lower case is drawn as capitals, so the truth would
// not match what a reader sees.
var fontChoices = []struct {
	name   string
	weight int
}{{"regular", 45}, {"medium", 15}, {"italic", 10}, {"mono", 10}, {"bold", 10}, {"bolditalic", 5}, {"monobold", 5}}

// pagePlan is everything needed to make one page; it is decided from the
// corpus seed and the page index alone.
type pagePlan struct {
	ID       string
	Split    string
	Kind     string  // a synth.Kinds name, or "level"
	Severity float64 // t for kind "level"; -1 for named kinds
	Seed     uint64  // the page's Degradation seed
	Font     string  // Go font name, or "<family> <style>" for a font file
	FontFile string  // the face's file (-fonts debian/fraktur); "" for the Go fonts
	Family   string  // type family: "go" for the Go fonts
	Text     string  // "train" or "heldout": the passage's source is held out of training (-split fonttext)
	SizePt   float64
	Passage  int // index into the passage list
	Source   string
	D        synth.Degradation
	Blank    bool
	Spaced   bool // a space before , ; : ? ! (spacePunct)
}

type buildOptions struct {
	Out     string
	N       int
	Seed    uint64
	Text    string
	Workers int
	Force   bool
	OCR     string
	DPI     int
	Fonts   string  // "go", "debian" or "fraktur" (fontSet)
	Split   string  // "id" (by the page id's hash) or "fonttext" (by font family and source text)
	Lang    string  // engine language(s) for recognition; "" means eng
	LongS   bool    // set the text with the long s (correct.LongS), as Fraktur print
	Spaced  float64 // share of pages set with a space before , ; : ? ! (spacePunct)
	MaxT    float64 // highest Level severity; 0 means 1
}

func runBuild(args []string) error {
	fs := flag.NewFlagSet("corpus", flag.ContinueOnError)
	var o buildOptions
	fs.StringVar(&o.Out, "out", "", "output `dir` (required)")
	fs.IntVar(&o.N, "n", 300, "number of pages")
	fs.Uint64Var(&o.Seed, "seed", 1, "corpus `seed`: equal seeds give equal corpora")
	fs.StringVar(&o.Text, "text", "", "passage `files` (JSON lines, gzipped), comma-separated; default testdata/synth/passages.jsonl.gz of this module")
	fs.StringVar(&o.Fonts, "fonts", "go", "type: `go` (the Go fonts), debian (15 families of Debian's font packages), fraktur (Debian's blackletter faces)")
	fs.StringVar(&o.Split, "split", "id", "`split`: id (70 % fit by the page id's hash), fonttext (held-out pages have fonts and source texts never in fit), or heldout (a test corpus: every page in the held-out families)")
	fs.StringVar(&o.Lang, "lang", "", "engine `language`(s) for recognition, e.g. frk (default eng)")
	fs.BoolVar(&o.LongS, "long-s", false, "set the passages with the long s (Fraktur print)")
	fs.Float64Var(&o.Spaced, "spaced-punct", 0, "`share` of pages set with a space before , ; : ? ! as older print often is")
	fs.Float64Var(&o.MaxT, "max-severity", 1, "highest Level severity `t` (1 = unreadable)")
	fs.IntVar(&o.Workers, "workers", 2, "pages rendered or recognised at once")
	fs.BoolVar(&o.Force, "force", false, "write into an output dir that already holds a corpus")
	fs.StringVar(&o.OCR, "ocr", "auto", "recognise the pages: `auto` (when the engine is available), on, off")
	fs.IntVar(&o.DPI, "dpi", 300, "page resolution, dots per inch (Level is calibrated at 300)")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if o.Out == "" || fs.NArg() > 0 || o.N < 1 || o.Workers < 1 || o.DPI < 50 || o.DPI > 1200 {
		fs.Usage()
		return errors.New("usage: go run ./cmd/corpus -out DIR [-n N] [-seed S]")
	}
	if o.Split != "id" && o.Split != "fonttext" && o.Split != "heldout" {
		return fmt.Errorf("-split %q: want id, fonttext or heldout", o.Split)
	}
	if o.MaxT <= 0 || o.MaxT > 1 {
		return fmt.Errorf("-max-severity %g: want a value in (0, 1]", o.MaxT)
	}
	fams, err := fontSet(o.Fonts)
	if err != nil {
		return err
	}
	if o.Split != "id" && fams == nil {
		return fmt.Errorf("-split %s needs -fonts debian or fraktur (families to hold out)", o.Split)
	}
	switch o.OCR {
	case "auto", "on", "off":
	default:
		return fmt.Errorf("-ocr %q: want auto, on or off", o.OCR)
	}
	if o.Text == "" {
		root, err := moduleRoot()
		if err != nil {
			return err
		}
		o.Text = filepath.Join(root, "testdata", "synth", "passages.jsonl.gz")
	}
	if _, err := os.Stat(filepath.Join(o.Out, "MANIFEST.tsv")); err == nil && !o.Force {
		return fmt.Errorf("%q already holds a corpus (MANIFEST.tsv); choose another -out or pass -force", o.Out)
	}
	var ps []passage
	for _, f := range strings.Split(o.Text, ",") {
		p, err := loadPassages(f)
		if err != nil {
			return err
		}
		ps = append(ps, p...)
	}

	start := time.Now()
	plans := planPages(o.N, o.Seed, ps)
	if fams != nil {
		plans = planFontPages(o, fams, ps)
	}
	for _, split := range splitsOf(plans) {
		for _, sub := range []string{"truth", "images"} {
			if err := os.MkdirAll(filepath.Join(o.Out, sub, split), 0o755); err != nil {
				return err
			}
		}
	}
	if err := writeManifest(filepath.Join(o.Out, "MANIFEST.tsv"), plans); err != nil {
		return err
	}
	if o.LongS {
		for i := range ps {
			ps[i].Text = correct.LongS(ps[i].Text)
		}
	}
	failed := renderAll(o, plans, ps)
	renderTime := time.Since(start)
	fmt.Fprintf(os.Stderr, "corpus: rendered %d pages to %s in %.1f s (%d failed)\n", len(plans)-failed, o.Out, renderTime.Seconds(), failed)

	sum := summary{Command: "go run ./cmd/corpus " + strings.Join(args, " "), Pages: len(plans), DPI: o.DPI, RenderFailed: failed, RenderSeconds: renderTime.Seconds()}
	if o.OCR != "off" {
		if err := recogniseAll(context.Background(), o, plans, &sum); err != nil {
			if o.OCR == "on" || !errors.Is(err, errNoEngine) {
				return err
			}
			fmt.Fprintf(os.Stderr, "corpus: pages not recognised: %v\n", err)
		}
	}
	sum.WallSeconds = time.Since(start).Seconds()
	if err := writeJSON(filepath.Join(o.Out, "build.json"), sum); err != nil {
		return err
	}
	fmt.Fprintf(os.Stderr, "corpus: done in %.1f s\n", sum.WallSeconds)
	if failed > 0 || sum.OCRFailed > 0 {
		return fmt.Errorf("%d pages failed to render, %d to be recognised", failed, sum.OCRFailed)
	}
	return nil
}

// summary is written to DIR/build.json.
type summary struct {
	Command       string        `json:"command"`
	Pages         int           `json:"pages"`
	DPI           int           `json:"dpi"`
	RenderFailed  int           `json:"render_failed"`
	RenderSeconds float64       `json:"render_seconds"`
	OCRPages      int           `json:"ocr_pages,omitempty"`
	OCRFailed     int           `json:"ocr_failed,omitempty"`
	OCRSeconds    float64       `json:"ocr_seconds,omitempty"`
	WallSeconds   float64       `json:"wall_seconds"`
	CER           *cerSpread    `json:"cer,omitempty"`
	CERByKind     []kindSummary `json:"cer_by_kind,omitempty"`
}

func writeJSON(path string, v any) error {
	data, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return err
	}
	return atomicfile.Write(path, append(data, '\n'))
}

// moduleRoot walks up from the working directory to the folder holding go.mod.
func moduleRoot() (string, error) {
	dir, err := os.Getwd()
	if err != nil {
		return "", err
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir, nil
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			return "", errors.New("cannot find the module root (go.mod) above the working directory; pass -text")
		}
		dir = parent
	}
}

func loadPassages(path string) ([]passage, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var r io.Reader = f
	if strings.HasSuffix(path, ".gz") {
		zr, err := gzip.NewReader(f)
		if err != nil {
			return nil, fmt.Errorf("%q: %w", path, err)
		}
		r = zr
	}
	var ps []passage
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 1<<20), 1<<24)
	for line := 1; sc.Scan(); line++ {
		var p passage
		if err := json.Unmarshal(sc.Bytes(), &p); err != nil {
			return nil, fmt.Errorf("%q:%d: %w", path, line, err)
		}
		if strings.TrimSpace(p.Text) == "" {
			return nil, fmt.Errorf("%q:%d: empty passage", path, line)
		}
		ps = append(ps, p)
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%q: %w", path, err)
	}
	if len(ps) == 0 {
		return nil, fmt.Errorf("%q: no passages", path)
	}
	return ps, nil
}

// splitOf assigns an id to "fit" or "heldout" by a hash of the id alone, so
// the split is fixed before anything is fitted and never depends on results.
func splitOf(id string) string {
	h := fnv.New64a()
	h.Write([]byte(id))
	if h.Sum64()%100 < fitPercent {
		return "fit"
	}
	return "heldout"
}

// splitmix64 derives well-mixed seeds from a counter (Steele, Lea and
// Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014).
func splitmix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}

func planPages(n int, seed uint64, ps []passage) []pagePlan {
	r := rand.New(rand.NewPCG(seed, 0xc0a905))
	perm := r.Perm(len(ps))
	kinds := synth.Kinds()
	total := 0
	for _, f := range fontChoices {
		total += f.weight
	}
	plans := make([]pagePlan, n)
	for i := range plans {
		pr := rand.New(rand.NewPCG(splitmix64(seed^uint64(i)<<20), uint64(i)))
		p := pagePlan{ID: fmt.Sprintf("s%05d", i), Seed: splitmix64(seed*1_000_003 + uint64(i))}
		p.Split = splitOf(p.ID)
		p.Family, p.Text = "go", "-"
		p.Passage = perm[i%len(perm)]
		p.Source = ps[p.Passage].Source
		w := pr.IntN(total)
		for _, f := range fontChoices {
			if w < f.weight {
				p.Font = f.name
				break
			}
			w -= f.weight
		}
		p.SizePt = 10 + 0.5*float64(pr.IntN(5))
		if pr.Float64() < kindShare {
			k := kinds[pr.IntN(len(kinds))]
			p.Kind, p.Severity, p.D, p.Blank = k.Name, -1, k.D, k.Blank
			p.D.Seed = p.Seed
		} else {
			t := pr.Float64()
			p.Kind, p.Severity, p.D = "level", t, synth.Level(t, p.Seed)
		}
		plans[i] = p
	}
	return plans
}

func writeManifest(path string, plans []pagePlan) error {
	var b strings.Builder
	b.WriteString("id\tsplit\tkind\tseverity\tseed\tfont\tsize_pt\tsource\tfamily\ttext\tpunct\n")
	for _, p := range plans {
		sev := "-"
		if p.Severity >= 0 {
			sev = fmt.Sprintf("%.4f", p.Severity)
		}
		punct := "-"
		if p.Spaced {
			punct = "spaced"
		}
		fmt.Fprintf(&b, "%s\t%s\t%s\t%s\t%d\t%s\t%.1f\t%s\t%s\t%s\t%s\n", p.ID, p.Split, p.Kind, sev, p.Seed, p.Font, p.SizePt, p.Source, p.Family, p.Text, punct)
	}
	return atomicfile.Write(path, []byte(b.String()))
}

func (p pagePlan) truthPath(out string) string {
	return filepath.Join(out, "truth", p.Split, p.ID+".txt")
}
func (p pagePlan) imagePath(out string) string {
	return filepath.Join(out, "images", p.Split, p.ID+".png")
}

// renderAll renders and writes every page with o.Workers goroutines and
// returns the number of pages that failed; a failure is reported and does
// not stop the others.
func renderAll(o buildOptions, plans []pagePlan, ps []passage) int {
	var failed atomic.Int64
	par.Each(context.Background(), len(plans), o.Workers, func(_, i int) {
		if err := renderOne(o.Out, o.DPI, plans[i], ps); err != nil {
			failed.Add(1)
			fmt.Fprintf(os.Stderr, "corpus: page %s: %v\n", plans[i].ID, err)
		}
	})
	return int(failed.Load())
}

func renderOne(out string, dpi int, p pagePlan, ps []passage) error {
	text := ps[p.Passage].Text
	if p.Blank {
		text = ""
	}
	if p.Spaced {
		text = spacePunct(text)
	}
	font := p.Font
	if p.FontFile != "" {
		font = p.FontFile
		var err error
		if text, err = drawable(text, font); err != nil {
			return err
		}
	}
	page, _, err := synth.Render(text, synth.Layout{DPI: dpi, WidthMM: pageWidthMM, HeightMM: pageHeightMM, MarginMM: marginMM, FontSizePt: p.SizePt, Font: font})
	if err != nil {
		return err
	}
	page = synth.Degrade(page, p.D)
	truth := page.Truth
	if truth != "" {
		truth += "\n"
	}
	if err := atomicfile.Write(p.truthPath(out), []byte(truth)); err != nil {
		return err
	}
	return page.SavePNG(p.imagePath(out))
}
