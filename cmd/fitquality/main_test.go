package main

import (
	"bytes"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// TestFitqualityReproducible lays the vendored held-out sample out as a
// small corpus (alternate pages to "fit" and "heldout"), runs the tool
// twice and checks that it writes byte-identical models and a report.
func TestFitqualityReproducible(t *testing.T) {
	src := "../../testdata/triage"
	names, err := filepath.Glob(filepath.Join(src, "ocr", "*.json"))
	if err != nil || len(names) < 40 {
		t.Fatalf("sample: %d pages, %v", len(names), err)
	}
	sort.Strings(names)
	corpus := t.TempDir()
	for i, n := range names {
		split := "fit"
		if i%4 == 3 {
			split = "heldout"
		}
		id := strings.TrimSuffix(filepath.Base(n), ".json")
		copyFile(t, n, filepath.Join(corpus, "ocr", split, id+".json"))
		copyFile(t, filepath.Join(src, "truth", id+".txt"), filepath.Join(corpus, "truth", split, id+".txt"))
	}
	var models [2][]byte
	for k := range models {
		out := filepath.Join(t.TempDir(), "m.json")
		var stdout, stderr bytes.Buffer
		if err := run([]string{"-corpus", corpus, "-out", out, "-seed", "1"}, &stdout, &stderr); err != nil {
			t.Fatalf("%v\n%s", err, stderr.String())
		}
		if !strings.Contains(stdout.String(), "Spearman rank correlation") {
			t.Errorf("report:\n%s", stdout.String())
		}
		models[k], _ = os.ReadFile(out)
	}
	if len(models[0]) == 0 || !bytes.Equal(models[0], models[1]) {
		t.Error("two runs with the same seed wrote different models")
	}
}

func copyFile(t *testing.T, from, to string) {
	t.Helper()
	data, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	os.MkdirAll(filepath.Dir(to), 0o755)
	if err := os.WriteFile(to, data, 0o644); err != nil {
		t.Fatal(err)
	}
}
