package main

// TEMPORARY stand-ins for the steps other helpers are landing (engine,
// triage, correction, scoring). This file is deleted once their packages are
// on main; run.go only sees the toolkit.

import (
	"bytes"
	"context"
	"encoding/json"
	"encoding/xml"
	"errors"
	"fmt"
	"hash/fnv"
	"image"
	_ "image/gif"
	_ "image/jpeg"
	_ "image/png"
	"math"
	"math/rand/v2"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	_ "golang.org/x/image/bmp"
	_ "golang.org/x/image/tiff"

	"recto/ocr"
	"recto/quality/report"
)

// toolkit holds the steps of a run, built once from the options.
type toolkit struct {
	fingerprint  string // short hash of settingsJSON plus model and lexicon content
	settingsJSON string

	newRecogniser func() (recogniser, error)
	write         func(dir, rel string, rec *ocr.Record, prepared *image.Gray) error
	triage        func(*ocr.Record) verdict
	correct       func(*ocr.Record) (*ocr.Record, int)
	compare       func(ref, hyp string) counts
	interval      report.IntervalFunc
}

func newToolkit(o RunOptions) (*toolkit, error) {
	modelSum, err := fileSum(o.Model)
	if err != nil {
		return nil, fmt.Errorf("run: --model: %w", err)
	}
	lexSum, err := fileSum(o.Lexicon)
	if err != nil {
		return nil, fmt.Errorf("run: --lexicon: %w", err)
	}
	fake := os.Getenv("RECTO_FAKE_ENGINE") == "1"
	rescan, corr := o.Rescan, o.Correct
	if rescan == 0 {
		rescan = 0.25
	}
	if corr == 0 {
		corr = 0.05
	}
	settings := map[string]any{"lang": o.Lang, "psm": o.PSM, "dpi": o.DPI, "rescan": rescan, "correct": corr,
		"model": modelSum, "lexicon": lexSum, "fake_engine": fake}
	tk := &toolkit{write: standinWrite, compare: standinCompare, interval: cerInterval}
	tk.fingerprint, tk.settingsJSON = fingerprint(settings)
	if fake {
		delay, _ := strconv.Atoi(os.Getenv("RECTO_FAKE_DELAY_MS"))
		tk.newRecogniser = func() (recogniser, error) { return fakeRecogniser{delay: time.Duration(delay) * time.Millisecond}, nil }
	} else {
		tk.newRecogniser = func() (recogniser, error) {
			return nil, errors.New("the Tesseract engine adapter is not merged into this build yet (set RECTO_FAKE_ENGINE=1 for the test engine)")
		}
	}
	tk.triage = func(r *ocr.Record) verdict {
		if len(r.Words) == 0 {
			return verdict{PredictedCER: 0, Decision: "blank", Reasons: []string{"no words recognised"}}
		}
		p := math.Max(0, math.Min(1, 1-r.MeanConfidence))
		switch {
		case p >= rescan:
			return verdict{p, "rescan", []string{fmt.Sprintf("mean confidence %.2f", r.MeanConfidence)}}
		case p >= corr:
			return verdict{p, "correct", []string{fmt.Sprintf("mean confidence %.2f", r.MeanConfidence)}}
		}
		return verdict{p, "accept", nil}
	}
	tk.correct = func(r *ocr.Record) (*ocr.Record, int) { return r, 0 }
	return tk, nil
}

// titlePage splits rel into title (first folder) and page; a page directly
// under the root belongs to a title named after the root.
func titlePage(rel, rootName string) (string, string) {
	if t, p, ok := strings.Cut(rel, "/"); ok {
		return t, p
	}
	return rootName, rel
}

// fakeRecogniser is the test-only engine (RECTO_FAKE_ENGINE=1): it decodes
// the image (so broken files fail as they would) and returns the words of
// "<image>.fake.txt" beside it, or "page WxH" when there is none.
type fakeRecogniser struct{ delay time.Duration }

func (f fakeRecogniser) Close() error { return nil }

func (f fakeRecogniser) Recognise(ctx context.Context, p string) (*ocr.Record, *image.Gray, error) {
	data, err := os.ReadFile(p)
	if err != nil {
		return nil, nil, fmt.Errorf("ocr: %w", err)
	}
	img, _, err := image.Decode(bytes.NewReader(data))
	if err != nil {
		return nil, nil, fmt.Errorf("ocr: %q: not a readable image: %v", p, err)
	}
	if f.delay > 0 {
		select {
		case <-time.After(f.delay):
		case <-ctx.Done():
			return nil, nil, ctx.Err()
		}
	}
	b := img.Bounds()
	text := fmt.Sprintf("page %dx%d", b.Dx(), b.Dy())
	if t, err := os.ReadFile(p + ".fake.txt"); err == nil {
		text = string(t)
	}
	r := &ocr.Record{Version: ocr.RecordVersion, Source: p, Width: b.Dx(), Height: b.Dy(), DPI: 300, Binarization: "none"}
	var conf float64
	for li, line := range strings.Split(strings.TrimRight(text, "\n"), "\n") {
		for _, w := range strings.Fields(line) {
			h := fnv.New32a()
			h.Write([]byte(w))
			c := 0.6 + 0.4*float64(h.Sum32()%1000)/1000
			r.Words = append(r.Words, ocr.Word{Text: w, Conf: c, Line: li})
			conf += c
		}
	}
	if len(r.Words) > 0 {
		r.MeanConfidence = conf / float64(len(r.Words))
	}
	return r, nil, nil
}

// standinWrite writes <rel>.txt, .alto.xml and .json under dir, each to a
// temporary name first.
func standinWrite(dir, rel string, r *ocr.Record, _ *image.Gray) error {
	base := filepath.Join(dir, filepath.FromSlash(strings.TrimSuffix(rel, path.Ext(rel))))
	if err := os.MkdirAll(filepath.Dir(base), 0o755); err != nil {
		return err
	}
	js, err := json.MarshalIndent(r, "", " ")
	if err != nil {
		return err
	}
	var alto bytes.Buffer
	alto.WriteString(xml.Header + "<alto><Layout><Page><PrintSpace>")
	for _, w := range r.Words {
		alto.WriteString(`<String CONTENT="`)
		xml.EscapeText(&alto, []byte(strings.Map(func(c rune) rune {
			if c == '\t' || c == '\n' || c >= 0x20 && c != 0xFFFE && c != 0xFFFF && utf8.ValidRune(c) {
				return c
			}
			return '\uFFFD'
		}, w.Text)))
		alto.WriteString(`"/>`)
	}
	alto.WriteString("</PrintSpace></Page></Layout></alto>\n")
	for ext, data := range map[string][]byte{".txt": []byte(r.Text()), ".json": js, ".alto.xml": alto.Bytes()} {
		if err := writeAtomic(base+ext, data); err != nil {
			return err
		}
	}
	return nil
}

func writeAtomic(name string, data []byte) error {
	f, err := os.CreateTemp(filepath.Dir(name), "."+filepath.Base(name)+".tmp*")
	if err != nil {
		return err
	}
	_, err = f.Write(data)
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(f.Name(), name)
	}
	if err != nil {
		os.Remove(f.Name())
	}
	return err
}

func standinCompare(ref, hyp string) counts {
	r, h := []rune(ref), []rune(hyp)
	rw, hw := strings.Fields(ref), strings.Fields(hyp)
	return counts{Chars: len(r), CharErrors: lev(r, h), Words: len(rw), WordErrors: lev(rw, hw)}
}

func lev[T comparable](a, b []T) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			c := prev[j-1]
			if a[i-1] != b[j-1] {
				c++
			}
			cur[j] = min(c, prev[j]+1, cur[j-1]+1)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// bootstrapInterval is a 95 % percentile bootstrap over pages of the pooled
// CER, seeded from the data so reports are reproducible.
func bootstrapInterval(errs, chars []int) (float64, float64, bool) {
	n := len(errs)
	if n < 2 {
		return 0, 0, false
	}
	h := fnv.New64a()
	for i := range errs {
		fmt.Fprint(h, errs[i], ",", chars[i], ";")
	}
	rng := rand.New(rand.NewPCG(h.Sum64(), 1))
	const reps = 1000
	rates := make([]float64, 0, reps)
	for range reps {
		var e, c int
		for range n {
			k := rng.IntN(n)
			e += errs[k]
			c += chars[k]
		}
		if c > 0 {
			rates = append(rates, float64(e)/float64(c))
		}
	}
	if len(rates) < reps/2 {
		return 0, 0, false
	}
	sort.Float64s(rates)
	return rates[int(0.025*float64(len(rates)))], rates[int(0.975*float64(len(rates)-1))], true
}

// cerInterval gives the interval of a title's pooled CER in the reports.
var cerInterval report.IntervalFunc = bootstrapInterval
