package quality

import (
	"context"
	"os"
	"path/filepath"
	"testing"
)

// TestFolderReferenceListedOnce (#16 defect 8): a folder named like a
// reference is listed once, as an unreadable reference, and its
// hypothesis is not also listed as having no reference.
func TestFolderReferenceListedOnce(t *testing.T) {
	dir := t.TempDir()
	ref, hyp := filepath.Join(dir, "ref"), filepath.Join(dir, "hyp")
	for _, d := range []string{filepath.Join(ref, "T", "p2.txt"), filepath.Join(hyp, "T")} {
		if err := os.MkdirAll(d, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	for name, text := range map[string]string{filepath.Join(ref, "T", "p1.txt"): "a page", filepath.Join(hyp, "T", "p1.txt"): "a page", filepath.Join(hyp, "T", "p2.txt"): "text"} {
		if err := os.WriteFile(name, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	rep, err := ScoreDirs(context.Background(), ref, hyp, DirConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Failed) != 1 || len(rep.Unmatched) != 0 {
		t.Errorf("failed %v, unmatched %v: want the folder once, as an unreadable reference", rep.Failed, rep.Unmatched)
	}
}
