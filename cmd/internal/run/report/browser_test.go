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
p.textContent = "first=" + document.querySelector("#titles tbody tr th").textContent +
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

// TestHTMLPrintsToPDF prints report.html on A4 in headless Chromium
// (--print-to-pdf) and reads the PDF's text back with pdftotext (Debian's
// poppler-utils, -raw: the text in the order it is drawn, so a table
// cell's lines stay together): every title's name, its pages and ground truth, every
// rate with its interval before and after correction, the target and
// sampling sentences, and every listed page with its measured and
// predicted CER are in the printed document. The page size is A4 (ISO
// 216), as pdfinfo names it.
func TestHTMLPrintsToPDF(t *testing.T) {
	bin := chromium(t)
	for _, tool := range []string{"pdftotext", "pdfinfo"} {
		if _, err := exec.LookPath(tool); err != nil {
			t.Skipf("no %s on PATH (apt-get install poppler-utils): print check skipped", tool)
		}
	}
	dir := t.TempDir()
	pages, o := documentPages(), documentOptions()
	if err := Write(dir, pages, o); err != nil {
		t.Fatal(err)
	}
	pdf := filepath.Join(dir, "report.pdf")
	headless(t, bin, "--no-pdf-header-footer", "--print-to-pdf="+pdf, "file://"+filepath.Join(dir, "report.html"))
	info, err := exec.Command("pdfinfo", pdf).Output()
	if err != nil {
		t.Fatalf("pdfinfo: %v", err)
	}
	if !strings.Contains(string(info), "(A4)") {
		t.Errorf("PDF is not A4:\n%s", info)
	}
	out, err := exec.Command("pdftotext", "-raw", "-enc", "UTF-8", pdf, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext: %v", err)
	}
	text := strings.Join(strings.Fields(string(out)), " ")
	s := Summarise(sortedPages(pages), o)
	var want []string
	for _, tt := range append([]Title{s.Total}, s.Titles...) {
		v := makeTitleView(tt, nil, 1, o, -1)
		if tt.Title != "(all)" {
			want = append(want, tt.Title, v.Target)
		}
		want = append(want, v.Truth, v.Decided)
		for _, r := range v.Rows {
			want = append(want, r.Before, r.After)
		}
	}
	planned := plannedPages(pages)
	for _, tt := range s.Titles {
		want = append(want, sampleSentence(tt, planned[tt.Title]))
	}
	for _, p := range pages {
		v := makePageView(p)
		if p.Failed {
			want = append(want, p.Rel, p.Error)
			continue
		}
		if p.Decision == "blank" || p.Decision == "picture" {
			want = append(want, p.Rel, v.Predicted)
			continue
		}
		want = append(want, p.Rel+" ", v.Measured, v.MeasBefore, v.Predicted)
	}
	for _, r := range aboutRows(o.About, s.Total, pct(o.TargetCER)) {
		want = append(want, r.Value, r.Code)
	}
	for _, w := range want {
		w = strings.Join(strings.Fields(w), " ")
		if w != "" && !strings.Contains(text, w) {
			t.Errorf("printed report lacks %q", w)
		}
	}
	if t.Failed() {
		t.Logf("PDF text:\n%s", out)
	}
}
