package main

import (
	"errors"
	"fmt"
	"hash/fnv"
	"os"
	"path/filepath"
	"strings"
	"time"
	"unicode"

	"recto/correct"
	"recto/internal/atomicfile"
	"recto/internal/walk"
	"recto/ocr"
	"recto/quality"
)

var (
	dumpDir  string
	normOpts quality.NormOptions
)

// tally sums edit distances over a group of pages.
type tally struct {
	pages, words, refChars int
	before, after          int // edit distances
	changes, wrong         int
}

func (t *tally) add(o tally) {
	t.pages += o.pages
	t.words += o.words
	t.refChars += o.refChars
	t.before += o.before
	t.after += o.after
	t.changes += o.changes
	t.wrong += o.wrong
}

func (t tally) String() string {
	if t.pages == 0 {
		return "no pages"
	}
	cb, ca := float64(t.before)/float64(t.refChars), float64(t.after)/float64(t.refChars)
	ratio := 0.0
	if t.before > 0 {
		ratio = float64(t.after) / float64(t.before)
	}
	return fmt.Sprintf("pages %d  words %d  CER before %.3f%%  after %.3f%%  ratio %.3f  changes %d  wrong %d (%.2f per 10k words)",
		t.pages, t.words, 100*cb, 100*ca, ratio, t.changes, t.wrong, 1e4*float64(t.wrong)/float64(max(t.words, 1)))
}

// evalCorpus corrects every page of the split (heldout, or dev: the
// development pages of fit) and reports CER before and after by band of
// uncorrected CER: clean (< 0.5 %), moderate (1–15 %), other.
func evalCorpus(c *correct.Corrector, dir, split string, verbose bool) error {
	sub := split
	var keep func(id string) bool
	if split == "dev" {
		sub, keep = "fit", isDev
	}
	return evalDirs(c, filepath.Join(dir, "truth", sub), filepath.Join(dir, "ocr", sub), keep, verbose)
}

// evalDirs corrects every page with ground truth under truthDir (*.txt,
// searched recursively) whose OCR lies at the same relative path under
// ocrDir (.json record, else .txt), and reports as evalCorpus.
func evalDirs(c *correct.Corrector, truthDir, ocrDir string, keep func(string) bool, verbose bool) error {
	rels, _, err := walk.Files(truthDir, walk.Options{Match: func(name string) bool { return strings.HasSuffix(name, ".txt") }})
	if err != nil {
		return err
	}
	if len(rels) == 0 {
		return fmt.Errorf("no ground truth in %q", truthDir)
	}
	names := make([]string, len(rels))
	for i, r := range rels {
		names[i] = filepath.Join(truthDir, filepath.FromSlash(r))
	}
	bands := map[string]*tally{"clean": {}, "moderate": {}, "other": {}}
	var tokens int
	var spent time.Duration
	for _, n := range names {
		rel, _ := filepath.Rel(truthDir, n)
		id := strings.TrimSuffix(rel, ".txt")
		if keep != nil && !keep(filepath.Base(id)) {
			continue
		}
		truth, err := os.ReadFile(n)
		if err != nil {
			return err
		}
		var in, outText string
		var changes []correct.Change
		jsonPath := filepath.Join(ocrDir, id+".json")
		t0 := time.Now()
		if rec, err := ocr.ReadRecord(jsonPath); err == nil {
			in = rec.Text()
			out, ch := c.CorrectRecord(rec)
			outText, changes = out.Text(), ch
		} else if errors.Is(err, os.ErrNotExist) {
			data, err := os.ReadFile(filepath.Join(ocrDir, id+".txt"))
			if err != nil {
				return err
			}
			in = string(data)
			outText, changes = c.CorrectText(in)
		} else {
			return err
		}
		spent += time.Since(t0)
		if dumpDir != "" {
			_ = atomicfile.Write(filepath.Join(dumpDir, strings.ReplaceAll(id, "/", "_")+".txt"), []byte(outText))
		}
		tokens += len(strings.Fields(in))
		t := pageTally(string(truth), in, outText, changes, verbose, id)
		cer := float64(t.before) / float64(max(t.refChars, 1))
		switch {
		case cer < 0.005:
			bands["clean"].add(t)
		case cer >= 0.01 && cer <= 0.15:
			bands["moderate"].add(t)
		default:
			bands["other"].add(t)
		}
	}
	for _, b := range []string{"clean", "moderate", "other"} {
		fmt.Printf("%-9s %v\n", b, bands[b])
	}
	fmt.Printf("throughput %.0f tokens/s (wall, one goroutine, includes record copying)\n", float64(tokens)/spent.Seconds())
	return nil
}

// isDev reports whether a fit page belongs to the development split: one
// page in five by a hash of its id. The embedded model is trained on the
// other fit pages and the constants are tuned on these.
func isDev(id string) bool {
	h := fnv.New32a()
	h.Write([]byte(id))
	return h.Sum32()%5 == 0
}

// guardText corrects clean running text (the files named) as plain text
// and counts every change as wrong: the text is the truth.
func guardText(c *correct.Corrector, names []string, verbose bool) error {
	words, changes := 0, 0
	for _, n := range names {
		data, err := os.ReadFile(n)
		if err != nil {
			return err
		}
		text := wrap(string(data), 70)
		words += len(strings.Fields(text))
		_, ch := c.CorrectText(text)
		changes += len(ch)
		if verbose {
			for _, x := range ch {
				fmt.Printf("%s:%d:%d %q -> %q score %.2f\n", filepath.Base(n), x.Line, x.Column, x.Before, x.After, x.Score)
			}
		}
	}
	fmt.Printf("guard     texts %d  words %d  changes (all wrong) %d  (%.2f per 10k words)\n", len(names), words, changes, 1e4*float64(changes)/float64(max(words, 1)))
	return nil
}

func evalPairs(c *correct.Corrector, pairs []correct.Pair) {
	var all tally
	var spent time.Duration
	tokens := 0
	for i, p := range pairs {
		t0 := time.Now()
		out, changes := c.CorrectText(p.Hyp)
		spent += time.Since(t0)
		tokens += len(strings.Fields(p.Hyp))
		all.add(pageTally(p.Ref, p.Hyp, out, changes, false, fmt.Sprint(i)))
	}
	fmt.Println(all)
	fmt.Printf("throughput %.0f tokens/s\n", float64(tokens)/spent.Seconds())
}

// pageTally measures one page. A change is wrong when applying it alone
// does not bring the page closer to the truth.
func pageTally(truth, in, out string, changes []correct.Change, verbose bool, id string) tally {
	var sc quality.Scratch
	cb := sc.Compare(truth, in, normOpts)
	ca := sc.Compare(truth, out, normOpts)
	before := cb.CharErrors
	t := tally{pages: 1, words: cb.Words, refChars: cb.Chars, before: before, after: ca.CharErrors, changes: len(changes)}
	for _, ch := range changes {
		alone, ok := applyOne(in, ch)
		good := ok && sc.Compare(truth, alone, normOpts).CharErrors < before
		if !good {
			t.wrong++
		}
		if verbose {
			fmt.Printf("%s:%d:%d %q -> %q score %.2f good=%v page-cer=%.4f\n", id, ch.Line, ch.Column, ch.Before, ch.After, ch.Score, good, float64(before)/float64(max(cb.Chars, 1)))
		}
	}
	return t
}

// applyOne applies a single change to text; white space in Before matches
// any white space.
func applyOne(text string, ch correct.Change) (string, bool) {
	lines := strings.SplitAfter(text, "\n")
	if ch.Line < 1 || ch.Line > len(lines) {
		return "", false
	}
	off := 0
	for _, l := range lines[:ch.Line-1] {
		off += len(l)
	}
	rs := []rune(lines[ch.Line-1])
	if ch.Column-1 > len(rs) {
		return "", false
	}
	off += len(string(rs[:ch.Column-1]))
	rest := text[off:]
	bf := strings.Fields(ch.Before)
	i := 0
	for k, f := range bf {
		if !strings.HasPrefix(rest[i:], f) {
			return "", false
		}
		i += len(f)
		if k+1 < len(bf) {
			j := i
			for j < len(rest) && unicode.IsSpace(rune(rest[j])) {
				j++
			}
			i = j
		}
	}
	return text[:off] + ch.After + rest[i:], true
}
