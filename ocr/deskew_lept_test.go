//go:build cgo

package ocr

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"recto/ocr/internal/leptref"
)

// realPages is ocrtest.RealPages, which package ocr's own tests cannot
// import (ocrtest imports ocr): the fetched real scans, failing under CI
// and skipping elsewhere when they are missing.
func realPages(t *testing.T) string {
	t.Helper()
	dir := os.Getenv("RECTO_REALPAGES")
	if dir == "" {
		if cache, err := os.UserCacheDir(); err == nil {
			dir = filepath.Join(cache, "recto", "realpages")
		}
	}
	if _, err := os.Stat(filepath.Join(dir, ".complete")); err == nil {
		return dir
	}
	msg := "REAL PAGE SCANS MISSING: " + dir + " is not complete; run scripts/fetch-realpages"
	if os.Getenv("CI") != "" {
		t.Fatal(msg)
	}
	t.Skip(msg)
	return ""
}

// realSkewPages are text page scans from Leptonica 1.82.0's prog/ folder and
// Tesseract 5.3.0's test data (testdata/realpages/SOURCES.md): early printed
// books, breviaries, newspapers, Fraktur, tables, page-segmentation pages,
// magazine pages, low-resolution pages.
var realSkewPages = []string{
	"leptonica/1555.003.jpg", "leptonica/1555.007.jpg", "leptonica/amoris.2.150.jpg",
	"leptonica/brev.06.75.jpg", "leptonica/brev.14.75.jpg", "leptonica/brev.20.75.jpg",
	"leptonica/brev.36.75.jpg", "leptonica/brev.53.75.jpg", "leptonica/brev.56.75.jpg",
	"leptonica/breviar.38.150.jpg", "leptonica/cavalerie.11.jpg", "leptonica/cavalerie.29.jpg",
	"leptonica/feyn.tif", "leptonica/german.png", "leptonica/harmoniam-11.tif",
	"leptonica/italic.png", "leptonica/keystone.png", "leptonica/lapide.052.100.jpg",
	"leptonica/lucasta.047.jpg", "leptonica/lucasta.150.jpg", "leptonica/lyra.036.jpg",
	"leptonica/ortiz-02.tif", "leptonica/ortiz-04.tif", "leptonica/pageseg1.tif",
	"leptonica/pageseg3.tif", "leptonica/patent.png", "leptonica/rabi.png",
	"leptonica/scots-frag.tif", "leptonica/shearer.148.tif", "leptonica/table.15.tif",
	"leptonica/table.27.tif", "leptonica/toc.99.tif", "leptonica/tribune-page-4x.png",
	"leptonica/w91frag.jpg", "leptonica/witten.tif", "leptonica/words.44.tif",
	"leptonica/zanotti-78.jpg", "tesseract/8071_093.3B.tif", "tesseract/8087_054.3B.tif",
}

// knownSkewFailures are pages where recto's skew is known to disagree with
// Leptonica's (issue 10, not yet fixed). They are measured and logged, not
// checked. Fixed by estimating on text-like components only and rotating
// only from 0.3°: witten.tif (phantom −3.87°, now 0), 8071_093.3B.tif
// (phantom 9.10°, now −0.37° against −0.42°), cavalerie.29, zanotti-78,
// 8087_054.3B (rotated by −0.13° to −0.21° where Leptonica finds them
// straight; now not rotated).
var knownSkewFailures = map[string]bool{
	// Two columns whose lines do not line up across the gutter: each
	// column alone agrees with Leptonica (left −1.04° against −1.08°,
	// right −0.86° against −0.86°), the page as one gives −1.42°
	// against −0.95°. Scoring the columns apart fixed it but moved
	// shearer.148 (−2.49° against −2.81°) and breviar.38.
	"leptonica/feyn.tif": true,
}

// TestSkewAgreesWithLeptonica compares recto's skew with Leptonica's
// pixFindSkew (D. Bloomberg, Leptonica 1.82, skew.c) on real scans. Where
// Leptonica is confident (confidence at least 3.0, the level from which its
// own pixDeskew rotates), recto's skew must be within 0.3° of Leptonica's;
// where Leptonica finds the page straight (under 0.1°, pixDeskew's
// MIN_DESKEW_ANGLE), recto must not rotate it.
func TestSkewAgreesWithLeptonica(t *testing.T) {
	if testing.Short() {
		t.Skip("real pages: about 10 s")
	}
	dir := realPages(t)
	for _, name := range realSkewPages {
		d, err := DecodeFile(filepath.Join(dir, name), DecodeOptions{})
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		want, conf, ok, err := leptref.FindSkew(toGray(d.Image), 130)
		if err != nil {
			t.Fatal(err)
		}
		p, err := Prepare(d.Image, PrepOptions{DPI: d.DPI})
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		t.Logf("%-28s recto %6.2f° (estimate %6.2f°, peak %.2f, on %s)  Leptonica %6.2f° (confidence %.1f)",
			name, p.Skew, p.SkewEstimate, p.SkewConfidence, p.SkewMeasuredOn, want, conf)
		if !ok || conf < 3 {
			continue
		}
		bad := math.Abs(p.Skew-want) > 0.3 || (math.Abs(want) < 0.1 && p.Skew != 0)
		switch {
		case bad && knownSkewFailures[name]:
			t.Logf("KNOWN FAILURE (issue 10): %s: recto %.2f°, Leptonica %.2f°", name, p.Skew, want)
		case bad:
			t.Errorf("%s: skew %.2f°, Leptonica %.2f° (confidence %.1f)", name, p.Skew, want, conf)
		}
	}
}

// TestBilevelNotRebinarised: a bilevel scan (1-bit TIFF) is neither
// denoised nor binarised again; it goes to the engine as it came, clean-up
// aside. Before, witten.tif (1-bit) was Sauvola-binarised.
func TestBilevelNotRebinarised(t *testing.T) {
	dir := realPages(t)
	for _, name := range []string{"leptonica/witten.tif", "leptonica/pageseg3.tif", "leptonica/rabi.png"} {
		d, err := DecodeFile(filepath.Join(dir, name), DecodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if !isBilevel(toGray(d.Image)) {
			t.Fatalf("%s: not taken for bilevel", name)
		}
		p, err := Prepare(d.Image, PrepOptions{DPI: d.DPI})
		if err != nil {
			t.Fatal(err)
		}
		if p.Binarization != "none" {
			t.Errorf("%s: binarised again (%s)", name, p.Binarization)
		}
		for _, s := range p.Steps {
			if s.Name == "denoise" && s.Applied {
				t.Errorf("%s: denoised", name)
			}
		}
	}
}
