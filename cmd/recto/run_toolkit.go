package main

import (
	"bufio"
	"context"
	"fmt"
	"hash/fnv"
	"image"
	"os"
	"strconv"
	"strings"
	"sync"
	"time"

	"recto/correct"
	"recto/lexicon"
	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/ocr/tesseract"
	"recto/quality"
	"recto/quality/report"
)

// toolkit holds the steps of a run, built once from the options and
// shared read-only by the workers (each worker has its own engine).
type toolkit struct {
	fingerprint  string // short hash of settingsJSON
	settingsJSON string // the settings that change a page's results

	newRecogniser func() (recogniser, error)
	write         func(dir, rel string, rec *ocr.Record, prepared *image.Gray) error
	triage        func(*ocr.Record) verdict
	correct       func(*ocr.Record) (*ocr.Record, int)
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

// fakeEngineEnv switches `recto run` and `recto demo` to the test engine.
// Test-only: it lets the process tests (kill and resume) run in seconds
// without Tesseract. The engine "recognises" the words of <image>.fake.txt
// beside each image, or none.
const fakeEngineEnv = "RECTO_FAKE_ENGINE"

func newToolkit(o RunOptions) (*toolkit, error) {
	th := quality.Thresholds{Rescan: o.Rescan, Correct: o.Correct}
	if err := th.Validate(); err != nil {
		return nil, &usageError{fmt.Errorf("run: %w", err)}
	}
	model := quality.DefaultModel()
	lex := lexicon.Default()
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
	}
	modelSum, err := fileSum(o.Model)
	if err != nil {
		return nil, fmt.Errorf("run: --model: %w", err)
	}
	lexSum, err := fileSum(o.Lexicon)
	if err != nil {
		return nil, fmt.Errorf("run: --lexicon: %w", err)
	}
	fake := os.Getenv(fakeEngineEnv) == "1"
	opts := ocr.Options{DPI: o.DPI, NoPrepare: fake}
	cfg := tesseract.Config{Lang: o.Lang, PSM: o.PSM}
	settings := map[string]any{"lang": o.Lang, "psm": o.PSM, "dpi": o.DPI, "rescan": o.Rescan, "correct": o.Correct,
		"model": modelSum, "lexicon": lexSum, "margin": o.Margin, "fake_engine": fake, "record": ocr.RecordVersion}
	tk := &toolkit{
		write:    func(dir, rel string, r *ocr.Record, g *image.Gray) error { return ocr.WriteOutputs(dir, rel, r, g) },
		interval: cerInterval,
		compare: func(ref, hyp string) counts {
			c := quality.Compare(ref, hyp, quality.NormOptions{})
			return counts{Chars: c.Chars, CharErrors: c.CharErrors, Words: c.Words, WordErrors: c.WordErrors}
		},
		triage: func(r *ocr.Record) verdict {
			v := quality.Triage(quality.PageFeatures(r, lex), model, th)
			return verdict{PredictedCER: v.PredictedCER, Decision: v.Decision, Reasons: v.Reasons}
		},
	}
	tk.correct = func(r *ocr.Record) (*ocr.Record, int) {
		c, changes := correctorFor(lex, o.Margin).CorrectRecord(r)
		return c, len(changes)
	}
	tk.fingerprint, tk.settingsJSON = fingerprint(settings)
	if fake {
		delay, _ := strconv.Atoi(os.Getenv("RECTO_FAKE_DELAY_MS"))
		tk.newRecogniser = func() (recogniser, error) {
			return &engineRecogniser{eng: &ocrtest.Engine{Delay: time.Duration(delay) * time.Millisecond}, opts: opts, fake: true}, nil
		}
	} else {
		// Fail early, before the walk, when the engine or a language is missing.
		eng, err := newEngine(cfg)
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
			e, err := newEngine(cfg)
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

type correctorKey struct {
	lex    *lexicon.Lexicon
	margin float64
}

type correctorEntry struct {
	once sync.Once
	c    *correct.Corrector
}

func correctorFor(lex *lexicon.Lexicon, margin float64) *correct.Corrector {
	v, _ := correctors.LoadOrStore(correctorKey{lex, margin}, &correctorEntry{})
	e := v.(*correctorEntry)
	e.once.Do(func() { e.c = correct.New(lex, nil, correct.Config{Margin: margin}) })
	return e.c
}

// engineRecogniser is one worker's engine and options.
type engineRecogniser struct {
	eng  ocr.Engine
	opts ocr.Options
	fake bool // eng is an *ocrtest.Engine fed from <image>.fake.txt
}

func (e *engineRecogniser) Recognise(ctx context.Context, path string) (*ocr.Record, *image.Gray, error) {
	if e.fake {
		e.eng.(*ocrtest.Engine).Words = fakeWords(path + ".fake.txt")
	}
	return ocr.ProcessFile(ctx, e.eng, path, e.opts)
}

func (e *engineRecogniser) Close() error { return e.eng.Close() }

// fakeWords reads the test engine's words: one line of the file per text
// line, confidence a hash of the word in [0.6, 1).
func fakeWords(name string) []ocr.Word {
	f, err := os.Open(name)
	if err != nil {
		return nil
	}
	defer f.Close()
	var words []ocr.Word
	sc := bufio.NewScanner(f)
	for line := 0; sc.Scan(); line++ {
		for _, w := range strings.Fields(sc.Text()) {
			h := fnv.New32a()
			h.Write([]byte(w))
			words = append(words, ocr.Word{Text: w, Conf: 0.6 + 0.4*float64(h.Sum32()%1000)/1000, Line: line})
		}
	}
	return words
}
