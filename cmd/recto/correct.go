package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"unicode/utf8"

	"github.com/spf13/cobra"

	"recto/cmd/internal/run"
	"recto/correct"
	"recto/internal/atomicfile"
	"recto/internal/walk"
	"recto/lexicon"
	"recto/ocr"
	"recto/ocr/alto"
	"recto/ocr/par"
	"recto/quality"
)

// CorrectOptions are the options of `recto correct`.
type CorrectOptions struct {
	Out        string  // output directory; must not be IN or inside it
	DryRun     bool    // list the changes on stdout, write nothing
	Model      string  // model file from `recto correct train`; "" for the embedded one
	Lexicon    string  // lexicon file; "" to choose by Lang
	Lang       string  // engine language list ("nor", "eng+deu"); "" for the page records' own, else eng
	Margin     float64 // natural-log odds a correction must win by; 0 = default
	Jobs       int     // pages corrected in parallel; 0 means GOMAXPROCS
	Collection bool    // add the input pages' own word counts to the context model
	Vocab      string  // saved collection vocabulary to add to the pages' own; "" for none
	SaveVocab  string  // file to save the collection vocabulary to; "" for none
	KeepMarks  bool    // leave stray marks in
	MapGlyphs  bool    // rewrite punctuation glyphs as the model's ground truth has them
}

// CorrectTrainOptions are the options of `recto correct train`.
type CorrectTrainOptions struct {
	OCR      string // directory of OCR .txt files
	Truth    string // directory of ground-truth .txt files, same relative names
	Out      string // model file to write
	MinCount int64  // drop longer confusions seen fewer times; 0 = default
}

func newCorrectCommand(g *GlobalOptions) *cobra.Command {
	var o CorrectOptions
	cmd := &cobra.Command{
		Use:   "correct IN --out DIR",
		Short: "Correct common OCR confusions with a noisy-channel model",
		Long: `Correct common OCR confusions (rn/m, cl/d, li/h, 0/o, 1/l, e/c, lost or
stray spaces...) in the pages under IN, a folder written by 'recto ocr'.

Every <name>.txt under IN is read; when <name>.json (the page record) is
beside it, its word confidences are used (a confident word is harder to
change) and a corrected record is written too; when <name>.alto.xml is
beside it, a corrected ALTO file is written with the engine's reading kept
as an ALTERNATIVE of each changed word. Outputs go under --out with the
same relative names, and DIR/changes.jsonl lists every change, one JSON
object a line: title, page (named as in 'recto score': the title is the
first folder under IN, the page its path without extension), line, column (1-based, in characters), before, after,
score (how much likelier the correction is, as a natural-log ratio).

A word is changed only when the best candidate beats the word as read by
--margin. Numbers, dates, roman numerals, URLs and confident capitalised
words the lexicon lacks (likely names) are left alone, and so are words
with an apostrophe against them ('em, tellin'). Words hyphenated at a line
end are joined when the joined word is in the lexicon. On a page where the
lexicon knows nearly every word, every margin is raised: an unknown word
there is more likely rare than misread.

Stray marks -- a token with no letter or digit (. : ' | ;) that the model
has learned is almost always a speck read as punctuation -- are deleted
with the space beside them (change "after" is empty); rows of one mark
(". . .") stay, and dashes, "&" and reference marks stay unless the engine
read them with a confidence under 0.5. --keep-marks keeps them all.
--map-glyphs also rewrites punctuation the model learned the engine
misreads consistently (a straight quotation mark read as a curly one) as
the model's ground truth has it: a transcription convention, so use it
with a model trained on your own ground truth.

The files under IN are never modified: --out must be another folder.
--dry-run prints the changes (JSON lines) on stdout and writes nothing.

  recto correct scans/ocr --out scans/corrected
  recto correct scans/ocr --dry-run
  recto correct train --ocr corpus/ocr --truth corpus/truth --out my.model
` + langHelp + `
--collection uses the collection's own vocabulary: a word the engine read
with confidence 0.90 or more at least 3 times, on 2 pages or more under IN
(names of people, farms, ships and places, dialect and old spellings)
joins the lexicon with its count and is never changed; a change it
stopped is listed in changes.jsonl with "blocked": "collection
vocabulary" (and is not made). It also adds the pages' counts of known
words and word pairs to the context. --save-vocabulary FILE writes the
vocabulary as a lexicon file, --vocabulary FILE adds a saved one (say,
from earlier deliveries of the same collection); either implies it.

Without a lexicon for the language only language-independent fixes are
made (stray marks): no word is changed into a word of another language.
The error model (character confusions) is the same for every Latin-script
language. Each line of changes.jsonl names the language ("lang").
` + exitStatusHelp,
		Args: cobra.ExactArgs(1),
		PreRunE: func(cmd *cobra.Command, args []string) error {
			if o.Out == "" && !o.DryRun {
				return usagef("correct: --out is required (or --dry-run)")
			}
			if o.Margin < 0 {
				return usagef("correct: --margin must not be negative, not %v", o.Margin)
			}
			if err := checkJobs(o.Jobs); err != nil {
				return err
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			return runCorrect(cmd.Context(), o, *g, args[0])
		},
	}
	f := cmd.Flags()
	f.StringVarP(&o.Out, "out", "o", "", "write corrected pages and changes.jsonl under `folder`")
	f.BoolVar(&o.DryRun, "dry-run", false, "list the changes on stdout without writing anything")
	f.StringVar(&o.Model, "correction-model", "", "error model `file` from 'recto correct train' (default: embedded; the Fraktur one for --lang frk or Fraktur)")
	f.StringVar(&o.Lexicon, "lexicon", "", "lexicon `file` (default: the one of --lang)")
	f.StringVarP(&o.Lang, "lang", "l", "", "engine `languages` of the pages, e.g. nor or eng+deu (default: as recorded by recto ocr, else eng)")
	f.Float64Var(&o.Margin, "margin", 0, fmt.Sprintf("log-odds `margin` a correction must win by (0 = %g; higher is more cautious)", correct.DefaultMargin))
	f.IntVarP(&o.Jobs, "jobs", "j", 0, "correct `n` pages at once (0: one per core)")
	f.BoolVar(&o.Collection, "collection", false, "use the collection's own vocabulary and counts: words read confidently across the pages are never changed")
	f.StringVar(&o.Vocab, "vocabulary", "", "saved collection vocabulary `file` (from --save-vocabulary) to add to the pages' own")
	f.StringVar(&o.SaveVocab, "save-vocabulary", "", "save the collection vocabulary to this lexicon `file` (.gz to compress)")
	f.BoolVar(&o.KeepMarks, "keep-marks", false, "leave stray marks (tokens with no letter or digit) in the text")
	f.BoolVar(&o.MapGlyphs, "map-glyphs", false, "rewrite punctuation glyphs as the model's ground truth has them (curly/straight quotes)")
	oldName(cmd, "model", "correction-model")
	cmd.AddCommand(newCorrectTrainCommand(g))
	return cmd
}

func newCorrectTrainCommand(g *GlobalOptions) *cobra.Command {
	var o CorrectTrainOptions
	cmd := &cobra.Command{
		Use:   "train --ocr DIR --truth DIR --out MODEL",
		Short: "Learn an error model from OCR output and its ground truth",
		Long: `Learn the character confusions of your own scans: every <name>.txt under
--truth is paired with <name>.txt under --ocr, the two are aligned
character by character, and each run of differences of up to three
characters a side is counted, alone and with a neighbouring character.
The classic confusions of letter shapes (rn/m, cl/d, li/h, vv/w, 0/o, 1/l,
5/s, e/c...) get a small prior weight even if your pages never show them.
The pages are also aligned word by word to count, for each mark the engine
read on its own between words (. : | ...), how often the ground truth had
it there (for deleting strays), and character by character to count which
character of the ground truth stands against each punctuation glyph read
(for --map-glyphs).
The model file (versioned, gzip-compressed JSON) is used with
'recto correct --correction-model' and 'recto run --correction-model'.
` + exitStatusHelp,
		Args: cobra.NoArgs,
		PreRunE: func(cmd *cobra.Command, args []string) error {
			if o.OCR == "" || o.Truth == "" || o.Out == "" {
				return usagef("correct train: --ocr, --truth and --out are required")
			}
			if o.MinCount < 0 {
				return usagef("correct train: --min-count must not be negative")
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			return runCorrectTrain(cmd.Context(), o, *g)
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.OCR, "ocr", "", "`folder` of OCR output (.txt)")
	f.StringVar(&o.Truth, "truth", "", "`folder` of ground truth (.txt, same names)")
	f.StringVarP(&o.Out, "out", "o", "", "model `file` to write")
	f.Int64Var(&o.MinCount, "min-count", 0, "drop confusions of three or more characters seen fewer than `n` times (0 = 2)")
	return cmd
}

// correctPage is one page to correct, as the one walker finds it
// (quality.FindOCRPages): its name relative to IN without suffix, and the
// paths of its record, text and ALTO ("" for those it lacks).
type correctPage = quality.OCRPage

// correctResult is what correcting one page gave.
type correctResult struct {
	changes []correct.Change
	source  string // the page image its record names, "" for a text page
	err     error
}

// changeLine is one line of changes.jsonl, the format recto run writes too.
type changeLine = run.ChangeLine

func runCorrect(ctx context.Context, o CorrectOptions, g GlobalOptions, in string) error {
	if err := checkDir("IN", in); err != nil {
		return fmt.Errorf("%w (give the folder 'recto ocr' wrote)", err)
	}
	if o.Out != "" {
		if inside, err := within(o.Out, in); err != nil {
			return fmt.Errorf("correct: %w", err)
		} else if inside {
			return usagef("correct: --out %q is %q or inside it; originals are never modified, choose another folder", o.Out, in)
		}
	}
	pages, err := quality.FindOCRPages(in)
	if errors.Is(err, quality.ErrNoPages) {
		return fmt.Errorf("correct: no .txt or .json pages under %q", in)
	}
	if err != nil {
		return fmt.Errorf("correct: %w", err)
	}
	var m *correct.Model // nil: the embedded model for the language, once it is known
	if o.Model != "" {
		if m, err = correct.LoadModel(o.Model); err != nil {
			return err
		}
	}
	lc, err := chooseLanguage(o.Lang, o.Lexicon, func() string { return recordedLang(pages) },
		"correction makes only language-independent fixes (stray marks) and changes no word")
	if err != nil {
		return err
	}
	if lc.note != "" {
		g.printf("%s", lc.note)
	}
	lex := lc.lex
	if lex == nil {
		// No lexicon for the language: an empty one offers no word to
		// change a word into, and joins no hyphenated halves.
		lex = lexicon.New()
	}
	o.Lang = lc.Lang
	if m == nil {
		m, _ = correct.ModelForLang(o.Lang) // the Fraktur model for frk, else the default
	}
	cfg := correct.Config{Margin: o.Margin, KeepMarks: o.KeepMarks, MapGlyphs: o.MapGlyphs}
	if o.Collection {
		cfg.Collection = collectionCounts(pages, lex)
	}
	if o.Collection || o.Vocab != "" || o.SaveVocab != "" {
		vocab, err := collectionVocabulary(pages, o)
		if err != nil {
			return err
		}
		cfg.Vocabulary = vocab
		// Its words join the lexicon, unless the language has none: then
		// no word is a correction, the vocabulary's neither.
		if extra := unknownTo(lex, vocab); lc.lex != nil && extra.Len() > 0 {
			lex = lexicon.Merge(lex, extra)
		}
		if !g.Quiet {
			g.printf("collection vocabulary: %d words read with confidence %.2f or more at least %d times on %d pages or more",
				vocab.Len(), correct.VocabularyConf, correct.VocabularyMin, correct.VocabularyPages)
		}
	}
	c := correct.New(lex, m, cfg)

	results := make([]correctResult, len(pages))
	var mu sync.Mutex // serialises messages on stderr
	if err := par.Each(ctx, len(pages), o.Jobs, func(_, i int) {
		results[i] = correctOne(c, o, pages[i], g, &mu)
	}); err != nil {
		return err
	}

	rootName := filepath.Base(in)
	if abs, err := filepath.Abs(in); err == nil {
		rootName = filepath.Base(abs)
	}
	var lines bytes.Buffer
	failed, total := 0, 0
	for i, r := range results {
		if r.err != nil {
			failed++
			g.printf("%v", r.err)
			continue
		}
		total += correct.Made(r.changes)
		title, _ := quality.TitlePage(pages[i].Rel, rootName)
		if !strings.Contains(pages[i].Rel, "/") { // as triage names a loose page (issue 17 part 3)
			title = quality.SourceTitle(r.source, title)
		}
		run.AppendChanges(&lines, title, pages[i].Rel, o.Lang, r.changes)
	}
	if o.DryRun {
		if _, err := g.stdout.Write(lines.Bytes()); err != nil {
			return err
		}
	} else {
		if err := writeFileAtomic(filepath.Join(o.Out, run.ChangesFile), lines.Bytes()); err != nil {
			return err
		}
	}
	if !g.Quiet {
		g.printf("%s in %s", counted(total, "change"), counted(len(pages)-failed, "page"))
	}
	if failed == len(pages) {
		return fmt.Errorf("correct: every page failed")
	}
	if failed > 0 {
		return &partialError{Failed: failed, Total: len(pages), What: "pages"}
	}
	return nil
}

// within reports whether dir is base or lies inside it.
func within(dir, base string) (bool, error) {
	d, err := filepath.Abs(dir)
	if err != nil {
		return false, err
	}
	b, err := filepath.Abs(base)
	if err != nil {
		return false, err
	}
	if rd, err := filepath.EvalSymlinks(d); err == nil {
		d = rd
	}
	if rb, err := filepath.EvalSymlinks(b); err == nil {
		b = rb
	}
	rel, err := filepath.Rel(b, d)
	if err != nil {
		return false, nil
	}
	return rel == "." || (rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator))), nil
}

// correctOne corrects one page and, unless this is a dry run, writes its
// outputs. Errors name the file.
func correctOne(c *correct.Corrector, o CorrectOptions, p correctPage, g GlobalOptions, mu *sync.Mutex) correctResult {
	warn := func(format string, args ...any) {
		if !g.Quiet {
			mu.Lock()
			g.printf(format, args...)
			mu.Unlock()
		}
	}
	outBase := filepath.Join(o.Out, filepath.FromSlash(p.Rel))
	if p.JSON != "" {
		rec, err := ocr.ReadRecord(p.JSON)
		if err != nil {
			return correctResult{err: err}
		}
		for i, w := range rec.Words {
			if !utf8.ValidString(w.Text) {
				return correctResult{err: fmt.Errorf("correct: %q: word %d is not valid UTF-8", p.JSON, i+1)}
			}
		}
		if len(rec.Words) == 0 {
			warn("%q: empty page, copied as it is", p.JSON)
		}
		out, changes := c.CorrectRecord(rec)
		if out.Lang == "" {
			out.Lang = o.Lang
		}
		if o.DryRun {
			return correctResult{changes: changes, source: rec.Source}
		}
		if err := writeFileAtomic(outBase+ocr.SuffixText, []byte(out.Text())); err != nil {
			return correctResult{err: err}
		}
		var buf bytes.Buffer
		enc := json.NewEncoder(&buf)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		if err := enc.Encode(out); err != nil {
			return correctResult{err: fmt.Errorf("correct: %q: %w", outBase+ocr.SuffixRecord, err)}
		}
		if err := writeFileAtomic(outBase+ocr.SuffixRecord, buf.Bytes()); err != nil {
			return correctResult{err: err}
		}
		if p.ALTO != "" {
			buf.Reset()
			step, err := run.CorrectionStep(out.Lang, o.Lexicon, o.Model, o.Margin, o.KeepMarks, o.MapGlyphs)
			if err != nil {
				return correctResult{err: err}
			}
			if err := alto.WriteWith(&buf, out, alto.Options{Correction: &step}); err != nil {
				return correctResult{err: fmt.Errorf("correct: %q: %w", outBase+ocr.SuffixALTO, err)}
			}
			if err := writeFileAtomic(outBase+ocr.SuffixALTO, buf.Bytes()); err != nil {
				return correctResult{err: err}
			}
		}
		return correctResult{changes: changes, source: rec.Source}
	}
	data, err := os.ReadFile(p.Text)
	if err != nil {
		return correctResult{err: fmt.Errorf("correct: %w", err)}
	}
	if !utf8.Valid(data) {
		return correctResult{err: fmt.Errorf("correct: %q: not valid UTF-8 text (at byte %d)", p.Text, firstInvalid(data))}
	}
	if len(bytes.TrimSpace(data)) == 0 {
		warn("%q: empty page, copied as it is", p.Text)
	}
	out, changes := c.CorrectText(string(data))
	if !o.DryRun {
		if err := writeFileAtomic(outBase+ocr.SuffixText, []byte(out)); err != nil {
			return correctResult{err: err}
		}
	}
	return correctResult{changes: changes}
}

func firstInvalid(b []byte) int {
	for i := 0; i < len(b); {
		r, n := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && n <= 1 {
			return i
		}
		i += n
	}
	return len(b)
}

// writeFileAtomic writes data to path through the one atomic writer.
func writeFileAtomic(path string, data []byte) error { return atomicfile.Write(path, data) }

// collectionCounts counts the words the lexicon knows, and pairs of them,
// over the pages' text. Unknown words are not counted: an OCR error that
// recurs across the collection must not gain weight from its own repeats.
func collectionCounts(pages []correctPage, lex *lexicon.Lexicon) *lexicon.Lexicon {
	coll := lexicon.New()
	for _, p := range pages {
		var text string
		if p.Text != "" {
			data, err := os.ReadFile(p.Text)
			if err != nil || !utf8.Valid(data) {
				continue
			}
			text = string(data)
		} else if rec, err := ocr.ReadRecord(p.JSON); err == nil {
			text = rec.Text()
		}
		correct.CountText(coll, lex, text)
	}
	return coll
}

func runCorrectTrain(ctx context.Context, o CorrectTrainOptions, g GlobalOptions) error {
	var pairs []correct.Pair
	missing := 0
	rels, _, err := walk.Files(o.Truth, walk.Options{Match: func(name string) bool { return strings.HasSuffix(name, ocr.SuffixText) }})
	if err != nil {
		return fmt.Errorf("correct train: %w", err)
	}
	for _, rel := range rels {
		if err := ctx.Err(); err != nil {
			return err
		}
		path := filepath.Join(o.Truth, filepath.FromSlash(rel))
		ref, err := readUTF8(path)
		if err != nil {
			return err
		}
		hyp, err := readUTF8(filepath.Join(o.OCR, filepath.FromSlash(rel)))
		if errors.Is(err, fs.ErrNotExist) {
			missing++
			if !g.Quiet {
				g.printf("no OCR twin for %q, skipped", path)
			}
			continue
		}
		if err != nil {
			return err
		}
		pairs = append(pairs, correct.Pair{Ref: ref, Hyp: hyp})
	}
	if len(pairs) == 0 {
		return fmt.Errorf("correct train: no page of %q has an OCR twin under %q", o.Truth, o.OCR)
	}
	m := correct.Train(pairs, correct.TrainOptions{MinCount: int(o.MinCount), Prior: correct.Classic})
	if err := m.Save(o.Out); err != nil {
		return err
	}
	if !g.Quiet {
		g.printf("%d pairs (%d without OCR twin), %d reference characters, %d confusions",
			len(pairs), missing, m.Chars(), len(m.Rules()))
		g.printf("%s", trainSummary(m))
	}
	return nil
}

// trainSummary says which marks the model takes for strays (seen at least
// ten times, almost never in the ground truth) and what --map-glyphs would
// rewrite.
func trainSummary(m *correct.Model) string {
	type mark struct {
		tok string
		n   int64
	}
	var strays []mark
	for tok, st := range m.Marks() {
		if st.N >= 10 && st.Kept*20 < st.N {
			strays = append(strays, mark{tok, st.N})
		}
	}
	sort.Slice(strays, func(i, j int) bool {
		if strays[i].n != strays[j].n {
			return strays[i].n > strays[j].n
		}
		return strays[i].tok < strays[j].tok
	})
	var b strings.Builder
	fmt.Fprintf(&b, "%d stray marks learned", len(strays))
	for i, s := range strays {
		if i == 8 {
			b.WriteString(" ...")
			break
		}
		fmt.Fprintf(&b, " %q×%d", s.tok, s.n)
	}
	glyphs := m.GlyphMap(0)
	if len(glyphs) == 0 {
		b.WriteString("; no glyph map (--map-glyphs would change nothing)")
		return b.String()
	}
	keys := make([]string, 0, len(glyphs))
	for k := range glyphs {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	b.WriteString("; --map-glyphs would rewrite")
	for _, k := range keys {
		fmt.Fprintf(&b, " %q→%q", k, glyphs[k])
	}
	return b.String()
}

func readUTF8(path string) (string, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return "", fmt.Errorf("correct train: %w", err)
	}
	if !utf8.Valid(data) {
		return "", fmt.Errorf("correct train: %q: not valid UTF-8 text (at byte %d)", path, firstInvalid(data))
	}
	return string(data), nil
}

// collectionVocabulary gathers the collection vocabulary of the pages'
// records (correct.VocabularyCounter) with a saved one (o.Vocab) and saves
// it when asked (o.SaveVocab). Pages whose record cannot be read are
// skipped here; correcting them reports the error.
func collectionVocabulary(pages []correctPage, o CorrectOptions) (*lexicon.Lexicon, error) {
	vc := correct.NewVocabularyCounter()
	for _, p := range pages {
		if p.JSON == "" {
			continue
		}
		rec, err := ocr.ReadRecord(p.JSON)
		if err != nil {
			continue
		}
		vc.AddRecord(rec)
	}
	var prior *lexicon.Lexicon
	if o.Vocab != "" {
		l, err := lexicon.Load(o.Vocab)
		if err != nil {
			return nil, fmt.Errorf("--vocabulary: %w", err)
		}
		prior = l
	}
	v := vc.Vocabulary(prior)
	if o.SaveVocab != "" {
		if err := v.Save(o.SaveVocab); err != nil {
			return nil, fmt.Errorf("--save-vocabulary: %w", err)
		}
	}
	return v, nil
}

// unknownTo returns the words of v that lex does not know, with their
// counts.
func unknownTo(lex, v *lexicon.Lexicon) *lexicon.Lexicon {
	out := lexicon.New()
	for _, w := range v.Words() {
		if !lex.Has(w) {
			out.Add(w, v.Count(w))
		}
	}
	return out
}
