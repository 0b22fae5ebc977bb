package ocr

import (
	"bytes"
	"context"
	"fmt"
	"image"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
	"unicode"

	"github.com/disintegration/imaging"

	"recto/ocr/synth"
)

// TestEngineComparison is a measurement, not a check: it runs the
// Tesseract command on drawn pages of known text — as given, after plain
// Otsu, and after Prepare — and logs the character error rate of each. It
// runs only when RECTO_PREP_ENGINE=1 and the tesseract command is
// installed, because it takes about a minute. The engine helper's batch
// comparison is the authoritative one; this one guides the step decisions.
//
//	RECTO_PREP_ENGINE=1 go test ./ocr -run EngineComparison -v
func TestEngineComparison(t *testing.T) {
	if os.Getenv("RECTO_PREP_ENGINE") != "1" {
		t.Skip("set RECTO_PREP_ENGINE=1 to run the engine comparison")
	}
	if _, err := exec.LookPath("tesseract"); err != nil {
		t.Skip("tesseract command not installed")
	}
	const w, h, dpi = 2480, 1754, 300 // top half of an A4 page: one paragraph
	clean := drawPage(t, w, h, dpi, pageText, 235, 30)
	low := drawPage(t, w/2, h/2, dpi/2, pageText, 235, 30)
	noisy := toGray(clean)
	addNoise(noisy, 40, 3)
	veryNoisy := toGray(clean)
	addNoise(veryNoisy, 70, 3)
	mild := toGray(clean)
	addNoise(mild, 10, 4)
	uneven := toGray(clean)
	unevenLight(uneven, 0.3)
	faint := drawPage(t, w, h, dpi, pageText, 200, 150)
	dusty := toGray(clean)
	addSpeckle(dusty, 0.02, 5)
	dir := t.TempDir()
	for _, pg := range []struct {
		name string
		img  *image.Gray
	}{
		{"clean", clean},
		{"150 dpi", low},
		{"skewed 6°", skewed(clean, 6)},
		{"skewed -11°", skewed(clean, -11)},
		{"mild noise σ10", mild},
		{"noisy σ40", noisy},
		{"very noisy σ70", veryNoisy},
		{"dust 2%", dusty},
		{"uneven light", uneven},
		{"faint", faint},
	} {
		raw := cer(t, tesseract(t, dir, pg.img), pageText)
		line := fmt.Sprintf("%-15s engine alone %6.2f%%", pg.name, 100*raw)
		for _, v := range []struct {
			name string
			o    PrepOptions
		}{
			{"plain Otsu", plain},
			{"auto", PrepOptions{}},
			{"auto, no denoise", PrepOptions{Denoise: Off}},
			{"auto, no clean-up", PrepOptions{Cleanup: Off}},
		} {
			p := mustPrepare(t, pg.img, v.o)
			line += fmt.Sprintf(" | %s %6.2f%%", v.name, 100*cer(t, tesseract(t, dir, p.Image), pageText))
		}
		t.Log(line)
	}
}

// tesseract recognises g with the tesseract command (one thread, page
// segmentation 3) and returns the text; after 90 seconds it gives up and
// returns "".
func tesseract(tb testing.TB, dir string, g *image.Gray) string {
	tb.Helper()
	path := filepath.Join(dir, "page.pgm")
	var buf bytes.Buffer
	fmt.Fprintf(&buf, "P5\n%d %d\n255\n", g.Rect.Dx(), g.Rect.Dy())
	for y := 0; y < g.Rect.Dy(); y++ {
		buf.Write(g.Pix[y*g.Stride : y*g.Stride+g.Rect.Dx()])
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		tb.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 90*time.Second)
	defer cancel()
	cmd := exec.CommandContext(ctx, "tesseract", path, "stdout", "--psm", "3", "-l", "eng")
	cmd.Env = append(os.Environ(), "OMP_THREAD_LIMIT=1")
	out, err := cmd.Output()
	if ctx.Err() != nil {
		return "" // gave up: counted as all wrong
	}
	if err != nil {
		tb.Fatalf("tesseract: %v", err)
	}
	return string(out)
}

// cer is the character error rate: Levenshtein distance over runes
// between hypothesis and reference, whitespace runs collapsed to one space,
// divided by the reference length (common practice).
func cer(tb testing.TB, hyp, ref string) float64 {
	norm := func(s string) []rune { return []rune(strings.Join(strings.FieldsFunc(s, unicode.IsSpace), " ")) }
	a, b := norm(hyp), norm(ref)
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
	return float64(prev[len(b)]) / float64(max(1, len(b)))
}

// TestEngineSynthKinds is the same measurement on ocr/synth's named
// degradations (120 × 100 mm pages at 300 dpi, Go Regular 11 pt), with one
// more variant for the low-resolution page: the page enlarged to 300 dpi
// (bilinear, imaging.Resize) before preparation, to see whether upscaling
// would earn a place.
//
//	RECTO_PREP_ENGINE=1 go test ./ocr -run EngineSynthKinds -v
func TestEngineSynthKinds(t *testing.T) {
	if os.Getenv("RECTO_PREP_ENGINE") != "1" {
		t.Skip("set RECTO_PREP_ENGINE=1 to run the engine comparison")
	}
	if _, err := exec.LookPath("tesseract"); err != nil {
		t.Skip("tesseract command not installed")
	}
	dir := t.TempDir()
	for _, k := range synth.Kinds() {
		if k.Blank {
			continue
		}
		page, _, err := synth.Render(pageText, synth.Layout{WidthMM: 120, HeightMM: 100, MarginMM: 12})
		if err != nil {
			t.Fatal(err)
		}
		d := k.D
		d.Seed = 3
		page = synth.Degrade(page, d)
		truth := page.Truth
		raw := cer(t, tesseract(t, dir, page.Image), truth)
		p := mustPrepare(t, page.Image, PrepOptions{})
		auto := cer(t, tesseract(t, dir, p.Image), truth)
		base := mustPrepare(t, page.Image, plain)
		line := fmt.Sprintf("%-9s %3.0f dpi: engine alone %6.2f%% | plain Otsu %6.2f%% | auto %6.2f%%",
			k.Name, page.DPI, 100*raw, 100*cer(t, tesseract(t, dir, base.Image), truth), 100*auto)
		if page.DPI < 200 {
			f := 300 / page.DPI
			b := page.Image.Bounds()
			big := toGray(imaging.Resize(page.Image, int(float64(b.Dx())*f), int(float64(b.Dy())*f), imaging.Linear))
			q := mustPrepare(t, big, PrepOptions{})
			line += fmt.Sprintf(" | upscaled, auto %6.2f%%", 100*cer(t, tesseract(t, dir, q.Image), truth))
		}
		t.Log(line)
	}
}
