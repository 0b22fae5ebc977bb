package report

import (
	"bytes"
	"fmt"
	"html/template"
	"math"
	"net/url"
	"path/filepath"
	"sort"
	"strings"
	"unicode/utf8"
)

// Chart geometry, in SVG user units (CSS pixels at 100 %).
const (
	chartW, chartH = 360.0, 180.0
	padL, padR     = 40.0, 10.0
	padT, padB     = 10.0, 30.0
	histBins       = 15   // bins of histStep, plus one overflow bin
	histStep       = 0.02 // CER per bin
	snippetRunes   = 160
)

type barView struct {
	X, Y, W, H float64
	Class      string
	Tip        string
}

type tickView struct {
	X, Y  float64
	Label string
}

type pointView struct {
	X, Y float64
	Tip  string
}

type chartView struct {
	W, H           float64
	X0, Y0, X1, Y1 float64 // plot area corners: (X0, Y1) top-left, (X1, Y0) bottom-right
	Bars           []barView
	XTicks         []tickView
	YTicks         []tickView
	Points         []pointView
	Diag           bool
	Empty          string // message when there is nothing to draw
}

type titleView struct {
	Title
	Anchor    string
	Hist      chartView
	Scatter   chartView
	PredSort  float64
	BeforeTxt string
	AfterTxt  string
	BeforeV   float64
	AfterV    float64
	Rates     []rateCell // WER, flex_cer and bag_wer before and after, in the order of rateHeads
}

// rateCell is one rate of the titles table: its text and sort value.
type rateCell struct {
	Txt string
	V   float64
}

// rateHeads are the headings of the titles table's further rates.
var rateHeads = []string{"WER before", "WER after", "flex CER before", "flex CER after", "bag WER before", "bag WER after"}

type pageView struct {
	Page
	Key      float64
	KeyKind  string // "measured" or "predicted"
	ImageURL template.URL
	TextURL  template.URL
}

type htmlData struct {
	Name      string
	Partial   string
	Decisions []string
	RateHeads []string
	Total     titleView
	Titles    []titleView
	Worst     []pageView
	Failed    []pageView
	Warned    []pageView // pages with warnings
}

// HTML renders the self-contained report page.
func HTML(s Summary, pages []Page, o Options) ([]byte, error) {
	by := make(map[string][]Page)
	for _, p := range pages {
		by[p.Title] = append(by[p.Title], p)
	}
	d := htmlData{Name: Clean(o.Name), Partial: Clean(o.Partial), Decisions: Decisions, RateHeads: rateHeads}
	if d.Name == "" {
		d.Name = "Collection"
	}
	d.Total = makeTitleView(s.Total, pages, 0)
	for i, t := range s.Titles {
		d.Titles = append(d.Titles, makeTitleView(t, by[t.Title], i+1))
	}
	worst := o.Worst
	if worst == 0 {
		worst = 25
	}
	var ok []pageView
	for _, p := range pages {
		v := makePageView(p)
		if len(v.Warnings) > 0 {
			d.Warned = append(d.Warned, v)
		}
		if p.Failed {
			d.Failed = append(d.Failed, v)
		} else {
			ok = append(ok, v)
		}
	}
	sort.SliceStable(ok, func(i, j int) bool {
		if ok[i].Key != ok[j].Key {
			return ok[i].Key > ok[j].Key
		}
		return ok[i].Rel < ok[j].Rel
	})
	if len(ok) > worst {
		ok = ok[:worst]
	}
	if o.Snippet != nil {
		for i := range ok {
			if ok[i].Snippet == "" {
				ok[i].Snippet = Clean(truncate(o.Snippet(ok[i].Page), snippetRunes))
			}
		}
	}
	d.Worst = ok
	var buf bytes.Buffer
	if err := pageTmpl.Execute(&buf, d); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

func makePageView(p Page) pageView {
	p.Rel, p.Title, p.Page, p.Error = Clean(p.Rel), Clean(p.Title), Clean(p.Page), Clean(p.Error)
	reasons := make([]string, len(p.Reasons))
	for i, r := range p.Reasons {
		reasons[i] = Clean(r)
	}
	p.Reasons = reasons
	warnings := make([]string, len(p.Warnings))
	for i, w := range p.Warnings {
		warnings[i] = Clean(w)
	}
	p.Warnings = warnings
	p.Snippet = Clean(truncate(p.Snippet, snippetRunes))
	v := pageView{Page: p, Key: p.PredictedCER, KeyKind: "predicted"}
	if _, after, ok := p.CER(); ok {
		v.Key, v.KeyKind = after, "measured"
	}
	v.ImageURL = fileURL(p.Image)
	v.TextURL = fileURL(p.Text)
	return v
}

func truncate(s string, n int) string {
	if utf8.RuneCountInString(s) <= n {
		return s
	}
	i := 0
	for k := range s {
		if i == n {
			return s[:k] + "…"
		}
		i++
	}
	return s
}

// fileURL turns a file path into a link: relative paths stay relative (each
// segment percent-encoded), absolute paths become file:// URLs. The result
// is built only from escaped segments, so it is safe to mark as a URL.
func fileURL(path string) template.URL {
	if path == "" {
		return ""
	}
	segs := strings.Split(filepath.ToSlash(path), "/")
	for i, s := range segs {
		segs[i] = url.PathEscape(s) // the real bytes, percent-encoded: the link finds the file
	}
	joined := strings.Join(segs, "/")
	if filepath.IsAbs(path) {
		return template.URL("file://" + joined)
	}
	if !strings.HasPrefix(joined, "../") && !strings.HasPrefix(joined, "./") {
		joined = "./" + joined // a first segment with ':' must not read as a scheme
	}
	return template.URL(joined)
}

func makeTitleView(t Title, pages []Page, i int) titleView {
	t.Title = Clean(t.Title)
	v := titleView{Title: t, Anchor: fmt.Sprintf("t%d", i), PredSort: -1, BeforeV: -1, AfterV: -1}
	if t.MeanPredictedCER != nil {
		v.PredSort = *t.MeanPredictedCER
	}
	v.BeforeTxt, v.BeforeV = rateText(t.CERBefore)
	v.AfterTxt, v.AfterV = rateText(t.CERAfter)
	for _, m := range []*Measured{t.WERBefore, t.WERAfter, t.FlexBefore, t.FlexAfter, t.BagBefore, t.BagAfter} {
		var c rateCell
		c.Txt, c.V = rateText(m)
		v.Rates = append(v.Rates, c)
	}
	v.Hist = histogram(pages)
	v.Scatter = scatter(pages)
	return v
}

func pct(x float64) string { return fmt.Sprintf("%.1f %%", 100*x) }

func rateText(m *Measured) (string, float64) {
	if m == nil {
		return "–", -1
	}
	s := pct(m.Rate)
	if m.Lo != nil && m.Hi != nil {
		s += fmt.Sprintf(" [%.1f, %.1f]", 100**m.Lo, 100**m.Hi)
	}
	return s, m.Rate
}

func plotArea(c *chartView) {
	c.W, c.H = chartW, chartH
	c.X0, c.X1 = padL, chartW-padR
	c.Y1, c.Y0 = padT, chartH-padB
}

// histogram draws the distribution of predicted CER (all processed pages)
// beside measured CER before correction (pages with ground truth).
func histogram(pages []Page) chartView {
	var c chartView
	plotArea(&c)
	var pred, meas [histBins + 1]int
	n := 0
	for _, p := range pages {
		if p.Failed {
			continue
		}
		n++
		pred[bin(p.PredictedCER)]++
		if b, _, ok := p.CER(); ok {
			meas[bin(b)]++
		}
	}
	if n == 0 {
		c.Empty = "no processed pages"
		return c
	}
	top := 1
	for i := range pred {
		top = max(top, pred[i], meas[i])
	}
	bw := (c.X1 - c.X0) / float64(histBins+1)
	yOf := func(k int) float64 { return c.Y0 - (c.Y0-c.Y1)*float64(k)/float64(top) }
	for i := 0; i <= histBins; i++ {
		x := c.X0 + float64(i)*bw
		lo := float64(i) * histStep
		rng := fmt.Sprintf("%.0f–%.0f %%", 100*lo, 100*(lo+histStep))
		if i == histBins {
			rng = fmt.Sprintf("≥ %.0f %%", 100*lo)
		}
		if pred[i] > 0 {
			c.Bars = append(c.Bars, barView{X: x + 1, Y: yOf(pred[i]), W: bw/2 - 1, H: c.Y0 - yOf(pred[i]), Class: "pred",
				Tip: fmt.Sprintf("predicted CER %s: %d pages", rng, pred[i])})
		}
		if meas[i] > 0 {
			c.Bars = append(c.Bars, barView{X: x + bw/2, Y: yOf(meas[i]), W: bw/2 - 1, H: c.Y0 - yOf(meas[i]), Class: "meas",
				Tip: fmt.Sprintf("measured CER %s: %d pages", rng, meas[i])})
		}
	}
	for i := 0; i <= histBins; i += 5 {
		label := fmt.Sprintf("%.0f", 100*float64(i)*histStep)
		if i == histBins {
			label = "≥" + label
		}
		c.XTicks = append(c.XTicks, tickView{X: c.X0 + float64(i)*bw, Y: c.Y0 + 14, Label: label})
	}
	c.YTicks = []tickView{{X: c.X0 - 4, Y: c.Y0 + 4, Label: "0"}, {X: c.X0 - 4, Y: c.Y1 + 4, Label: fmt.Sprint(top)}}
	return c
}

func bin(cer float64) int {
	if math.IsNaN(cer) || cer < 0 {
		return 0
	}
	b := int(cer / histStep)
	return min(b, histBins)
}

// scatter plots predicted CER (x) against measured CER before correction
// (y) for the pages with ground truth; the diagonal is a perfect estimate.
func scatter(pages []Page) chartView {
	var c chartView
	plotArea(&c)
	type xy struct {
		x, y float64
		tip  string
	}
	var pts []xy
	top := 0.10
	for _, p := range pages {
		if b, _, ok := p.CER(); ok && !p.Failed {
			pts = append(pts, xy{p.PredictedCER, b, fmt.Sprintf("%s: predicted %s, measured %s", Clean(p.Rel), pct(p.PredictedCER), pct(b))})
			top = max(top, p.PredictedCER, b)
		}
	}
	if len(pts) == 0 {
		c.Empty = "no ground truth"
		return c
	}
	top = math.Min(math.Ceil(top*20)/20, 1) // round up to 5 %; clip at 100 %
	sx := func(v float64) float64 { return c.X0 + (c.X1-c.X0)*math.Min(v, top)/top }
	sy := func(v float64) float64 { return c.Y0 - (c.Y0-c.Y1)*math.Min(v, top)/top }
	for _, p := range pts {
		c.Points = append(c.Points, pointView{X: sx(p.x), Y: sy(p.y), Tip: p.tip})
	}
	c.Diag = true
	for _, f := range []float64{0, 0.5, 1} {
		label := fmt.Sprintf("%.0f", 100*top*f)
		c.XTicks = append(c.XTicks, tickView{X: sx(top * f), Y: c.Y0 + 14, Label: label})
		c.YTicks = append(c.YTicks, tickView{X: c.X0 - 4, Y: sy(top*f) + 4, Label: label})
	}
	return c
}

func joinReasons(r []string) string { return strings.Join(r, "; ") }

var pageTmpl = template.Must(template.New("report").Funcs(template.FuncMap{
	"pct":     pct,
	"reasons": joinReasons,
	"f1":      func(x float64) string { return fmt.Sprintf("%.1f", x) },
	"f4":      func(x float64) string { return fmt.Sprintf("%.4f", x) },
	"dec":     func(m map[string]int, k string) int { return m[k] },
}).Parse(pageHTML))

const pageHTML = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>OCR report: {{.Name}}</title>
<style>
body{font:14px/1.4 system-ui,sans-serif;margin:1.5em;color:#222}
h1{font-size:1.5em}h2{font-size:1.2em;margin-top:2em}h3{font-size:1.05em}
table{border-collapse:collapse;margin:.5em 0}
th,td{border:1px solid #ccc;padding:.25em .5em;text-align:right;vertical-align:top}
th{background:#eee;cursor:pointer;user-select:none}
td.l,th.l{text-align:left}
th[data-dir=asc]::after{content:" ▲"}th[data-dir=desc]::after{content:" ▼"}
.charts{display:flex;flex-wrap:wrap;gap:1em}
figure{margin:0}figcaption{font-size:.85em;color:#555}
svg{background:#fafafa;border:1px solid #ddd}
svg text{font:10px sans-serif;fill:#444}
.pred{fill:#8a8fa8}.meas{fill:#d9822b}.pt{fill:#2b6cb0;fill-opacity:.7}
.axis{stroke:#888;stroke-width:1}.diag{stroke:#bbb;stroke-dasharray:4 3}
.snip{font-family:monospace;font-size:.85em;white-space:pre-wrap;text-align:left;max-width:40em}
.key{display:inline-block;width:.8em;height:.8em;margin:0 .2em 0 .8em}.key.pred{background:#8a8fa8}.key.meas{background:#d9822b}
</style>
</head>
<body>
<h1>OCR report: {{.Name}}</h1>
{{with .Partial}}<p class="partial"><strong>Partial report:</strong> {{.}}</p>
{{end}}<p>{{.Total.Pages}} pages in {{len .Titles}} titles; {{.Total.Failed}} failed.
{{range .Decisions}}{{.}}: {{dec $.Total.Decisions .}}. {{end}}
{{with .Total.CERBefore}}Measured CER on {{.Pages}} pages with ground truth: {{$.Total.BeforeTxt}} before correction, {{$.Total.AfterTxt}} after.{{end}}</p>

<h2>Titles</h2>
<p>Click a column heading to sort. Measured CER is pooled over the title's pages with ground truth; brackets give the interval.</p>
<table class="sortable" id="titles">
<thead><tr><th class="l">Title</th><th>Pages</th><th>Failed</th>{{range .Decisions}}<th>{{.}}</th>{{end}}<th>Mean predicted CER</th><th>Pages with truth</th><th>CER before</th><th>CER after</th>{{range .RateHeads}}<th>{{.}}</th>{{end}}<th>Corrections</th></tr></thead>
<tbody>
{{range .Titles}}<tr><td class="l" data-v="{{.Title.Title}}"><a href="#{{.Anchor}}">{{.Title.Title}}</a></td><td data-v="{{.Pages}}">{{.Pages}}</td><td data-v="{{.Failed}}">{{.Failed}}</td>{{$t := .}}{{range $.Decisions}}<td data-v="{{dec $t.Decisions .}}">{{dec $t.Decisions .}}</td>{{end}}<td data-v="{{f4 .PredSort}}">{{if .MeanPredictedCER}}{{pct .PredSort}}{{else}}–{{end}}</td><td data-v="{{.TruthPages}}">{{.TruthPages}}</td><td data-v="{{f4 .BeforeV}}">{{.BeforeTxt}}</td><td data-v="{{f4 .AfterV}}">{{.AfterTxt}}</td>{{range .Rates}}<td data-v="{{f4 .V}}">{{.Txt}}</td>{{end}}<td data-v="{{.Corrections}}">{{.Corrections}}</td></tr>
{{end}}</tbody>
</table>

<h2>Worst pages</h2>
<p>Ordered by measured CER after correction where there is ground truth, else by predicted CER.</p>
<table id="worst">
<thead><tr><th class="l">Page</th><th>CER</th><th class="l">Decision</th><th class="l">Why</th><th class="l">Links</th><th class="l">Start of text</th></tr></thead>
<tbody>
{{range .Worst}}<tr><td class="l">{{.Rel}}</td><td>{{pct .Key}} <small>{{.KeyKind}}</small></td><td class="l">{{.Decision}}</td><td class="l">{{reasons .Reasons}}</td><td class="l">{{if .ImageURL}}<a href="{{.ImageURL}}">image</a>{{end}}{{if .TextURL}} <a href="{{.TextURL}}">text</a>{{end}}</td><td class="snip">{{.Snippet}}</td></tr>
{{else}}<tr><td class="l" colspan="6">No processed pages.</td></tr>
{{end}}</tbody>
</table>

{{if .Failed}}<h2>Pages that failed</h2>
<table id="failed">
<thead><tr><th class="l">Page</th><th class="l">Error</th></tr></thead>
<tbody>
{{range .Failed}}<tr><td class="l">{{if .ImageURL}}<a href="{{.ImageURL}}">{{.Rel}}</a>{{else}}{{.Rel}}{{end}}</td><td class="l">{{.Error}}</td></tr>
{{end}}</tbody>
</table>{{end}}

{{if .Warned}}<h2>Warnings</h2>
<table id="warnings">
<thead><tr><th class="l">Page</th><th class="l">Warning</th></tr></thead>
<tbody>
{{range .Warned}}{{$p := .}}{{range .Warnings}}<tr><td class="l">{{if $p.ImageURL}}<a href="{{$p.ImageURL}}">{{$p.Rel}}</a>{{else}}{{$p.Rel}}{{end}}</td><td class="l">{{.}}</td></tr>
{{end}}{{end}}</tbody>
</table>{{end}}

<h2>Per title</h2>
<p><span class="key pred"></span>predicted CER (all pages) <span class="key meas"></span>measured CER (pages with ground truth); scatter: each dot is a page with ground truth, predicted (across) against measured before correction (up), in percent; the dashed line is a perfect estimate.</p>
{{range .Titles}}<section id="{{.Anchor}}">
<h3>{{.Title.Title}}</h3>
<p>{{.Pages}} pages, {{.Failed}} failed; CER before {{.BeforeTxt}}, after {{.AfterTxt}}.</p>
<div class="charts">
<figure>{{template "chart" .Hist}}<figcaption>CER distribution (percent)</figcaption></figure>
<figure>{{template "chart" .Scatter}}<figcaption>Predicted against measured CER (percent)</figcaption></figure>
</div>
</section>
{{end}}
<script>
(function(){
document.querySelectorAll("table.sortable").forEach(function(table){
  var heads = table.tHead.rows[0].cells;
  Array.prototype.forEach.call(heads, function(th, col){
    th.addEventListener("click", function(){
      var asc = th.getAttribute("data-dir") !== "asc";
      Array.prototype.forEach.call(heads, function(h){ h.removeAttribute("data-dir"); });
      th.setAttribute("data-dir", asc ? "asc" : "desc");
      var body = table.tBodies[0];
      var rows = Array.prototype.slice.call(body.rows);
      rows.sort(function(a, b){
        var x = a.cells[col].getAttribute("data-v"), y = b.cells[col].getAttribute("data-v");
        var nx = parseFloat(x), ny = parseFloat(y);
        var c = (!isNaN(nx) && !isNaN(ny)) ? nx - ny : x.localeCompare(y);
        return asc ? c : -c;
      });
      rows.forEach(function(r){ body.appendChild(r); });
    });
  });
});
})();
</script>
</body>
</html>
{{define "chart"}}<svg xmlns="http://www.w3.org/2000/svg" width="{{f1 .W}}" height="{{f1 .H}}" viewBox="0 0 {{f1 .W}} {{f1 .H}}" role="img">
{{if .Empty}}<text x="{{f1 .X0}}" y="{{f1 .Y1}}" dy="20">{{.Empty}}</text>{{else}}<line class="axis" x1="{{f1 .X0}}" y1="{{f1 .Y0}}" x2="{{f1 .X1}}" y2="{{f1 .Y0}}"/><line class="axis" x1="{{f1 .X0}}" y1="{{f1 .Y0}}" x2="{{f1 .X0}}" y2="{{f1 .Y1}}"/>
{{if .Diag}}<line class="diag" x1="{{f1 .X0}}" y1="{{f1 .Y0}}" x2="{{f1 .X1}}" y2="{{f1 .Y1}}"/>{{end}}
{{range .Bars}}<rect class="{{.Class}}" x="{{f1 .X}}" y="{{f1 .Y}}" width="{{f1 .W}}" height="{{f1 .H}}"><title>{{.Tip}}</title></rect>{{end}}
{{range .Points}}<circle class="pt" cx="{{f1 .X}}" cy="{{f1 .Y}}" r="3"><title>{{.Tip}}</title></circle>{{end}}
{{range .XTicks}}<text x="{{f1 .X}}" y="{{f1 .Y}}" text-anchor="middle">{{.Label}}</text>{{end}}
{{range .YTicks}}<text x="{{f1 .X}}" y="{{f1 .Y}}" text-anchor="end">{{.Label}}</text>{{end}}{{end}}
</svg>{{end}}`
