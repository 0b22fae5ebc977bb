package report

// pageHTML is report.html: a document to read on screen and to print on
// A4. Headings and table headers are marked up as such (th with scope,
// captions); each chart is an SVG with role="img", a title and a desc
// holding its numbers; the two bar colours differ in lightness (a dark
// slate and a light amber, with an outline), so they stay apart in
// greyscale print; links show the file's name.
const pageHTML = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>OCR quality report: {{.Name}}</title>
<style>
body{font:14px/1.45 system-ui,sans-serif;margin:1.5em auto;max-width:72em;padding:0 1em;color:#1a1a1a}
h1{font-size:1.6em;margin-bottom:.2em}h2{font-size:1.25em;margin-top:2em;border-bottom:1px solid #999}h3{font-size:1.1em;margin-top:1.6em}
table{border-collapse:collapse;margin:.5em 0}
caption{text-align:left;font-weight:600;padding:.2em 0}
th,td{border:1px solid #bbb;padding:.25em .5em;text-align:right;vertical-align:top}
th{background:#eee}
td.l,th.l{text-align:left}
table.sortable th{cursor:pointer;user-select:none}
th[data-dir=asc]::after{content:" ▲"}th[data-dir=desc]::after{content:" ▼"}
table.facts th{text-align:left;font-weight:600;width:16em}table.facts td{text-align:left}
code{font-size:.85em;word-break:break-all}
.charts{display:flex;flex-wrap:wrap;gap:1em}
figure{margin:.5em 0}figcaption{font-size:.85em;color:#333;max-width:360px}
svg{background:#fff;border:1px solid #bbb}
svg text{font:10px sans-serif;fill:#222}
.pred{fill:#2e3b55}.meas{fill:#f4c27a;stroke:#6b4410;stroke-width:.8}.pt{fill:#2e3b55;fill-opacity:.8}
.axis{stroke:#555;stroke-width:1}.diag{stroke:#888;stroke-dasharray:4 3}
.snip{font-family:monospace;font-size:.85em;white-space:pre-wrap;text-align:left;max-width:32em}
.key{display:inline-block;width:.9em;height:.9em;margin:0 .25em 0 .8em;vertical-align:-.1em;border:1px solid #6b4410}.key.pred{background:#2e3b55;border-color:#2e3b55}.key.meas{background:#f4c27a}
.verdict{font-weight:600}
img.thumb{display:block;border:1px solid #999;background:#fff}
tbody th[scope=row]{background:#f7f7f7;font-weight:600}
.hint{color:#444;font-size:.9em}
@media print{
@page{size:A4;margin:14mm 12mm 16mm 12mm}
body{font-size:9pt;margin:0;max-width:none;padding:0;color:#000}
h2{break-after:avoid;page-break-after:avoid;margin-top:1.2em}h3{break-after:avoid;page-break-after:avoid}
tr,figure,.charts,table.facts,table.rates,svg,img{break-inside:avoid;page-break-inside:avoid}
thead{display:table-header-group}
section.title{break-inside:auto}
.hint,.noprint{display:none}
a{color:inherit;text-decoration:none}
th{background:#e6e6e6;-webkit-print-color-adjust:exact;print-color-adjust:exact}
svg,.key{-webkit-print-color-adjust:exact;print-color-adjust:exact}
#titles{font-size:7pt}#titles th,#titles td{padding:.15em .2em}#titles td{white-space:nowrap}
.keep{break-after:avoid;page-break-after:avoid}
.snip{max-width:18em;font-size:7.5pt}
img.thumb{width:12mm;height:auto}
tbody th[scope=row]{background:none}
th[data-dir]::after{content:""}
}
</style>
</head>
<body>
<header>
<h1>OCR quality report: {{.Name}}</h1>
{{with .Partial}}<p class="partial"><strong>Partial report:</strong> {{.}}</p>
{{end}}<p>{{count .Total.Pages}} pages in {{len .Titles}} titles; {{.Total.Failed}} failed.
{{range .Decisions}}{{.}}: {{dec $.Total.Decisions .}}. {{end}}{{with .Total.Reviewed}}{{.}} pages reviewed in recto review. {{end}}</p>
</header>

<section id="about">
<h2>How these figures were made</h2>
<table class="facts">
<tbody>
{{range .About}}<tr{{if .Varies}} data-varies{{end}}><th scope="row">{{.Name}}</th><td>{{.Value}}{{with .Code}}<br><code>{{.}}</code>{{end}}</td></tr>
{{end}}</tbody>
</table>
</section>

<section id="collection">
<h2>Whole collection</h2>
<table class="facts">
<tbody>
<tr><th scope="row">Pages</th><td>{{count .Total.Pages}}</td></tr>
<tr><th scope="row">Decisions</th><td>{{.Total.Decided}}</td></tr>
<tr><th scope="row">Mean predicted CER</th><td>{{if .Total.MeanPredictedCER}}{{pct .Total.PredSort}}{{else}}–{{end}}</td></tr>
<tr><th scope="row">Ground truth</th><td>{{.Total.Truth}}</td></tr>
<tr><th scope="row">Words corrected</th><td>{{count .Total.Corrections}}</td></tr>
</tbody>
</table>
{{template "rates" .Total}}
</section>

<section id="titles-section">
<h2>Titles</h2>
<p class="hint">Click a column heading (or focus it and press Enter) to sort. Rates are pooled over each title's pages with ground truth; the intervals are in each title's section below.</p>
<table class="sortable" id="titles">
<caption>Titles at a glance</caption>
<thead><tr><th scope="col" class="l">Title</th><th scope="col">Pages</th><th scope="col">Failed</th>{{range .Decisions}}<th scope="col">{{.}}</th>{{end}}<th scope="col">Mean predicted CER</th><th scope="col">Pages with truth</th><th scope="col">CER before</th><th scope="col">CER after</th>{{range .RateHeads}}<th scope="col">{{.}}</th>{{end}}<th scope="col">Corrections</th></tr></thead>
<tbody>
{{range .Titles}}<tr><th scope="row" class="l" data-v="{{.Title.Title}}"><a href="#{{.Anchor}}">{{.Title.Title}}</a></th><td data-v="{{.Pages}}">{{.Pages}}</td><td data-v="{{.Failed}}">{{.Failed}}</td>{{$t := .}}{{range $.Decisions}}<td data-v="{{dec $t.Decisions .}}">{{dec $t.Decisions .}}</td>{{end}}<td data-v="{{f4 .PredSort}}">{{if .MeanPredictedCER}}{{pct .PredSort}}{{else}}–{{end}}</td><td data-v="{{.TruthPages}}">{{.TruthPages}}</td><td data-v="{{f4 .BeforeV}}">{{.BeforeTxt}}</td><td data-v="{{f4 .AfterV}}">{{.AfterTxt}}</td>{{range .Rates}}<td data-v="{{f4 .V}}">{{.Txt}}</td>{{end}}<td data-v="{{.Corrections}}">{{.Corrections}}</td></tr>
{{end}}</tbody>
</table>
</section>

<section id="per-title">
<h2>Each title</h2>
<p class="keep"><span class="key pred" aria-hidden="true"></span>predicted CER (every processed page) <span class="key meas" aria-hidden="true"></span>measured CER before correction (pages with ground truth). In the scatter chart each dot is a page with ground truth, its predicted CER across and its measured CER up, in percent; the dashed line is a perfect estimate.</p>
{{range .Titles}}<section class="title" id="{{.Anchor}}">
<h3>{{.Title.Title}}</h3>
<table class="facts">
<tbody>
<tr><th scope="row">Pages</th><td>{{count .Pages}}</td></tr>
<tr><th scope="row">Decisions</th><td>{{.Decided}}</td></tr>
<tr><th scope="row">Mean predicted CER</th><td>{{if .MeanPredictedCER}}{{pct .PredSort}}{{else}}–{{end}}</td></tr>
<tr><th scope="row">Ground truth</th><td>{{.Truth}}</td></tr>
<tr><th scope="row">Words corrected</th><td>{{count .Corrections}}</td></tr>
</tbody>
</table>
{{template "rates" .}}
{{with .Target}}<p class="verdict">{{.}}</p>
{{end}}{{with .Sample}}<p>{{.}}</p>
{{end}}<div class="charts">
<figure>{{template "chart" .Hist}}<figcaption>CER distribution, percent. {{.Hist.Desc}}</figcaption></figure>
<figure>{{template "chart" .Scatter}}<figcaption>Predicted against measured CER, percent. {{.Scatter.Desc}}</figcaption></figure>
</div>
</section>
{{end}}</section>

<section id="worst-section">
<h2>Worst pages</h2>
<p>Pages with text, worst first: by measured CER after correction where the page has ground truth, else by predicted CER. Blank and picture pages are listed apart below.</p>
<table id="worst">
<thead><tr><th scope="col" class="l">Page</th><th scope="col" class="l">Scan</th><th scope="col">Measured CER after correction</th><th scope="col">Measured CER before correction</th><th scope="col">Predicted CER</th><th scope="col" class="l">Decision</th><th scope="col" class="l">Why</th><th scope="col" class="l">Files</th><th scope="col" class="l">Start of text</th></tr></thead>
<tbody>
{{range .Worst}}<tr><th scope="row" class="l">{{.Rel}}</th><td class="l">{{template "thumb" .}}</td><td>{{.Measured}}</td><td>{{.MeasBefore}}</td><td>{{.Predicted}}</td><td class="l">{{.Decision}}{{if .Reviewed}} <small>reviewed</small>{{end}}</td><td class="l">{{reasons .Reasons}}</td><td class="l">{{template "files" .}}</td><td class="snip">{{.Snippet}}</td></tr>
{{else}}<tr><td class="l" colspan="9">No processed pages with text.</td></tr>
{{end}}</tbody>
</table>
</section>

{{if .NoText}}<section id="notext-section">
<h2>Blank and picture pages</h2>
<table id="notext">
<thead><tr><th scope="col" class="l">Page</th><th scope="col" class="l">Scan</th><th scope="col" class="l">Decision</th><th scope="col">Predicted CER</th><th scope="col" class="l">Why</th><th scope="col" class="l">Files</th></tr></thead>
<tbody>
{{range .NoText}}<tr><th scope="row" class="l">{{.Rel}}</th><td class="l">{{template "thumb" .}}</td><td class="l">{{.Decision}}{{if .Reviewed}} <small>reviewed</small>{{end}}</td><td>{{.Predicted}}</td><td class="l">{{reasons .Reasons}}</td><td class="l">{{template "files" .}}</td></tr>
{{end}}</tbody>
</table>
</section>
{{end}}
{{if .Failed}}<section id="failed-section">
<h2>Pages that failed</h2>
<table id="failed">
<thead><tr><th scope="col" class="l">Page</th><th scope="col" class="l">Error</th></tr></thead>
<tbody>
{{range .Failed}}<tr><th scope="row" class="l">{{if .ImageURL}}<a href="{{.ImageURL}}">{{.Rel}}</a>{{else}}{{.Rel}}{{end}}</th><td class="l">{{.Error}}</td></tr>
{{end}}</tbody>
</table>
</section>{{end}}

{{if .Warned}}<section id="warnings-section">
<h2>Warnings</h2>
<table id="warnings">
<thead><tr><th scope="col" class="l">Page</th><th scope="col" class="l">Warning</th></tr></thead>
<tbody>
{{range .Warned}}{{$p := .}}{{range .Warnings}}<tr><th scope="row" class="l">{{if $p.ImageURL}}<a href="{{$p.ImageURL}}">{{$p.Rel}}</a>{{else}}{{$p.Rel}}{{end}}</th><td class="l">{{.}}</td></tr>
{{end}}{{end}}</tbody>
</table>
</section>{{end}}

<section id="notes">
<h2>Reading the figures</h2>
<ul>
<li><strong>CER</strong>: character edits (insertions, deletions, substitutions) that turn the reference into the OCR text, over the reference's characters, after the normalisation above. <strong>WER</strong>: the same over words.</li>
<li><strong>flex CER</strong>: 1 − flexible character accuracy (Clausner, Pletschacher and Antonacopoulos, Pattern Recognition Letters 131, 2020), which matches each reference line to the best stretch of OCR text wherever it stands, so a page read in another order than the transcription is not counted as wrong. <strong>bag WER</strong>: reference words missing from the OCR text plus extra words, counted as a multiset, over reference words: what matters for full-text search.</li>
<li>A title's rate is pooled: all its errors over all its reference characters (or words), not a mean of page rates. Before correction is the engine's text; after correction is the text recto delivers.</li>
<li>The number of pages to transcribe for a 95 % interval of ±{{.Half}} point is the sampling plan of <code>recto sample</code>: pages are the sampling unit, stratified by predicted CER, sized by the rule for a mean under stratified random sampling with proportional allocation (W. G. Cochran, Sampling Techniques, 3rd ed., Wiley 1977, sections 4.4 and 5.5, recalled from memory), with the spread of page CER taken from triage's predictions. It assumes the transcribed pages are drawn at random within those bands, as <code>recto sample</code> draws them.</li>
</ul>
</section>
<script>
(function(){
document.querySelectorAll("table.sortable").forEach(function(table){
  var heads = table.tHead.rows[0].cells;
  Array.prototype.forEach.call(heads, function(th, col){
    th.tabIndex = 0;
    th.addEventListener("keydown", function(e){
      if (e.key === "Enter" || e.key === " ") { e.preventDefault(); th.click(); }
    });
    th.addEventListener("click", function(){
      var asc = th.getAttribute("data-dir") !== "asc";
      Array.prototype.forEach.call(heads, function(h){ h.removeAttribute("data-dir"); h.removeAttribute("aria-sort"); });
      th.setAttribute("data-dir", asc ? "asc" : "desc");
      th.setAttribute("aria-sort", asc ? "ascending" : "descending");
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
{{define "rates"}}<table class="rates">
<caption>Measured error rates{{if .CERBefore}}, on {{.Truth}}{{end}}</caption>
<thead><tr><th scope="col" class="l">Measure</th><th scope="col" class="l">Over</th><th scope="col">Before correction</th><th scope="col">After correction</th></tr></thead>
<tbody>
{{range .Rows}}<tr><th scope="row" class="l">{{.Name}}</th><td class="l">{{.Over}}</td><td>{{.Before}}</td><td>{{.After}}</td></tr>
{{end}}</tbody>
</table>{{end}}
{{define "thumb"}}{{if .Thumb}}<img class="thumb" src="{{.Thumb}}" alt="scan of {{.Rel}}">{{else}}–{{end}}{{end}}
{{define "files"}}{{if .ImageURL}}<a href="{{.ImageURL}}">{{.ImageName}}</a>{{end}}{{if .TextURL}}<br><a href="{{.TextURL}}">{{.TextName}}</a>{{end}}{{end}}
{{define "chart"}}<svg xmlns="http://www.w3.org/2000/svg" width="{{f1 .W}}" height="{{f1 .H}}" viewBox="0 0 {{f1 .W}} {{f1 .H}}" role="img" aria-labelledby="{{.ID}}-t {{.ID}}-d">
<title id="{{.ID}}-t">{{.Title}}</title><desc id="{{.ID}}-d">{{.Desc}}</desc>
{{if .Empty}}<text x="{{f1 .X0}}" y="{{f1 .Y1}}" dy="20">{{.Empty}}</text>{{else}}<line class="axis" x1="{{f1 .X0}}" y1="{{f1 .Y0}}" x2="{{f1 .X1}}" y2="{{f1 .Y0}}"/><line class="axis" x1="{{f1 .X0}}" y1="{{f1 .Y0}}" x2="{{f1 .X0}}" y2="{{f1 .Y1}}"/>
{{if .Diag}}<line class="diag" x1="{{f1 .X0}}" y1="{{f1 .Y0}}" x2="{{f1 .X1}}" y2="{{f1 .Y1}}"/>{{end}}
{{range .Bars}}<rect class="{{.Class}}" x="{{f1 .X}}" y="{{f1 .Y}}" width="{{f1 .W}}" height="{{f1 .H}}"><title>{{.Tip}}</title></rect>{{end}}
{{range .Points}}<circle class="pt" cx="{{f1 .X}}" cy="{{f1 .Y}}" r="3"><title>{{.Tip}}</title></circle>{{end}}
{{range .XTicks}}<text x="{{f1 .X}}" y="{{f1 .Y}}" text-anchor="middle">{{.Label}}</text>{{end}}
{{range .YTicks}}<text x="{{f1 .X}}" y="{{f1 .Y}}" text-anchor="end">{{.Label}}</text>{{end}}{{end}}
</svg>{{end}}`
