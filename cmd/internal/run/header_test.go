package run

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"recto/lexicon"
	"recto/quality"
)

// TestReportHeader (issue 17 part 1): the run's report.html says how its
// figures were made: thresholds in force (quality's defaults), the lexicon
// file given with the SHA-256 that sha256sum would print for it (computed
// here with crypto/sha256 on the file's bytes), the normalisation of
// scoring, the ground-truth sample; thumbnails of the listed pages are in
// the report folder; --target-cer gives each title a sentence, and
// recto report --target-cer replaces the run's target.
func TestReportHeader(t *testing.T) {
	coll, truth := testCollection(t, 2, 4, false)
	lex := filepath.Join(t.TempDir(), "words.lex")
	l := lexicon.New()
	for _, w := range []string{"harbour", "ferry", "noon", "the"} {
		l.Add(w, 3)
	}
	if err := l.Save(lex); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(lex)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(data)
	out := filepath.Join(t.TempDir(), "out")
	runTest(t, Options{Collection: coll, Out: out, Truth: truth, Lexicon: lex, TargetCER: 0.05})
	page, err := os.ReadFile(filepath.Join(out, reportDir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	html := string(page)
	for _, want := range []string{
		"correct when the predicted CER is above " + pctOf(quality.DefaultCorrect) + ", rescan when above " + pctOf(quality.DefaultRescan),
		"words.lex", "SHA-256 " + hex.EncodeToString(sum[:]),
		quality.NormOptions{}.String(), "Ground-truth sample", "Target CER 5.0 %",
		"first and last page recorded", "Languages", ">eng<",
	} {
		if !strings.Contains(html, want) {
			t.Errorf("report.html lacks %q", want)
		}
	}
	thumbs, _ := filepath.Glob(filepath.Join(out, reportDir, "thumbs", "*.png"))
	if len(thumbs) == 0 || !strings.Contains(html, `src="./thumbs/`) {
		t.Errorf("%d thumbnails in the report folder; want one per listed page, linked", len(thumbs))
	}
	if _, err := ReportWith(context.Background(), out, ReportOptions{TargetCER: 0.5}); err != nil {
		t.Fatal(err)
	}
	page, _ = os.ReadFile(filepath.Join(out, reportDir, "report.html"))
	if !strings.Contains(string(page), "Target CER 50.0 %") || strings.Contains(string(page), "Target CER 5.0 %") {
		t.Error("recto report --target-cer 0.5 did not replace the run's target")
	}
	if _, err := ReportWith(context.Background(), out, ReportOptions{TargetCER: 3}); err == nil {
		t.Error("--target-cer 3 accepted; a CER target must be in [0, 1]")
	}
}

// pctOf writes a rate as the report does: one decimal, a space, "%".
func pctOf(x float64) string { return strconv.FormatFloat(100*x, 'f', 1, 64) + " %" }
