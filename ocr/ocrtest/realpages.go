package ocrtest

import (
	"os"
	"path/filepath"
	"testing"
)

// RealPages returns the folder of real page scans that scripts/fetch-realpages
// unpacks: $RECTO_REALPAGES, or <user cache dir>/recto/realpages. It holds
// tesseract/ (Tesseract 5.3.0's test data, Apache-2.0) and leptonica/
// (leptonlib 1.82.0's prog/ folder, BSD-2-Clause); testdata/realpages/SOURCES.md
// lists both. When the folder is missing the test fails under CI (CI=true) and
// is skipped elsewhere, each time with a message that says how to get the pages.
func RealPages(t testing.TB) string {
	t.Helper()
	dir := os.Getenv("RECTO_REALPAGES")
	if dir == "" {
		cache, err := os.UserCacheDir()
		if err == nil {
			dir = filepath.Join(cache, "recto", "realpages")
		}
	}
	if dir != "" {
		if _, err := os.Stat(filepath.Join(dir, ".complete")); err == nil {
			return dir
		}
	}
	msg := "REAL PAGE SCANS MISSING: " + dir + " is not complete; run scripts/fetch-realpages (it downloads Debian's tesseract and leptonlib source packages)"
	if os.Getenv("CI") != "" {
		t.Fatal(msg)
	}
	t.Skip(msg)
	return ""
}
