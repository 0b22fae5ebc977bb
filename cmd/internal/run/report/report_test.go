package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"

	"golang.org/x/net/html"
)

// hostile is OCR-like text that must never become markup or break a file:
// tags, an attribute breakout, a script end tag, C0/C1 controls, invalid
// UTF-8 and XML non-characters.
const hostile = "<script>alert(1)</script> \"' onmouseover=x <b>bold</b> </td></table> a\x01b\x0bc\u0085d \xff\xfe \uFFFE\uFFFF & &amp; =SUM(A1)"

func samplePages() []Page {
	return []Page{
		{Rel: "Alder Gazette/p01.png", Title: "Alder Gazette", Page: "p01.png", Decision: "accept", PredictedCER: 0.02,
			HasTruth: true, RefChars: 1000, CharErrs: 30, CharErrsAfter: 20, RefWords: 200, WordErrs: 12, WordErrsAfter: 8,
			OrderFree: true, FlexErrs: 25, FlexErrsAfter: 15, BagErrs: 20, BagErrsAfter: 12,
			Image: "../../in/Alder Gazette/p01.png", Text: "../ocr/Alder Gazette/p01.txt", Snippet: "The harbour at Wrenmouth"},
		{Rel: "Alder Gazette/p02.png", Title: "Alder Gazette", Page: "p02.png", Decision: "correct", PredictedCER: 0.09, Corrections: 5,
			HasTruth: true, RefChars: 500, CharErrs: 50, CharErrsAfter: 40, RefWords: 100, WordErrs: 20, WordErrsAfter: 15,
			OrderFree: true, FlexErrs: 45, FlexErrsAfter: 35, BagErrs: 30, BagErrsAfter: 24,
			Reasons: []string{"many words not in lexicon"}, Image: "/abs/in/p 2?.png", Text: "../ocr/Alder Gazette/p02.txt", Snippet: hostile},
		{Rel: "Alder Gazette/p03.png", Title: "Alder Gazette", Page: "p03.png", Failed: true, Error: `ocr: decode "p03.png": unexpected EOF ` + hostile,
			Image: "../../in/Alder Gazette/p03.png"},
		{Rel: "=Bell <Ledger>/p01.tif", Title: "=Bell <Ledger>", Page: "p01.tif", Decision: "rescan", PredictedCER: 0.4,
			Reasons: []string{"low confidence", hostile}, Snippet: hostile},
	}
}

func TestSummarisePooled(t *testing.T) {
	s := Summarise(samplePages(), Options{})
	if len(s.Titles) != 2 || s.Titles[0].Title != "=Bell <Ledger>" || s.Titles[1].Title != "Alder Gazette" {
		t.Fatalf("titles = %+v", s.Titles)
	}
	a := s.Titles[1]
	// Pooled CER (common practice): (30+50)/(1000+500), not the mean of 0.03 and 0.10.
	if a.CERBefore == nil || math.Abs(a.CERBefore.Rate-80.0/1500) > 1e-12 || a.CERBefore.Pages != 2 {
		t.Errorf("CERBefore = %+v, want 80/1500 over 2 pages", a.CERBefore)
	}
	if a.CERAfter == nil || math.Abs(a.CERAfter.Rate-60.0/1500) > 1e-12 {
		t.Errorf("CERAfter = %+v, want 60/1500", a.CERAfter)
	}
	if a.Pages != 3 || a.Failed != 1 || a.Decisions["accept"] != 1 || a.Decisions["correct"] != 1 || a.Corrections != 5 {
		t.Errorf("counts = %+v", a)
	}
	if a.MeanPredictedCER == nil || math.Abs(*a.MeanPredictedCER-0.055) > 1e-12 {
		t.Errorf("mean predicted = %v, want 0.055 (failed page left out)", a.MeanPredictedCER)
	}
	// Order-free rates pooled the same way: flex over characters, bag over words.
	if a.FlexBefore == nil || math.Abs(a.FlexBefore.Rate-70.0/1500) > 1e-12 || a.FlexAfter == nil || math.Abs(a.FlexAfter.Rate-50.0/1500) > 1e-12 {
		t.Errorf("flex = %+v, %+v, want 70/1500 and 50/1500", a.FlexBefore, a.FlexAfter)
	}
	if a.BagBefore == nil || math.Abs(a.BagBefore.Rate-50.0/300) > 1e-12 || a.BagAfter == nil || math.Abs(a.BagAfter.Rate-36.0/300) > 1e-12 {
		t.Errorf("bag = %+v, %+v, want 50/300 and 36/300", a.BagBefore, a.BagAfter)
	}
	if s.Titles[0].CERBefore != nil {
		t.Errorf("title without truth has CER %+v", s.Titles[0].CERBefore)
	}
	if s.Total.Pages != 4 || s.Total.Failed != 1 || s.Total.TruthPages != 2 {
		t.Errorf("total = %+v", s.Total)
	}
}

// TestOrderFreeNeedsEveryPage: a title whose pages with ground truth do
// not all carry the order-free counts (a ledger written before they were
// measured) shows none, rather than a rate over a different set of pages
// than its CER.
func TestOrderFreeNeedsEveryPage(t *testing.T) {
	pages := samplePages()
	pages[1].OrderFree = false
	a := Summarise(pages, Options{}).Titles[1]
	if a.FlexBefore != nil || a.BagAfter != nil || a.CERBefore == nil {
		t.Errorf("flex %+v, bag %+v, CER %+v: want no order-free rates, CER kept", a.FlexBefore, a.BagAfter, a.CERBefore)
	}
}

func TestIntervalPassedThrough(t *testing.T) {
	calls := 0
	ci := func(errs, chars []int) (float64, float64, bool) {
		calls++
		return 0.01, 0.2, len(errs) >= 2
	}
	s := Summarise(samplePages(), Options{Interval: ci})
	if a := s.Titles[1]; a.CERBefore.Lo == nil || *a.CERBefore.Hi != 0.2 {
		t.Errorf("interval not recorded: %+v", a.CERBefore)
	}
	if calls == 0 {
		t.Error("interval function never called")
	}
}

func writeSample(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	if err := Write(dir, samplePages(), Options{Name: "Wrenmouth <Archive>"}); err != nil {
		t.Fatal(err)
	}
	return dir
}

func TestCSVFilesParseAndAreSafe(t *testing.T) {
	dir := writeSample(t)
	for name, rows := range map[string]int{"titles.csv": 4, "pages.csv": 5, "rescan.csv": 3} {
		data, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		recs, err := csv.NewReader(bytes.NewReader(data)).ReadAll()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if len(recs) != rows {
			t.Errorf("%s: %d rows, want %d", name, len(recs), rows)
		}
		for _, r := range recs {
			for _, c := range r {
				if c != "" && strings.ContainsRune("=+-@", rune(c[0])) {
					t.Errorf("%s: cell %q would run as a spreadsheet formula", name, c)
				}
				if !utf8.ValidString(c) || strings.ContainsAny(c, "\x01\x0b\u0085\uFFFE") {
					t.Errorf("%s: cell %q carries control or invalid characters", name, c)
				}
			}
		}
	}
	var s struct{ Titles []map[string]any }
	data, _ := os.ReadFile(filepath.Join(dir, "titles.json"))
	if err := json.Unmarshal(data, &s); err != nil || len(s.Titles) != 2 {
		t.Errorf("titles.json: %v, %d titles", err, len(s.Titles))
	}
}

func TestWriteDeterministic(t *testing.T) {
	a, b := writeSample(t), t.TempDir()
	pages := samplePages()
	for i, j := 0, len(pages)-1; i < j; i, j = i+1, j-1 { // same pages, other order
		pages[i], pages[j] = pages[j], pages[i]
	}
	if err := Write(b, pages, Options{Name: "Wrenmouth <Archive>"}); err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"titles.csv", "titles.json", "pages.csv", "rescan.csv", "report.html"} {
		x, _ := os.ReadFile(filepath.Join(a, name))
		y, _ := os.ReadFile(filepath.Join(b, name))
		if !bytes.Equal(x, y) {
			t.Errorf("%s differs between runs on the same pages", name)
		}
	}
}

// TestHTMLStructure parses report.html with an HTML5 parser
// (golang.org/x/net/html, after the WHATWG HTML standard) and checks that
// hostile text stayed text: exactly one script element (ours), every
// snippet cell holds the hostile string as text, and links are relative or
// file:// URLs with encoded segments.
func TestHTMLStructure(t *testing.T) {
	dir := writeSample(t)
	data, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	if !utf8.Valid(data) {
		t.Fatal("report.html is not valid UTF-8")
	}
	for _, c := range []string{"\x01", "\x0b", "\u0085", "\uFFFE", "\uFFFF"} {
		if bytes.Contains(data, []byte(c)) {
			t.Errorf("report.html contains control or non-character %q", c)
		}
	}
	doc, err := html.Parse(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	counts := map[string]int{}
	var snippets, hrefs []string
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode {
			counts[n.Data]++
			for _, a := range n.Attr {
				if strings.HasPrefix(a.Key, "on") {
					t.Errorf("element <%s> has event attribute %s=%q", n.Data, a.Key, a.Val)
				}
				if a.Key == "href" {
					hrefs = append(hrefs, a.Val)
				}
				if a.Key == "class" && a.Val == "snip" {
					snippets = append(snippets, textOf(n))
				}
			}
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(doc)
	if counts["script"] != 1 || counts["b"] != 0 {
		t.Errorf("elements: %d script (want 1), %d b (want 0)", counts["script"], counts["b"])
	}
	if counts["svg"] != 4 {
		t.Errorf("%d svg charts, want 4 (two per title)", counts["svg"])
	}
	found := false
	for _, s := range snippets {
		if strings.Contains(s, "<script>alert(1)</script>") && strings.Contains(s, "</td></table>") {
			found = true
		}
	}
	if !found {
		t.Errorf("hostile snippet not shown as text; snippets = %q", snippets)
	}
	wantHref := map[string]bool{
		"./../../in/Alder%20Gazette/p01.png": false, // not used: relative links keep their ../
		"../../in/Alder%20Gazette/p01.png":   true,
		"file:///abs/in/p%202%3F.png":        true,
		"../ocr/Alder%20Gazette/p01.txt":     true,
	}
	have := map[string]bool{}
	for _, h := range hrefs {
		have[h] = true
	}
	for h, want := range wantHref {
		if have[h] != want {
			t.Errorf("href %q present = %v, want %v (hrefs: %q)", h, have[h], want, hrefs)
		}
	}
}

func textOf(n *html.Node) string {
	var b strings.Builder
	var f func(*html.Node)
	f = func(n *html.Node) {
		if n.Type == html.TextNode {
			b.WriteString(n.Data)
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			f(c)
		}
	}
	f(n)
	return b.String()
}

func TestClean(t *testing.T) {
	tests := []struct{ in, want string }{
		{"plain text\tand\nlines", "plain text\tand\nlines"},
		{"a\x00b", "a\uFFFDb"},
		{"bad \xff byte", "bad \uFFFD byte"},
		{"nel\u0085", "nel\uFFFD"},
		{"\uFFFE", "\uFFFD"},
		{"café", "café"},
	}
	for _, tt := range tests {
		if got := Clean(tt.in); got != tt.want {
			t.Errorf("Clean(%q) = %q, want %q", tt.in, got, tt.want)
		}
	}
}

// TestChartColoursInGreyscale: the two bar series of the charts stay
// apart when printed in grey. Their fills, read from the page's style
// sheet, must differ in relative luminance by a contrast ratio of at least
// 3:1, the figure WCAG 2.1 asks of graphical objects (W3C, Web Content
// Accessibility Guidelines 2.1, 2018, success criterion 1.4.11, with its
// definitions of relative luminance and contrast ratio).
func TestChartColoursInGreyscale(t *testing.T) {
	fill := func(class string) float64 {
		i := strings.Index(pageHTML, "."+class+"{fill:#")
		if i < 0 {
			t.Fatalf("no fill for .%s in the style sheet", class)
		}
		hex := pageHTML[i+len(class)+8 : i+len(class)+14]
		var rgb [3]float64
		for k := range rgb {
			var v int
			if _, err := fmt.Sscanf(hex[2*k:2*k+2], "%02x", &v); err != nil {
				t.Fatalf(".%s fill %q: %v", class, hex, err)
			}
			c := float64(v) / 255
			if c <= 0.03928 {
				rgb[k] = c / 12.92
			} else {
				rgb[k] = math.Pow((c+0.055)/1.055, 2.4)
			}
		}
		return 0.2126*rgb[0] + 0.7152*rgb[1] + 0.0722*rgb[2]
	}
	a, b := fill("pred"), fill("meas")
	ratio := (max(a, b) + 0.05) / (min(a, b) + 0.05)
	if ratio < 3 {
		t.Errorf("predicted and measured bars: contrast ratio %.2f in greyscale, want at least 3", ratio)
	}
}
