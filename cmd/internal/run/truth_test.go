package run

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"golang.org/x/text/encoding/charmap"
	"golang.org/x/text/encoding/unicode"

	"recto/cmd/internal/run/runtest"
	"recto/quality"
)

// TestRunTruthReader (issue 16, defect 2): run reads ground truth through
// quality.ReadTruth, as score and calibrate do. Latin-1 and UTF-16
// transcriptions (written by golang.org/x/text's encoders) are refused with
// the very message recto score gives, naming the file, instead of being
// scored as garbage; the other pages of the batch are still done; ALTO
// ground truth is scored like the same text in a .txt file.
func TestRunTruthReader(t *testing.T) {
	coll, truth := testCollection(t, 1, 6, false)
	ref, err := os.ReadFile(filepath.Join(truth, "Title A", "p000.txt"))
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(ref), "Wrenmouth", "Wrenmøuth", 1) // one letter outside ASCII
	latin1, _ := charmap.ISO8859_1.NewEncoder().String(text)
	utf16, _ := unicode.UTF16(unicode.LittleEndian, unicode.UseBOM).NewEncoder().String(text)
	mustWrite(t, filepath.Join(truth, "Title A", "p000.txt"), []byte(latin1))
	mustWrite(t, filepath.Join(truth, "Title A", "p002.txt"), []byte(utf16))
	// p004 as ALTO: one String per word, one TextLine per line.
	ref4, _ := os.ReadFile(filepath.Join(truth, "Title A", "p004.txt"))
	var alto strings.Builder
	alto.WriteString(`<?xml version="1.0" encoding="UTF-8"?><alto xmlns="http://www.loc.gov/standards/alto/ns-v4#"><Layout><Page ID="p" PHYSICAL_IMG_NR="1"><PrintSpace><TextBlock ID="b">`)
	for _, line := range strings.Split(strings.TrimSpace(string(ref4)), "\n") {
		alto.WriteString("<TextLine>")
		for _, w := range strings.Fields(line) {
			alto.WriteString(`<String CONTENT="` + w + `"/><SP/>`)
		}
		alto.WriteString("</TextLine>")
	}
	alto.WriteString(`</TextBlock></PrintSpace></Page></Layout></alto>`)
	os.Remove(filepath.Join(truth, "Title A", "p004.txt"))
	mustWrite(t, filepath.Join(truth, "Title A", "p004.alto.xml"), []byte(alto.String()))

	out := filepath.Join(t.TempDir(), "out")
	_, stderr, _ := runTest(t, Options{Collection: coll, Out: out, Truth: truth})
	rows := map[string]string{}
	var alto4 *int
	for _, r := range ledgerRows(t, out) {
		rows[r.Rel] = r.Error
		if r.Rel == "Title A/p004.png" && r.HasTruth {
			alto4 = &r.CharErrs
		}
	}
	for _, tt := range []struct{ rel, file, says string }{
		{"Title A/p000.png", "p000.txt", "looks like Latin-1: convert with iconv -f latin1 -t utf-8"},
		{"Title A/p002.png", "p002.txt", "looks like UTF-16 (byte order mark)"},
	} {
		_, want := quality.ReadTruth(filepath.Join(truth, "Title A", tt.file))
		if want == nil || !strings.Contains(want.Error(), tt.says) {
			t.Fatalf("quality.ReadTruth(%s) = %v", tt.file, want)
		}
		if !strings.Contains(rows[tt.rel], want.Error()) || !strings.Contains(stderr, want.Error()) {
			t.Errorf("%s: ledger error %q, want score's message %q on the row and stderr\n%s", tt.rel, rows[tt.rel], want, stderr)
		}
	}
	if rows["Title A/p001.png"] != "" || rows["Title A/p003.png"] != "" {
		t.Errorf("pages without ground truth failed: %v", rows)
	}
	// The ALTO page scores as its text would: the same counts as the
	// original .txt against the run's OCR text.
	hypText, err := os.ReadFile(filepath.Join(out, "ocr", outputStem("Title A/p004.png")+".txt"))
	if err != nil {
		t.Fatal(err)
	}
	want4 := quality.Compare(string(ref4), string(hypText), quality.NormOptions{}).CharErrors
	if alto4 == nil || want4 <= 0 || *alto4 != want4 {
		t.Errorf("ALTO page: run counted %v character errors, the .txt gives %d", alto4, want4)
	}
}

// TestVolumeTruthSaysFlexIsABound: a page whose ground truth is a whole
// volume (more than a million characters, issue #16) is scored, and the
// run says on stderr and in warnings.csv that its flex_cer is only the
// CER's upper bound (quality.FlexSkippedNote).
func TestVolumeTruthSaysFlexIsABound(t *testing.T) {
	coll, truth := runtest.Collection(t, 1, 1, false)
	line := "The harbour master of Wrenmouth noted that the northern quay was mended.\n"
	runtest.MustWrite(t, filepath.Join(truth, "Title A", "p000.txt"), []byte(strings.Repeat(line, (1<<20)/len(line)+50)))
	out := filepath.Join(t.TempDir(), "run")
	var stderr bytes.Buffer
	o := Options{Collection: coll, Out: out, Truth: truth, NewEngine: runtest.Engine(coll, 0), NoPrepare: true, Stderr: &stderr, Correct: 1, Rescan: 1}
	if _, err := Run(context.Background(), o); err != nil {
		t.Fatal(err, stderr.String())
	}
	if !strings.Contains(stderr.String(), "too long for the order-free matching") {
		t.Errorf("stderr does not say flex_cer is a bound:\n%s", stderr.String())
	}
	w, err := os.ReadFile(filepath.Join(out, reportDir, "warnings.csv"))
	if err != nil || !strings.Contains(string(w), "Title A/p000") || !strings.Contains(string(w), "order-free") {
		t.Errorf("warnings.csv (%v):\n%s", err, w)
	}
}
