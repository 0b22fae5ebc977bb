package quality

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strings"
	"unicode/utf8"

	"recto/lexicon"
	"recto/ocr"
	"recto/ocr/par"
)

// OCRPage is one page found in a folder written by `recto ocr`: its page
// record (<name>.json) and/or its text (<name>.txt).
type OCRPage struct {
	Rel  string // path under the folder, '/'-separated, without extension ("ledger-1841/p0007")
	JSON string // path of the page record; "" when there is none
	Text string // path of the plain text; "" when there is none
}

// ErrNoPages is returned by FindOCRPages when a folder holds no page.
var ErrNoPages = errors.New("no OCR pages (.json or .txt) found")

// FindOCRPages lists the pages under dir, sorted by Rel. A page is a
// <name>.json or <name>.txt file (both when both exist); other files, such
// as <name>.alto.xml, are ignored, and so are files and folders whose names
// start with ".". It returns an error naming dir when dir cannot be read or
// holds no page (wrapping ErrNoPages).
func FindOCRPages(dir string) ([]OCRPage, error) {
	st, err := os.Stat(dir)
	if err != nil {
		return nil, fmt.Errorf("quality: %w", err)
	}
	if !st.IsDir() {
		return nil, fmt.Errorf("quality: %q is not a folder", dir)
	}
	byRel := map[string]*OCRPage{}
	err = filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return fmt.Errorf("quality: %w", err)
		}
		name := d.Name()
		if strings.HasPrefix(name, ".") && p != dir {
			if d.IsDir() {
				return filepath.SkipDir
			}
			return nil
		}
		if d.IsDir() {
			return nil
		}
		ext := strings.ToLower(filepath.Ext(name))
		if ext != ".json" && ext != ".txt" {
			return nil
		}
		r, err := filepath.Rel(dir, p)
		if err != nil {
			return err
		}
		rel := filepath.ToSlash(strings.TrimSuffix(r, filepath.Ext(r)))
		pg := byRel[rel]
		if pg == nil {
			pg = &OCRPage{Rel: rel}
			byRel[rel] = pg
		}
		if ext == ".json" {
			pg.JSON = p
		} else {
			pg.Text = p
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	if len(byRel) == 0 {
		return nil, fmt.Errorf("quality: %q: %w", dir, ErrNoPages)
	}
	out := make([]OCRPage, 0, len(byRel))
	for _, p := range byRel {
		out = append(out, *p)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Rel < out[j].Rel })
	return out, nil
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
// truthDir (same relative path, .txt) and measures its CER. Pages that
// cannot be used are returned as problems, each naming its file, and do not
// stop the others: a page without ground truth or whose record cannot be read. Pages with empty ground truth are
// returned as samples with EmptyTruth set. err is non-nil only when ocrDir cannot be
// listed or truthDir is not a folder.
func LoadSamples(ocrDir, truthDir string, lex *lexicon.Lexicon) (samples []Sample, problems []error, err error) {
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
	_ = par.Each(context.Background(), len(pages), 0, func(_, i int) {
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
	for _, r := range res {
		if r.err != nil {
			problems = append(problems, r.err)
		} else {
			samples = append(samples, r.s)
		}
	}
	return samples, problems, nil
}
