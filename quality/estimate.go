package quality

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strings"
	"unicode/utf8"

	"recto/internal/walk"
	"recto/lexicon"
	"recto/ocr"
	"recto/ocr/par"
)

// OCRPage is one page found in a folder written by `recto ocr`: its page
// record (<name>.json), its text (<name>.txt) and its ALTO
// (<name>.alto.xml). A page has a record or a text, or both.
type OCRPage struct {
	Rel  string // path under the folder, '/'-separated, without extension ("ledger-1841/p0007")
	JSON string // path of the page record; "" when there is none
	Text string // path of the plain text; "" when there is none
	ALTO string // path of the ALTO file; "" when there is none
}

// ErrNoPages is returned by FindOCRPages when a folder holds no page.
var ErrNoPages = errors.New("no OCR pages (.json or .txt) found")

// ocrSuffixes are the endings FindOCRPages looks for, matched in any case;
// ".alto.xml" before the others, which it does not end in.
var ocrSuffixes = []string{ocr.SuffixALTO, ocr.SuffixRecord, ocr.SuffixText}

// ocrSuffix returns the ending of name among ocrSuffixes, "" for none.
func ocrSuffix(name string) string {
	for _, s := range ocrSuffixes {
		if len(name) > len(s) && strings.EqualFold(name[len(name)-len(s):], s) {
			return s
		}
	}
	return ""
}

// FindOCRPages lists the pages under dir, sorted by Rel, with the one
// walker (internal/walk: files and folders whose names start with "." are
// left out). A page is a <name>.json or <name>.txt file, or both, with
// the <name>.alto.xml beside them when there is one; endings match in any
// case. Other files are ignored, and so is an ALTO file with neither
// record nor text. It returns an error naming dir when dir or a folder
// under it cannot be read or when it holds no page (wrapping ErrNoPages).
func FindOCRPages(dir string) ([]OCRPage, error) {
	st, err := os.Stat(dir)
	if err != nil {
		return nil, fmt.Errorf("quality: %w", err)
	}
	if !st.IsDir() {
		return nil, fmt.Errorf("quality: %q is not a folder", dir)
	}
	rels, _, err := walk.Files(dir, walk.Options{Match: func(name string) bool { return ocrSuffix(name) != "" }})
	if err != nil {
		return nil, fmt.Errorf("quality: %w", err)
	}
	byRel := map[string]*OCRPage{}
	var out []*OCRPage
	for _, r := range rels {
		suffix := ocrSuffix(r)
		rel := r[:len(r)-len(suffix)]
		pg := byRel[rel]
		if pg == nil {
			pg = &OCRPage{Rel: rel}
			byRel[rel] = pg
			out = append(out, pg)
		}
		p := filepath.Join(dir, filepath.FromSlash(r))
		switch suffix {
		case ocr.SuffixALTO:
			pg.ALTO = p
		case ocr.SuffixRecord:
			pg.JSON = p
		default:
			pg.Text = p
		}
	}
	pages := make([]OCRPage, 0, len(out))
	for _, p := range out {
		if p.JSON != "" || p.Text != "" {
			pages = append(pages, *p)
		}
	}
	if len(pages) == 0 {
		return nil, fmt.Errorf("quality: %q: %w", dir, ErrNoPages)
	}
	sort.Slice(pages, func(i, j int) bool { return pages[i].Rel < pages[j].Rel })
	return pages, nil
}

// TitlePage names the page as `recto score` does (see TitlePage);
// rootName is the name of the folder the page was found in.
func (p OCRPage) TitlePage(rootName string) (title, page string) {
	return TitlePage(p.Rel+".txt", rootName)
}

// Read loads the page: the record when there is one (rec is nil
// otherwise) and its text (rebuilt from the record, or read from the .txt).
// Errors name the file.
func (p OCRPage) Read() (rec *ocr.Record, text string, err error) {
	if p.JSON != "" {
		rec, err := ocr.ReadRecord(p.JSON)
		if err != nil {
			return nil, "", err
		}
		return rec, rec.Text(), nil
	}
	data, err := os.ReadFile(p.Text)
	if err != nil {
		return nil, "", fmt.Errorf("quality: %w", err)
	}
	if !utf8.Valid(data) {
		return nil, "", fmt.Errorf("quality: %q: OCR text is not valid UTF-8", p.Text)
	}
	return nil, string(data), nil
}

// Features reads the page and computes its features: from the record when
// there is one, else from the text. lex nil means lexicon.Default.
func (p OCRPage) Features(lex *lexicon.Lexicon) (Features, error) {
	rec, text, err := p.Read()
	if err != nil {
		return Features{}, err
	}
	if rec != nil {
		return PageFeatures(rec, lex), nil
	}
	return TextFeatures(text, lex), nil
}

// Sample reads the page and its ground truth (the file at truthPath, read
// by ReadTruth: UTF-8 text, ALTO or PAGE XML) and
// measures its CER with Compare under the default normalisation. It
// returns an error naming the file when either cannot be read. A page whose
// ground truth has no characters gets EmptyTruth set and CER 0.
func (p OCRPage) Sample(truthPath string, lex *lexicon.Lexicon) (Sample, error) {
	rec, text, err := p.Read()
	if err != nil {
		return Sample{}, err
	}
	ref, err := ReadTruth(truthPath)
	if err != nil {
		return Sample{}, err
	}
	cer, ok := Compare(ref.Text, text, NormOptions{}).CER()
	s := Sample{ID: p.Rel, Text: TextFeatures(text, lex), CER: cer, EmptyTruth: !ok}
	if rec != nil {
		s.Record = PageFeatures(rec, lex)
	}
	return s, nil
}

// TruthPath returns where the ground truth of p lies under truthDir: the
// file FindTruth finds (.txt, .xml, .alto.xml or .page.xml), "" when there
// is none, and an error naming both files when there are two.
func (p OCRPage) TruthPath(truthDir string) (string, error) {
	return FindTruth(filepath.Join(truthDir, filepath.FromSlash(path.Clean(p.Rel))))
}

// LoadSamples pairs every page under ocrDir with its ground truth under
// truthDir (same relative path, .txt) and measures its CER, reading up to
// jobs pages at once on the one worker pool (0: one per core). Pages that
// cannot be used are returned as problems, each naming its file, and do
// not stop the others: a page without ground truth or whose record cannot
// be read. Pages with empty ground truth are returned as samples with
// EmptyTruth set. err is non-nil only when ocrDir cannot be listed,
// truthDir is not a folder or ctx ends first (its error).
func LoadSamples(ctx context.Context, ocrDir, truthDir string, lex *lexicon.Lexicon, jobs int) (samples []Sample, problems []error, err error) {
	pages, err := FindOCRPages(ocrDir)
	if err != nil {
		return nil, nil, err
	}
	if st, err := os.Stat(truthDir); err != nil {
		return nil, nil, fmt.Errorf("quality: %w", err)
	} else if !st.IsDir() {
		return nil, nil, fmt.Errorf("quality: ground truth %q is not a folder", truthDir)
	}
	if lex == nil {
		lex = lexicon.Default()
	}
	type result struct {
		s   Sample
		err error
	}
	res := make([]result, len(pages))
	err = par.Each(ctx, len(pages), jobs, func(_, i int) {
		p := pages[i]
		tp, err := p.TruthPath(truthDir)
		if err != nil {
			res[i].err = err
			return
		}
		if tp == "" {
			res[i].err = fmt.Errorf("quality: page %q has no ground truth %q (or .xml)", p.Rel, filepath.Join(truthDir, filepath.FromSlash(path.Clean(p.Rel)))+".txt")
			return
		}
		res[i].s, res[i].err = p.Sample(tp, lex)
	})
	if err != nil {
		return nil, nil, err
	}
	for _, r := range res {
		if r.err != nil {
			problems = append(problems, r.err)
		} else {
			samples = append(samples, r.s)
		}
	}
	return samples, problems, nil
}
