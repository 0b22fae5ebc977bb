package run

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"recto/ocr/tesseract"
)

// TestRunRealEngineShardsMerged runs the real engine over a small
// collection made of Tesseract's own test page phototest.tif (vendored in
// testdata/engine with its exact transcription; Tesseract 5.3.0 test data,
// Apache-2.0) under three names in two titles: once whole, once as three
// shards merged. Both must agree, and the measured CER of a clean page
// must be small.
func TestRunRealEngineShardsMerged(t *testing.T) {
	if testing.Short() {
		t.Skip("recognises six pages with Tesseract")
	}
	eng, err := tesseract.New(tesseract.Config{Lang: "eng"})
	if err != nil {
		t.Skipf("engine unavailable: %v", err)
	}
	eng.Close()
	img, err := os.ReadFile(filepath.Join("..", "..", "..", "testdata", "engine", "phototest.tif"))
	if err != nil {
		t.Fatal(err)
	}
	txt, err := os.ReadFile(filepath.Join("..", "..", "..", "testdata", "engine", "phototest.txt"))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	coll, truth := filepath.Join(dir, "coll"), filepath.Join(dir, "truth")
	for _, rel := range []string{"Gazette/p1", "Gazette/p2", "Almanac/p1"} {
		mustWrite(t, filepath.Join(coll, rel+".tif"), img)
		mustWrite(t, filepath.Join(truth, rel+".txt"), txt)
	}
	single := filepath.Join(dir, "single")
	if _, err := Run(context.Background(), Options{Collection: coll, Out: single, Truth: truth, Jobs: 2}); err != nil {
		t.Fatal(err)
	}
	sharded := filepath.Join(dir, "sharded")
	for _, s := range []string{"0/3", "1/3", "2/3"} {
		if _, err := Run(context.Background(), Options{Collection: coll, Out: sharded, Truth: truth, Shard: s}); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := Merge(context.Background(), MergeOptions{Dirs: []string{sharded}}); err != nil {
		t.Fatal(err)
	}
	sameRun(t, single, sharded)
	for _, r := range ledgerRows(t, single) {
		if !r.HasTruth || r.RefChars == 0 {
			t.Fatalf("%s: not scored", r.Rel)
		}
		// Tesseract reads its own clean test page almost perfectly (from
		// memory of its test suite; a loose bound).
		if cer := float64(r.CharErrs) / float64(r.RefChars); cer > 0.05 {
			t.Errorf("%s: CER %.3f on a clean page, want under 5 %%", r.Rel, cer)
		}
	}
}
