package ocrtest

import (
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"recto/ocr"
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

// PlainEngine returns the text the `tesseract` command gives for the image
// at path as a user runs it: its defaults (fully automatic page
// segmentation, the file's own resolution, no preparation), one thread
// (OMP_THREAD_LIMIT=1). It is the reference of the side-by-side checks on
// real pages; a missing command fails the test.
func PlainEngine(t testing.TB, path string) string {
	t.Helper()
	bin, err := exec.LookPath("tesseract")
	if err != nil {
		t.Fatal("the tesseract command is missing (Debian: tesseract-ocr): the side-by-side check cannot run")
	}
	cmd := exec.Command(bin, path, "-")
	cmd.Env = append(os.Environ(), "OMP_THREAD_LIMIT=1")
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("tesseract %s: %v", path, err)
	}
	return string(out)
}

// PlainEngineWords returns the words the `tesseract` command reads in the
// image at path as PlainEngine runs it, with their confidences (from its
// tsv output: level-5 rows, conf in percent, here in [0, 1]).
func PlainEngineWords(t testing.TB, path string) []ocr.Word {
	t.Helper()
	bin, err := exec.LookPath("tesseract")
	if err != nil {
		t.Fatal("the tesseract command is missing (Debian: tesseract-ocr): the side-by-side check cannot run")
	}
	cmd := exec.Command(bin, path, "-", "tsv")
	cmd.Env = append(os.Environ(), "OMP_THREAD_LIMIT=1")
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("tesseract %s tsv: %v", path, err)
	}
	var words []ocr.Word
	for i, line := range strings.Split(string(out), "\n") {
		f := strings.Split(line, "\t")
		if i == 0 || len(f) < 12 || f[0] != "5" {
			continue
		}
		conf, err := strconv.ParseFloat(f[10], 64)
		if err != nil {
			t.Fatalf("tesseract %s tsv: line %d: confidence %q", path, i+1, f[10])
		}
		words = append(words, ocr.Word{Text: f[11], Conf: conf / 100})
	}
	return words
}
