//go:build cgo && !notesseract

package tesseract

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/lexicon"
	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/ocr/synth"
	"recto/quality"
)

// TestRealPages100DPIUntagged: real pages at about 100 dpi whose files
// carry no resolution tag (the real-scans issue, part 3), read by recto
// and by the plain `tesseract` command on the same file.
//
// With a transcription: no such page exists in the fetched data (the
// transcribed Tesseract pages are 200-300 dpi and tagged), so they are made
// from the four real scans of Tesseract 5.3.0's test data: reduced to 100
// dpi by area averaging (ocr/synth's Degrade, Scale) and written as PNG
// without a resolution tag. recto's CER must be at most half a point above
// the plain engine's (the margin).
//
// Without a transcription, as shipped in leptonlib 1.82.0's prog/ folder
// without a tag: harmoniam100-11.png (harmoniam-11.tif, a 300 dpi scan,
// reduced to 755 pixels wide, about 105 dpi, by Leptonica's authors),
// pancrazi.15.jpg (an early printed page, x-height 7 pixels: about 100
// dpi) and contrast-orig-60.jpg (a faint page in 5-pixel type, about 75
// dpi). recto must read at least as many confident words as the plain
// engine less 5 % (the real-page check's rule). The untagged 75 dpi
// breviaries (brev.*.75.jpg) are in TestLeptonicaPagesConfidentWords.
func TestRealPages100DPIUntagged(t *testing.T) {
	if testing.Short() {
		t.Skip("reads seven small real pages with recto and the tesseract command")
	}
	dir := ocrtest.RealPages(t)
	e := engineOrSkip(t, Config{})
	defer e.Close()
	tmp := t.TempDir()
	for _, page := range []string{"phototest", "eurotext", "8087_054.3B", "8071_093.3B"} {
		truth, err := os.ReadFile(filepath.Join(dir, "tesseract", page+".txt"))
		if err != nil {
			t.Fatal(err)
		}
		d, err := ocr.DecodeFile(filepath.Join(dir, "tesseract", page+".tif"), ocr.DecodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		small := synth.Degrade(&synth.Page{Image: grayOf(d.Image), DPI: d.DPI}, synth.Degradation{Scale: 100 / d.DPI})
		path := filepath.Join(tmp, page+"-100dpi.png")
		writeUntagged(t, path, small.Image)
		rec, _, err := ocr.ProcessFile(context.Background(), e, path, ocr.Options{})
		if err != nil {
			t.Fatal(err)
		}
		cer := func(s string) float64 {
			c, _ := quality.Compare(string(truth), s, quality.NormOptions{}).CER()
			return c
		}
		r, p := cer(rec.Text()), cer(ocrtest.PlainEngine(t, path))
		t.Logf("%-12s at 100 dpi, untagged: recto CER %.4f (%.0f dpi from %s, %s)  plain engine %.4f  reading %+v",
			page, r, rec.DPI, rec.DPISource, rec.Binarization, p, rec.Reading)
		if rec.TaggedDPI != 0 {
			t.Errorf("%s: the made page has a tag (%g dpi)", page, rec.TaggedDPI)
		}
		if r > p+0.005 {
			t.Errorf("%s at 100 dpi, untagged: recto CER %.4f is more than half a point above the plain engine's %.4f", page, r, p)
		}
		addRealRow(t, path, realRow{page: page + ".tif at 100 dpi, untagged (made)", recto: 100 * r, plain: 100 * p, cer: true, group: lowRes}, rec)
	}
	for _, page := range []string{"harmoniam100-11.png", "pancrazi.15.jpg", "contrast-orig-60.jpg"} {
		img := filepath.Join(dir, "leptonica", page)
		rec, _, err := ocr.ProcessFile(context.Background(), e, img, ocr.Options{})
		if err != nil {
			t.Fatal(err)
		}
		if rec.TaggedDPI != 0 {
			t.Fatalf("%s: tagged %g dpi; the test wants untagged files", page, rec.TaggedDPI)
		}
		r := ocr.ConfidentWords(rec.Words)
		p := ocr.ConfidentWords(ocrtest.PlainEngineWords(t, img))
		t.Logf("%-22s untagged: recto %d confident words (%.0f dpi from %s, %s)  plain engine %d  reading %+v",
			page, r, rec.DPI, rec.DPISource, rec.Binarization, p, rec.Reading)
		if float64(r) < math.Floor(0.95*float64(p)) {
			t.Errorf("%s: recto read %d confident words, the plain engine %d (at least %d wanted)", page, r, p, int(math.Floor(0.95*float64(p))))
		}
		addRealRow(t, img, realRow{page: page + " (untagged)", recto: float64(r), plain: float64(p), group: lowRes}, rec)
	}
}

// TestTextPicturesRealEngine (the real-scans issue, part 5, with the real
// engine): pages from leptonlib 1.82.0's prog/ folder read by recto as they
// are, triaged with the embedded English lexicon (as recto run does for
// --lang eng).
//
//   - Real pages of print at low resolution or on noisy scans (75 dpi
//     breviaries, noise 3.5-10 grey levels; a 75 dpi table of contents; a
//     faint 75 dpi page, noise 8; a 100 dpi early printed page; all but the
//     table untagged) are never decided picture or blank, and one whose ink
//     has the shape of text but yields few words goes to rescan saying so.
//   - Photographs, paintings and engravings: their ink does not look like
//     text, so triage never calls them a failed reading of text; when the
//     engine reads (almost) nothing in them they are decided picture.
//
// Known gaps, logged here and not checked (see docs/dev-prep.md): the
// ink of two dark 75 dpi breviaries (brev.06.75, brev.36.75) is not
// measured as text-like (3 and 0 lines of letter-sized marks), so triage
// decides them picture; and a photograph in which the engine reads a
// dozen words or more of junk is judged by the quality model like text
// (rescan or correct), because triage's picture rule wants fewer than 20
// tokens and 3 lexicon words (quality/triage.go).
func TestTextPicturesRealEngine(t *testing.T) {
	if testing.Short() {
		t.Skip("reads thirteen real pages")
	}
	dir := filepath.Join(ocrtest.RealPages(t), "leptonica")
	e := engineOrSkip(t, Config{})
	defer e.Close()
	lex := lexicon.Default()
	known := map[string]string{
		"brev.06.75.jpg": "print whose ink is not measured as text-like",
		"brev.36.75.jpg": "print whose ink is not measured as text-like",
	}
	text := []string{"brev.06.75.jpg", "brev.36.75.jpg", "brev.56.75.jpg", "toc.99.tif", "contrast-orig-60.jpg", "pancrazi.15.jpg"}
	pictures := []string{"juditharismax.jpg", "test24.jpg", "fish24.jpg", "tetons.jpg", "wet-day.jpg", "lion-page.00010.jpg", "cavalerie.11.jpg"}
	var b strings.Builder
	for _, set := range []struct {
		files []string
		print bool
	}{{text, true}, {pictures, false}} {
		for _, f := range set.files {
			rec, _, err := ocr.ProcessFile(context.Background(), e, filepath.Join(dir, f), ocr.Options{})
			if err != nil {
				t.Fatal(err)
			}
			v := quality.Triage(quality.PageFeatures(rec, lex), nil, quality.Thresholds{})
			textLike := rec.Ink.LooksLikeText()
			fmt.Fprintf(&b, "| %s | %v | %d | %d | %.1f | %s | %s |\n", f, textLike, len(rec.Words), ocr.ConfidentWords(rec.Words), rec.Noise, v.Decision, strings.Join(v.Reasons, "; "))
			failed := strings.Contains(strings.Join(v.Reasons, " "), "shape of text")
			var bad string
			switch {
			case set.print && (v.Decision == quality.DecisionPicture || v.Decision == quality.DecisionBlank):
				bad = "a page of print decided " + v.Decision
			case set.print && textLike && len(rec.Words) < quality.PictureMaxTokens && !failed:
				bad = "text-shaped ink, few words read, but not sent to rescan as a failed reading"
			case !set.print && (textLike || failed):
				bad = "a picture taken for text"
			case !set.print && len(rec.Words) == 0 && v.Decision != quality.DecisionPicture:
				bad = "a picture with nothing read decided " + v.Decision
			}
			if bad == "" {
				if why, ok := known[f]; ok {
					t.Errorf("%s: listed as a known gap (%s) but passes now: take it off the list", f, why)
				}
				continue
			}
			if why, ok := known[f]; ok {
				t.Logf("KNOWN GAP %s: %s (%s): %s %q", f, bad, why, v.Decision, v.Reasons)
				continue
			}
			t.Errorf("%s: %s: %q", f, bad, v.Reasons)
		}
	}
	t.Logf("| page | text-like ink | words | confident words | noise | decision | reasons |\n|---|---|---|---|---|---|---|\n%s", b.String())
}
