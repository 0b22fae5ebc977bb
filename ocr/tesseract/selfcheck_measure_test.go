//go:build cgo && !notesseract

package tesseract

import (
	"context"
	"flag"
	"fmt"
	"image"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/lexicon"
	"recto/ocr"
	"recto/ocr/estimate"
	"recto/ocr/ocrtest"
	"recto/ocr/synth"
	"recto/quality"
)

var selfCheckMeasure = flag.Bool("selfcheck-measure", false, "run TestSelfCheckRules: both readings of about 70 pages (about 10 minutes)")

// both is one page read both ways by the self-check (SelfCheck On): the
// prepared page's reading and the original's, with their quality estimates
// and, where the page has a transcription, their CER; the plain engine's
// figure beside them.
type both struct {
	page, group string
	truth       bool       // CERs are known
	poor        bool       // the prepared reading looks poor by the engine's confidences
	pred        [2]float64 // predicted CER: prepared, original
	words       [2]int     // confident words
	letters     [2]int     // confident letters
	cer         [2]float64 // true CER, with truth
	plain       float64    // the plain engine's CER (truth) or confident words
}

// readBoth reads a page with the self-check on, catching the records the
// quality estimate is asked about (the prepared reading, then the
// original's).
func readBoth(t *testing.T, e ocr.Engine, img image.Image, dpi float64, truth string) both {
	t.Helper()
	var texts []string
	var b both
	judge := estimate.PredictCER(nil, lexicon.Default())
	o := ocr.Options{SelfCheck: ocr.On, Orient: ocr.Off, PredictCER: func(r *ocr.Record) float64 {
		if len(texts) == 0 {
			b.poor = ocr.ReadingLooksPoor(r.Words)
		}
		texts = append(texts, r.Text())
		return judge(r)
	}}
	rec, _, err := ocr.Process(context.Background(), e, img, dpi, o)
	if err != nil {
		t.Fatal(err)
	}
	if rec.Blank {
		t.Fatal("page found blank")
	}
	if rec.Reading == nil || len(texts) != 2 {
		t.Fatalf("self-check on: reading %+v, %d estimates", rec.Reading, len(texts))
	}
	r := rec.Reading
	b.pred = [2]float64{*r.PreparedPredictedCER, *r.OriginalPredictedCER}
	b.words = [2]int{r.PreparedWords, r.OriginalWords}
	b.letters = [2]int{r.PreparedScore, r.OriginalScore}
	if truth != "" {
		b.truth = true
		for i, s := range texts {
			b.cer[i], _ = quality.Compare(truth, s, quality.NormOptions{}).CER()
		}
	}
	return b
}

// selfCheckRule is one way to run the self-check: when the original page
// is read too, and whether its reading is kept then.
type selfCheckRule struct {
	name     string
	trigger  func(b both) bool
	original func(b both) bool
}

func selfCheckRules() []selfCheckRule {
	words := func(b both) bool {
		return b.words[1] > b.words[0] || (b.words[1] == b.words[0] && b.letters[1] > b.letters[0])
	}
	wordsPred := func(b both) bool {
		if b.words[1] != b.words[0] {
			return b.words[1] > b.words[0]
		}
		if b.pred[1] != b.pred[0] {
			return b.pred[1] < b.pred[0]
		}
		return b.letters[1] > b.letters[0]
	}
	pred := func(b both) bool {
		if b.pred[1] != b.pred[0] {
			return b.pred[1] < b.pred[0]
		}
		return words(b)
	}
	conf := func(b both) bool { return b.poor }
	var out []selfCheckRule
	for _, tr := range []struct {
		name string
		f    func(b both) bool
	}{
		{"confidences", conf},
		{"confidences or predicted CER > 2 %", func(b both) bool { return b.poor || b.pred[0] > quality.DefaultCorrect }},
		{"confidences or predicted CER > 10 %", func(b both) bool { return b.poor || b.pred[0] > quality.DefaultRescan }},
		{"predicted CER > 2 %", func(b both) bool { return b.pred[0] > quality.DefaultCorrect }},
		{"always", func(both) bool { return true }},
	} {
		for _, ch := range []struct {
			name string
			f    func(b both) bool
		}{{"more confident words, tie letters", words}, {"more confident words, tie predicted CER", wordsPred}, {"lower predicted CER", pred}} {
			out = append(out, selfCheckRule{tr.name + " / " + ch.name, tr.f, ch.f})
		}
	}
	return out
}

// TestSelfCheckRules is a measurement, not a check: it reads real pages and
// synthetic pages of every kind both ways and prints, for each rule of
// when to read the original page too (trigger) and which reading to keep
// (choice), how often the second reading happens and what the kept
// readings score. docs/dev-prep.md ("Self-check") has the figures.
//
//	flock /work/heavy.lock go test ./ocr/tesseract -run TestSelfCheckRules -v -args -selfcheck-measure
func TestSelfCheckRules(t *testing.T) {
	if !*selfCheckMeasure {
		t.Skip("a measurement of about 10 minutes: -args -selfcheck-measure")
	}
	e := engineOrSkip(t, Config{})
	defer e.Close()
	dir := ocrtest.RealPages(t)
	tmp := t.TempDir()
	var rows []both

	// The transcribed real pages, as scanned and at 100 dpi without a tag
	// (downsampled 3x by area averaging, ocr/synth's Degrade).
	for _, page := range []string{"phototest", "eurotext", "8087_054.3B", "8071_093.3B"} {
		truth, err := os.ReadFile(filepath.Join(dir, "tesseract", page+".txt"))
		if err != nil {
			t.Fatal(err)
		}
		img := filepath.Join(dir, "tesseract", page+".tif")
		d, err := ocr.DecodeFile(img, ocr.DecodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		g := grayOf(d.Image)
		b := readBoth(t, e, g, d.DPI, string(truth))
		b.page, b.group = page, "real, transcribed"
		b.plain, _ = quality.Compare(string(truth), ocrtest.PlainEngine(t, img), quality.NormOptions{}).CER()
		rows = append(rows, b)

		small := synth.Degrade(&synth.Page{Image: g, DPI: d.DPI}, synth.Degradation{Scale: 100 / d.DPI})
		path := filepath.Join(tmp, page+"-100.png")
		writeUntagged(t, path, small.Image)
		b = readBoth(t, e, small.Image, 0, string(truth))
		b.page, b.group = page+" at 100 dpi, untagged", "real, transcribed, 100 dpi untagged"
		b.plain, _ = quality.Compare(string(truth), ocrtest.PlainEngine(t, path), quality.NormOptions{}).CER()
		rows = append(rows, b)
	}
	for _, page := range leptonicaTextPages {
		img := filepath.Join(dir, "leptonica", page)
		d, err := ocr.DecodeFile(img, ocr.DecodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		b := readBoth(t, e, d.Image, d.DPI, "")
		b.page, b.group = page, "real, leptonica"
		b.plain = float64(ocr.ConfidentWords(ocrtest.PlainEngineWords(t, img)))
		rows = append(rows, b)
	}
	for _, tt := range synth.Demo() {
		for pi := range tt.Pages {
			p, err := tt.Page(pi)
			if err != nil {
				t.Fatal(err)
			}
			if tt.Pages[pi] == "" {
				continue
			}
			path := filepath.Join(tmp, fmt.Sprintf("%s-%d.png", tt.ID, pi))
			f, err := os.Create(path)
			if err != nil {
				t.Fatal(err)
			}
			if err := synth.WritePNG(f, p.Image, p.DPI); err != nil {
				t.Fatal(err)
			}
			f.Close()
			b := readBoth(t, e, p.Image, p.DPI, p.Truth)
			b.page, b.group = fmt.Sprintf("%s p%d (%s)", tt.ID, pi+1, tt.Kinds[pi].Name), "demo "+tt.Kinds[pi].Name
			if tt.Kinds[pi].Name == "clean" {
				b.group = "demo clean"
			} else {
				b.group = "demo degraded"
			}
			b.plain, _ = quality.Compare(p.Truth, ocrtest.PlainEngine(t, path), quality.NormOptions{}).CER()
			rows = append(rows, b)
		}
	}
	var sb strings.Builder
	sb.WriteString("| page | group | poor by conf | pred CER prep / orig | conf words prep / orig | CER prep / orig | plain |\n|---|---|---|---|---|---|---|\n")
	for _, r := range rows {
		fmt.Fprintf(&sb, "| %s | %s | %v | %.3f / %.3f | %d / %d | %.4f / %.4f | %.4g |\n", r.page, r.group, r.poor, r.pred[0], r.pred[1], r.words[0], r.words[1], r.cer[0], r.cer[1], r.plain)
	}
	t.Logf("both readings:\n%s", sb.String())

	groups := []string{"real, transcribed", "real, transcribed, 100 dpi untagged", "real, leptonica", "demo clean", "demo degraded"}
	sb.Reset()
	sb.WriteString("| rule | group | pages | read twice | original kept | mean CER kept (truth) / confident words kept | worse than plain (CER +0.5 pt / words < 95 %) |\n|---|---|---|---|---|---|---|\n")
	for _, rule := range selfCheckRules() {
		for _, g := range groups {
			var n, twice, orig, worse int
			var sum float64
			for _, r := range rows {
				if r.group != g {
					continue
				}
				n++
				k := 0
				if rule.trigger(r) {
					twice++
					if rule.original(r) {
						orig++
						k = 1
					}
				}
				if r.truth {
					sum += r.cer[k]
					if r.cer[k] > r.plain+0.005 {
						worse++
					}
				} else {
					sum += float64(r.words[k])
					if float64(r.words[k]) < math.Floor(0.95*r.plain) {
						worse++
					}
				}
			}
			if n == 0 {
				continue
			}
			fig := fmt.Sprintf("%.2f %%", 100*sum/float64(n))
			if g == "real, leptonica" {
				fig = fmt.Sprintf("%.0f words", sum)
			}
			fmt.Fprintf(&sb, "| %s | %s | %d | %d | %d | %s | %d |\n", rule.name, g, n, twice, orig, fig, worse)
		}
	}
	t.Logf("rules:\n%s", sb.String())
}

func writeUntagged(t *testing.T, path string, g *image.Gray) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := synth.WritePNG(f, g, 0); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}
