//go:build cgo && !notesseract

package tesseract

import (
	"context"
	"fmt"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/synth"
	"recto/quality"
)

// comparePara is fictional text written for these checks.
const comparePara = `The harbour board of Saltmarsh met on the first Tuesday of March to hear the report of the
river warden. Three barges had run aground near the old mill, and the ferry from Quayside to Eastwick
was delayed for two weeks by ice. The clerk read the accounts: four hundred and twelve pounds were spent
on dredging, ninety on lamps for the north pier, and seven on a new bell for the customs house.`

// sideBySide is one kind of degraded page: recto's CER, the plain
// engine's CER (the greyscale page handed to Tesseract as it is), and, for
// the blank page, the characters each produced.
type sideBySide struct {
	kind                   string
	recto, plain           float64
	rectoChars, plainChars int
}

// compareKinds renders text on a page of the given layout,
// degrades it with each synth preset, and recognises it with and without
// preparation.
func compareKinds(tb testing.TB, e ocr.Engine, layout synth.Layout, kinds []string, text string) []sideBySide {
	tb.Helper()
	clean, rest, err := synth.Render(text, layout)
	if err != nil {
		tb.Fatal(err)
	}
	if rest != "" {
		tb.Fatalf("the paragraph does not fit the page; left over: %q", rest)
	}
	var out []sideBySide
	for _, name := range kinds {
		k, ok := synth.KindByName(name)
		if !ok {
			tb.Fatalf("synth has no %q preset", name)
		}
		src := clean
		if k.Blank {
			src, _, err = synth.Render("", layout)
			if err != nil {
				tb.Fatal(err)
			}
		}
		d := k.D
		d.Seed = 7
		p := synth.Degrade(src, d)
		row := sideBySide{kind: name}
		for _, plain := range []bool{false, true} {
			rec, _, err := ocr.Process(context.Background(), e, p.Image, p.DPI, ocr.Options{NoPrepare: plain})
			if err != nil {
				tb.Fatalf("%s (plain %v): %v", name, plain, err)
			}
			text := rec.Text()
			c := quality.Compare(p.Truth, text, quality.NormOptions{})
			cer, _ := c.CER()
			n := len([]rune(strings.TrimSpace(text)))
			if plain {
				row.plain, row.plainChars = cer, n
			} else {
				row.recto, row.rectoChars = cer, n
			}
		}
		out = append(out, row)
	}
	return out
}

func table(rows []sideBySide) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%-8s %9s %9s %12s %12s\n", "page", "recto CER", "plain CER", "recto chars", "plain chars")
	for _, r := range rows {
		fmt.Fprintf(&b, "%-8s %9.4f %9.4f %12d %12d\n", r.kind, r.recto, r.plain, r.rectoChars, r.plainChars)
	}
	return b.String()
}

// TestPreparationEarnsItsPlace recognises small degraded synthetic pages
// (one paragraph, 300 dpi) with recto's preparation and with the plain
// engine, and checks the targets of the issue: on skewed and noisy pages
// recto's CER is at most a fifth of the plain engine's, on unevenly lit
// pages at most a third, on clean pages at most 0.2 points worse, and on
// low-resolution and blank pages no worse. CER is quality.Compare's
// (Levenshtein distance over NFC code points / reference code points).
func TestPreparationEarnsItsPlace(t *testing.T) {
	e := engineOrSkip(t, Config{})
	kinds := []string{"clean", "skewed", "noisy", "uneven", "lowres", "blank"}
	if testing.Short() {
		kinds = []string{"clean", "skewed", "noisy"}
	}
	layout := synth.Layout{WidthMM: 150, HeightMM: 62, MarginMM: 8}
	rows := compareKinds(t, e, layout, kinds, comparePara)
	t.Logf("side by side, %gx%g mm page at 300 dpi:\n%s", layout.WidthMM, layout.HeightMM, table(rows))
	for _, r := range rows {
		switch r.kind {
		case "skewed", "noisy":
			if r.recto > r.plain/5 {
				t.Errorf("%s: recto CER %.4f is more than a fifth of the plain engine's %.4f", r.kind, r.recto, r.plain)
			}
		case "uneven":
			if r.recto > r.plain/3 {
				t.Errorf("%s: recto CER %.4f is more than a third of the plain engine's %.4f", r.kind, r.recto, r.plain)
			}
		case "clean":
			if r.recto > r.plain+0.002 {
				t.Errorf("clean: recto CER %.4f is more than 0.2 points above the plain engine's %.4f", r.recto, r.plain)
			}
		case "lowres":
			if r.recto > r.plain {
				t.Errorf("lowres: recto CER %.4f is worse than the plain engine's %.4f", r.recto, r.plain)
			}
		case "blank":
			if r.rectoChars > r.plainChars {
				t.Errorf("blank: recto produced %d characters, the plain engine %d", r.rectoChars, r.plainChars)
			}
		}
	}
}

// BenchmarkCompareA4 is the full-size side-by-side comparison: A4 pages at
// 300 dpi holding the paragraph three times, every synth preset the test
// uses, recto against the plain engine. It logs the table and reports each
// CER as a metric; run it with -benchtime 1x.
func BenchmarkCompareA4(b *testing.B) {
	e := engineOrSkip(b, Config{})
	text := strings.Repeat(comparePara+"\n\n", 3)
	kinds := []string{"clean", "skewed", "noisy", "uneven", "lowres", "blank"}
	var rows []sideBySide
	for b.Loop() {
		rows = compareKinds(b, e, synth.Layout{}, kinds, text)
	}
	b.Logf("side by side, A4 at 300 dpi:\n%s", table(rows))
	for _, r := range rows {
		if r.kind == "blank" {
			b.ReportMetric(float64(r.rectoChars), "blank-chars-recto")
			b.ReportMetric(float64(r.plainChars), "blank-chars-plain")
			continue
		}
		b.ReportMetric(r.recto*100, r.kind+"-CER%-recto")
		b.ReportMetric(r.plain*100, r.kind+"-CER%-plain")
	}
}
