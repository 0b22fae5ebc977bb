package run

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"recto/cmd/internal/run/ledger"
	"recto/correct"
	"recto/internal/atomicfile"
	"recto/ocr"
)

// ChangeLine is one line of changes.jsonl, the list of corrections that
// recto correct and recto run both write, in the same format: the page
// named as recto score names it, the place of the change (1-based line
// and column, in characters), the text before and after, the score (how
// much likelier the correction is, as a natural-log ratio) and the
// language the page was corrected in.
type ChangeLine struct {
	Title  string  `json:"title"`
	Page   string  `json:"page"`
	Line   int     `json:"line"`
	Column int     `json:"column"`
	Before string  `json:"before"`
	After  string  `json:"after"`
	Score  float64 `json:"score"`
	Lang   string  `json:"lang"` // the language the page was corrected in (--lang)
	// Blocked says why the change was not made ("collection vocabulary",
	// correct.BlockedVocabulary); absent for a change made.
	Blocked string `json:"blocked,omitempty"`
}

// AppendChanges appends one page's changes to buf as JSON Lines (HTML
// characters not escaped), one ChangeLine each.
func AppendChanges(buf *bytes.Buffer, title, page, lang string, changes []correct.Change) {
	enc := json.NewEncoder(buf)
	enc.SetEscapeHTML(false)
	for _, ch := range changes {
		_ = enc.Encode(ChangeLine{Title: title, Page: page, Line: ch.Line, Column: ch.Column,
			Before: ch.Before, After: ch.After, Score: ch.Score, Lang: lang, Blocked: ch.Blocked})
	}
}

// ChangesFile is the name of the change list in a corrected folder.
const ChangesFile = "changes.jsonl"

// suffixChanges is appended to a corrected page's stem for its own change
// list, beside its corrected outputs; writeChanges joins them.
const suffixChanges = ".changes.jsonl"

// writeChanges writes dir/changes.jsonl: the change lists of the pages in
// rows (the files ending in suffixChanges among their outputs, under
// outDir), joined in the order of their page names, as recto correct
// orders its pages. A page without such a file adds nothing; changes
// rejected in review (reviews) are marked Blocked (markRejected).
func writeChanges(dir, outDir string, rows []ledger.Page, reviews map[string]ledger.Review) error {
	type part struct{ page, file, rel string }
	var parts []part
	for _, r := range rows {
		if r.State != ledger.StateDone {
			continue
		}
		for _, o := range r.Outputs {
			if strings.HasSuffix(o, suffixChanges) {
				parts = append(parts, part{r.Page, filepath.Join(outDir, filepath.FromSlash(o)), r.Rel})
			}
		}
	}
	sort.SliceStable(parts, func(i, j int) bool { return parts[i].page < parts[j].page })
	var buf bytes.Buffer
	for _, p := range parts {
		data, err := os.ReadFile(p.file)
		if err != nil {
			return fmt.Errorf("changes of page %q: %w", p.page, err)
		}
		if data, err = markRejected(data, reviews[p.rel]); err != nil {
			return fmt.Errorf("changes of page %q: %w", p.page, err)
		}
		buf.Write(data)
	}
	return atomicfile.Write(filepath.Join(dir, ChangesFile), buf.Bytes())
}

// CorrectionStep is the ALTO processing step of correction, the same in
// recto correct and recto run so that their ALTO files are equal: lexicon
// and model are the files given ("" for the embedded ones), named by a
// short hash of their content.
func CorrectionStep(lang, lexiconFile, modelFile string, margin float64, keepMarks, mapGlyphs bool) (ocr.ALTOStep, error) {
	lex, err := fileSum(lexiconFile)
	if err != nil {
		return ocr.ALTOStep{}, fmt.Errorf("--lexicon: %w", err)
	}
	model, err := fileSum(modelFile)
	if err != nil {
		return ocr.ALTOStep{}, fmt.Errorf("--correction-model: %w", err)
	}
	return ocr.ALTOStep{Description: []string{"correction of OCR confusions"},
		Settings: fmt.Sprintf("lang=%s lexicon=%s correction_model=%s margin=%g keep_marks=%t map_glyphs=%t",
			lang, orDefault(lex), orDefault(model), margin, keepMarks, mapGlyphs)}, nil
}
