package run

import (
	"bytes"
	"context"
	"image"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/cmd/internal/run/runtest"
)

func TestDemoPagesDeterministic(t *testing.T) {
	a, b := demoPages(), demoPages()
	if len(a) != 25 {
		t.Fatalf("%d demo pages, want 25 (three titles of eight, a blank ninth page)", len(a))
	}
	truth := map[string]int{}
	for i := range a {
		if a[i].Title != b[i].Title || a[i].Name != b[i].Name || a[i].Truth != b[i].Truth {
			t.Fatalf("page %d differs between calls", i)
		}
		if a[i].Truth {
			truth[a[i].Title]++
		}
	}
	for title, n := range truth {
		if n != 4 {
			t.Errorf("%s: ground truth for %d pages, want half (4)", title, n)
		}
	}
	if testing.Short() {
		return
	}
	if demoStamp(a) != demoStamp(b) {
		t.Error("the collection stamp differs between calls")
	}
}

func TestDemoRefusesForeignFolder(t *testing.T) {
	dir := t.TempDir()
	mustWrite(t, filepath.Join(dir, "thesis.txt"), []byte("precious"))
	_, err := Demo(context.Background(), DemoOptions{Out: dir})
	if err == nil || !strings.Contains(err.Error(), "not made by 'recto demo'") {
		t.Fatalf("err = %v, want a refusal", err)
	}
	if data, _ := os.ReadFile(filepath.Join(dir, "thesis.txt")); string(data) != "precious" {
		t.Error("the foreign folder was changed")
	}
	if _, err := os.Stat(filepath.Join(dir, demoMarker)); err == nil {
		t.Error("the marker was written into a foreign folder")
	}
}

func TestDemoEndToEndFakeEngine(t *testing.T) {
	// Small pages keep the test fast: it checks the demo's plumbing, the
	// rendering is checked above.
	render := renderDemoPage
	renderDemoPage = func(p demoPage) ([]byte, string, error) {
		img := image.NewGray(image.Rect(0, 0, 40, 20))
		var buf bytes.Buffer
		err := png.Encode(&buf, img)
		return buf.Bytes(), p.title.Pages[p.index], err
	}
	t.Cleanup(func() { renderDemoPage = render })
	dir := filepath.Join(t.TempDir(), "demo")
	var stderr bytes.Buffer
	o := DemoOptions{Out: dir, Stderr: &stderr, NewEngine: runtest.Engine(dir, 0), NoPrepare: true}
	sum, err := Demo(context.Background(), o)
	if err != nil {
		t.Fatal(err, stderr.String())
	}
	want := filepath.Join(dir, "run", reportDir, "report.html")
	if sum.Report != want {
		t.Errorf("report = %q, want %q", sum.Report, want)
	}
	rows := ledgerRows(t, filepath.Join(dir, "run"))
	truth := 0
	for _, r := range rows {
		if r.HasTruth {
			truth++
		}
	}
	if len(rows) != 25 || truth != 12 {
		t.Errorf("%d rows, %d with truth; want 25 and 12", len(rows), truth)
	}
	// A second demo reuses the folder and finds every page done.
	stderr.Reset()
	sum, err = Demo(context.Background(), o)
	if err != nil || sum.Skipped != 25 || !strings.Contains(stderr.String(), "(25 already done)") {
		t.Errorf("second demo: %v, %d skipped\n%s", err, sum.Skipped, stderr.String())
	}
}
