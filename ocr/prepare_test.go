package ocr

import (
	"image"
	"strings"
	"testing"
)

// inkError compares a binarised page with the truth (both 0 = ink) and
// returns the wrong pixels as a fraction of the truth's ink pixels. A pixel
// is wrong when no truth pixel within one pixel of it has its value: a
// stroke edge moved by one pixel (which the engine does not notice) is not
// counted, a speck, a hole or a lost stroke is.
func inkError(tb testing.TB, got, truth *image.Gray) float64 {
	tb.Helper()
	if got.Rect.Size() != truth.Rect.Size() {
		tb.Fatalf("sizes differ: %v and %v", got.Rect, truth.Rect)
	}
	w, h := truth.Rect.Dx(), truth.Rect.Dy()
	var diff, ink int
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			a, b := got.Pix[y*got.Stride+x] == 0, truth.Pix[y*truth.Stride+x] == 0
			if b {
				ink++
			}
			if a == b {
				continue
			}
			near := false
			for yy := max(0, y-1); yy < min(h, y+2) && !near; yy++ {
				for xx := max(0, x-1); xx < min(w, x+2); xx++ {
					if (truth.Pix[yy*truth.Stride+xx] == 0) == a {
						near = true
						break
					}
				}
			}
			if !near {
				diff++
			}
		}
	}
	return float64(diff) / float64(max(ink, 1))
}

func step(p *Prepared, name string) Step {
	for _, s := range p.Steps {
		if s.Name == name {
			return s
		}
	}
	return Step{}
}

func mustPrepare(tb testing.TB, img image.Image, o PrepOptions) *Prepared {
	tb.Helper()
	p, err := Prepare(img, o)
	if err != nil {
		tb.Fatal(err)
	}
	return p
}

// plain is the baseline every step is measured against: greyscale and
// Otsu's threshold, nothing else.
var plain = PrepOptions{Denoise: Off, Deskew: Off, Cleanup: Off, Binarize: "otsu"}

// TestStepsEarnTheirPlace prepares degraded versions of a drawn page whose
// true ink is known (the clean drawing, thresholded halfway between ink and
// paper) and checks, for each kind of page, what the automatic mode decided
// and that its result is no worse than the plain greyscale-plus-Otsu
// baseline — and clearly better where a step is meant to help.
func TestStepsEarnTheirPlace(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
	const w, h, dpi = 1240, 1754, 300 // the top half of an A4 page at 300 dpi
	clean := drawPage(t, w, h, dpi, pageText, 235, 30)
	truth := toGray(clean)
	threshold(truth, truth, 132)
	low := drawPage(t, w/2, h/2, dpi/2, pageText, 235, 30) // 150 dpi
	lowTruth := toGray(low)
	threshold(lowTruth, lowTruth, 132)

	noisy := toGray(clean)
	addNoise(noisy, 40, 3)
	mildNoise := toGray(clean)
	addNoise(mildNoise, 12, 4)
	uneven := toGray(clean)
	unevenLight(uneven, 0.35)

	for _, tc := range []struct {
		name     string
		img      *image.Gray
		truth    *image.Gray
		denoise  bool
		method   string
		mustGain float64 // auto error must be below this fraction of the baseline's; 0: only no worse
	}{
		{"clean", clean, truth, false, "none", 0},
		{"low resolution", low, lowTruth, false, "none", 0},
		{"mild noise", mildNoise, truth, true, "otsu", 0},
		{"noisy", noisy, truth, true, "otsu", 0.5},
		{"uneven light", uneven, truth, false, "sauvola", 0.5},
	} {
		t.Run(tc.name, func(t *testing.T) {
			auto := mustPrepare(t, tc.img, PrepOptions{Deskew: Off})
			base := mustPrepare(t, tc.img, plain)
			got := auto.Image
			if auto.Binarization == "none" {
				// Handed over in grey: the engine thresholds it with
				// Otsu's method itself (Tesseract 5's default; Otsu 1979).
				got = image.NewGray(auto.Image.Rect)
				threshold(got, auto.Image, otsu(histogram(auto.Image)))
			}
			ea, eb := inkError(t, got, tc.truth), inkError(t, base.Image, tc.truth)
			t.Logf("noise %.1f, background %.0f: auto (%s, denoise %v) error %.4f, plain Otsu %.4f",
				auto.Noise, auto.Background, auto.Binarization, step(auto, "denoise").Applied, ea, eb)
			if got := step(auto, "denoise").Applied; got != tc.denoise {
				t.Errorf("denoise applied %v, want %v (%s)", got, tc.denoise, step(auto, "denoise").Detail)
			}
			if auto.Binarization != tc.method {
				t.Errorf("binarisation %s, want %s (%s)", auto.Binarization, tc.method, step(auto, "binarize").Detail)
			}
			// No worse: allow 1% of the ink for resampling at stroke edges.
			if ea > eb+0.01 {
				t.Errorf("auto error %.4f is worse than plain Otsu %.4f", ea, eb)
			}
			if tc.mustGain > 0 && ea > tc.mustGain*eb {
				t.Errorf("auto error %.4f is not below %.0f%% of plain Otsu's %.4f", ea, 100*tc.mustGain, eb)
			}
			if auto.Blank {
				t.Errorf("page with text called blank")
			}
		})
	}
}

// TestBlank checks blank-page detection on empty pages (clean, noisy,
// unevenly lit, with dust) and that a page with a single short line is not
// blank.
func TestBlank(t *testing.T) {
	const w, h, dpi = 1240, 1754, 300
	empty := func() *image.Gray { return drawPage(t, w, h, dpi, "", 235, 30) }
	noisy := empty()
	addNoise(noisy, 40, 5)
	uneven := empty()
	unevenLight(uneven, 0.35)
	dusty := empty()
	for _, p := range []image.Point{{100, 200}, {700, 900}, {1000, 1500}, {400, 1200}} {
		for y := p.Y; y < p.Y+2; y++ {
			for x := p.X; x < p.X+2; x++ {
				dusty.Pix[y*dusty.Stride+x] = 40
			}
		}
	}
	oneLine := drawPage(t, w, h, dpi, "Folio 12", 235, 30)
	for _, tc := range []struct {
		name  string
		img   *image.Gray
		blank bool
	}{
		{"empty", empty(), true},
		{"noisy empty", noisy, true},
		{"unevenly lit empty", uneven, true},
		{"dusty empty", dusty, true},
		{"one short line", oneLine, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := mustPrepare(t, tc.img, PrepOptions{})
			if p.Blank != tc.blank {
				t.Errorf("Blank = %v, want %v (%s)", p.Blank, tc.blank, step(p, "blank").Detail)
			}
			if p.Blank {
				for _, v := range p.Image.Pix {
					if v != 255 {
						t.Fatal("blank page's image is not all white")
					}
				}
			}
		})
	}
}

// TestCleanup checks speckle and border removal on a drawn page: specks
// and a dark scanner edge are removed, the text is untouched.
func TestCleanup(t *testing.T) {
	const w, h, dpi = 1240, 1754, 300
	page := drawPage(t, w, h, dpi, pageText, 235, 30)
	truth := toGray(page)
	threshold(truth, truth, 132)
	dirty := toGray(page)
	for i := 0; i < 300; i++ { // single-pixel and 2×2 specks on the paper
		x, y := 20+(i*397)%(w-40), 20+(i*211)%(h-40)
		if truth.Pix[y*truth.Stride+x] == 0 {
			continue
		}
		dirty.Pix[y*dirty.Stride+x] = 20
		if i%2 == 0 {
			dirty.Pix[y*dirty.Stride+x+1] = 20
			dirty.Pix[(y+1)*dirty.Stride+x] = 20
			dirty.Pix[(y+1)*dirty.Stride+x+1] = 20
		}
	}
	for y := 0; y < h; y++ { // a dark strip along the left edge
		for x := 0; x < 30; x++ {
			dirty.Pix[y*dirty.Stride+x] = 15
		}
	}
	p := mustPrepare(t, dirty, PrepOptions{Deskew: Off, Binarize: "otsu"})
	without := mustPrepare(t, dirty, PrepOptions{Deskew: Off, Binarize: "otsu", Cleanup: Off})
	e, e0 := inkError(t, p.Image, truth), inkError(t, without.Image, truth)
	t.Logf("%s; error %.4f with clean-up, %.4f without", step(p, "cleanup").Detail, e, e0)
	if e > 0.001 {
		t.Errorf("error after clean-up %.4f, want below 0.001", e)
	}
	// The clean page loses nothing to clean-up.
	q := mustPrepare(t, page, PrepOptions{Deskew: Off, Binarize: "otsu"})
	r := mustPrepare(t, page, PrepOptions{Deskew: Off, Binarize: "otsu", Cleanup: Off})
	if e := inkError(t, q.Image, r.Image); e != 0 {
		t.Errorf("clean-up changed a clean page: error %.5f (%s)", e, step(q, "cleanup").Detail)
	}
}

// TestComponentsMatchNaive checks run-based labelling against a flood fill
// on a random binary image.
func TestComponentsMatchNaive(t *testing.T) {
	const w, h = 97, 61
	b := image.NewGray(image.Rect(0, 0, w, h))
	seed := uint32(12345)
	for i := range b.Pix {
		seed = seed*1664525 + 1013904223
		if seed>>28 < 6 {
			b.Pix[i] = 0
		} else {
			b.Pix[i] = 255
		}
	}
	runs := components(b, nil)
	label := make([]int32, w*h)
	for i := range label {
		label[i] = -1
	}
	for _, r := range runs {
		for x := r.x0; x < r.x1; x++ {
			label[int(r.y)*w+int(x)] = r.parent
		}
	}
	// Flood fill with 8-connectivity; every component must carry one label
	// and no label may span two components.
	seen := make([]bool, w*h)
	owner := map[int32]int{}
	comp := 0
	for i := range seen {
		if b.Pix[i] != 0 || seen[i] {
			continue
		}
		comp++
		stack := []int{i}
		seen[i] = true
		want := label[i]
		for len(stack) > 0 {
			j := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			if label[j] != want {
				t.Fatalf("component %d has labels %d and %d", comp, want, label[j])
			}
			x, y := j%w, j/w
			for dy := -1; dy <= 1; dy++ {
				for dx := -1; dx <= 1; dx++ {
					xx, yy := x+dx, y+dy
					if xx < 0 || yy < 0 || xx >= w || yy >= h {
						continue
					}
					k := yy*w + xx
					if b.Pix[k] == 0 && !seen[k] {
						seen[k] = true
						stack = append(stack, k)
					}
				}
			}
		}
		if c, ok := owner[want]; ok {
			t.Fatalf("label %d spans components %d and %d", want, c, comp)
		}
		owner[want] = comp
	}
}

func TestPrepareOptions(t *testing.T) {
	g := drawPage(t, 300, 200, 72, "Folio", 235, 30)
	if _, err := Prepare(g, PrepOptions{Binarize: "niblack"}); err == nil || !strings.Contains(err.Error(), "niblack") {
		t.Errorf("unknown method: %v", err)
	}
	if _, err := Prepare(g, PrepOptions{Denoise: Mode(7)}); err == nil {
		t.Error("invalid mode accepted")
	}
	if _, err := Prepare(image.NewGray(image.Rect(0, 0, 0, 0)), PrepOptions{}); err != ErrNoPixels {
		t.Errorf("empty image: %v", err)
	}
	p := mustPrepare(t, g, PrepOptions{Binarize: "none"})
	if p.Binarization != "none" || p.Threshold != 0 {
		t.Errorf("none: %s %d", p.Binarization, p.Threshold)
	}
	names := []string{}
	for _, s := range p.Steps {
		names = append(names, s.Name)
	}
	if got := strings.Join(names, ","); got != "gray,noise,denoise,resolution,measure,scale,deskew,binarize,cleanup,blank" {
		t.Errorf("steps %s", got)
	}
	// Odd sizes and tiny images go through every step.
	for _, r := range []image.Rectangle{image.Rect(0, 0, 1, 1), image.Rect(0, 0, 3, 2), image.Rect(5, 7, 40, 31)} {
		img := image.NewGray(r)
		if _, err := Prepare(img, PrepOptions{Deskew: On, Denoise: On, Cleanup: On}); err != nil {
			t.Errorf("%v: %v", r, err)
		}
	}
	// src is not modified.
	before := append([]uint8(nil), g.Pix...)
	mustPrepare(t, g, PrepOptions{Denoise: On})
	for i := range before {
		if before[i] != g.Pix[i] {
			t.Fatal("Prepare modified its input")
		}
	}
}
