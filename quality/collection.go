package quality

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"unicode/utf8"

	"recto/internal/walk"
	"recto/ocr/par"
)

// MaxFileSize is the largest text file ScoreDirs reads (256 MiB); larger
// files are reported with ErrTooLarge.
const MaxFileSize = 256 << 20

// Errors carried by a FileError.
var (
	// ErrInvalidUTF8 is returned for a file that is not valid UTF-8;
	// FileError.Offset holds the byte offset of the first bad byte.
	ErrInvalidUTF8 = errors.New("invalid UTF-8")
	// ErrIsDirectory is returned for a page path that names a directory.
	ErrIsDirectory = errors.New("is a directory, not a text file")
	// ErrNotRegular is returned for a page path that names a device, pipe
	// or socket.
	ErrNotRegular = errors.New("is not a regular file")
	// ErrTooLarge is returned for a file larger than MaxFileSize.
	ErrTooLarge = errors.New("is larger than 256 MiB")
)

// FileError reports a reference or hypothesis file that could not be used.
type FileError struct {
	Role   string // "reference" or "hypothesis"
	File   string // path as found under the root given by the caller
	Offset int    // byte offset of the problem, or -1
	Err    error
	Hint   string // what the file looks like and what to do, or ""
}

func (e *FileError) Error() string {
	msg := fmt.Sprintf("%s %q: %v", e.Role, e.File, e.Err)
	if e.Offset >= 0 {
		msg += fmt.Sprintf(" at byte offset %d", e.Offset)
	}
	if e.Hint != "" {
		msg += ": " + e.Hint
	}
	return msg
}

func (e *FileError) Unwrap() error { return e.Err }

// Page status values: the one set of state words of every recto output
// (score, the run's pages.csv).
const (
	StatusOK      = "ok"      // the page was read and processed
	StatusMissing = "missing" // no hypothesis file: scored as empty text
	StatusFailed  = "failed"  // the page (here the hypothesis) could not be read: scored as empty text
)

// PageScore is the score of one reference page.
type PageScore struct {
	Title  string // first folder under the truth root, or the root's name
	Page   string // path under the truth root, '/'-separated, without ".txt"
	Status string // StatusOK, StatusMissing or StatusFailed
	Counts
}

// TitleScore summarises the pages of one title.
type TitleScore struct {
	Title string
	Pages int
	Counts
	MeanCER    float64 // mean page CER over pages with a non-empty reference
	MeanOK     bool    // false when no page has a non-empty reference
	Low, High  float64 // 95% bootstrap interval of the title's CER (BootstrapCER)
	IntervalOK bool    // false when the interval is undefined
}

// Report is the result of scoring a collection.
type Report struct {
	Norm       NormOptions
	Pages      []PageScore      // sorted by Page
	Titles     []TitleScore     // sorted by Title
	Total      Counts           // sums over every page
	Missing    []string         // pages scored as empty because their hypothesis is missing
	Unmatched  []string         // hypothesis files (paths under the OCR root) with no reference
	Failed     []*FileError     // references not scored and hypotheses not read, sorted by file
	Confusions []ConfusionCount // most frequent first, over pages with status ok; only with DirConfig.Confusions > 0
}

// Partial reports whether some page was missing or unreadable.
func (r *Report) Partial() bool { return len(r.Missing) > 0 || len(r.Failed) > 0 }

// DirConfig configures ScoreDirs; the zero value scores with the default
// normalisation, no confusion table, GOMAXPROCS workers and the default
// bootstrap.
type DirConfig struct {
	Norm       NormOptions
	Confusions int    // keep this many of the most frequent confusions (pages whose hypothesis was read); 0 means none
	Workers    int    // pages scored at once; 0 means GOMAXPROCS
	Resamples  int    // bootstrap resamples per title; 0 means DefaultResamples
	Seed       uint64 // bootstrap seed; 0 means DefaultSeed
}

// ScoreDirs scores every reference page under truth (recursively): a
// "*.txt", "*.xml", "*.alto.xml" or "*.page.xml" file, read by ReadTruth
// (plain text, ALTO or PAGE XML) against the "*.txt" file at the same
// relative path, without the reference's ending, under ocr. A missing
// hypothesis is scored as empty text and listed in Missing; a hypothesis
// that cannot be read is scored as empty text and listed in Failed; a
// reference that cannot be read, is a directory, is not valid UTF-8, is
// unusable XML or is found in two files (p1.txt and p1.xml) is listed in
// Failed and not scored. "*.txt" files under ocr without a reference are
// listed in Unmatched. One bad file never stops the others.
//
// ScoreDirs returns an error, and no report, when truth or ocr is not a
// readable directory, when truth holds no reference file, when no page
// could be scored, or when ctx is cancelled.
func ScoreDirs(ctx context.Context, truth, ocr string, cfg DirConfig) (*Report, error) {
	for _, d := range []string{truth, ocr} {
		fi, err := os.Stat(d)
		if err != nil {
			return nil, fmt.Errorf("quality: %w", err)
		}
		if !fi.IsDir() {
			return nil, fmt.Errorf("quality: %q is not a directory", d)
		}
	}
	rep := &Report{Norm: cfg.Norm}
	// When one root lies inside the other (--ocr gt/ocr), each walk skips
	// the other root, so OCR output is never taken for ground truth.
	nbad := 0
	keys, refFiles, twice, err := listTruth(truth, ocr, func(fe *FileError) {
		fe.Role = "reference"
		rep.Failed = append(rep.Failed, fe)
		nbad++
	})
	if err != nil {
		return nil, err
	}
	if len(keys)+nbad == 0 {
		return nil, fmt.Errorf("quality: no reference pages (*.txt, *.xml) under %q", truth)
	}
	refs := make([]string, len(keys)) // the hypothesis file of each page
	for i, k := range keys {
		refs[i] = k + ".txt"
	}
	hyps, err := listText(ocr, truth, func(*FileError) {}) // unreadable hypotheses show up when read
	if err != nil {
		return nil, err
	}
	isRef := make(map[string]bool, len(refs))
	for _, r := range refs {
		isRef[r] = true
	}
	for _, k := range twice {
		isRef[k+".txt"] = true // reported as a failure, not as unmatched
	}
	for _, fe := range rep.Failed { // an unreadable reference (a folder, say) is listed once, as unreadable
		if rel, err := filepath.Rel(truth, fe.File); err == nil {
			if k, ok := TruthKey(filepath.ToSlash(rel)); ok {
				isRef[k+".txt"] = true
			}
		}
	}
	for _, h := range hyps {
		if !isRef[h] {
			rep.Unmatched = append(rep.Unmatched, h)
		}
	}

	rootName := filepath.Base(filepath.Clean(truth))
	if abs, err := filepath.Abs(truth); err == nil {
		rootName = filepath.Base(abs)
	}
	type result struct {
		page   PageScore
		scored bool
		errs   []*FileError
		conf   map[Confusion]int
	}
	results := make([]result, len(refs))
	// Scratch memory per goroutine.
	type worker struct {
		s   Scratch
		ops []Op
	}
	ws := make([]worker, par.Workers(cfg.Workers, len(refs)))
	scoreOne := func(wk *worker, i int) {
		rel := refs[i]
		res := &results[i]
		title, page := TitlePage(rel, rootName)
		if !strings.Contains(rel, "/") { // a loose page: named after its image's folder (sourcetitle.go)
			title = recordTitle(filepath.Join(ocr, filepath.FromSlash(strings.TrimSuffix(rel, ".txt"))+".json"), title)
		}
		res.page = PageScore{Title: title, Page: page, Status: StatusOK}
		refPath := filepath.Join(truth, filepath.FromSlash(refFiles[i]))
		t, err := ReadTruth(refPath)
		if err != nil {
			res.errs = append(res.errs, err.(*FileError))
			return
		}
		ref := t.Text
		hypPath := filepath.Join(ocr, filepath.FromSlash(rel))
		hyp, fe := readText(hypPath)
		switch {
		case fe != nil && errors.Is(fe.Err, fs.ErrNotExist):
			res.page.Status = StatusMissing
			hyp = ""
		case fe != nil:
			fe.Role = "hypothesis"
			res.errs = append(res.errs, fe)
			res.page.Status = StatusFailed
			hyp = ""
		}
		res.page.Counts = wk.s.Compare(ref, hyp, cfg.Norm)
		res.scored = true
		if cfg.Confusions > 0 && res.page.Status == StatusOK {
			wk.ops = wk.s.Align([]rune(Normalize(ref, cfg.Norm)), []rune(Normalize(hyp, cfg.Norm)), wk.ops[:0])
			res.conf = make(map[Confusion]int)
			for _, c := range Group(wk.ops) {
				res.conf[c]++
			}
		}
	}
	if err := par.Each(ctx, len(refs), len(ws), func(w, i int) { scoreOne(&ws[w], i) }); err != nil {
		return nil, err
	}

	conf := make(map[Confusion]int)
	for _, res := range results {
		rep.Failed = append(rep.Failed, res.errs...)
		for c, k := range res.conf {
			conf[c] += k
		}
		if !res.scored {
			continue
		}
		rep.Pages = append(rep.Pages, res.page)
		if res.page.Status == StatusMissing {
			rep.Missing = append(rep.Missing, res.page.Page)
		}
	}
	if len(rep.Pages) == 0 {
		return nil, fmt.Errorf("quality: none of the %d reference pages under %q could be scored: %w", len(refs), truth, errors.Join(fileErrs(rep.Failed)...))
	}
	slices.SortFunc(rep.Failed, func(x, y *FileError) int { return cmp.Compare(x.File, y.File) })
	rep.Titles, rep.Total = Summarize(rep.Pages, cfg.Resamples, cfg.Seed)
	if cfg.Confusions > 0 {
		rep.Confusions = TopConfusions(conf, cfg.Confusions)
	}
	return rep, nil
}

func fileErrs(fes []*FileError) []error {
	out := make([]error, len(fes))
	for i, fe := range fes {
		out[i] = fe
	}
	return out
}

// Summarize groups pages by title, in any order, and returns the titles
// sorted by name, each with its micro-averaged counts, mean page CER and
// bootstrap interval (BootstrapCER with resamples and seed, over the
// title's pages in the order given), and the total over all pages.
func Summarize(pages []PageScore, resamples int, seed uint64) ([]TitleScore, Counts) {
	byTitle := make(map[string][]Counts)
	var names []string
	var total Counts
	for _, p := range pages {
		if _, ok := byTitle[p.Title]; !ok {
			names = append(names, p.Title)
		}
		byTitle[p.Title] = append(byTitle[p.Title], p.Counts)
		total = total.Add(p.Counts)
	}
	slices.Sort(names)
	titles := make([]TitleScore, 0, len(names))
	for _, name := range names {
		pc := byTitle[name]
		ts := TitleScore{Title: name, Pages: len(pc)}
		for _, c := range pc {
			ts.Counts = ts.Counts.Add(c)
		}
		ts.MeanCER, ts.MeanOK = MeanCER(pc)
		ts.Low, ts.High, ts.IntervalOK = BootstrapCER(pc, resamples, seed)
		titles = append(titles, ts)
	}
	return titles, total
}

// listText returns the '/'-separated paths of the "*.txt" files under
// root, sorted, leaving out the directory skip (the other root) if it lies
// inside. A directory whose name ends in ".txt" and a directory that cannot
// be listed are passed to bad (and the walk goes on).
func listText(root, skip string, bad func(*FileError)) ([]string, error) {
	return listFiles(root, skip, func(name string) bool { return strings.HasSuffix(name, ".txt") }, bad)
}

// listFiles is listText for the files whose names match, on the one walker
// (internal/walk: hidden entries and odd file types are left out).
func listFiles(root, skip string, match func(name string) bool, bad func(*FileError)) ([]string, error) {
	out, _, err := walk.Files(root, walk.Options{Match: match, Skip: skip, Bad: func(p string, err error) {
		if errors.Is(err, walk.ErrIsFolder) {
			err = ErrIsDirectory
		}
		bad(&FileError{File: p, Offset: -1, Err: unwrapPath(err)})
	}})
	if err != nil {
		return nil, fmt.Errorf("quality: %w", err)
	}
	return out, nil
}

// invalidUTF8 returns the offset of the first byte of b that is not part of
// a valid UTF-8 sequence, or -1.
func invalidUTF8(b []byte) int {
	if utf8.Valid(b) {
		return -1
	}
	for i := 0; i < len(b); {
		r, size := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && size <= 1 {
			return i
		}
		i += size
	}
	return -1
}

// unwrapPath drops the *fs.PathError wrapper, whose path FileError already
// names, keeping the cause (fs.ErrNotExist and the like still match).
func unwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}
