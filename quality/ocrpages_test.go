package quality

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestFindOCRPages: the pages of a folder `recto ocr` wrote, found by the
// one walker (internal/walk). A page is its record, its text or both, with
// the ALTO beside it; endings match in any case (files copied from other
// systems often carry upper-case endings: common practice); hidden
// entries, other files and an ALTO with neither record nor text are left
// out.
func TestFindOCRPages(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "ocr")
	for _, name := range []string{
		"ledger/p1.json", "ledger/p1.txt", "ledger/p1.alto.xml", "P2.TXT", "p3.alto.xml", "p4.JSON",
		".hidden/p5.txt", "ledger/.p6.txt", "notes.csv", "ledger/p7.prepared.png",
	} {
		p := filepath.Join(dir, filepath.FromSlash(name))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	pages, err := FindOCRPages(dir)
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, p := range pages {
		rel := func(s string) string {
			if s == "" {
				return "-"
			}
			r, _ := filepath.Rel(dir, s)
			return filepath.ToSlash(r)
		}
		got = append(got, p.Rel+"="+rel(p.JSON)+","+rel(p.Text)+","+rel(p.ALTO))
	}
	want := "P2=-,P2.TXT,- ledger/p1=ledger/p1.json,ledger/p1.txt,ledger/p1.alto.xml p4=p4.JSON,-,-"
	if g := strings.Join(got, " "); g != want {
		t.Errorf("pages\n %s\nwant\n %s", g, want)
	}

	empty := t.TempDir()
	if _, err := FindOCRPages(empty); !errors.Is(err, ErrNoPages) || !strings.Contains(err.Error(), empty) {
		t.Errorf("empty folder: %v, want ErrNoPages naming the folder", err)
	}
	if _, err := FindOCRPages(filepath.Join(dir, "notes.csv")); err == nil || !strings.Contains(err.Error(), "not a folder") {
		t.Errorf("a file as the folder: %v, want 'not a folder'", err)
	}
}
