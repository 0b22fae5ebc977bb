package quality

import (
	"context"
	"os"
	"path/filepath"
	"testing"
)

// TestScoreLoosePageTitle (issue 17 part 3): a reference lying directly in
// the ground-truth folder belongs to the title named after the folder of
// the page's image, which the page record recto ocr wrote beside the
// hypothesis names (as recto run and recto triage name it, so that a
// sampling plan's titles match), not to "truth"; without a record it keeps
// the ground-truth folder's name; a page in a sub-folder keeps that folder.
func TestScoreLoosePageTitle(t *testing.T) {
	root := t.TempDir()
	truth, hyp := filepath.Join(root, "truth"), filepath.Join(root, "ocr")
	write := func(name, text string) {
		t.Helper()
		if err := os.MkdirAll(filepath.Dir(name), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(name, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, p := range []string{"p1.tif.txt", "p2.txt", "vellmark-ledger/p3.txt"} {
		write(filepath.Join(truth, p), "The harbour at Wrenmouth\n")
		write(filepath.Join(hyp, p), "The harbonr at Wrenmouth\n")
	}
	write(filepath.Join(hyp, "p1.tif.json"), `{"version":1,"source":"/scans/harbour-gazette/p1.tif","words":[]}`)
	rep, err := ScoreDirs(context.Background(), truth, hyp, DirConfig{})
	if err != nil {
		t.Fatal(err)
	}
	got := map[string]string{}
	for _, p := range rep.Pages {
		got[p.Page] = p.Title
	}
	want := map[string]string{"p1.tif": "harbour-gazette", "p2": "truth", "vellmark-ledger/p3": "vellmark-ledger"}
	for page, title := range want {
		if got[page] != title {
			t.Errorf("page %s: title %q, want %q (all: %v)", page, got[page], title, got)
		}
	}
}

func TestSourceTitle(t *testing.T) {
	for _, tt := range []struct{ source, want string }{
		{"/scans/harbour-gazette/p1.tif", "harbour-gazette"},
		{"scans/p1.tif", "scans"},
		{"p1.tif", "fallback"},
		{"", "fallback"},
		{"/p1.tif", "fallback"},
	} {
		if got := SourceTitle(tt.source, "fallback"); got != tt.want {
			t.Errorf("SourceTitle(%q) = %q, want %q", tt.source, got, tt.want)
		}
	}
}
