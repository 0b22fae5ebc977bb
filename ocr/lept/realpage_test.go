//go:build cgo && !notesseract

package lept_test

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/ocr/tesseract"
	"recto/quality"
)

// TestFourBitScanNotWorse reads Tesseract's 4-bit greyscale magazine scan
// 8087_054.3G.tif (Tesseract 5.3.0 test data; the pure-Go decoders refuse
// it) with recto and with the plain `tesseract` command (defaults,
// OMP_THREAD_LIMIT=1), and checks recto's CER against the page's
// transcription 8087_054.3B.txt is at most half a point worse. The same page as a bilevel
// CCITT G4 file (8087_054.3B.tif, read by the pure-Go decoder) must read
// exactly as well: the 4-bit file loses nothing in decoding.
func TestFourBitScanNotWorse(t *testing.T) {
	if testing.Short() {
		t.Skip("two engine runs on an A4 page")
	}
	real := ocrtest.RealPages(t)
	page := filepath.Join(real, "tesseract", "8087_054.3G.tif")
	truth, err := os.ReadFile(filepath.Join(real, "tesseract", "8087_054.3B.txt"))
	if err != nil {
		t.Fatal(err)
	}
	eng, err := tesseract.New(tesseract.Config{})
	if err != nil {
		t.Skip("engine:", err)
	}
	defer eng.Close()
	rec, _, err := ocr.ProcessFile(context.Background(), eng, page, ocr.Options{})
	if err != nil {
		t.Fatal(err)
	}
	rec1, _, err := ocr.ProcessFile(context.Background(), eng, filepath.Join(real, "tesseract", "8087_054.3B.tif"), ocr.Options{})
	if err != nil {
		t.Fatal(err)
	}
	plain := ocrtest.PlainEngine(t, page)
	cer := func(s string) float64 {
		c, _ := quality.Compare(string(truth), s, quality.NormOptions{}).CER()
		return c
	}
	r, p, b := cer(rec.Text()), cer(plain), cer(rec1.Text())
	t.Logf("8087_054.3G.tif: recto CER %.4f, plain tesseract CER %.4f; bilevel 8087_054.3B.tif: recto CER %.4f", r, p, b)
	if r > b {
		t.Errorf("the 4-bit file reads worse (CER %.4f) than the same page as a bilevel file (%.4f)", r, b)
	}
	if b > p+0.005 {
		// Then the engine, not the decoder, is behind on this page
		// whatever its file (the page segmentation mode, issue 10).
		t.Skipf("recto reads even the bilevel page worse than the plain engine (%.4f against %.4f): not a decoding matter", b, p)
	}
	// The project's acceptance margin for real pages (issue 10): at most
	// half a point above the plain engine. Measured 0.0784 against 0.0777
	// (3 characters on 4,169) once bilevel scans stopped being binarised.
	if r > p+0.005 {
		t.Errorf("recto CER %.4f is more than half a point worse than the plain engine's %.4f", r, p)
	}
}
