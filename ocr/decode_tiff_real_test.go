package ocr_test

import (
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"golang.org/x/image/tiff"

	"recto/ocr"
	"recto/ocr/ocrtest"
)

// TestCCITTPolarityRealPages decodes real bilevel CCITT Group 4 TIFFs of
// leptonlib 1.82.0's prog/ folder, BlackIsZero and WhiteIsZero, and checks
// every pixel against libtiff's reading of the same file: `tiff2rgba -c
// none` (Debian libtiff-tools, libtiff 4.5) writes it as uncompressed RGBA,
// which shows the page as libtiff shows it, following TIFF 6.0 (Adobe 1992)
// section 11 on CCITT data with BlackIsZero. minisblack.tif and
// miniswhite.tif are Leptonica's test pair of one image stored with each
// PhotometricInterpretation; witten.tif is a BlackIsZero article page.
// Before ocr/decode_tiff.go's ccittPolarity the BlackIsZero pages came out
// light on dark (witten.tif: 90 % of its pixels dark; libtiff 10 %).
func TestCCITTPolarityRealPages(t *testing.T) {
	dir := filepath.Join(ocrtest.RealPages(t), "leptonica")
	bin, err := exec.LookPath("tiff2rgba")
	if err != nil {
		msg := "tiff2rgba is not installed (Debian: libtiff-tools): the real TIFFs cannot be checked against libtiff"
		if os.Getenv("CI") != "" {
			t.Fatal(msg)
		}
		t.Skip(msg)
	}
	tmp := t.TempDir()
	for _, name := range []string{
		"minisblack.tif", "miniswhite.tif", "witten.tif", // BlackIsZero, WhiteIsZero, BlackIsZero
		"feyn-fract.tif", "feyn-word.tif", "blendtext.tif", // BlackIsZero
		"words.44.tif", // WhiteIsZero
	} {
		src := filepath.Join(dir, name)
		d, err := ocr.DecodeFile(src, ocr.DecodeOptions{})
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		ref := filepath.Join(tmp, name)
		if out, err := exec.Command(bin, "-c", "none", src, ref).CombinedOutput(); err != nil {
			t.Fatalf("tiff2rgba %s: %v: %s", name, err, out)
		}
		f, err := os.Open(ref)
		if err != nil {
			t.Fatal(err)
		}
		want, err := tiff.Decode(f)
		f.Close()
		if err != nil {
			t.Fatalf("%s: reading tiff2rgba's output: %v", name, err)
		}
		if d.Image.Bounds() != want.Bounds() {
			t.Errorf("%s: %v, libtiff %v", name, d.Image.Bounds(), want.Bounds())
			continue
		}
		r := want.Bounds()
		diff, dark, wantDark := 0, 0, 0
		for y := r.Min.Y; y < r.Max.Y; y++ {
			for x := r.Min.X; x < r.Max.X; x++ {
				g, _, _, _ := d.Image.At(x, y).RGBA()
				w, _, _, _ := want.At(x, y).RGBA()
				if g < 0x8000 {
					dark++
				}
				if w < 0x8000 {
					wantDark++
				}
				if (g < 0x8000) != (w < 0x8000) {
					diff++
				}
			}
		}
		px := r.Dx() * r.Dy()
		t.Logf("%s: dark %.1f %% (libtiff %.1f %%)", name, 100*float64(dark)/float64(px), 100*float64(wantDark)/float64(px))
		if diff != 0 {
			t.Errorf("%s: %d of %d pixels differ from libtiff's reading", name, diff, px)
		}
	}
}
