package ocr_test

import (
	"context"
	"fmt"
	"os"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/synth"
	"recto/ocr/tesseract"
	"recto/quality"
)

// TestPreparationKindsTreatments is a measurement, not a check: on small
// ocr/synth pages (150×62 mm, one paragraph of fictional text) of every
// kind, at 300 dpi and 120 dpi and three seeds, it logs the CER
// (quality.Compare) of the engine (recto/ocr/tesseract, one thread) alone,
// after automatic preparation without the grey hand-over of evenly lit,
// low-noise pages ("auto-otsu", the earlier rule), and after automatic
// preparation as it is ("auto"). It runs only when RECTO_PREP_ENGINE=1.
//
//	RECTO_PREP_ENGINE=1 go test ./ocr -run PreparationKindsTreatments -v -timeout 30m
func TestPreparationKindsTreatments(t *testing.T) {
	if os.Getenv("RECTO_PREP_ENGINE") != "1" {
		t.Skip("set RECTO_PREP_ENGINE=1 to run the measurement by page kind")
	}
	e, err := tesseract.New(tesseract.Config{})
	if err != nil {
		t.Skipf("engine not usable here: %v", err)
	}
	defer e.Close()
	defer func(v bool) { *ocr.GreyWhenClean = v }(*ocr.GreyWhenClean)

	type kind struct {
		name  string
		d     synth.Degradation
		blank bool
	}
	var kinds []kind
	for _, k := range synth.Kinds() {
		if k.Name == "noisy" || k.Name == "lowres" {
			continue // below, with several sigmas and resolutions
		}
		kinds = append(kinds, kind{k.Name, k.D, k.Blank})
	}
	for _, s := range []float64{4, 10, 20, 40, 70} {
		kinds = append(kinds, kind{fmt.Sprintf("noisy σ%g", s), synth.Degradation{Noise: s, Blur: 0.7}, false})
	}
	// The kind as TestLowResolutionTreatments combined it with 300 dpi.
	kinds = append(kinds, kind{"worn blur 0.8", synth.Degradation{Wear: 0.2, Contrast: 0.15, Blur: 0.8}, false})
	for _, f := range []float64{0.001, 0.005, 0.02} {
		kinds = append(kinds, kind{fmt.Sprintf("dust %g", f), synth.Degradation{SaltPepper: f}, false})
	}
	for _, k := range []string{"clean", "worn", "faded", "skewed", "uneven"} {
		kk, _ := synth.KindByName(k)
		d := kk.D
		d.Scale, d.Blur = 0.4, max(0.8, d.Blur)
		kinds = append(kinds, kind{"120 dpi " + k, d, false})
	}
	if f := os.Getenv("RECTO_KINDS_ONLY"); f != "" {
		var keep []kind
		for _, k := range kinds {
			for _, part := range strings.Split(f, ",") {
				if strings.Contains(k.name, part) {
					keep = append(keep, k)
					break
				}
			}
		}
		kinds = keep
	}
	small := synth.Layout{WidthMM: 150, HeightMM: 62, MarginMM: 8}
	run := func(p *synth.Page, o ocr.Options) (string, string) {
		rec, _, err := ocr.Process(context.Background(), e, p.Image, p.DPI, o)
		if err != nil {
			t.Fatal(err)
		}
		if p.Truth == "" {
			return fmt.Sprintf("%d chars", len([]rune(strings.TrimSpace(rec.Text())))), rec.Binarization
		}
		cer, _ := quality.Compare(p.Truth, rec.Text(), quality.NormOptions{}).CER()
		return fmt.Sprintf("%.4f", cer), rec.Binarization
	}
	var b strings.Builder
	b.WriteString("| page | plain | auto-otsu | auto | auto's binarisation |\n| --- | --- | --- | --- | --- |\n")
	for _, k := range kinds {
		text := lowresPara
		if k.blank {
			text = ""
		}
		clean, rest, err := synth.Render(text, small)
		if err != nil || rest != "" {
			t.Fatalf("%s: render: %v, left over %q", k.name, err, rest)
		}
		for _, seed := range []uint64{3, 7, 11} {
			d := k.d
			d.Seed = seed
			p := synth.Degrade(clean, d)
			plain, _ := run(p, ocr.Options{NoPrepare: true})
			*ocr.GreyWhenClean = false
			old, _ := run(p, ocr.Options{})
			*ocr.GreyWhenClean = true
			cur, bin := run(p, ocr.Options{})
			fmt.Fprintf(&b, "| %s s%d | %s | %s | %s | %s |\n", k.name, seed, plain, old, cur, bin)
			t.Logf("%s s%d: plain %s, auto-otsu %s, auto %s (%s)", k.name, seed, plain, old, cur, bin)
		}
	}
	t.Logf("CER by page kind:\n%s", b.String())
}

// TestWornNotWorse is the side-by-side check on worn type at 300 dpi:
// ocr/synth's "worn" degradation with a 0.8-pixel blur (150×62 mm, one
// paragraph), recognised by Tesseract (one thread) after automatic
// preparation and as the plain greyscale page; preparation must not read
// worse (CER by quality.Compare). When auto binarised such pages with Otsu's
// threshold it lost characters: seeds 7 and 11 read at CER 0.0891 and
// 0.0738 against the plain engine's 0.0662 and 0.0534. It skips when the
// engine is unavailable.
func TestWornNotWorse(t *testing.T) {
	e, clean := smallPageEngine(t)
	seeds := []uint64{7, 11}
	if testing.Short() {
		seeds = seeds[:1]
	}
	for _, seed := range seeds {
		p := synth.Degrade(clean, synth.Degradation{Wear: 0.2, Contrast: 0.15, Blur: 0.8, Seed: seed})
		notWorse(t, e, p, fmt.Sprintf("seed %d", seed))
	}
}
