package ocr_test

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"unicode"

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

// confidentWord is the real-scans issue's measure of a reading without a
// transcription: a word read with confidence 0.8 or more that has three or
// more letters.
func confidentWord(text string, conf float64) bool {
	n := 0
	for _, r := range text {
		if unicode.IsLetter(r) {
			n++
		}
	}
	return conf >= ocr.ConfidentWord && n >= 3
}

func confidentWords(ws []ocr.Word) int {
	n := 0
	for _, w := range ws {
		if confidentWord(w.Text, w.Conf) {
			n++
		}
	}
	return n
}

// plainEngineTSV runs the tesseract command as ocrtest.PlainEngine does
// (its defaults, one thread) with its TSV output, and returns its text and
// its number of confident words (TSV word rows, level 5: confidence in
// percent in column 11, the word in column 12; Tesseract's TSV renderer).
func plainEngineTSV(t *testing.T, path string) (string, int) {
	t.Helper()
	bin, err := exec.LookPath("tesseract")
	if err != nil {
		t.Fatal("the tesseract command is missing (Debian: tesseract-ocr): the side-by-side check cannot run")
	}
	cmd := exec.Command(bin, path, "-", "tsv")
	cmd.Env = append(os.Environ(), "OMP_THREAD_LIMIT=1")
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("tesseract %s tsv: %v", path, err)
	}
	n := 0
	for _, line := range strings.Split(string(out), "\n") {
		f := strings.Split(line, "\t")
		if len(f) < 12 || f[0] != "5" {
			continue
		}
		conf, err := strconv.ParseFloat(f[10], 64)
		if err == nil && confidentWord(f[11], conf/100) {
			n++
		}
	}
	return ocrtest.PlainEngine(t, path), n
}

// TestUntaggedRealPagesNotWorse reads real scans at 75-150 dpi of
// leptonlib's prog/ folder, their resolution tags stripped, three ways:
// recto (resolution estimated from the text), recto as it was before the
// estimate (300 dpi assumed for an untagged page: --dpi 300), and the
// plain tesseract command on the same untagged file (which estimates the
// resolution itself). recto must read at least as many confident words
// as the plain engine, minus 5 % (the real-scans issue's margin).
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
	b.WriteString("| page (tag stripped) | estimate dpi | recto | recto, 300 dpi assumed | plain engine |\n|---|---|---|---|---|\n")
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
		_, plain := plainEngineTSV(t, path)
		r, o := confidentWords(rec.Words), confidentWords(old.Words)
		fmt.Fprintf(&b, "| %s | %.0f (%s) | %d | %d | %d |\n", name, rec.DPI, rec.DPISource, r, o, plain)
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
