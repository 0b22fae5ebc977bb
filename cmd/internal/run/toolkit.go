package run

import (
	"context"
	"encoding/json"
	"fmt"
	"image"
	"sync"

	"recto/cmd/internal/run/report"
	"recto/correct"
	"recto/lexicon"
	"recto/ocr"
	"recto/ocr/estimate"
	"recto/ocr/tesseract"
	"recto/quality"
)

// toolkit holds the steps of a run, built once from the options and
// shared read-only by the workers (each worker has its own engine).
type toolkit struct {
	fingerprint  string // short hash of settingsJSON
	settingsJSON string // the settings that change a page's results
	aboutJSON    string // how the figures are made, for the report's header (about.go)

	newRecogniser func() (recogniser, error)
	write         func(dir, rel string, rec *ocr.Record, prepared *image.Gray, a ocr.ALTOOptions) error
	correction    ocr.ALTOStep // the correction step in corrected ALTO
	triage        func(*ocr.Record) verdict
	correct       func(*ocr.Record) (*ocr.Record, []correct.Change)
	compare       func(ref, hyp string) counts
	interval      report.IntervalFunc
	close         func() // releases an engine no worker took; may be nil
}

// cerInterval is the reports' interval for a title's pooled CER: the
// percentile bootstrap over pages of package quality, fixed seed.
func cerInterval(errs, chars []int) (float64, float64, bool) {
	pages := make([]quality.Counts, len(errs))
	for i := range errs {
		pages[i] = quality.Counts{Chars: chars[i], CharErrors: errs[i]}
	}
	return quality.BootstrapCER(pages, 0, 0)
}

func newToolkit(o Options) (*toolkit, error) {
	th := quality.Thresholds{Rescan: o.Rescan, Correct: o.Correct}
	if err := th.Validate(); err != nil {
		return nil, &usageError{Err: fmt.Errorf("run: %w", err)}
	}
	model := quality.DefaultModel()
	var lex *lexicon.Lexicon // nil: the language has no lexicon
	var lexFiles []string
	var err error
	if o.Model != "" {
		if model, err = quality.LoadModel(o.Model); err != nil {
			return nil, err
		}
	}
	if o.Lexicon != "" {
		if lex, err = lexicon.Load(o.Lexicon); err != nil {
			return nil, err
		}
	} else {
		// --lang chooses the lexicon (lexicon.ForLang); without one for
		// the language, triage leaves the lexicon features out and
		// correction changes no word, said once.
		sel, err := lexicon.ForLang(o.Lang)
		if err != nil {
			return nil, err
		}
		lex, lexFiles = sel.Lexicon, sel.Files
		if !sel.Complete() && o.Stderr != nil {
			fmt.Fprintf(o.Stderr, "%s: %s\n", o.Command, sel.MissingNote("triage does not use the lexicon features and correction makes only language-independent fixes (stray marks)"))
		}
	}
	modelSum, err := fileSum(o.Model)
	if err != nil {
		return nil, fmt.Errorf("--quality-model: %w", err)
	}
	cmodel, _ := correct.ModelForLang(o.Lang) // the Fraktur model for frk, else the default
	if o.CorrectionModel != "" {
		if cmodel, err = correct.LoadModel(o.CorrectionModel); err != nil {
			return nil, err
		}
	}
	cmodelSum, err := fileSum(o.CorrectionModel)
	if err != nil {
		return nil, fmt.Errorf("--correction-model: %w", err)
	}
	lexSum, err := fileSum(o.Lexicon)
	if err != nil {
		return nil, fmt.Errorf("--lexicon: %w", err)
	}
	custom := o.NewEngine != nil
	opts := ocr.Options{DPI: o.DPI, NoPrepare: o.NoPrepare, Lang: o.Lang, MaxPixels: o.MaxPixels, Prep: o.Prep,
		PredictCER: estimate.PredictCER(model, lex)} // the self-check records triage's estimate of both readings
	cfg := tesseract.Config{Lang: o.Lang, PSM: o.PSM}
	settings := map[string]any{"lang": o.Lang, "psm": o.PSM, "dpi": o.DPI, "rescan": o.Rescan, "correct": o.Correct,
		"model": modelSum, "lexicon": lexSum, "margin": o.Margin, "fake_engine": custom, "record": ocr.RecordVersion}
	if o.Lexicon == "" && o.Lang != "eng" { // the lexicons --lang chose (English runs keep their fingerprint)
		settings["lexicons"] = lexFiles
	}
	if o.Prep != (ocr.PrepOptions{}) || (o.NoPrepare && !custom) { // absent keys keep older ledgers' fingerprints
		settings["prep"], settings["no_prepare"] = o.Prep, o.NoPrepare
	}
	if o.CorrectionModel != "" || o.KeepMarks || o.MapGlyphs { // absent keys keep older ledgers' fingerprints
		settings["correction_model"], settings["keep_marks"], settings["map_glyphs"] = cmodelSum, o.KeepMarks, o.MapGlyphs
	}
	step, err := CorrectionStep(o.Lang, o.Lexicon, o.CorrectionModel, o.Margin, o.KeepMarks, o.MapGlyphs)
	if err != nil {
		return nil, err
	}
	tk := &toolkit{
		write: func(dir, rel string, r *ocr.Record, g *image.Gray, a ocr.ALTOOptions) error {
			return ocr.WriteOutputsWith(dir, rel, r, g, a)
		},
		correction: step,
		interval:   cerInterval,
		compare: func(ref, hyp string) counts {
			c := quality.Compare(ref, hyp, quality.NormOptions{})
			return counts{Chars: c.Chars, CharErrors: c.CharErrors, Words: c.Words, WordErrors: c.WordErrors,
				FlexErrors: c.FlexErrors, BagErrors: c.BagErrors, FlexSkipped: c.FlexSkipped > 0}
		},
		triage: func(r *ocr.Record) verdict {
			v := quality.TriageRecord(r, lex, model, th)
			return verdict{PredictedCER: v.PredictedCER, Decision: v.Decision, Reasons: v.Reasons}
		},
	}
	clex := lex
	if clex == nil {
		clex = noLexicon
	}
	ccfg := correct.Config{Margin: o.Margin, KeepMarks: o.KeepMarks, MapGlyphs: o.MapGlyphs}
	tk.correct = func(r *ocr.Record) (*ocr.Record, []correct.Change) {
		return correctorFor(clex, cmodel, ccfg).CorrectRecord(r)
	}
	tk.fingerprint, tk.settingsJSON = fingerprint(settings)
	about, err := describe(o, model, lexFiles, lex)
	if err != nil {
		return nil, err
	}
	b, _ := json.Marshal(about)
	tk.aboutJSON = string(b)
	if custom {
		tk.newRecogniser = func() (recogniser, error) {
			e, err := o.NewEngine()
			if err != nil {
				return nil, err
			}
			return &engineRecogniser{eng: e, opts: opts}, nil
		}
	} else {
		// Fail early, before the walk, when the engine or a language is missing.
		eng, err := tesseract.New(cfg)
		if err != nil {
			return nil, fmt.Errorf("run: %w", err)
		}
		var mu sync.Mutex // workers start concurrently
		first := eng
		tk.newRecogniser = func() (recogniser, error) {
			mu.Lock()
			e := first
			first = nil
			mu.Unlock()
			if e != nil { // the engine made for the check serves the first worker
				return &engineRecogniser{eng: e, opts: opts}, nil
			}
			e, err := tesseract.New(cfg)
			if err != nil {
				return nil, err
			}
			return &engineRecogniser{eng: e, opts: opts}, nil
		}
		tk.close = func() {
			mu.Lock()
			defer mu.Unlock()
			if first != nil {
				first.Close()
				first = nil
			}
		}
	}
	return tk, nil
}

// correctors caches correctors by lexicon and margin: building one indexes
// the lexicon, which takes seconds, so it is done when the first page needs
// correction and once per process (tests run many jobs in one process).
var correctors sync.Map // correctorKey -> *correctorEntry

// noLexicon is the empty lexicon correction uses when the language has
// none: it offers no word to change a word into.
var noLexicon = lexicon.New()

type correctorKey struct {
	lex   *lexicon.Lexicon
	model *correct.Model
	cfg   correct.Config
}

type correctorEntry struct {
	once sync.Once
	c    *correct.Corrector
}

func correctorFor(lex *lexicon.Lexicon, m *correct.Model, cfg correct.Config) *correct.Corrector {
	v, _ := correctors.LoadOrStore(correctorKey{lex, m, cfg}, &correctorEntry{})
	e := v.(*correctorEntry)
	e.once.Do(func() { e.c = correct.New(lex, m, cfg) })
	return e.c
}

// engineRecogniser is one worker's engine and options.
type engineRecogniser struct {
	eng  ocr.Engine
	opts ocr.Options
}

func (e *engineRecogniser) Recognise(ctx context.Context, path string, n int, sum string) (*ocr.Record, *image.Gray, error) {
	return ocr.ProcessFilePage(ctx, e.eng, path, n, sum, e.opts)
}

func (e *engineRecogniser) Close() error { return e.eng.Close() }

// orDefault names a missing file sum in the ALTO correction settings.
func orDefault(sum string) string {
	if sum == "" {
		return "default"
	}
	return sum
}
