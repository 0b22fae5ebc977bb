package ocr_test

import (
	"bytes"
	"image/png"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"recto/ocr"
	"recto/ocr/alto"
)

func sampleRecord() *ocr.Record {
	return &ocr.Record{
		Version: ocr.RecordVersion, Source: "scans/box 1/p0001.tif", SHA256: "ab12",
		Width: 800, Height: 600, DPI: 300, Skew: -1.25, Binarization: "otsu", Threshold: 141, Noise: 3.5,
		MeanConfidence: 0.8,
		Words: []ocr.Word{
			{Text: "Harbour", Conf: 0.95, Box: ocr.Box{X: 50, Y: 40, W: 120, H: 30}, Block: 0, Line: 0},
			{Text: "Board", Conf: 0.9, Box: ocr.Box{X: 185, Y: 42, W: 90, H: 28}, Block: 0, Line: 0},
			{Text: "minutes,", Conf: 0.6, Box: ocr.Box{X: 50, Y: 80, W: 130, H: 30}, Block: 0, Line: 1, Alt: []string{"rninutes,"}},
			{Text: `"Tide" & <quay>`, Conf: 0.75, Box: ocr.Box{X: 50, Y: 200, W: 300, H: 30}, Block: 1, Line: 2},
		},
		TimingsMS: map[string]float64{"engine": 12.5},
	}
}

func TestWriteOutputs(t *testing.T) {
	dir := t.TempDir()
	rec := sampleRecord()
	if err := ocr.WriteOutputs(dir, "box 1/p0001", rec, page(40, 30)); err != nil {
		t.Fatal(err)
	}
	base := filepath.Join(dir, "box 1", "p0001")
	txt, err := os.ReadFile(base + ".txt")
	if err != nil {
		t.Fatal(err)
	}
	if want := "Harbour Board\nminutes,\n\n\"Tide\" & <quay>\n"; string(txt) != want {
		t.Errorf("text file %q, want %q", txt, want)
	}
	back, err := ocr.ReadRecord(base + ".json")
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(back, rec) {
		t.Errorf("record did not survive the round trip:\n got %+v\nwant %+v", back, rec)
	}
	x, err := os.ReadFile(base + ".alto.xml")
	if err != nil {
		t.Fatal(err)
	}
	if err := alto.Check(bytes.NewReader(x)); err != nil {
		t.Errorf("ALTO output breaks the schema: %v", err)
	}
	f, err := os.Open(base + ".prepared.png")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if img, err := png.Decode(f); err != nil || img.Bounds().Dx() != 40 {
		t.Errorf("prepared image: %v, %v", img, err)
	}
	// No temporary files are left behind.
	entries, _ := os.ReadDir(filepath.Join(dir, "box 1"))
	if len(entries) != 4 {
		var names []string
		for _, e := range entries {
			names = append(names, e.Name())
		}
		t.Errorf("files %v, want exactly the four outputs", names)
	}
}

func TestWriteOutputsNoImageAndBadName(t *testing.T) {
	dir := t.TempDir()
	if err := ocr.WriteOutputs(dir, "p2", sampleRecord(), nil); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(dir, "p2.prepared.png")); !os.IsNotExist(err) {
		t.Errorf("prepared image written without one: %v", err)
	}
	if err := ocr.WriteOutputs(dir, "", sampleRecord(), nil); err == nil {
		t.Error("empty name accepted")
	}
	if err := ocr.WriteOutputs(dir, filepath.Join(dir, "abs"), sampleRecord(), nil); err == nil {
		t.Error("absolute name accepted")
	}
}

func TestWriteOutputsFailureLeavesNoTemporaryFile(t *testing.T) {
	dir := t.TempDir()
	// A non-empty directory where the ALTO file should go makes that
	// rename fail.
	os.MkdirAll(filepath.Join(dir, "p3.alto.xml", "x"), 0o755)
	if err := ocr.WriteOutputs(dir, "p3", sampleRecord(), nil); err == nil {
		t.Fatal("write over a directory succeeded")
	}
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if e.Name()[0] == '.' {
			t.Errorf("temporary file %q left behind", e.Name())
		}
	}
	if fi, err := os.Stat(filepath.Join(dir, "p3.alto.xml", "x")); err != nil || !fi.IsDir() {
		t.Errorf("what stood in the way was changed: %v", err)
	}
}
