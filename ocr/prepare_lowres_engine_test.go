package ocr_test

import (
	"context"
	"errors"
	"fmt"
	"image"
	"os"
	"strings"
	"testing"

	"github.com/disintegration/imaging"

	"recto/ocr"
	"recto/ocr/synth"
	"recto/ocr/tesseract"
	"recto/quality"
)

// lowresPara is fictional text written for these measurements.
const lowresPara = `The harbour board of Saltmarsh met on the first Tuesday of March to hear the report of the
river warden. Three barges had run aground near the old mill, and the ferry from Quayside to Eastwick
was delayed for two weeks by ice. The clerk read the accounts: four hundred and twelve pounds were spent
on dredging, ninety on lamps for the north pier, and seven on a new bell for the customs house.`

// TestLowResolutionTreatments is a measurement, not a check: it renders
// low-resolution pages with ocr/synth (its "lowres" kind: 300 dpi type
// reduced by area averaging after a slight blur) at several resolutions,
// page sizes and seeds, and logs the CER (quality.Compare) of the engine
// (recto/ocr/tesseract, one thread) after each treatment of the page. It
// runs only when RECTO_PREP_ENGINE=1, because it takes several minutes.
//
//	RECTO_PREP_ENGINE=1 go test ./ocr -run LowResolutionTreatments -v -timeout 30m
func TestLowResolutionTreatments(t *testing.T) {
	if os.Getenv("RECTO_PREP_ENGINE") != "1" {
		t.Skip("set RECTO_PREP_ENGINE=1 to run the low-resolution measurement")
	}
	e, err := tesseract.New(tesseract.Config{})
	if errors.Is(err, ocr.ErrEngineUnavailable) || err != nil {
		t.Skipf("engine not usable here: %v", err)
	}
	defer e.Close()

	type page struct {
		name   string
		layout synth.Layout
		text   string
		dpi    float64
		seed   uint64
		light  float64
		kind   string // another synth preset combined with the low resolution
	}
	a4 := synth.Layout{}
	small := synth.Layout{WidthMM: 150, HeightMM: 62, MarginMM: 8}
	a4text := strings.Repeat(lowresPara+"\n\n", 3)
	var pages []page
	for _, dpi := range []float64{100, 120, 150, 200} {
		pages = append(pages, page{fmt.Sprintf("A4 %g dpi s7", dpi), a4, a4text, dpi, 7, 0, ""})
	}
	pages = append(pages, page{"A4 120 dpi s3", a4, a4text, 120, 3, 0, ""})
	for _, dpi := range []float64{100, 120, 150} {
		for _, seed := range []uint64{3, 7, 11} {
			pages = append(pages, page{fmt.Sprintf("small %g dpi s%d", dpi, seed), small, lowresPara, dpi, seed, 0, ""})
		}
	}
	pages = append(pages, page{"small 120 dpi uneven s7", small, lowresPara, 120, 7, 0.8, ""})
	pages = append(pages, page{"A4 120 dpi uneven s7", a4, a4text, 120, 7, 0.8, ""})
	for _, k := range []string{"skewed", "noisy", "faded", "worn", "bleeding", "blank"} {
		pages = append(pages, page{"small 120 dpi " + k + " s7", small, lowresPara, 120, 7, 0, k})
	}
	for _, k := range []string{"noisy", "worn"} {
		for _, seed := range []uint64{3, 11} {
			pages = append(pages, page{fmt.Sprintf("small 120 dpi %s s%d", k, seed), small, lowresPara, 120, seed, 0, k})
		}
		pages = append(pages, page{"small 150 dpi " + k + " s7", small, lowresPara, 150, 7, 0, k})
	}
	// For comparison: worn type at full resolution.
	for _, seed := range []uint64{3, 7, 11} {
		pages = append(pages, page{fmt.Sprintf("small 300 dpi worn s%d", seed), small, lowresPara, 300, seed, 0, "worn"})
	}
	if f := os.Getenv("RECTO_LOWRES_ONLY"); f != "" {
		var keep []page
		for _, p := range pages {
			for _, part := range strings.Split(f, ",") {
				if strings.Contains(p.name, part) {
					keep = append(keep, p)
					break
				}
			}
		}
		pages = keep
	}

	type treatment struct {
		name string
		run  func(p *synth.Page) (string, error)
	}
	process := func(img image.Image, dpi float64, o ocr.Options) (string, error) {
		rec, _, err := ocr.Process(context.Background(), e, img, dpi, o)
		if err != nil {
			return "", err
		}
		return rec.Text(), nil
	}
	upscale := func(f imaging.ResampleFilter, o ocr.Options) func(p *synth.Page) (string, error) {
		return func(p *synth.Page) (string, error) {
			b := p.Image.Bounds()
			w := int(float64(b.Dx())*300/p.DPI + 0.5)
			h := int(float64(b.Dy())*300/p.DPI + 0.5)
			return process(imaging.Resize(p.Image, w, h, f), 300, o)
		}
	}
	treatments := []treatment{
		{"plain", func(p *synth.Page) (string, error) { return process(p.Image, p.DPI, ocr.Options{NoPrepare: true}) }},
		{"auto", func(p *synth.Page) (string, error) { return process(p.Image, p.DPI, ocr.Options{}) }},
		{"auto-300", func(p *synth.Page) (string, error) {
			// automatic preparation as if the page were at 300 dpi: not enlarged
			return process(p.Image, p.DPI, ocr.Options{Prep: ocr.PrepOptions{DPI: 300}})
		}},
		{"otsu", func(p *synth.Page) (string, error) {
			return process(p.Image, p.DPI, ocr.Options{Prep: ocr.PrepOptions{Binarize: "otsu"}})
		}},
		{"sauvola", func(p *synth.Page) (string, error) {
			return process(p.Image, p.DPI, ocr.Options{Prep: ocr.PrepOptions{Binarize: "sauvola"}})
		}},
		{"grey", func(p *synth.Page) (string, error) {
			return process(p.Image, p.DPI, ocr.Options{Prep: ocr.PrepOptions{Binarize: "none"}})
		}},
		{"up-lin+otsu", upscale(imaging.Linear, ocr.Options{Prep: ocr.PrepOptions{Binarize: "otsu"}})},
		{"up-cub+otsu", upscale(imaging.CatmullRom, ocr.Options{Prep: ocr.PrepOptions{Binarize: "otsu"}})},
		{"up-cub+auto", upscale(imaging.CatmullRom, ocr.Options{})},
		{"up-cub+grey", upscale(imaging.CatmullRom, ocr.Options{Prep: ocr.PrepOptions{Binarize: "none"}})},
	}
	if f := os.Getenv("RECTO_LOWRES_TREAT"); f != "" {
		var keep []treatment
		for _, tr := range treatments {
			if strings.Contains(","+f+",", ","+tr.name+",") {
				keep = append(keep, tr)
			}
		}
		treatments = keep
	}

	var b strings.Builder
	fmt.Fprintf(&b, "| page |")
	for _, tr := range treatments {
		fmt.Fprintf(&b, " %s |", tr.name)
	}
	b.WriteString("\n")
	for _, pg := range pages {
		d := synth.Degradation{Scale: pg.dpi / 300, Blur: 0.8, Light: pg.light, Seed: pg.seed}
		text := pg.text
		if pg.kind != "" {
			k, _ := synth.KindByName(pg.kind)
			if k.Blank {
				text = ""
			}
			blur := d.Blur
			d = k.D
			d.Scale, d.Blur, d.Seed = pg.dpi/300, max(blur, k.D.Blur), pg.seed
		}
		clean, rest, err := synth.Render(text, pg.layout)
		if err != nil || rest != "" {
			t.Fatalf("%s: render: %v, left over %q", pg.name, err, rest)
		}
		p := synth.Degrade(clean, d)
		fmt.Fprintf(&b, "| %s (%d×%d) |", pg.name, p.Image.Rect.Dx(), p.Image.Rect.Dy())
		for _, tr := range treatments {
			text, err := tr.run(p)
			if err != nil {
				t.Fatalf("%s, %s: %v", pg.name, tr.name, err)
			}
			if p.Truth == "" {
				fmt.Fprintf(&b, " %d chars |", len([]rune(strings.TrimSpace(text))))
				continue
			}
			cer, _ := quality.Compare(p.Truth, text, quality.NormOptions{}).CER()
			fmt.Fprintf(&b, " %.4f |", cer)
		}
		b.WriteString("\n")
		t.Logf("%s done", pg.name)
	}
	t.Logf("CER per treatment:\n%s", b.String())
}

// TestLowResolutionNotWorse is the side-by-side check on small
// low-resolution pages: ocr/synth's "lowres" degradation at 100 and 120
// dpi (150×62 mm, one paragraph), recognised by Tesseract (one thread)
// after automatic preparation and as the plain greyscale page. Preparation
// must never read worse than the plain engine (CER by quality.Compare).
// Before low-resolution pages were enlarged, the 100 dpi page lost a
// character to Otsu's threshold (CER 0.0025 against 0). It skips when the
// engine is unavailable.
func TestLowResolutionNotWorse(t *testing.T) {
	e, clean := smallPageEngine(t)
	dpis := []float64{100, 120}
	if testing.Short() {
		dpis = dpis[:1]
	}
	for _, dpi := range dpis {
		p := synth.Degrade(clean, synth.Degradation{Scale: dpi / 300, Blur: 0.8, Seed: 7})
		notWorse(t, e, p, fmt.Sprintf("%g dpi", dpi))
	}
}

// smallPageEngine returns a Tesseract engine (closed when the test ends) and
// the clean small test page (lowresPara on 150×62 mm at 300 dpi); it skips
// the test when the engine is unavailable.
func smallPageEngine(t *testing.T) (ocr.Engine, *synth.Page) {
	t.Helper()
	e, err := tesseract.New(tesseract.Config{})
	if err != nil {
		t.Skipf("engine check skipped: %v", err)
	}
	t.Cleanup(func() { e.Close() })
	clean, rest, err := synth.Render(lowresPara, synth.Layout{WidthMM: 150, HeightMM: 62, MarginMM: 8})
	if err != nil || rest != "" {
		t.Fatalf("render: %v, left over %q", err, rest)
	}
	return e, clean
}

// notWorse recognises page p after automatic preparation and as the plain
// greyscale page, and fails the test when preparation reads it worse (CER
// by quality.Compare against p's truth).
func notWorse(t *testing.T, e ocr.Engine, p *synth.Page, label string) {
	t.Helper()
	var cer [2]float64
	for i, plain := range []bool{false, true} {
		rec, _, err := ocr.Process(context.Background(), e, p.Image, p.DPI, ocr.Options{NoPrepare: plain})
		if err != nil {
			t.Fatal(err)
		}
		cer[i], _ = quality.Compare(p.Truth, rec.Text(), quality.NormOptions{}).CER()
	}
	t.Logf("%s: recto CER %.4f, plain engine %.4f", label, cer[0], cer[1])
	if cer[0] > cer[1] {
		t.Errorf("%s: recto CER %.4f is worse than the plain engine's %.4f", label, cer[0], cer[1])
	}
}
