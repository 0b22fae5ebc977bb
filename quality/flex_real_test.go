package quality

import (
	"os"
	"path/filepath"
	"testing"

	"recto/ocr/ocrtest"
)

// TestFlexRealPages scores the plain engine's output on two real magazine
// pages (Tesseract 5.3.0 test data, 8087_054.3B and 8071_093.3B; output
// stored in testdata/realpages, see its SOURCES.md) against their
// ground truth. Most of their CER is reading order (the transcription
// follows the article's zones, the engine its own block order), so
// flex_cer must come out below half of CER on both; bag_wer, which counts a
// misread word twice (bag.go), must stay within twice WER.
func TestFlexRealPages(t *testing.T) {
	dir := filepath.Join(ocrtest.RealPages(t), "tesseract")
	for _, p := range []string{"8087_054.3B", "8071_093.3B"} {
		ref, err := os.ReadFile(filepath.Join(dir, p+".txt"))
		if err != nil {
			t.Fatal(err)
		}
		hyp, err := os.ReadFile(filepath.Join("testdata", "realpages", p+".tess.txt"))
		if err != nil {
			t.Fatal(err)
		}
		c := Compare(string(ref), string(hyp), NormOptions{})
		cer, _ := c.CER()
		flex, _ := c.FlexCER()
		wer, _ := c.WER()
		bag, _ := c.BagWER()
		t.Logf("%s: %d chars, CER %.2f%%, flex_cer %.2f%%; %d words, WER %.2f%%, bag_wer %.2f%%", p, c.Chars, 100*cer, 100*flex, c.Words, 100*wer, 100*bag)
		if flex > cer/2 || bag > 2*wer {
			t.Errorf("%s: flex_cer %.4f not below half of CER %.4f, or bag_wer %.4f above twice WER %.4f", p, flex, cer, bag, wer)
		}
	}
}
