package review

import "html/template"

// The pages' look, words and layout are recto's own. Everything from a
// page reaches them through html/template (escaped for its context) or,
// for the ground truth, through textContent; the scripts read their data
// from data- attributes and contain no template action.
var pages = template.Must(template.New("").Funcs(template.FuncMap{
	"inc": func(i int) int { return i + 1 },
}).Parse(`
{{define "style"}}<style nonce="{{.Nonce}}">
:root{--ink:#1d232b;--mute:#5d6b78;--line:#d6dde3;--bg:#f6f4ef;--card:#fff;--acc:#2d7a46;--cor:#a86b00;--res:#b3261e;--oth:#6b6b6b}
*{box-sizing:border-box}body{margin:0;font:15px/1.45 system-ui,sans-serif;color:var(--ink);background:var(--bg)}
header{display:flex;gap:1em;align-items:baseline;flex-wrap:wrap;padding:.6em 1em;background:#24313d;color:#eef2f5}
header a{color:#cfe3f3}header h1{font-size:1.15em;margin:0}header .who{margin-left:auto;color:#aab8c4;font-size:.9em}
main{padding:1em}a{color:#1f5f8b}
table{border-collapse:collapse;background:var(--card)}th,td{padding:.25em .6em;border-bottom:1px solid var(--line);text-align:right}
th:first-child,td:first-child{text-align:left}
.dec{display:inline-block;padding:0 .45em;border-radius:.3em;color:#fff;font-size:.85em;background:var(--oth)}
.dec.accept{background:var(--acc)}.dec.correct{background:var(--cor)}.dec.rescan{background:var(--res)}.dec.failed{background:#222}
.rv{font-size:.8em;color:var(--acc);font-weight:600}
form.filters{display:flex;gap:.8em;align-items:center;margin:1em 0;flex-wrap:wrap}
.grid{display:grid;grid-template-columns:repeat(auto-fill,minmax(170px,1fr));gap:.8em}
.card{background:var(--card);border:1px solid var(--line);border-radius:.4em;padding:.4em;text-decoration:none;color:inherit;display:block}
.card:hover,.card:focus{outline:2px solid #1f5f8b}
.card img{width:100%;height:210px;object-fit:contain;background:#eee;display:block}
.card .nm{font-size:.85em;overflow-wrap:anywhere}.card .fig{font-size:.8em;color:var(--mute)}
.cols{display:grid;grid-template-columns:minmax(0,1.1fr) minmax(0,1fr);gap:1em}
#view{position:relative;overflow:hidden;height:78vh;background:#3a4148;border-radius:.3em;cursor:grab;touch-action:none}
#stage{position:absolute;left:0;top:0;transform-origin:0 0}#stage img{display:block;user-select:none;-webkit-user-drag:none;image-orientation:none}
#box{position:absolute;border:3px solid #ff3d7f;background:rgba(255,61,127,.12);pointer-events:none}
#text{background:var(--card);border:1px solid var(--line);padding:.6em .8em;max-height:60vh;overflow:auto;font-family:ui-serif,Georgia,serif}
#text p{margin:0 0 .8em}.w{cursor:pointer;border-radius:.15em}.w:hover{background:#e3eef7}
.w.low{background:#ffe2a8;text-decoration:underline wavy #c77700}.w.sel{outline:2px solid #ff3d7f}
.w.fix{border-bottom:2px solid var(--cor)}
.panel{background:var(--card);border:1px solid var(--line);border-radius:.4em;padding:.6em .8em;margin-bottom:.8em}
.panel h2{font-size:1em;margin:0 0 .4em}
button{font:inherit;padding:.25em .7em;border:1px solid #8797a5;background:#fff;border-radius:.3em;cursor:pointer}
button.on{background:#24313d;color:#fff;border-color:#24313d}
.chg[data-state=rejected] .aft{text-decoration:line-through;color:var(--mute)}
.chg[data-state=blocked]{color:var(--mute)}
.state{font-size:.85em;color:var(--mute)}
#msg.good{color:var(--acc)}#msg.bad,.bad{color:var(--res);font-weight:600}
#truth{white-space:pre-wrap;background:#fbfbf3;border:1px dashed var(--line);padding:.6em .8em;max-height:60vh;overflow:auto;font-family:ui-serif,Georgia,serif}
#pair.two{display:grid;grid-template-columns:1fr 1fr;gap:.5em}
kbd{border:1px solid #999;border-bottom-width:2px;border-radius:.2em;padding:0 .3em;font-size:.85em;background:#fff}
ul.keys{columns:2;font-size:.88em;padding-left:1em}
.hist{font-size:.85em}.hist .undone{text-decoration:line-through;color:var(--mute)}
.ro{background:#fff3cd;padding:.3em .6em;border-radius:.3em}
</style>{{end}}

{{define "overview"}}<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>Review: {{.Name}}</title>
<meta name="csrf" content="{{.CSRF}}">{{template "style" .}}</head>
<body><header><h1>Review of {{.Name}}</h1><span>{{.All}} pages</span>{{if .ReadOnly}}<span class="ro">read-only: nothing can be changed</span>{{end}}<span class="who">as {{.User}}</span></header>
<main>
<table id="titles"><thead><tr><th>Title</th><th>Pages</th><th>Failed</th>{{range .Decisions}}<th>{{.}}</th>{{end}}<th>Reviewed</th><th>Mean predicted CER</th><th>Measured CER</th></tr></thead>
<tbody>{{range .Titles}}<tr><td><a href="/?title={{.Title}}">{{.Title}}</a></td><td>{{.Pages}}</td><td>{{.Failed}}</td>{{range .Decisions}}<td>{{.}}</td>{{end}}<td>{{.Rev}}</td><td>{{.Pred}}</td><td>{{.CER}}</td></tr>{{end}}
<tr><th>{{.Total.Title}}</th><th>{{.Total.Pages}}</th><th>{{.Total.Failed}}</th>{{range .Total.Decisions}}<th>{{.}}</th>{{end}}<th>{{.Total.Rev}}</th><th>{{.Total.Pred}}</th><th>{{.Total.CER}}</th></tr></tbody></table>
<form class="filters" method="get" action="/" id="filters">
<label>Title <select name="title"><option value="">all</option>{{range .Titles}}<option value="{{.Title}}"{{if eq .Title $.F.Title}} selected{{end}}>{{.Title}}</option>{{end}}</select></label>
<label>Decision <select name="decision" id="fdecision"><option value="">all</option>{{range .Filters}}<option value="{{.}}"{{if eq . $.F.Decision}} selected{{end}}>{{.}}</option>{{end}}</select></label>
<label>Sort by <select name="sort">{{range .Sorts}}<option value="{{.Key}}"{{if eq .Key $.F.Sort}} selected{{end}}>{{.Label}}</option>{{end}}</select></label>
<button type="submit">Show</button> <span id="count">{{.Count}} of {{.All}} pages shown</span>
{{if not .ReadOnly}}<button type="button" id="rebuild" title="rebuild rescan.csv, pages.csv, titles.* and report.html from the ledger, as recto report does">Rebuild the run's reports</button> <span id="msg"></span>{{end}}
</form>
<div class="grid" id="grid">{{range .Cards}}<a class="card" href="{{.Link}}" data-rel="{{.Rel}}" data-decision="{{.Decision}}">{{if .Thumb}}<img loading="lazy" src="{{.Thumb}}" alt="page {{.Name}}">{{end}}
<div class="nm">{{.Name}}</div><div><span class="dec {{.Decision}}">{{.Decision}}</span>{{if .Reviewed}} <span class="rv">reviewed</span>{{end}}</div>
<div class="fig">{{if .Pred}}predicted {{.Pred}}{{end}}{{if .CER}} · measured {{.CER}}{{end}}</div></a>{{else}}<p>No page matches.</p>{{end}}</div>
</main>
<script nonce="{{.Nonce}}">
(function () {
  var f = document.getElementById("filters");
  f.querySelectorAll("select").forEach(function (s) { s.addEventListener("change", function () { f.submit(); }); });
  var b = document.getElementById("rebuild");
  if (b) b.addEventListener("click", function () {
    var csrf = document.querySelector("meta[name=csrf]").content;
    fetch("/report", {method: "POST", headers: {"Accept": "application/json", "X-CSRF-Token": csrf}}).then(function (r) {
      return r.json().then(function (j) {
        var m = document.getElementById("msg");
        m.textContent = r.ok ? "reports rebuilt: " + j.report : j.error; m.className = r.ok ? "good" : "bad";
      });
    });
  });
})();
</script>
</body></html>{{end}}

{{define "page"}}<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>{{.Rel}} · review</title>
<meta name="csrf" content="{{.CSRF}}">{{template "style" .}}</head>
<body data-rel="{{.Key}}" data-relq="{{.RelQ}}" data-last="{{.Last}}" data-ro="{{if .ReadOnly}}1{{else}}0{{end}}" data-prev="{{.Prev}}" data-next="{{.Next}}" data-back="{{.Back}}">
<header><a href="{{.Back}}" id="back">← overview</a><h1>{{.Rel}}</h1><span>page {{.Pos}} of {{.Count}}</span>
{{if .Prev}}<a href="{{.Prev}}" id="prev">← previous</a>{{end}}{{if .Next}}<a href="{{.Next}}" id="next">next →</a>{{end}}
{{if .ReadOnly}}<span class="ro">read-only</span>{{end}}</header>
<main>
{{if .Failed}}<div class="panel"><h2>This page failed in the run</h2><p>{{.Error}}</p><p>Problem: {{.Problem}}. A failed page has nothing to review; its file is listed in failures.csv or rescan.csv.</p></div>{{else}}
{{range .Missing}}<div class="panel"><span class="bad">Cannot show the page's {{.}}</span></div>{{end}}
<div class="cols">
<div>
<div id="view"><div id="stage"><img id="pg" src="/image?p={{.Key}}" data-w="{{.Width}}" data-h="{{.Height}}" alt="page image" draggable="false"><div id="box" hidden></div></div></div>
<div id="boxinfo" class="state">Click a word to see its box on the page. Drag to pan, wheel or + / − to zoom, 0 to fit.</div>
</div>
<div>
<div class="panel" id="decide"><h2>Decision: <span class="dec {{.Decision}}" id="decision">{{.Decision}}</span> <span class="rv" id="revmark">{{if .Reviewed}}reviewed by {{.Who}}{{else}}not reviewed (triage){{end}}</span></h2>
<div class="state">triage: {{.Triage}} · predicted CER {{.Pred}} · mean confidence {{.MeanConf}}{{if .HasTruth}} · measured CER {{.CERBefore}} before, {{.CERAfter}} after correction{{end}}</div>
<ul class="reasons">{{range .Reasons}}<li>{{.}}</li>{{end}}</ul>
{{if not .ReadOnly}}<form method="post" action="/decide" id="decform"><input type="hidden" name="csrf" value="{{.CSRF}}"><input type="hidden" name="p" value="{{.Key}}"><input type="hidden" name="seen" value="{{.Last}}"><input type="hidden" name="back" value="{{.Self}}">
{{range .Decisions}}<button name="decision" value="{{.}}" data-decision="{{.}}"{{if eq . $.Decision}} class="on"{{end}}>{{.}}</button> {{end}}
<label>note <input name="note" id="note" size="28" maxlength="2000" value="{{.Note}}" autocomplete="off"></label></form>
<form method="post" action="/undo" id="undoform"><input type="hidden" name="csrf" value="{{.CSRF}}"><input type="hidden" name="p" value="{{.Key}}"><input type="hidden" name="seen" value="{{.Last}}"><button id="undo">undo last change</button></form>{{end}}
<div id="msg"></div>
</div>
<div class="panel"><h2>Text <span class="state">({{.Words}} words, {{.LowWords}} read with low confidence, marked)</span>{{if .HasTruth}} <button id="gt" type="button" title="show the ground truth beside the text (g)">ground truth</button>{{end}}</h2>
<div id="pair"><div id="text">{{range .Paras}}<p>{{range .}}{{range .}}<span class="w{{if .Low}} low{{end}}{{if .Changed}} fix{{end}}" data-b="{{.Box}}" data-c="{{.Conf}}"{{if .Changed}} title="corrected to: {{.Changed}}"{{end}}>{{.Text}}</span> {{end}}<br>{{end}}</p>{{else}}<p class="state">No text was read on this page.</p>{{end}}</div>
<div id="truthbox" hidden><div id="truth"></div></div></div>
</div>
<div class="panel"><h2>Corrections ({{len .Changes}})</h2>
{{if .Changes}}<table id="changes"><thead><tr><th>Before</th><th>After</th><th>Where</th><th>Score</th><th>State</th><th></th></tr></thead><tbody>
{{range .Changes}}<tr class="chg" data-key="{{.Key}}" data-state="{{.State}}"><td>{{.Before}}</td><td class="aft">{{if .After}}{{.After}}{{else}}<i>removed</i>{{end}}</td><td>{{.Where}}</td><td>{{.Score}}</td><td class="state">{{if eq .State "blocked"}}not made: {{.Why}}{{else}}{{.State}}{{end}}</td>
<td>{{if and (ne .State "blocked") (not $.ReadOnly)}}<form method="post" action="/correction"><input type="hidden" name="csrf" value="{{$.CSRF}}"><input type="hidden" name="p" value="{{$.Key}}"><input type="hidden" name="seen" value="{{$.Last}}"><input type="hidden" name="key" value="{{.Key}}"><button name="value" value="accepted">accept</button> <button name="value" value="rejected">reject</button></form>{{end}}</td></tr>{{end}}
</tbody></table>{{else}}<p class="state">No correction was made on this page.</p>{{end}}
</div>
<div class="panel hist"><h2>History</h2><div id="history">{{range .History}}<div{{if .Undone}} class="undone"{{end}}>{{.When}} {{.Who}}: {{.What}}{{if .Note}} — {{.Note}}{{end}}</div>{{else}}<div class="state">No change yet.</div>{{end}}</div>
<h2>Files</h2>{{range .Outputs}}<a href="{{.Link}}">{{.Name}}</a><br>{{end}}</div>
<div class="panel"><h2>Keyboard</h2><ul class="keys">{{range .Keys}}<li><kbd>{{.Key}}</kbd> {{.What}}</li>{{end}}</ul></div>
</div></div>{{end}}
</main>
<script nonce="{{.Nonce}}">
(function () {
  var body = document.body, rel = body.dataset.rel, ro = body.dataset.ro === "1";
  var last = Number(body.dataset.last);
  var csrf = document.querySelector("meta[name=csrf]").content;
  function go(u) { if (u) location.href = u; }
  function say(msg, bad) { var m = document.getElementById("msg"); if (m) { m.textContent = msg; m.className = bad ? "bad" : "good"; } }
  var view = document.getElementById("view"), stage = document.getElementById("stage"), img = document.getElementById("pg"), box = document.getElementById("box");
  var s = 1, tx = 0, ty = 0, fit = true;
  function ratio() { return img.naturalWidth / Number(img.dataset.w || img.naturalWidth); }
  function place() { stage.style.transform = "translate(" + tx + "px," + ty + "px) scale(" + s + ")"; }
  function fitWidth() { if (!img || !img.naturalWidth) return; s = view.clientWidth / img.naturalWidth; tx = 0; ty = 0; fit = true; place(); }
  function zoom(f, cx, cy) {
    if (cx === undefined) { cx = view.clientWidth / 2; cy = view.clientHeight / 2; }
    var ns = Math.min(8, Math.max(0.05, s * f));
    tx = cx - (cx - tx) * ns / s; ty = cy - (cy - ty) * ns / s; s = ns; fit = false; place();
  }
  if (img) {
    img.addEventListener("load", fitWidth); if (img.complete) fitWidth();
    window.addEventListener("resize", function () { if (fit) fitWidth(); });
    view.addEventListener("wheel", function (e) { e.preventDefault(); var r = view.getBoundingClientRect(); zoom(e.deltaY < 0 ? 1.15 : 1 / 1.15, e.clientX - r.left, e.clientY - r.top); }, {passive: false});
    var drag = null;
    view.addEventListener("pointerdown", function (e) { drag = {x: e.clientX, y: e.clientY, tx: tx, ty: ty}; view.setPointerCapture(e.pointerId); });
    view.addEventListener("pointermove", function (e) { if (!drag) return; tx = drag.tx + e.clientX - drag.x; ty = drag.ty + e.clientY - drag.y; fit = false; place(); });
    view.addEventListener("pointerup", function () { drag = null; });
  }
  function showBox(el) {
    var b = el.dataset.b.split(",").map(Number), r = ratio();
    box.style.left = b[0] * r + "px"; box.style.top = b[1] * r + "px"; box.style.width = b[2] * r + "px"; box.style.height = b[3] * r + "px"; box.hidden = false;
    if (s < 0.5) s = Math.min(1, view.clientWidth / (b[2] * r * 6));
    tx = view.clientWidth / 2 - (b[0] + b[2] / 2) * r * s; ty = view.clientHeight / 2 - (b[1] + b[3] / 2) * r * s;
    // keep the page over the whole view where it is large enough
    var iw = img.naturalWidth * s, ih = img.naturalHeight * s, vw = view.clientWidth, vh = view.clientHeight;
    tx = iw <= vw ? (vw - iw) / 2 : Math.min(0, Math.max(vw - iw, tx));
    ty = ih <= vh ? 0 : Math.min(0, Math.max(vh - ih, ty));
    fit = false; place();
    document.querySelectorAll(".w.sel").forEach(function (e) { e.classList.remove("sel"); }); el.classList.add("sel");
    document.getElementById("boxinfo").textContent = "box at x " + b[0] + ", y " + b[1] + ", " + b[2] + " × " + b[3] + " pixels of the original image; confidence " + el.dataset.c + " %";
  }
  var text = document.getElementById("text");
  if (text) text.addEventListener("click", function (e) { var el = e.target.closest(".w"); if (el) showBox(el); });
  function update(st) {
    last = st.last; body.dataset.last = last;
    document.querySelectorAll("input[name=seen]").forEach(function (i) { i.value = last; });
    document.querySelectorAll("[data-decision]").forEach(function (b) { b.classList.toggle("on", b.dataset.decision === st.decision); });
    var d = document.getElementById("decision"); d.textContent = st.decision; d.className = "dec " + st.decision;
    document.getElementById("revmark").textContent = st.reviewed ? "reviewed by " + st.who : "not reviewed (triage)";
    var h = document.getElementById("history");
    if (h && st.history) {
      h.textContent = "";
      st.history.forEach(function (e) {
        var div = document.createElement("div");
        if (e.undone) div.className = "undone";
        div.textContent = e.when + " " + e.who + ": " + e.what + (e.note ? " — " + e.note : "");
        h.appendChild(div);
      });
    }
    document.querySelectorAll(".chg").forEach(function (row) {
      if (row.dataset.state === "blocked") return;
      var v = st.corrections[row.dataset.key] || "accepted"; row.dataset.state = v; row.querySelector(".state").textContent = v;
    });
  }
  function post(url, data) {
    if (ro) { say("read-only: nothing is stored", true); return Promise.resolve(null); }
    data.p = rel; data.seen = last; data.csrf = csrf;
    return fetch(url, {method: "POST", headers: {"Accept": "application/json", "X-CSRF-Token": csrf}, body: new URLSearchParams(data)}).then(function (r) {
      return r.json().then(function (j) { if (!r.ok) { say(j.error || r.statusText, true); return null; } update(j); return j; });
    }, function (e) { say("not stored: " + e, true); return null; });
  }
  function decide(d) { var n = document.getElementById("note"); return post("/decide", {decision: d, note: n ? n.value : ""}).then(function (j) { if (j) say("stored: " + d); }); }
  document.querySelectorAll("[data-decision]").forEach(function (b) { b.addEventListener("click", function (e) { e.preventDefault(); decide(b.dataset.decision); }); });
  var note = document.getElementById("note");
  if (note) note.addEventListener("keydown", function (e) {
    if (e.key === "Enter") { e.preventDefault(); decide(document.getElementById("decision").textContent); note.blur(); }
  });
  var df = document.getElementById("decform");
  if (df) df.addEventListener("submit", function (e) { e.preventDefault(); decide(document.getElementById("decision").textContent); });
  document.querySelectorAll(".chg button").forEach(function (b) {
    b.addEventListener("click", function (e) { e.preventDefault(); post("/correction", {key: b.closest(".chg").dataset.key, value: b.value}).then(function (j) { if (j) say("stored: correction " + b.value); }); });
  });
  function undo() { post("/undo", {}).then(function (j) { if (j) say("undone"); }); }
  var ub = document.getElementById("undo");
  if (ub) ub.addEventListener("click", function (e) { e.preventDefault(); undo(); });
  var shown = false;
  function truth() {
    var tb = document.getElementById("truthbox"); if (!tb) return;
    shown = !shown; tb.hidden = !shown; document.getElementById("pair").classList.toggle("two", shown); if (!shown) return;
    fetch("/truth?p=" + body.dataset.relq, {headers: {"Accept": "application/json"}}).then(function (r) { return r.json(); }).then(function (j) {
      document.getElementById("truth").textContent = j.text !== undefined ? j.text : j.error;
    });
  }
  var gt = document.getElementById("gt"); if (gt) gt.addEventListener("click", truth);
  document.addEventListener("keydown", function (e) {
    if (e.ctrlKey || e.metaKey || e.altKey) return;
    var t = e.target;
    if (t && (t.tagName === "INPUT" || t.tagName === "TEXTAREA" || t.tagName === "SELECT")) {
      if (e.key === "Escape") t.blur();
      return;
    }
    var k = e.key;
    if (k === "a") decide("accept"); else if (k === "c") decide("correct"); else if (k === "r") decide("rescan");
    else if (k === "j" || k === "ArrowRight") go(body.dataset.next); else if (k === "k" || k === "ArrowLeft") go(body.dataset.prev);
    else if (k === "u") undo(); else if (k === "g") truth();
    else if (k === "n") { var n = document.getElementById("note"); if (n) { e.preventDefault(); n.focus(); } }
    else if (k === "+" || k === "=") zoom(1.25); else if (k === "-") zoom(0.8); else if (k === "0") fitWidth();
    else if (k === "Escape") go(body.dataset.back);
    else return;
    e.preventDefault();
  });
})();
</script>
</body></html>{{end}}
`))
