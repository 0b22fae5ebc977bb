package synth

import (
	"math"
	"path/filepath"
	"testing"

	"recto/ocr"
)

// TestSavedDPIReadByDecoder checks the hand-off to the rest of recto: the
// page's resolution survives SavePNG and is what ocr.DecodeFile reports.
func TestSavedDPIReadByDecoder(t *testing.T) {
	p := Degrade(mustRender(t, sample, small), Degradation{Scale: 0.4})
	path := filepath.Join(t.TempDir(), "p.png")
	if err := p.SavePNG(path); err != nil {
		t.Fatal(err)
	}
	d, err := ocr.DecodeFile(path, ocr.DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(d.DPI-p.DPI) > 0.05 {
		t.Errorf("decoder reads %.2f dpi, page has %.2f", d.DPI, p.DPI)
	}
	if b := d.Image.Bounds(); b != p.Image.Bounds() {
		t.Errorf("decoded bounds %v, page %v", b, p.Image.Bounds())
	}
}
