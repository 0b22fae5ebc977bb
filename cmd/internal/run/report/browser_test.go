package report

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// chromium returns the path of a headless-capable Chromium, or skips.
func chromium(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	t.Skip("no chromium on PATH: browser check skipped (apt-get install chromium to run it); the structural check in TestHTMLStructure still runs")
	return ""
}

func headless(t *testing.T, bin string, args ...string) []byte {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	base := []string{"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir=" + t.TempDir()}
	cmd := exec.CommandContext(ctx, bin, append(base, args...)...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("%s: %v\n%s", bin, err, stderr.String())
	}
	return out
}

// TestHTMLInBrowser loads report.html in headless Chromium with a probe
// script appended that clicks the "Pages" heading of the titles table
// twice (descending) and records the first row, then reads the DOM back:
// the page loads offline, the sorting script runs, and the hostile snippet
// is still one text node (no element it could have opened).
func TestHTMLInBrowser(t *testing.T) {
	bin := chromium(t)
	dir := writeSample(t)
	data, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	probe := `<script>
var th = document.querySelectorAll("#titles th")[1]; th.click(); th.click();
var p = document.createElement("p"); p.id = "probe";
p.textContent = "first=" + document.querySelector("#titles tbody tr td").textContent +
  ";scripts=" + document.scripts.length + ";bold=" + document.getElementsByTagName("b").length +
  ";svg=" + document.getElementsByTagName("svg").length;
document.body.appendChild(p);
</script>`
	probed := filepath.Join(dir, "probe.html")
	data = bytes.Replace(data, []byte("</body>"), []byte(probe+"</body>"), 1)
	if err := os.WriteFile(probed, data, 0o644); err != nil {
		t.Fatal(err)
	}
	dom := string(headless(t, bin, "--dump-dom", "file://"+probed))
	// Alder Gazette has 3 pages, =Bell <Ledger> 1: descending puts Alder first.
	want := `first=Alder Gazette;scripts=2;bold=0;svg=4`
	if !strings.Contains(dom, want) {
		i := strings.Index(dom, `id="probe"`)
		t.Errorf("probe = %q, want %q", dom[max(i, 0):min(len(dom), max(i, 0)+200)], want)
	}
	if os.Getenv("RECTO_SCREENSHOT") != "" { // for a person to look at
		headless(t, bin, "--screenshot="+os.Getenv("RECTO_SCREENSHOT"), "--window-size=1280,2000", "file://"+filepath.Join(dir, "report.html"))
	}
}
