package ocrtest

import (
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"testing"
)

// toolPackages names the Debian package of each command-line tool the
// tests use to make or read reference files (scripts/setup installs them
// among its test packages).
var toolPackages = map[string]string{
	"convert":  "imagemagick",
	"tiffcp":   "libtiff-tools",
	"cwebp":    "webp",
	"img2pdf":  "img2pdf",
	"pdftoppm": "poppler-utils",
	"pdfinfo":  "poppler-utils",
}

// Tool returns the path of a command-line tool a test uses to make or
// read reference files; without it the test fails under CI (CI set) and
// is skipped elsewhere, saying which Debian package holds it.
func Tool(t testing.TB, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		pkg := toolPackages[name]
		if pkg == "" {
			pkg = "see scripts/setup"
		}
		msg := fmt.Sprintf("%s is not installed (Debian: %s; scripts/setup --test installs the test packages)", name, pkg)
		if os.Getenv("CI") != "" {
			t.Fatal(msg)
		}
		t.Skip(msg)
	}
	return p
}

// RunTool runs the tool name (found with Tool) with args and returns what
// it wrote to stdout; the test fails with its stderr when it fails.
func RunTool(t testing.TB, name string, args ...string) []byte {
	t.Helper()
	cmd := exec.Command(Tool(t, name), args...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("%s %q: %v: %s", name, args, err, stderr.String())
	}
	return out
}
