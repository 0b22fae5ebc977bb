package run

import (
	"encoding/xml"
	"io/fs"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestRunALTOValidatesWithEstimate (issue 14 part 4): every ALTO file a
// run writes validates against the official ALTO 4.4 schema with Debian's
// xmllint (ALTO Editorial Board, ALTO XML Schema 4.4, 2023, vendored in
// testdata/standards with a local xlink schema); Page@ACCURACY is the
// page's estimate, 100 × (1 − predicted CER) from the ledger; corrected
// pages carry the correction step, linked from the page.
func TestRunALTOValidatesWithEstimate(t *testing.T) {
	if _, err := exec.LookPath("xmllint"); err != nil {
		t.Skip("xmllint not installed (Debian libxml2-utils; scripts/setup --test)")
	}
	coll, truth := testCollection(t, 1, 4, false)
	out := filepath.Join(t.TempDir(), "out")
	if _, stderr, err := runTest(t, Options{Collection: coll, Out: out, Truth: truth, Correct: 0.001, Rescan: 1}); err != nil {
		t.Fatalf("%v\n%s", err, stderr)
	}
	predicted := map[string]float64{}
	for _, r := range ledgerRows(t, out) {
		predicted[outputStem(r.Rel)] = r.PredictedCER
	}
	var files []string
	filepath.WalkDir(out, func(p string, d fs.DirEntry, err error) error {
		if err == nil && strings.HasSuffix(p, ".alto.xml") {
			files = append(files, p)
		}
		return nil
	})
	if len(files) < 5 { // 4 pages, at least one corrected
		t.Fatalf("%d ALTO files: %v", len(files), files)
	}
	xsd := filepath.Join("..", "..", "..", "testdata", "standards", "alto-4-4.xsd")
	args := append([]string{"--noout", "--nonet", "--schema", xsd}, files...)
	if b, err := exec.Command("xmllint", args...).CombinedOutput(); err != nil {
		t.Fatalf("xmllint: %v\n%s", err, b)
	}
	corrected := 0
	for _, f := range files {
		data, _ := os.ReadFile(f)
		var d struct {
			Steps []string `xml:"Description>Processing>processingCategory"`
			Page  struct {
				Refs     string `xml:"PROCESSINGREFS,attr"`
				Accuracy string `xml:"ACCURACY,attr"`
			} `xml:"Layout>Page"`
		}
		if err := xml.Unmarshal(data, &d); err != nil {
			t.Fatal(err)
		}
		rel, _ := filepath.Rel(out, f)
		top, stem, _ := strings.Cut(filepath.ToSlash(rel), "/")
		stem = strings.TrimSuffix(stem, ".alto.xml")
		acc, err := strconv.ParseFloat(d.Page.Accuracy, 64)
		if err != nil || acc < 0 || acc > 100 {
			t.Errorf("%s: ACCURACY %q", rel, d.Page.Accuracy)
		}
		if top == ocrDir {
			if want := 100 * (1 - predicted[stem]); math.Abs(acc-want) > 0.05 {
				t.Errorf("%s: ACCURACY %g, want %.1f from the predicted CER %g", rel, acc, want, predicted[stem])
			}
		}
		if top == correctedDir {
			corrected++
			if d.Page.Refs != "preparation recognition correction" || len(d.Steps) != 3 || d.Steps[2] != "contentModification" {
				t.Errorf("%s: refs %q, steps %v", rel, d.Page.Refs, d.Steps)
			}
		}
	}
	if corrected == 0 {
		t.Error("no corrected ALTO was written")
	}
}
