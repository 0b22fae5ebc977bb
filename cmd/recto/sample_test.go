package main

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSampleThenScore: recto sample plans pages from a triage CSV (two
// fictional titles, predicted CERs spread over the bands; blank pages left
// out), and recto score --plan says per title whether the interval of the
// transcribed pages reached the target: the clean title reaches ±1 point,
// the title whose transcriptions are far worse than predicted does not.
func TestSampleThenScore(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(7, 8))
	var est bytes.Buffer
	cw := csv.NewWriter(&est)
	cw.Write([]string{"title", "page", "image", "decision", "predicted_cer", "reasons"})
	for _, title := range []string{"corvane-ledger", "harbour-gazette"} {
		for i := range 400 {
			p := 0.02 * math.Exp(0.6*rng.NormFloat64())
			if i%10 == 0 {
				p = 0.15
			}
			dec := "accept"
			if i == 3 {
				dec = "blank"
			}
			cw.Write([]string{title, fmt.Sprintf("%s/p%04d", title, i), "", dec, fmt.Sprintf("%.4f", p), ""})
		}
	}
	cw.Flush()
	estFile, planFile := filepath.Join(dir, "estimates.csv"), filepath.Join(dir, "plan.csv")
	os.WriteFile(estFile, est.Bytes(), 0o644)
	stdout, stderr, err := runRecto(t, "sample", "--estimates", estFile, "--half-width", "1", "--out", planFile)
	if err != nil {
		t.Fatalf("%v\n%s", err, stderr)
	}
	if !strings.Contains(stderr, "2 pages without a prediction or decided blank or picture") || !strings.Contains(stdout, "corvane-ledger") {
		t.Errorf("stdout:\n%s\nstderr:\n%s", stdout, stderr)
	}
	data, _ := os.ReadFile(planFile)
	rows, err := csv.NewReader(bytes.NewReader(data)).ReadAll()
	if err != nil || len(rows) < 20 {
		t.Fatalf("plan: %d rows, %v", len(rows), err)
	}
	// Transcribe the planned pages: the ledger as predicted, the gazette
	// with every page six times worse.
	gt, ocr := filepath.Join(dir, "gt"), filepath.Join(dir, "ocr")
	ref := strings.Repeat("The harbour master of Wrenmouth mended the northern quay. ", 40)
	for _, r := range rows[1:] {
		var p float64
		fmt.Sscan(r[2], &p)
		if r[0] == "harbour-gazette" {
			p = min(6*p, 0.9)
		}
		hyp := []rune(ref)
		for i := range hyp {
			if rng.Float64() < p {
				hyp[i] = '#'
			}
		}
		mustWriteFile(t, filepath.Join(gt, filepath.FromSlash(r[1])+".txt"), ref)
		mustWriteFile(t, filepath.Join(ocr, filepath.FromSlash(r[1])+".txt"), string(hyp))
	}
	stdout, stderr, err = runRecto(t, "score", "--truth", gt, "--ocr", ocr, "--plan", planFile)
	if err != nil {
		t.Fatalf("%v\n%s", err, stderr)
	}
	if !strings.Contains(stdout, "corvane-ledger: target reached") || !strings.Contains(stdout, "harbour-gazette: target NOT reached") {
		t.Errorf("score --plan:\n%s", stdout)
	}
	if _, stderr, err := runRecto(t, "sample", "--estimates", estFile); err == nil || !strings.Contains(stderr+err.Error(), "--out") {
		t.Errorf("missing --out: %v %s", err, stderr)
	}
}

func mustWriteFile(t *testing.T, name, data string) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(name), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(name, []byte(data), 0o644); err != nil {
		t.Fatal(err)
	}
}
