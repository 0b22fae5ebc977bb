package ocr_test

import (
	"image"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/synth"
)

// TestSynthKinds prepares a page of each of ocr/synth's named degradations
// (rendered and spoilt by the synth package, independently of this one) and
// checks what the automatic mode decided for each.
func TestSynthKinds(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
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
		"clean":    {method: "none"},
		"lowres":   {method: "none"},
		"skewed":   {method: "none", deskew: true, skew: 3.5},
		"noisy":    {method: "otsu", denoise: true},
		"uneven":   {method: "sauvola"},
		"blank":    {blank: true},
		"worn":     {method: "none"},
		"faded":    {method: "none"},
		"bleeding": {method: "none"},
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

// TestGreyCleanup checks the clean-up of a page handed over in grey: on a
// dusty page (ocr/synth's salt and pepper on 2 % of the pixels) clean-up
// whitens the specks in the grey page, and on worn type (synth's "worn")
// the few fragments of speckle size are kept, as whitening them was
// measured to cost characters (docs/dev-prep.md).
func TestGreyCleanup(t *testing.T) {
	page, _, err := synth.Render("The ferry from Quayside ran twice a day.", synth.Layout{WidthMM: 120, HeightMM: 30, MarginMM: 8})
	if err != nil {
		t.Fatal(err)
	}
	worn, _ := synth.KindByName("worn")
	for _, tc := range []struct {
		name    string
		d       synth.Degradation
		whitens bool
	}{
		{"dust", synth.Degradation{SaltPepper: 0.02, Seed: 3}, true},
		{"worn", worn.D, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := tc.d
			d.Seed = 3
			p := synth.Degrade(page, d)
			prep, err := ocr.Prepare(p.Image, ocr.PrepOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if prep.Binarization != "none" || prep.Threshold != 0 {
				t.Fatalf("binarisation %q, threshold %d; want none, 0", prep.Binarization, prep.Threshold)
			}
			// Pepper is pure black on paper; count the dark pixels
			// with no dark 8-neighbour before and after.
			before, after := isolatedDark(p.Image), isolatedDark(prep.Image)
			var detail string
			for _, s := range prep.Steps {
				if s.Name == "cleanup" {
					detail = s.Detail
				}
			}
			t.Logf("isolated dark pixels %d before, %d after; %s", before, after, detail)
			grey := false
			for _, v := range prep.Image.Pix {
				if v != 0 && v != 255 {
					grey = true
					break
				}
			}
			if !grey {
				t.Errorf("image is 0/255 only; want the grey page")
			}
			if tc.whitens && (before < 100 || after > before/10) {
				t.Errorf("dust: %d isolated dark pixels before, %d after; want most whitened", before, after)
			}
			if !tc.whitens && !strings.Contains(detail, "kept") {
				t.Errorf("worn type: clean-up %q; want the specks kept", detail)
			}
		})
	}
}

// isolatedDark counts pixels below 100 whose 8 neighbours are all at least 100.
func isolatedDark(g *image.Gray) int {
	n := 0
	w, h := g.Rect.Dx(), g.Rect.Dy()
	for y := 1; y < h-1; y++ {
		for x := 1; x < w-1; x++ {
			if g.Pix[y*g.Stride+x] >= 100 {
				continue
			}
			alone := true
			for dy := -1; dy <= 1 && alone; dy++ {
				for dx := -1; dx <= 1; dx++ {
					if (dx != 0 || dy != 0) && g.Pix[(y+dy)*g.Stride+x+dx] < 100 {
						alone = false
						break
					}
				}
			}
			if alone {
				n++
			}
		}
	}
	return n
}
