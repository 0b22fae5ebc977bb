package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/quality"
)

// noisyCopy replaces a share rate of the letters of text by look-alikes.
func noisyCopy(text string, rate float64, rng *rand.Rand) string {
	swap := map[rune]rune{'e': 'c', 'l': '1', 'o': '0', 'h': 'b', 'n': 'u', 'a': '@', 's': '5', 't': 'f'}
	var b strings.Builder
	for _, r := range text {
		if s, ok := swap[r]; ok && rng.Float64() < rate {
			r = s
		}
		b.WriteRune(r)
	}
	return b.String()
}

// makeSample writes n page records with increasing noise (and falling
// confidence) and their ground truth. This is mechanics-only data for the
// command; the estimator itself is judged on the synthetic corpus sample
// in package quality.
func makeSample(t *testing.T, n int) (ocrDir, truthDir string) {
	t.Helper()
	root := t.TempDir()
	ocrDir, truthDir = filepath.Join(root, "ocr"), filepath.Join(root, "truth")
	rng := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < n; i++ {
		rate := float64(i) / float64(n) * 0.8
		name := fmt.Sprintf("ledger/p%03d", i)
		writeRecord(t, filepath.Join(ocrDir, name+".json"), noisyCopy(cleanText, rate, rng), 0.97-0.6*rate, false)
		os.MkdirAll(filepath.Join(truthDir, "ledger"), 0o755)
		os.WriteFile(filepath.Join(truthDir, name+".txt"), []byte(cleanText), 0o644)
	}
	return ocrDir, truthDir
}

func TestCalibrateCommand(t *testing.T) {
	ocrDir, truthDir := makeSample(t, 60)
	model := filepath.Join(t.TempDir(), "ours.json")
	out, stderr, err := runRecto(t, "calibrate", "--ocr", ocrDir, "--truth", truthDir, "--out", model, "--format", "json")
	if err != nil {
		t.Fatalf("%v\n%s", err, stderr)
	}
	var rep calibrateReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	if rep.HeldOut != 18 || rep.Fitted != 42 || rep.Evaluation.Pages != 18 || len(rep.Checks) != 4 {
		t.Errorf("report: held out %d, fitted %d, evaluated %d, checks %q", rep.HeldOut, rep.Fitted, rep.Evaluation.Pages, rep.Checks)
	}
	m, err := quality.LoadModel(model)
	if err != nil {
		t.Fatal(err)
	}
	if m.Fit.Pages != 42 || m.Fit.HeldOut != 18 {
		t.Errorf("model provenance: %+v", m.Fit)
	}
	// The model is usable by triage.
	if _, _, err := runRecto(t, "triage", "--model", model, ocrDir); err != nil {
		t.Errorf("triage --model: %v", err)
	}
	// The text report says whether the targets were met.
	out, _, err = runRecto(t, "calibrate", "--ocr", ocrDir, "--truth", truthDir, "--out", model)
	if err != nil || !strings.Contains(out, "held-out pages only") || !(strings.Contains(out, "were met") || strings.Contains(out, "NOT all met")) {
		t.Errorf("text report (%v):\n%s", err, out)
	}
}

func TestCalibrateBadInput(t *testing.T) {
	ocrDir, truthDir := makeSample(t, 40)
	model := filepath.Join(t.TempDir(), "m.json")
	// A page without ground truth is skipped and named; exit status partial.
	os.Remove(filepath.Join(truthDir, "ledger", "p007.txt"))
	_, stderr, err := runRecto(t, "calibrate", "--ocr", ocrDir, "--truth", truthDir, "--out", model)
	var pe *partialError
	if !errors.As(err, &pe) || !strings.Contains(stderr, "p007") {
		t.Errorf("missing truth: %v\n%s", err, stderr)
	}
	// Too few pages to fit.
	small, smallTruth := makeSample(t, 10)
	if _, _, err := runRecto(t, "calibrate", "--ocr", small, "--truth", smallTruth, "--out", model); err == nil || !strings.Contains(err.Error(), "too few") {
		t.Errorf("too few pages: %v", err)
	}
	if _, _, err := runRecto(t, "calibrate", "--ocr", t.TempDir(), "--truth", truthDir, "--out", model); err == nil || !strings.Contains(err.Error(), "no OCR pages") {
		t.Errorf("empty OCR folder: %v", err)
	}
	if _, _, err := runRecto(t, "calibrate", "--ocr", ocrDir, "--truth", filepath.Join(truthDir, "none"), "--out", model); err == nil {
		t.Error("missing truth folder: no error")
	}
	var ue *usageError
	for _, args := range [][]string{
		{"calibrate", "--ocr", ocrDir, "--truth", truthDir},
		{"calibrate", "--ocr", ocrDir, "--truth", truthDir, "--out", model, "--holdout", "1"},
	} {
		if _, _, err := runRecto(t, args...); !errors.As(err, &ue) {
			t.Errorf("%q: %v, want a usage error", args, err)
		}
	}
}
