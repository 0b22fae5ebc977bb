package ocr_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/ocr/synth"
	"recto/ocr/tesseract"
	"recto/quality"
)

// untaggedPNG writes img to dir/name.png without a resolution tag (no
// pHYs chunk), as a file whose tag was stripped, and returns its path.
func untaggedPNG(t *testing.T, dir, name string, path string) string {
	t.Helper()
	d, err := ocr.DecodeFile(path, ocr.DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, name+".png")
	f, err := os.Create(out)
	if err != nil {
		t.Fatal(err)
	}
	if err := synth.WritePNG(f, d.Image, 0); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
	return out
}

// TestUntaggedRealPagesNotWorse reads real scans at 75-150 dpi of
// leptonlib's prog/ folder, their resolution tags stripped, three ways:
// recto (resolution estimated from the text), recto as it was before the
// estimate (300 dpi assumed for an untagged page: --dpi 300), and the
// plain tesseract command on the same untagged file (which estimates the
// resolution itself). recto must read at least as many confident words
// as the plain engine, minus 5 % (the real-scans issue's margin), and
// triage must decide none of these pages of print picture or blank.
//
//	go test ./ocr -run UntaggedRealPagesNotWorse -v
func TestUntaggedRealPagesNotWorse(t *testing.T) {
	if testing.Short() {
		t.Skip("reads 14 real pages three times each")
	}
	dir := filepath.Join(ocrtest.RealPages(t), "leptonica")
	e, err := tesseract.New(tesseract.Config{})
	if err != nil {
		t.Skipf("engine not usable here: %v", err)
	}
	defer e.Close()
	tmp := t.TempDir()
	pages := []string{"brev.14.75.jpg", "brev.20.75.jpg", "brev.53.75.jpg", "brev.56.75.jpg", "toc.99.tif",
		"lapide.052.100.jpg", "breviar.38.150.jpg", "lucasta.150.jpg", "amoris.2.150.jpg", "words.15.tif",
		"zanotti-78.jpg", "table.15.tif", "cavalerie.29.jpg", "pedante.079.jpg"}
	var b strings.Builder
	b.WriteString("| page (tag stripped) | estimate dpi | recto | recto, 300 dpi assumed | plain engine | recto's triage |\n|---|---|---|---|---|---|\n")
	for _, name := range pages {
		path := untaggedPNG(t, tmp, strings.TrimSuffix(name, filepath.Ext(name)), filepath.Join(dir, name))
		rec, _, err := ocr.ProcessFile(context.Background(), e, path, ocr.Options{})
		if err != nil {
			t.Fatal(err)
		}
		old, _, err := ocr.ProcessFile(context.Background(), e, path, ocr.Options{DPI: 300})
		if err != nil {
			t.Fatal(err)
		}
		plain := ocr.ConfidentWords(ocrtest.PlainEngineWords(t, path))
		r, o := ocr.ConfidentWords(rec.Words), ocr.ConfidentWords(old.Words)
		// Every page is print: triage must not call it a picture (the
		// real-scans issue, part 5), however badly it was read.
		v := quality.Triage(quality.PageFeatures(rec, nil), nil, quality.Thresholds{})
		fmt.Fprintf(&b, "| %s | %.0f (%s) | %d | %d | %d | %s |\n", name, rec.DPI, rec.DPISource, r, o, plain, v.Decision)
		if v.Decision == quality.DecisionPicture || v.Decision == quality.DecisionBlank {
			t.Errorf("%s: a page of print decided %s: %q", name, v.Decision, v.Reasons)
		}
		if float64(r) < 0.95*float64(plain) {
			t.Errorf("%s: recto read %d confident words, the plain engine %d", name, r, plain)
		}
	}
	t.Logf("confident words (confidence ≥ 0.8, three or more letters):\n%s", b.String())
}

// TestUntaggedLowResolutionNotWorse renders ocr/synth pages at 75-120 dpi
// (A4, three paragraphs of fictional text), writes them without a
// resolution tag and reads them with recto, with recto as before the
// estimate (--dpi 300) and with the plain tesseract command on the same
// file. recto's CER (quality.Compare, default normalisation) must be at
// most half a point above the plain engine's on each page.
func TestUntaggedLowResolutionNotWorse(t *testing.T) {
	if testing.Short() {
		t.Skip("reads eight A4 pages three times each")
	}
	e, err := tesseract.New(tesseract.Config{})
	if err != nil {
		t.Skipf("engine not usable here: %v", err)
	}
	defer e.Close()
	tmp := t.TempDir()
	text := strings.Repeat(lowresPara+"\n\n", 3)
	var b strings.Builder
	b.WriteString("| page (untagged) | estimate dpi | recto CER | recto, 300 dpi assumed | plain engine |\n|---|---|---|---|---|\n")
	for _, c := range []struct {
		kind string
		dpi  float64
	}{{"clean", 100}, {"clean", 75}, {"worn", 100}, {"noisy", 100}, {"faded", 100}, {"bleeding", 100}, {"uneven", 100}, {"worn", 120}} {
		k, ok := synth.KindByName(c.kind)
		if !ok {
			t.Fatalf("no synth kind %q", c.kind)
		}
		clean, rest, err := synth.Render(text, synth.Layout{})
		if err != nil || rest != "" {
			t.Fatalf("render: %v, left over %q", err, rest)
		}
		d := k.D
		d.Scale, d.Blur, d.Seed = c.dpi/300, max(0.8, k.D.Blur), 7
		p := synth.Degrade(clean, d)
		name := fmt.Sprintf("%s-%g", c.kind, c.dpi)
		path := filepath.Join(tmp, name+".png")
		f, err := os.Create(path)
		if err != nil {
			t.Fatal(err)
		}
		if err := synth.WritePNG(f, p.Image, 0); err != nil {
			t.Fatal(err)
		}
		f.Close()
		cer := func(s string) float64 {
			v, _ := quality.Compare(p.Truth, s, quality.NormOptions{}).CER()
			return v
		}
		rec, _, err := ocr.ProcessFile(context.Background(), e, path, ocr.Options{})
		if err != nil {
			t.Fatal(err)
		}
		old, _, err := ocr.ProcessFile(context.Background(), e, path, ocr.Options{DPI: 300})
		if err != nil {
			t.Fatal(err)
		}
		plain := cer(ocrtest.PlainEngine(t, path))
		r, o := cer(rec.Text()), cer(old.Text())
		fmt.Fprintf(&b, "| %s dpi | %.0f (%s) | %.2f %% | %.2f %% | %.2f %% |\n", name, rec.DPI, rec.DPISource, 100*r, 100*o, 100*plain)
		if r > plain+0.005 {
			t.Errorf("%s: recto CER %.4f, more than half a point above the plain engine's %.4f", name, r, plain)
		}
	}
	t.Logf("CER:\n%s", b.String())
}

// TestUntaggedTranscribedPagesNotWorse strips the resolution tags of the
// real scans with exact transcriptions in Tesseract 5.3.0's test data
// (testdata/realpages/SOURCES.md) and reads them with recto (resolution
// estimated from the text) and with the plain tesseract command on the same
// untagged file: recto's CER must be at most half a point above the plain
// engine's (the real-scans issue's margin).
func TestUntaggedTranscribedPagesNotWorse(t *testing.T) {
	if testing.Short() {
		t.Skip("reads four real pages twice or three times")
	}
	dir := filepath.Join(ocrtest.RealPages(t), "tesseract")
	e, err := tesseract.New(tesseract.Config{})
	if err != nil {
		t.Skipf("engine not usable here: %v", err)
	}
	defer e.Close()
	tmp := t.TempDir()
	var b strings.Builder
	b.WriteString("| page (tag stripped) | tag | dpi used | recto CER | plain engine CER |\n|---|---|---|---|---|\n")
	for _, page := range []string{"phototest", "eurotext", "8087_054.3B", "8071_093.3B"} {
		truth, err := os.ReadFile(filepath.Join(dir, page+".txt"))
		if err != nil {
			t.Fatal(err)
		}
		orig := filepath.Join(dir, page+".tif")
		d, err := ocr.DecodeFile(orig, ocr.DecodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		path := untaggedPNG(t, tmp, page, orig)
		rec, _, err := ocr.ProcessFile(context.Background(), e, path, ocr.Options{})
		if err != nil {
			t.Fatal(err)
		}
		cer := func(s string) float64 {
			c, _ := quality.Compare(string(truth), s, quality.NormOptions{}).CER()
			return c
		}
		r, p := cer(rec.Text()), cer(ocrtest.PlainEngine(t, path))
		fmt.Fprintf(&b, "| %s | %.0f | %.0f (%s) | %.2f %% | %.2f %% |\n", page, d.DPI, rec.DPI, rec.DPISource, 100*r, 100*p)
		if r > p+0.005 {
			t.Errorf("%s untagged: recto CER %.4f is more than half a point above the plain engine's %.4f", page, r, p)
		}
	}
	t.Logf("CER:\n%s", b.String())
}
