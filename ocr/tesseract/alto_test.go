package tesseract

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"recto/ocr"
)

// TestALTOOfRealScanValidates: the ALTO of a real scan read by Tesseract
// (testdata/engine/phototest.tif, see its SOURCES.md) names the engine,
// its version (the `tesseract --version` of the installed Debian package)
// and settings, and validates against the official ALTO 4.4 schema with
// Debian's xmllint (ALTO Editorial Board, ALTO XML Schema 4.4, 2023).
func TestALTOOfRealScanValidates(t *testing.T) {
	if _, err := exec.LookPath("xmllint"); err != nil {
		t.Skip("xmllint not installed (Debian libxml2-utils; scripts/setup --test)")
	}
	e := engineOrSkip(t, Config{})
	rec, _, err := ocr.ProcessFile(context.Background(), e, "../../testdata/engine/phototest.tif", ocr.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if rec.Engine == nil || rec.Engine.Name != "Tesseract" || rec.Engine.Settings != "lang=eng psm=3 oem=default" {
		t.Fatalf("engine %+v", rec.Engine)
	}
	if out, err := exec.Command("tesseract", "--version").CombinedOutput(); err == nil {
		if first, _, _ := strings.Cut(string(out), "\n"); !strings.Contains(first, rec.Engine.Version) {
			t.Errorf("engine version %q, tesseract --version says %q", rec.Engine.Version, first)
		}
	}
	var buf bytes.Buffer
	if err := ocr.WriteALTOWith(&buf, rec, ocr.ALTOOptions{HasAccuracy: true, Accuracy: 97.5}); err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "phototest.alto.xml")
	os.WriteFile(p, buf.Bytes(), 0o644)
	xsd := filepath.Join("..", "..", "testdata", "standards", "alto-4-4.xsd")
	if out, err := exec.Command("xmllint", "--noout", "--nonet", "--schema", xsd, p).CombinedOutput(); err != nil {
		t.Errorf("xmllint: %v\n%s", err, out)
	}
	if !bytes.Contains(buf.Bytes(), []byte("<softwareName>Tesseract</softwareName>")) {
		t.Error("the recognition step does not name Tesseract")
	}
}
