// Package run is recto's batch job: the collection walk, the steps of one
// page (recognise, write, triage, correct, score), the ledger that makes a
// run resumable, shards and their merge, the run reports and the demo. The
// commands in cmd/recto only parse flags and call Run, Merge, Report and Demo.
package run

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"image"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"recto/cmd/internal/cli"
	"recto/cmd/internal/progress"
	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/shard"
	"recto/correct"
	"recto/internal/atomicfile"
	"recto/ocr"
	"recto/ocr/par"
	"recto/quality"
)

// Options are the settings of a run. The zero value of every field means
// its default.
type Options struct {
	Collection string  // folder of page images; titles are its first-level folders (required)
	Out        string  // run folder: ledger, outputs, reports (required)
	Truth      string  // ground-truth folder: <rel without extension>.txt; "" for none
	Jobs       int     // pages in parallel; 0 means GOMAXPROCS
	Lang       string  // Tesseract language(s), e.g. "eng" or "eng+fra"; "" means "eng"
	PSM        int     // Tesseract page segmentation mode; 0 means the engine default
	DPI        float64 // resolution to assume when a file records none; 0 means estimated from the text, else 300
	Rescan     float64 // predicted CER above which a page is marked rescan; 0 means quality.DefaultRescan
	Correct    float64 // predicted CER above which a page is corrected; 0 means quality.DefaultCorrect
	Model      string  // quality model file for triage (recto calibrate); "" means the embedded one
	Lexicon    string  // lexicon file; "" means the built-in lexicon
	Margin     float64 // correction margin, natural-log odds; 0 means correct.DefaultMargin
	TargetCER  float64 // CER after correction each title should reach, in [0, 1], for report.html; 0 means none

	CorrectionModel string // error model file (recto correct train); "" means the embedded one
	KeepMarks       bool   // leave stray marks in (correct.Config.KeepMarks)
	MapGlyphs       bool   // rewrite punctuation glyphs (correct.Config.MapGlyphs)

	MaxPixels  int    // largest image accepted, width×height; 0 means ocr.DefaultMaxPixels
	Shard      string // "i/n"; "" means from the environment, else every page
	ShardCount int    // shard count for a Kubernetes Indexed Job (JOB_COMPLETION_INDEX); 0 means RECTO_SHARDS

	// Getenv reads the batch system's environment for the shard; nil means os.Getenv.
	Getenv func(string) string
	// Stderr receives progress and the messages about failed pages; nil
	// means none. Quiet keeps only the failures. Every line starts with
	// Command and a colon; "" means "recto run".
	Stderr  io.Writer
	Quiet   bool
	Command string

	// NewEngine makes one worker's engine (each worker owns one); nil
	// means Tesseract with Lang and PSM. With NoPrepare the greyscale page
	// goes to the engine without preparation.
	NewEngine func() (ocr.Engine, error)
	NoPrepare bool

	// Prep are the preparation settings, as recto ocr's --deskew,
	// --denoise, --cleanup, --binarize and --max-skew set them; the zero
	// value decides every step automatically.
	Prep ocr.PrepOptions

	// NewCollection allows running a collection into a run folder used for
	// another one; the old collection's pages are then marked gone.
	NewCollection bool
}

// Summary counts what a run did.
type Summary struct {
	Images  int    // page images found in the collection
	Pages   int    // pages of this shard (all of them when not sharded)
	Skipped int    // pages already done in the ledger with the same input and settings
	Done    int    // pages done by this run
	Failed  int    // pages of this shard failed in the ledger after the run
	Ignored int    // other files in the collection
	Report  string // path of report.html; "" when no report was written
}

// Validate checks option values; its errors are usage errors (exit status 2).
func (o Options) Validate() error {
	switch {
	case o.Out == "":
		return usagef("run: --out DIR is required")
	case o.Jobs < 0:
		return cli.CheckJobs(o.Jobs)
	case o.Rescan < 0 || o.Rescan > 1:
		return usagef("run: --rescan %g: a CER threshold must be in [0, 1]", o.Rescan)
	case o.Correct < 0 || o.Correct > 1:
		return usagef("run: --correct %g: a CER threshold must be in [0, 1]", o.Correct)
	case o.Rescan > 0 && o.Correct > 0 && o.Correct > o.Rescan:
		return usagef("run: --correct %g is above --rescan %g: pages worse than the rescan threshold are not corrected", o.Correct, o.Rescan)
	case o.ShardCount < 0:
		return usagef("run: --shard-count %d: must be 1 or more", o.ShardCount)
	case o.TargetCER < 0 || o.TargetCER > 1:
		return usagef("run: --target-cer %g: a CER must be in [0, 1] (0.03 is 3 %%)", o.TargetCER)
	case o.Margin < 0:
		return usagef("run: --margin %g: must be 0 (default) or more", o.Margin)
	case o.MaxPixels < 0:
		return usagef("run: --max-pixels %d: must be 0 (default %d) or more", o.MaxPixels, ocr.DefaultMaxPixels)
	case o.DPI < 0:
		return usagef("run: --dpi %g: must be positive", o.DPI)
	}
	if o.Shard != "" {
		if _, err := shard.Parse(o.Shard); err != nil {
			return usagef("run: --%v", strings.TrimPrefix(err.Error(), "shard: invalid "))
		}
	}
	return nil
}

type (
	usageError   = cli.UsageError
	partialError = cli.PartialError
)

var usagef = cli.Usagef

// Output folders inside a run folder.
const (
	ocrDir       = "ocr"       // engine output of every page
	correctedDir = "corrected" // corrected output of pages marked correct
	reportDir    = "report"
	shardsDir    = "shards"
)

// pageJob is one page of the run.
type pageJob struct {
	Rel   string // slash-separated, relative to the collection root
	Stem  string // output name: outputStem(Rel), see names.go
	Path  string // absolute path
	Title string // first folder of Rel, or the collection's name for an image in its root (as in recto score)
	Page  string // the page key: Rel without extension, as recto score names a page (FindImages' Stem)

	// FilePage is the page's number in a multi-page file (from 1) and
	// FilePages the file's page count; 0 for a single image. Rel and Page
	// of such a page are ocr.PageName's: "box/reel-07/p0003".
	FilePage, FilePages int
}

// listPages finds the page files under root (FindImages) as the pages of
// the run.
func listPages(ctx context.Context, root, skip string) ([]pageJob, int, error) {
	imgs, ignored, err := FindImages(root, skip)
	if err != nil {
		return nil, 0, fmt.Errorf("collection %w", err)
	}
	rootName := filepath.Base(root)
	pages := make([]pageJob, 0, len(imgs))
	for _, im := range imgs {
		// A multi-page TIFF or PDF gives one page per page, named by
		// ocr.PageName; its title is the first folder of that name, as
		// recto score names the page's ground truth.
		if n := ocr.CountPages(ctx, im.Path); n > 1 {
			for k := 1; k <= n; k++ {
				name := ocr.PageName(im.Rel, k, n)
				title, _ := quality.TitlePage(name, rootName)
				pages = append(pages, pageJob{Rel: name, Stem: outputStem(name), Path: im.Path, Title: title, Page: name, FilePage: k, FilePages: n})
			}
			continue
		}
		// Output names are unique for every input path (names.go).
		pages = append(pages, pageJob{Rel: im.Rel, Stem: outputStem(im.Rel), Path: im.Path, Title: im.Title, Page: im.Stem})
	}
	return pages, ignored, nil
}

// runState is what the workers share.
type runState struct {
	o        Options
	tk       *toolkit
	outDir   string // absolute run folder
	truthDir string // absolute, or ""
	sh       shard.Shard
	config   string // settings fingerprint
	done     map[string]ledger.Key
	badNames map[string]string   // rel -> why its output names cannot be made (names.go)
	previous map[string][]string // rel -> outputs of its last ledger row
	inFlight atomic.Int64        // pages being worked on
	sums     sync.Map            // path -> fileHash, for the pages of multi-page files
}

// fileHash is a file's SHA-256 and size, hashed once for all its pages.
type fileHash struct {
	once sync.Once
	sum  string
	size int64
	err  error
}

// fileSum returns the SHA-256 and size of p's file; the file of a
// multi-page page is read once for all its pages.
func (st *runState) fileSum(p pageJob) (string, int64, error) {
	if p.FilePage == 0 {
		return hashFile(p.Path)
	}
	v, _ := st.sums.LoadOrStore(p.Path, &fileHash{})
	h := v.(*fileHash)
	h.once.Do(func() { h.sum, h.size, h.err = hashFile(p.Path) })
	return h.sum, h.size, h.err
}

// Run is the whole job on o.Collection. A run in which some pages failed
// returns a *cli.PartialError with the summary; bad options return a
// *cli.UsageError.
func Run(ctx context.Context, o Options) (Summary, error) {
	var sum Summary
	if err := o.Validate(); err != nil {
		return sum, err
	}
	if o.Collection == "" {
		return sum, usagef("run: the COLLECTION folder is required")
	}
	if o.Lang == "" {
		o.Lang = "eng"
	}
	if o.Getenv == nil {
		o.Getenv = os.Getenv
	}
	stderr := o.Stderr
	if stderr == nil {
		stderr = io.Discard
	}
	if o.Command == "" {
		o.Command = "recto run"
	}
	root, err := filepath.Abs(o.Collection)
	if err != nil {
		return sum, err
	}
	if fi, err := os.Stat(root); errors.Is(err, fs.ErrNotExist) {
		return sum, fmt.Errorf("COLLECTION %q: no such folder", o.Collection)
	} else if err != nil {
		return sum, fmt.Errorf("COLLECTION %q: %v", o.Collection, errors.Unwrap(err))
	} else if !fi.IsDir() {
		return sum, fmt.Errorf("run: collection %q is not a folder", o.Collection)
	}
	st := &runState{o: o}
	if st.outDir, err = filepath.Abs(o.Out); err != nil {
		return sum, err
	}
	if st.outDir == root {
		return sum, usagef("run: --out %q is the collection itself; choose a separate folder", o.Out)
	}
	if o.Truth != "" {
		if st.truthDir, err = filepath.Abs(o.Truth); err != nil {
			return sum, err
		}
		if fi, err := os.Stat(st.truthDir); err != nil || !fi.IsDir() {
			return sum, fmt.Errorf("run: --truth %q is not a readable folder", o.Truth)
		}
	}
	if o.Shard != "" {
		st.sh, _ = shard.Parse(o.Shard) // validated above
	} else if st.sh, err = shard.FromEnv(o.Getenv, o.ShardCount); err != nil {
		return sum, &usageError{Err: err}
	}
	// Fail before any work when the run folder cannot be written.
	if err := checkWritable(st.outDir); err != nil {
		return sum, err
	}
	st.tk, err = newToolkit(o)
	if err != nil {
		return sum, err
	}
	st.config = st.tk.fingerprint
	if st.tk.close != nil {
		defer st.tk.close()
	}

	ledgerPath := filepath.Join(st.outDir, ledger.FileName)
	if st.sh.Sharded() {
		ledgerPath = filepath.Join(st.outDir, shardsDir, st.sh.Name(), ledger.FileName)
	}
	l, err := ledger.Open(ledgerPath)
	if err != nil {
		return sum, fmt.Errorf("run: %w", err)
	}
	defer l.Close()
	applyTestFaults(st, l) // faults.go: nothing outside the reliability tests
	if err := checkCollection(ctx, l, root, o.Out, o.NewCollection); err != nil {
		return sum, err
	}
	target := ""
	if o.TargetCER > 0 {
		target = strconv.FormatFloat(o.TargetCER, 'g', -1, 64)
	}
	for k, v := range map[string]string{"collection": root, "truth": st.truthDir, "settings": st.tk.settingsJSON, "shard": st.sh.String(),
		metaAbout: st.tk.aboutJSON, metaTarget: target} { // about.go
		if err := l.SetMeta(ctx, k, v); err != nil {
			return sum, fmt.Errorf("run: %w", err)
		}
	}
	if st.done, err = l.DoneKeys(ctx); err != nil {
		return sum, fmt.Errorf("run: %w", err)
	}

	skip := ""
	if strings.HasPrefix(st.outDir, root+string(filepath.Separator)) {
		skip = st.outDir
	}
	all, ignored, err := listPages(ctx, root, skip)
	if err != nil {
		return sum, err
	}
	var pages []pageJob
	for _, p := range all {
		if st.sh.Has(p.Rel) {
			pages = append(pages, p)
		}
	}
	sum.Images, sum.Pages, sum.Ignored = len(all), len(pages), ignored
	if _, err := markGone(ctx, l, pages, stderr, o.Command); err != nil {
		return sum, err
	}
	st.badNames = checkNames(all, foldsCase(st.outDir))
	if st.previous, err = previousOutputs(ctx, l); err != nil {
		return sum, err
	}
	if o.MaxPixels > 0 {
		maxPixelsNow = o.MaxPixels
	}
	if !o.Quiet {
		msg := fmt.Sprintf("%s: %d page images in %q", o.Command, len(all), o.Collection)
		if st.sh.Sharded() {
			msg += fmt.Sprintf(", %d in shard %s", len(pages), st.sh)
		}
		if ignored > 0 {
			msg += fmt.Sprintf(" (%d other files ignored)", ignored)
		}
		fmt.Fprintln(stderr, msg)
	}
	if len(all) == 0 {
		return sum, fmt.Errorf("run: no page images (%s) under %q", extList(), o.Collection)
	}

	prog := progress.New(stderr, o.Command, o.Quiet, len(pages))
	w := l.NewWriter(func(p ledger.Page) { prog.Add(p.State == ledger.StateFailed) })
	finished, said := make(chan struct{}), make(chan struct{})
	go func() {
		defer close(said)
		st.sayStopping(ctx, prog, o.Command, len(pages), finished) // stopping.go
	}()
	runErr := st.process(ctx, pages, w, prog)
	close(finished)
	<-said
	werr := w.Close()
	prog.Finish()
	sum.Skipped = prog.Skipped()
	sum.Done = prog.Done() - prog.Failed()
	if werr != nil {
		return sum, fmt.Errorf("run: ledger: %w", werr)
	}
	if runErr != nil {
		return sum, runErr
	}
	if err := ctx.Err(); err != nil {
		return sum, err
	}

	// Reports: for a shard, its own pages in its shard folder; the merged
	// report comes from Merge.
	repDir := filepath.Join(filepath.Dir(ledgerPath), reportDir)
	rows, err := l.Pages(ctx)
	if err != nil {
		return sum, fmt.Errorf("run: %w", err)
	}
	reviews, err := l.Reviews(ctx) // what recto review decided (reviewed.go)
	if err != nil {
		return sum, fmt.Errorf("run: %w", err)
	}
	m, err := readReportMeta(ctx, l)
	if err != nil {
		return sum, fmt.Errorf("run: %w", err)
	}
	m.jobs = o.Jobs
	if err := buildReports(repDir, st.outDir, root, rows, reviews, st.tk.interval, m); err != nil {
		return sum, err
	}
	sum.Report = filepath.Join(repDir, "report.html")
	if !o.Quiet {
		fmt.Fprintf(stderr, "%s: report in %s\n", o.Command, sum.Report)
	}
	inShard := make(map[string]bool, len(pages))
	for _, p := range pages {
		inShard[p.Rel] = true
	}
	setup := &SetupError{Total: len(pages), Report: filepath.Join(repDir, "failures.csv")}
	for _, r := range rows {
		if inShard[r.Rel] && r.State == ledger.StateFailed {
			sum.Failed++
			if isSetup(r) {
				if setup.Setup++; setup.First == "" {
					setup.First = r.Error
				}
			} else {
				setup.Image++
			}
		}
	}
	if setup.Setup > 0 {
		return sum, setup
	}
	if sum.Failed > 0 {
		return sum, &partialError{Failed: sum.Failed, Total: len(pages), What: "pages"}
	}
	return sum, nil
}

// checkWritable makes dir if needed and proves a file can be created in it.
func checkWritable(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("run: cannot create the output folder %q: %w", dir, errors.Unwrap(err))
	}
	f, err := os.CreateTemp(dir, ".recto-write-test-*")
	if err != nil {
		return fmt.Errorf("run: the output folder %q is not writable: %w", dir, errors.Unwrap(err))
	}
	name := f.Name()
	f.Close()
	return os.Remove(name)
}

// process runs the pages through the worker pool (par.EachErr), one
// engine per worker slot, made when the slot first takes a page, and hands
// every finished page to the ledger writer.
func (st *runState) process(ctx context.Context, pages []pageJob, w *ledger.Writer, prog *progress.Reporter) error {
	recs := make([]recogniser, par.Workers(st.o.Jobs, len(pages)))
	defer func() {
		for _, r := range recs {
			if r != nil {
				r.Close()
			}
		}
	}()
	err := par.EachErr(ctx, len(pages), len(recs), func(slot, i int) error {
		if w.Err() != nil {
			return nil
		}
		if recs[slot] == nil {
			r, err := st.tk.newRecogniser()
			if err != nil {
				return err
			}
			recs[slot] = r
		}
		row, skipped := st.onePage(ctx, recs[slot], pages[i])
		switch {
		case skipped:
			prog.Skip()
		case row == nil: // interrupted mid-page: not recorded
		default:
			if row.State == ledger.StateFailed {
				prog.Message(st.o.Command + ": " + row.Error)
			}
			for _, m := range row.Warnings {
				prog.Message(fmt.Sprintf("%s: warning: %q: %s", st.o.Command, pages[i].Path, m))
			}
			w.Put(*row)
		}
		return nil
	})
	if err != nil && ctx.Err() == nil {
		return fmt.Errorf("run: %w", err)
	}
	return nil
}

// onePage does every step for one page. It returns skipped when the ledger
// already holds the page done from the same input and settings, and a nil
// row when ctx was cancelled before the page finished.
func (st *runState) onePage(ctx context.Context, rec recogniser, p pageJob) (row *ledger.Page, skipped bool) {
	if ctx.Err() != nil {
		return nil, false
	}
	row = &ledger.Page{Rel: p.Rel, Title: p.Title, Page: p.Page, Source: p.Path, Shard: st.sh.String(),
		State: ledger.StateFailed, Timings: map[string]float64{}}
	fail := func(format string, a ...any) (*ledger.Page, bool) {
		row.Error, row.Problem = fmt.Sprintf(format, a...), ledger.ProblemSetup
		// Outputs of an earlier run of this page stay listed, so that no
		// file in the run folder belongs to no page; they are not linked.
		row.Outputs = st.stillThere(p.Rel)
		return row, false
	}
	failErr := func(err error) (*ledger.Page, bool) {
		row, _ = fail("")
		row.Problem, row.Error = classify(p.Path, err)
		return row, false
	}
	st.inFlight.Add(1)
	defer st.inFlight.Add(-1)
	if why, ok := st.badNames[p.Rel]; ok {
		return fail("%q: %s", p.Path, why)
	}
	sum, size, err := st.fileSum(p)
	if err != nil {
		return fail("%q: cannot read: %v%s", p.Path, errors.Unwrap(err), ioFix(err))
	}
	row.SHA256, row.Size = sum, size
	truth, truthSum, hasTruth, err := st.readTruth(p.Rel)
	if err != nil {
		return fail("%v%s", err, ioFix(err))
	}
	row.Config = st.config + "+" + truthSum
	if k, ok := st.done[p.Rel]; ok && k == (ledger.Key{SHA256: row.SHA256, Config: row.Config}) {
		return nil, true
	}
	if size == 0 {
		row, _ = fail("%q: empty file (0 bytes)", p.Path)
		row.Problem = ledger.ProblemImage
		return row, false
	}

	defer func() { // one bad page must never stop the batch
		if r := recover(); r != nil {
			row.State, row.Error, row.Outputs = ledger.StateFailed, fmt.Sprintf("%q: internal error: %v (please report it)", p.Path, r), nil
			row.Problem = ledger.ProblemSetup
			skipped = false
		}
	}()
	t0 := time.Now()
	r, prepared, err := rec.Recognise(ctx, p.Path, p.FilePage, sum)
	if err != nil {
		if ctx.Err() != nil {
			return nil, false
		}
		return failErr(err)
	}
	row.Timings["recognise"] = ms(time.Since(t0))
	row.Warnings = r.Warnings
	// Triage before writing: the ALTO carries its estimate (Page@ACCURACY).
	t2 := time.Now()
	v := st.tk.triage(r)
	row.Decision, row.PredictedCER, row.Reasons = v.Decision, v.PredictedCER, v.Reasons
	row.MeanConf, row.Words = r.MeanConfidence, len(r.Words)
	row.Timings["triage"] = ms(time.Since(t2))

	t1 := time.Now()
	if err := st.tk.write(filepath.Join(st.outDir, ocrDir), p.Stem, r, prepared, accuracy(v)); err != nil {
		return fail("%q: writing outputs: %v%s", p.Path, err, ioFix(err))
	}
	row.Outputs = outputNames(ocrDir, p.Stem)
	row.Timings["write"] = ms(time.Since(t1))

	final := r
	if v.Decision == "correct" {
		t3 := time.Now()
		c, changes := st.tk.correct(r)
		row.Corrections = correct.Made(changes)
		row.Timings["correct"] = ms(time.Since(t3))
		ca := accuracy(st.tk.triage(c)) // the estimate of the corrected text
		step := st.tk.correction
		ca.Correction = &step
		if err := st.tk.write(filepath.Join(st.outDir, correctedDir), p.Stem, c, nil, ca); err != nil {
			return fail("%q: writing corrected outputs: %v%s", p.Path, err, ioFix(err))
		}
		// The page's changes, as recto correct lists them; the run's
		// corrected/changes.jsonl joins them (writeChanges).
		var buf bytes.Buffer
		AppendChanges(&buf, p.Title, p.Page, st.o.Lang, changes)
		name := path.Join(correctedDir, p.Stem) + suffixChanges
		if err := atomicfile.Write(filepath.Join(st.outDir, filepath.FromSlash(name)), buf.Bytes()); err != nil {
			return fail("%q: writing its changes: %v%s", p.Path, err, ioFix(err))
		}
		row.Outputs = append(row.Outputs, outputNames(correctedDir, p.Stem)...)
		row.Outputs = append(row.Outputs, name)
		final = c
	}
	if hasTruth {
		t4 := time.Now()
		before := st.tk.compare(truth, r.Text())
		after := before
		if final != r {
			after = st.tk.compare(truth, final.Text())
		}
		row.HasTruth = true
		row.RefChars, row.RefWords = before.Chars, before.Words
		row.CharErrs, row.WordErrs = before.CharErrors, before.WordErrors
		row.CharErrsAf, row.WordErrsAf = after.CharErrors, after.WordErrors
		row.FlexErrs, row.BagErrs = before.FlexErrors, before.BagErrors
		row.FlexErrsAf, row.BagErrsAf = after.FlexErrors, after.BagErrors
		if before.FlexSkipped || after.FlexSkipped {
			row.Warnings = append(row.Warnings, "ground truth "+quality.FlexSkippedNote)
		}
		row.Timings["score"] = ms(time.Since(t4))
	}
	row.State, row.Error = ledger.StateDone, ""
	st.dropStale(p.Rel, row.Outputs)
	return row, false
}

// accuracy is triage's estimate as ALTO's Page@ACCURACY: the estimated
// percentage of characters read right, 100 × (1 − predicted CER).
func accuracy(v verdict) ocr.ALTOOptions {
	return ocr.ALTOOptions{Accuracy: 100 * (1 - v.PredictedCER), HasAccuracy: true}
}

func ms(d time.Duration) float64 { return float64(d.Microseconds()) / 1000 }

// outputNames lists the files ocr.WriteOutputs writes for stem under sub,
// relative to the run folder.
func outputNames(sub, stem string) []string {
	base := path.Join(sub, stem)
	return []string{base + ocr.SuffixText, base + ocr.SuffixALTO, base + ocr.SuffixRecord}
}

// finalText returns the run-folder-relative path of a page's final text.
func finalText(p ledger.Page) string {
	txt := ""
	for _, o := range p.Outputs {
		if strings.HasSuffix(o, ".txt") {
			txt = o // corrected output comes last
		}
	}
	return txt
}

func hashFile(name string) (string, int64, error) {
	f, err := os.Open(name)
	if err != nil {
		return "", 0, err
	}
	defer f.Close()
	h := sha256.New()
	n, err := io.Copy(h, f)
	if err != nil {
		return "", 0, err
	}
	return hex.EncodeToString(h.Sum(nil)), n, nil
}

// readTruth returns the ground truth of rel, if any, and the SHA-256 of its
// text ("-" when there is none; for a .txt file the hash of the file). It
// reads through quality.ReadTruth, as recto score and calibrate do: the
// same formats (.txt, ALTO, PAGE XML), checks, size limit and messages.
func (st *runState) readTruth(rel string) (text, sum string, ok bool, err error) {
	if st.truthDir == "" {
		return "", "-", false, nil
	}
	name, err := quality.FindTruth(filepath.Join(st.truthDir, filepath.FromSlash(strings.TrimSuffix(rel, path.Ext(rel)))))
	if err != nil {
		return "", "", false, err
	}
	if name == "" {
		return "", "-", false, nil
	}
	t, err := quality.ReadTruth(name)
	if err != nil {
		return "", "", false, err
	}
	s := sha256.Sum256([]byte(t.Text))
	return t.Text, hex.EncodeToString(s[:8]), true, nil
}

// recogniser is one worker's engine: never shared between goroutines.
type recogniser interface {
	// Recognise reads page n of the file at path (0 for a single image);
	// sum is the file's SHA-256.
	Recognise(ctx context.Context, path string, n int, sum string) (*ocr.Record, *image.Gray, error)
	Close() error
}

// verdict is triage's answer for one page.
type verdict struct {
	PredictedCER float64
	Decision     string
	Reasons      []string
}

// counts are edit counts against a reference, the order-free ones
// (flexible character accuracy, bag of words) included.
type counts struct {
	Chars, CharErrors, Words, WordErrors, FlexErrors, BagErrors int
	FlexSkipped                                                 bool // FlexErrors is CharErrors, an upper bound (quality.Counts.FlexSkipped)
}

// fingerprint hashes the settings that change a page's results.
func fingerprint(v any) (string, string) {
	b, _ := json.Marshal(v)
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:8]), string(b)
}

// fileSum returns a short hash of a file's content for the fingerprint, or
// "" for an empty name.
func fileSum(name string) (string, error) {
	if name == "" {
		return "", nil
	}
	s, _, err := hashFile(name)
	if err != nil {
		return "", err
	}
	return s[:16], nil
}
