package report

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// TestHTMLListsWarnings (#16 defect 6): a step's warning about a page is
// listed in report.html with the page, escaped, and a page without one adds
// no section.
func TestHTMLListsWarnings(t *testing.T) {
	pages := samplePages()
	dir := t.TempDir()
	if err := Write(dir, pages, Options{}); err != nil {
		t.Fatal(err)
	}
	html, _ := os.ReadFile(filepath.Join(dir, "report.html"))
	if bytes.Contains(html, []byte("<h2>Warnings</h2>")) {
		t.Error("a Warnings section without warnings")
	}
	pages[0].Warnings = []string{"page 3 of <5> could not be read"}
	if err := Write(dir, pages, Options{}); err != nil {
		t.Fatal(err)
	}
	html, _ = os.ReadFile(filepath.Join(dir, "report.html"))
	if !bytes.Contains(html, []byte("<h2>Warnings</h2>")) || !bytes.Contains(html, []byte("page 3 of &lt;5&gt; could not be read")) {
		t.Error("report.html does not list the warning, escaped")
	}
}
