//go:build cgo && !notesseract

package tesseract

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/quality"
)

// TestRealPagesNotWorseThanEngine reads every real scan with an exact
// transcription that Tesseract 5.3.0's test data holds (Debian source
// package tesseract, testdata/realpages/SOURCES.md) with recto and with
// the plain `tesseract` command as a user runs it (its defaults: fully
// automatic page segmentation, the file's own resolution, no preparation;
// OMP_THREAD_LIMIT=1), and checks recto's CER is at most half a point
// above the plain engine's on each page (the acceptance margin of the
// real-scans issue). The magazine pages' transcriptions follow their zone
// order, so part of both CERs is reading order; both readings are scored
// the same way (the default normalisation).
func TestRealPagesNotWorseThanEngine(t *testing.T) {
	if testing.Short() {
		t.Skip("reads four real pages twice or three times")
	}
	dir := filepath.Join(ocrtest.RealPages(t), "tesseract")
	e := engineOrSkip(t, Config{})
	defer e.Close()
	for _, page := range []string{"phototest", "eurotext", "8087_054.3B", "8071_093.3B"} {
		truth, err := os.ReadFile(filepath.Join(dir, page+".txt"))
		if err != nil {
			t.Fatal(err)
		}
		img := filepath.Join(dir, page+".tif")
		rec, _, err := ocr.ProcessFile(context.Background(), e, img, ocr.Options{})
		if err != nil {
			t.Fatal(err)
		}
		plain := ocrtest.PlainEngine(t, img)
		cer := func(s string) float64 {
			c, _ := quality.Compare(string(truth), s, quality.NormOptions{}).CER()
			return c
		}
		r, p := cer(rec.Text()), cer(plain)
		t.Logf("%-12s recto CER %.4f  plain engine %.4f  skew %.2f  binarization %s  reading %+v", page, r, p, rec.Skew, rec.Binarization, rec.Reading)
		if r > p+0.005 {
			t.Errorf("%s: recto CER %.4f is more than half a point above the plain engine's %.4f", page, r, p)
		}
	}
}
