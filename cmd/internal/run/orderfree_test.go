package run

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"recto/quality"
)

// TestRunOrderFree (issue 14 part 1): the run records the order-free error
// counts of every page with ground truth as recto score counts them
// (quality.Compare, whose flexible character accuracy and bag of words are
// checked against the paper's definition in package quality), and its
// pages.csv and titles.csv carry flex_cer and bag_wer. A reference that is
// the OCR text with its lines in reverse order has a large CER but a
// bag_wer of 0 and a flex_cer near 0 (Clausner, Pletschacher and
// Antonacopoulos 2020: the measure ignores reading order).
func TestRunOrderFree(t *testing.T) {
	coll, truth := testCollection(t, 1, 4, false)
	out := filepath.Join(t.TempDir(), "out")
	runTest(t, Options{Collection: coll, Out: out, Truth: truth})
	hyp, err := os.ReadFile(filepath.Join(out, "ocr", outputStem("Title A/p000.png")+".txt"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(hyp)), "\n")
	if len(lines) < 3 {
		t.Fatalf("test page has %d lines; want 3 or more to reorder", len(lines))
	}
	slices.Reverse(lines)
	mustWrite(t, filepath.Join(truth, "Title A", "p000.txt"), []byte(strings.Join(lines, "\n")+"\n"))
	runTest(t, Options{Collection: coll, Out: out, Truth: truth}) // changed truth: the page is done again

	scored := 0
	for _, r := range ledgerRows(t, out) {
		if !r.HasTruth {
			continue
		}
		scored++
		ref, err := os.ReadFile(filepath.Join(truth, strings.TrimSuffix(r.Rel, ".png")+".txt"))
		if err != nil {
			t.Fatal(err)
		}
		h, _ := os.ReadFile(filepath.Join(out, "ocr", outputStem(r.Rel)+".txt"))
		want := quality.Compare(string(ref), string(h), quality.NormOptions{})
		if r.FlexErrs != want.FlexErrors || r.BagErrs != want.BagErrors {
			t.Errorf("%s: flex %d bag %d, recto score's counts are %d and %d", r.Rel, r.FlexErrs, r.BagErrs, want.FlexErrors, want.BagErrors)
		}
		if r.Decision != "correct" && (r.FlexErrsAf != r.FlexErrs || r.BagErrsAf != r.BagErrs) {
			t.Errorf("%s: not corrected, but the order-free counts changed: %+v", r.Rel, r)
		}
		if r.Rel == "Title A/p000.png" {
			cer, flex, bag := float64(r.CharErrs)/float64(r.RefChars), float64(r.FlexErrs)/float64(r.RefChars), r.BagErrs
			if cer < 0.2 || flex > 0.02 || bag != 0 {
				t.Errorf("lines reversed: CER %.3f (want large), flex_cer %.3f (want near 0), bag errors %d (want 0)", cer, flex, bag)
			}
		}
	}
	if scored < 2 {
		t.Fatalf("%d pages scored", scored)
	}
	for name, cols := range map[string][]string{
		"pages.csv":  {"flex_cer_before", "flex_cer_after", "bag_wer_before", "bag_wer_after", "flex_errors_before", "bag_errors_after"},
		"titles.csv": {"flex_cer_before", "flex_cer_after", "bag_wer_before", "bag_wer_after"},
	} {
		f, err := os.Open(filepath.Join(out, "report", name))
		if err != nil {
			t.Fatal(err)
		}
		recs, err := csv.NewReader(f).ReadAll()
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range cols {
			i := slices.Index(recs[0], c)
			if i < 0 {
				t.Errorf("%s has no column %s", name, c)
				continue
			}
			filled := 0
			for _, r := range recs[1:] {
				if r[i] != "" {
					filled++
				}
			}
			if filled == 0 {
				t.Errorf("%s: column %s is empty on every row", name, c)
			}
		}
	}
}
