package ocr_test

import (
	"math"
	"os"
	"strconv"
	"testing"

	"recto/ocr"
	"recto/ocr/synth"
)

// TestSynthKinds prepares a page of each of ocr/synth's named degradations
// (rendered and spoilt by the synth package, independently of this one) and
// checks what the automatic mode decided for each.
func TestSynthKinds(t *testing.T) {
	const text = `The harbour board of Kestrel Point met in the customs house on the
first Monday of March. The clerk reported that the north mole had settled
by a hand's breadth since the autumn gales, that the light on the south
pier had failed twice in January, and that the new crane would be ready
before the herring season. The board asked the engineer for an estimate
of the cost of raising the mole and agreed to buy two spare lamps.`
	layout := synth.Layout{WidthMM: 120, HeightMM: 100, MarginMM: 12}
	type want struct {
		denoise, deskew bool
		method          string
		blank           bool
		skew            float64
	}
	wants := map[string]want{
		"clean":    {method: "otsu"},
		"lowres":   {method: "otsu"},
		"skewed":   {method: "otsu", deskew: true, skew: 3.5},
		"noisy":    {method: "otsu", denoise: true},
		"uneven":   {method: "sauvola"},
		"blank":    {blank: true},
		"worn":     {method: "otsu"},
		"faded":    {method: "otsu"},
		"bleeding": {method: "otsu"},
	}
	seed := uint64(11)
	if v := os.Getenv("RECTO_SYNTH_SEED"); v != "" {
		seed, _ = strconv.ParseUint(v, 10, 64)
	}
	for _, k := range synth.Kinds() {
		w, ok := wants[k.Name]
		if !ok {
			t.Errorf("no expectation for synth kind %q", k.Name)
			continue
		}
		t.Run(k.Name, func(t *testing.T) {
			src := text
			if k.Blank {
				src = ""
			}
			page, _, err := synth.Render(src, layout)
			if err != nil {
				t.Fatal(err)
			}
			d := k.D
			d.Seed = seed
			page = synth.Degrade(page, d)
			p, err := ocr.Prepare(page.Image, ocr.PrepOptions{})
			if err != nil {
				t.Fatal(err)
			}
			applied := map[string]bool{}
			for _, s := range p.Steps {
				applied[s.Name] = s.Applied
			}
			if p.Blank != w.blank {
				t.Errorf("Blank %v, want %v", p.Blank, w.blank)
			}
			if w.blank {
				return
			}
			if applied["denoise"] != w.denoise {
				t.Errorf("denoise %v, want %v (noise %.1f)", applied["denoise"], w.denoise, p.Noise)
			}
			if applied["deskew"] != w.deskew {
				t.Errorf("deskew %v, want %v (skew %.2f)", applied["deskew"], w.deskew, p.Skew)
			}
			if math.Abs(p.Skew-w.skew) > 0.1 {
				t.Errorf("skew %.3f°, want %.1f° ± 0.1°", p.Skew, w.skew)
			}
			if p.Binarization != w.method {
				t.Errorf("binarisation %s, want %s (background variation %.0f)", p.Binarization, w.method, p.Background)
			}
		})
	}
}
