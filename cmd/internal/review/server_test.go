package review

// The security checks of #13 ("Security (tested)"). The rules they hold
// the server to are common practice for a local web tool: OWASP Cheat
// Sheet Series, "Cross-Site Request Forgery Prevention" (synchroniser
// token, Origin check) and "Session Management" (HttpOnly, SameSite
// cookies); RFC 6265bis for SameSite=Strict; W3C "Content Security Policy
// Level 3" (2023) for nonces; OWASP "Path Traversal" for file names.

import (
	"bytes"
	"context"
	"encoding/json"
	"image"
	_ "image/jpeg" // image.DecodeConfig of the thumbnails
	"image/png"
	"io"
	"net"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"recto/cmd/internal/run"
	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/runtest"
	"recto/ocr/synth"

	"golang.org/x/image/tiff"
)

func get(t testing.TB, c *http.Client, u string) (*http.Response, string) {
	t.Helper()
	res, err := c.Get(u)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, _ := io.ReadAll(res.Body)
	return res, string(b)
}

func pick(t testing.TB, rows []ledger.Page, decision string, changes bool, out string) ledger.Page {
	t.Helper()
	for _, r := range rows {
		if r.Decision != decision {
			continue
		}
		c, _ := run.ChangesOf(out, r)
		if !changes || len(c) > 0 {
			return r
		}
	}
	t.Fatalf("no page decided %s (with changes: %v) in the test run", decision, changes)
	return ledger.Page{}
}

func TestTokenCookie(t *testing.T) {
	_, dir, _ := testRun(t, 1, 2, nil)
	s, ts, _ := testServer(t, Options{Dir: dir})
	noRedirect := &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}
	for _, u := range []string{"/", "/page?p=x", "/thumb?p=x", "/file?p=x&name=y", "/?token=wrong"} {
		if res, _ := get(t, noRedirect, ts.URL+u); res.StatusCode != http.StatusUnauthorized {
			t.Errorf("GET %s without the cookie: %s, want 401", u, res.Status)
		}
	}
	res, _ := get(t, noRedirect, ts.URL+"/?token="+s.Token()+"&sort=predicted")
	if res.StatusCode != http.StatusSeeOther {
		t.Fatalf("first visit: %s, want 303 to the address without the token", res.Status)
	}
	if loc := res.Header.Get("Location"); strings.Contains(loc, "token") || !strings.Contains(loc, "sort=predicted") {
		t.Errorf("redirect to %q: want the token gone and the rest kept", loc)
	}
	var ck *http.Cookie
	for _, c := range res.Cookies() {
		if c.Name == cookieName {
			ck = c
		}
	}
	if ck == nil || !ck.HttpOnly || ck.SameSite != http.SameSiteStrictMode || ck.Value != s.Token() {
		t.Fatalf("cookie %+v: want HttpOnly, SameSite=Strict, carrying the token", ck)
	}
	req, _ := http.NewRequest("GET", ts.URL+"/", nil)
	req.AddCookie(&http.Cookie{Name: cookieName, Value: s.Token()})
	if res, err := noRedirect.Do(req); err != nil || res.StatusCode != 200 {
		t.Errorf("with the cookie: %v %v", res.Status, err)
	}
	req.Host = "attacker.example:80" // DNS rebinding: a page of another name that resolves here
	if res, err := noRedirect.Do(req); err != nil || res.StatusCode != http.StatusForbidden {
		t.Errorf("foreign Host: %v %v, want 403", res.Status, err)
	}
}

func TestListenLoopbackOnly(t *testing.T) {
	_, dir, _ := testRun(t, 1, 1, nil)
	s, err := New(context.Background(), Options{Dir: dir, Jobs: -1})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	ln, addr, exposed, err := s.Listen()
	if err != nil {
		t.Fatal(err)
	}
	defer ln.Close()
	tcp := ln.Addr().(*net.TCPAddr)
	if !tcp.IP.Equal(net.IPv4(127, 0, 0, 1)) || tcp.Port == 0 || exposed {
		t.Errorf("default listener %v (exposed %v), want 127.0.0.1 and a free port", tcp, exposed)
	}
	if !strings.HasPrefix(addr, "http://127.0.0.1:") || !strings.Contains(addr, "token="+s.Token()) {
		t.Errorf("address %q", addr)
	}
	s2, _ := New(context.Background(), Options{Dir: dir, Jobs: -1, Listen: "0.0.0.0:0"})
	defer s2.Close()
	ln2, _, exposed, err := s2.Listen()
	if err != nil {
		t.Fatal(err)
	}
	ln2.Close()
	if !exposed {
		t.Error("--listen 0.0.0.0:0 not reported as exposed: the command would not warn")
	}
}

func TestChangesNeedPostAndCSRF(t *testing.T) {
	ctx := context.Background()
	_, dir, rows := testRun(t, 1, 2, nil)
	s, ts, c := testServer(t, Options{Dir: dir})
	rel := rows[0].Rel
	if res, _ := get(t, c, ts.URL+"/decide?p="+url.QueryEscape(rel)+"&decision=rescan&csrf="+s.csrf); res.StatusCode != http.StatusMethodNotAllowed {
		t.Errorf("GET /decide: %s, want 405", res.Status)
	}
	form := url.Values{"p": {rel}, "decision": {"accept"}}
	for name, mod := range map[string]func(*http.Request){
		"no token":    func(r *http.Request) {},
		"wrong token": func(r *http.Request) { r.Header.Set("X-CSRF-Token", strings.Repeat("0", 64)) },
		"other origin": func(r *http.Request) {
			r.Header.Set("X-CSRF-Token", s.csrf)
			r.Header.Set("Origin", "http://attacker.example")
		},
	} {
		req, _ := http.NewRequest("POST", ts.URL+"/decide", strings.NewReader(form.Encode()))
		req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
		mod(req)
		res, err := c.Do(req)
		if err != nil {
			t.Fatal(err)
		}
		res.Body.Close()
		if res.StatusCode != http.StatusForbidden {
			t.Errorf("%s: %s, want 403", name, res.Status)
		}
	}
	if log, _ := s.l.ReviewLog(ctx, rel); len(log) != 0 {
		t.Fatalf("refused requests stored %d entries", len(log))
	}
	res := post(t, c, s, ts.URL+"/decide", url.Values{"p": {rel}, "decision": {"accept"}, "note": {"fine"}, "seen": {"0"}})
	var st state
	json.NewDecoder(res.Body).Decode(&st)
	res.Body.Close()
	if res.StatusCode != 200 || st.Decision != "accept" || !st.Reviewed || st.Who != "ann" {
		t.Fatalf("valid change: %s %+v", res.Status, st)
	}
	log, _ := s.l.ReviewLog(ctx, rel)
	if len(log) != 1 || log[0].Who != "ann" || log[0].Old != rows[0].Decision || log[0].New != "accept" || log[0].Note != "fine" {
		t.Errorf("ledger entry %+v", log)
	}
	// A bad value is refused, not stored.
	if res := post(t, c, s, ts.URL+"/decide", url.Values{"p": {rel}, "decision": {"<b>"}}); res.StatusCode != http.StatusBadRequest {
		t.Errorf("decision <b>: %s, want 400", res.Status)
	}
}

func TestReadOnly(t *testing.T) {
	_, dir, rows := testRun(t, 1, 2, nil)
	s, ts, c := testServer(t, Options{Dir: dir, ReadOnly: true})
	for _, u := range []string{"/decide", "/correction", "/undo", "/report"} {
		res := post(t, c, s, ts.URL+u, url.Values{"p": {rows[0].Rel}, "decision": {"rescan"}})
		res.Body.Close()
		if res.StatusCode != http.StatusForbidden {
			t.Errorf("read-only POST %s: %s, want 403", u, res.Status)
		}
	}
	_, body := get(t, c, ts.URL+"/page?p="+url.QueryEscape(rows[0].Rel))
	if strings.Contains(body, `action="/decide"`) || !strings.Contains(body, "read-only") {
		t.Error("read-only page offers the decision form or does not say it is read-only")
	}
	l, _ := ledger.OpenReview(filepath.Join(dir, ledger.FileName), true)
	defer l.Close()
	if m, _ := l.Reviews(context.Background()); len(m) != 0 {
		t.Errorf("read-only session stored %v", m)
	}
}

// TestOnlyLedgerFilesServed: files are named by page and output as the
// ledger lists them; traversal, absolute paths, symlinks out of the run
// folder or the collection, and sources outside the collection are
// refused, even when a (tampered) ledger lists them.
func TestOnlyLedgerFilesServed(t *testing.T) {
	ctx := context.Background()
	coll, dir, rows := testRun(t, 1, 3, nil)
	secret := filepath.Join(t.TempDir(), "secret.txt")
	os.WriteFile(secret, []byte("not for the browser"), 0o644)
	outside := filepath.Join(t.TempDir(), "outside.png")
	data, _ := os.ReadFile(rows[0].Source)
	os.WriteFile(outside, data, 0o644)

	// Tamper with the ledger as a hostile or broken run could: page 1
	// lists outputs out of the run folder, page 2 a source out of the
	// collection; page 0's text becomes a symlink to the secret, and a
	// symlink in the collection points out of it.
	w, err := ledger.Open(filepath.Join(dir, ledger.FileName))
	if err != nil {
		t.Fatal(err)
	}
	p1, p2 := rows[1], rows[2]
	p1.Outputs = append(p1.Outputs, "../../secret.txt", secret, "ocr/../../secret.txt", "ocr/link.txt")
	p2.Source = outside
	if err := w.PutAll(ctx, []ledger.Page{p1, p2}); err != nil {
		t.Fatal(err)
	}
	w.Close()
	if err := os.Symlink(secret, filepath.Join(dir, "ocr", "link.txt")); err != nil {
		t.Fatal(err)
	}

	s, ts, c := testServer(t, Options{Dir: dir})
	file := func(rel, name string) int {
		res, body := get(t, c, ts.URL+"/file?p="+url.QueryEscape(rel)+"&name="+url.QueryEscape(name))
		if strings.Contains(body, "not for the browser") {
			t.Errorf("file %q of %q: the secret was served", name, rel)
		}
		return res.StatusCode
	}
	if code := file(rows[0].Rel, rows[0].Outputs[0]); code != 200 {
		t.Fatalf("a listed output: %d", code)
	}
	for _, name := range []string{"../../secret.txt", secret, "ocr/../../secret.txt", "ocr/link.txt", "/etc/passwd", "ledger.db", "%2e%2e/secret.txt"} {
		for _, rel := range []string{rows[0].Rel, p1.Rel} {
			if code := file(rel, name); code != http.StatusForbidden && code != http.StatusNotFound {
				t.Errorf("file %q of %q: %d, want refused", name, rel, code)
			}
		}
	}
	if code := file("../../secret.txt", "x"); code != http.StatusNotFound {
		t.Errorf("a page not in the ledger: %d, want 404", code)
	}
	// Images: a source out of the collection is refused ...
	if res, _ := get(t, c, ts.URL+"/image?p="+url.QueryEscape(p2.Rel)); res.StatusCode != http.StatusForbidden {
		t.Errorf("source outside the collection: %s, want 403", res.Status)
	}
	// ... and so is one whose path is a symlink out of it.
	if err := os.Remove(rows[0].Source); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(outside, rows[0].Source); err != nil {
		t.Fatal(err)
	}
	if res, _ := get(t, c, ts.URL+"/image?p="+url.QueryEscape(rows[0].Rel)); res.StatusCode != http.StatusForbidden {
		t.Errorf("source symlinked out of the collection %q: %s, want 403", coll, res.Status)
	}
	_ = s
}

// TestHostileTextEscaped: OCR text, file and title names and notes that
// hold markup reach the pages as text, never as elements or script.
func TestHostileTextEscaped(t *testing.T) {
	hostileText := "<script>alert(1)</script> <img src=x onerror=alert(2)> \"'><svg onload=alert(3)> tbe harbour\n" +
		strings.Repeat("The harbour master reported tbat the quay was mended.\n", 5)
	const title, page = `Title <i onmouseover=alert(4)>X`, `p"><b>1<b>.png` // no slash: it would make a folder
	_, dir, rows := testRun(t, 1, 1, func(coll string) {
		f, _ := os.Open(filepath.Join(coll, "Title A", "p000.png"))
		img, _ := png.Decode(f)
		f.Close()
		g := img.(*image.Gray)
		g.Pix[1] ^= 0x55 // other pixels: the test engine keys its words by them
		var buf bytes.Buffer
		synth.WritePNG(&buf, g, 75)
		runtest.MustWrite(t, filepath.Join(coll, title, page), buf.Bytes())
		runtest.MustWrite(t, filepath.Join(coll, title, page)+runtest.FakeSuffix, []byte(hostileText))
	})
	var hostile ledger.Page
	for _, r := range rows {
		if r.Title == title {
			hostile = r
		}
	}
	if hostile.Rel == "" {
		t.Fatalf("hostile page not in the run: %v", rows)
	}
	s, ts, c := testServer(t, Options{Dir: dir})
	post(t, c, s, ts.URL+"/decide", url.Values{"p": {hostile.Rel}, "decision": {"rescan"}, "note": {"<script>alert(5)</script>"}}).Body.Close()
	scriptTag := regexp.MustCompile(`<script[^>]*>`)
	for _, u := range []string{"/", "/?title=" + url.QueryEscape(title), "/page?p=" + url.QueryEscape(hostile.Rel)} {
		res, body := get(t, c, ts.URL+u)
		if res.StatusCode != 200 {
			t.Fatalf("GET %s: %s", u, res.Status)
		}
		for _, bad := range []string{"<script>alert", "<img src=x", "<svg onload", "<i onmouseover", "<b>1<b>"} {
			if strings.Contains(body, bad) {
				t.Errorf("GET %s: %q reached the page unescaped", u, bad)
			}
		}
		csp := res.Header.Get("Content-Security-Policy")
		m := regexp.MustCompile(`script-src 'nonce-([0-9a-f]+)'`).FindStringSubmatch(csp)
		if m == nil || strings.Contains(csp, "unsafe-inline") {
			t.Fatalf("GET %s: Content-Security-Policy %q: want a script nonce and no unsafe-inline", u, csp)
		}
		tags := scriptTag.FindAllString(body, -1)
		if len(tags) != 1 || tags[0] != `<script nonce="`+m[1]+`">` {
			t.Errorf("GET %s: script tags %q, want only the page's own with the nonce %s", u, tags, m[1])
		}
	}
	_, body := get(t, c, ts.URL+"/page?p="+url.QueryEscape(hostile.Rel))
	if !strings.Contains(body, "&lt;script&gt;alert(1)&lt;/script&gt;") {
		t.Error("the hostile OCR text is not shown (escaped) on its page")
	}
	// The ground-truth and file answers are JSON and sandboxed plain text.
	res, _ := get(t, c, ts.URL+"/file?p="+url.QueryEscape(hostile.Rel)+"&name="+url.QueryEscape(hostile.Outputs[0]))
	if ct := res.Header.Get("Content-Type"); ct != "text/plain; charset=utf-8" || res.Header.Get("X-Content-Type-Options") != "nosniff" {
		t.Errorf("output served as %q without nosniff", ct)
	}
}

// TestTwoSessionsKeepEachOthersChanges: two servers on one run (two
// people); a change made on a stale view is refused with a conflict, and
// after a reload it is stored; no change is lost.
func TestTwoSessionsKeepEachOthersChanges(t *testing.T) {
	ctx := context.Background()
	_, dir, rows := testRun(t, 1, 2, nil)
	a, tsa, ca := testServer(t, Options{Dir: dir, User: "ann"})
	b, tsb, cb := testServer(t, Options{Dir: dir, User: "bo"})
	rel := url.Values{"p": {rows[0].Rel}}.Encode()
	// Both open the page: seen 0.
	res := post(t, ca, a, tsa.URL+"/decide?"+rel, url.Values{"decision": {"rescan"}, "seen": {"0"}})
	res.Body.Close()
	if res.StatusCode != 200 {
		t.Fatalf("ann: %s", res.Status)
	}
	res = post(t, cb, b, tsb.URL+"/decide?"+rel, url.Values{"decision": {"accept"}, "seen": {"0"}})
	var e map[string]string
	json.NewDecoder(res.Body).Decode(&e)
	res.Body.Close()
	if res.StatusCode != http.StatusConflict || !strings.Contains(e["error"], "ann") {
		t.Fatalf("bo on a stale view: %s %v, want 409 naming ann", res.Status, e)
	}
	rev, _ := b.l.ReviewOf(ctx, rows[0].Rel)
	res = post(t, cb, b, tsb.URL+"/decide?"+rel, url.Values{"decision": {"accept"}, "seen": {strconv.FormatInt(rev.Last, 10)}})
	res.Body.Close()
	if res.StatusCode != 200 {
		t.Fatalf("bo after reload: %s", res.Status)
	}
	log, _ := a.l.ReviewLog(ctx, rows[0].Rel)
	if len(log) != 2 || log[0].Who != "ann" || log[1].Who != "bo" || log[1].Old != "rescan" {
		t.Errorf("log %+v: want ann's rescan then bo's accept replacing it", log)
	}
}

// TestJudgeAndUndo: a correction is rejected by its key (an unknown key
// is refused), undo walks back one change at a time, and a plain form
// post (no script) is answered with a redirect back to the page.
func TestJudgeAndUndo(t *testing.T) {
	ctx := context.Background()
	_, dir, rows := testRun(t, 1, 3, nil)
	page := pick(t, rows, "correct", true, dir)
	changes, _ := run.ChangesOf(dir, page)
	s, ts, c := testServer(t, Options{Dir: dir})
	p := url.Values{"p": {page.Rel}}
	state := func(res *http.Response) state {
		t.Helper()
		defer res.Body.Close()
		var st state
		if err := json.NewDecoder(res.Body).Decode(&st); err != nil || res.StatusCode != 200 {
			t.Fatalf("%s: %v", res.Status, err)
		}
		return st
	}
	bad := post(t, c, s, ts.URL+"/correction?"+p.Encode(), url.Values{"key": {"1:1:x\x1fy"}, "value": {"rejected"}})
	bad.Body.Close()
	if bad.StatusCode != http.StatusNotFound {
		t.Errorf("unknown correction: %s, want 404", bad.Status)
	}
	key := changes[0].Key()
	st := state(post(t, c, s, ts.URL+"/correction?"+p.Encode(), url.Values{"key": {key}, "value": {"rejected"}}))
	if st.Corrections[key] != ledger.Rejected || st.Decision != "correct" || st.Reviewed {
		t.Errorf("after rejecting: %+v", st)
	}
	st = state(post(t, c, s, ts.URL+"/decide?"+p.Encode(), url.Values{"decision": {"rescan"}, "seen": {strconv.FormatInt(st.Last, 10)}}))
	if st.Decision != "rescan" || !st.Reviewed {
		t.Errorf("after deciding: %+v", st)
	}
	st = state(post(t, c, s, ts.URL+"/undo?"+p.Encode(), url.Values{}))
	if st.Decision != "correct" || st.Reviewed || st.Corrections[key] != ledger.Rejected {
		t.Errorf("after one undo: %+v, want the decision back to triage's and the rejection kept", st)
	}
	st = state(post(t, c, s, ts.URL+"/undo?"+p.Encode(), url.Values{}))
	if len(st.Corrections) != 0 {
		t.Errorf("after two undos: %+v, want nothing judged", st)
	}
	// Without the script: a form post, redirected back.
	noRedirect := &http.Client{Jar: c.Jar, CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}
	v := url.Values{"p": {page.Rel}, "decision": {"accept"}, "csrf": {s.csrf}, "back": {"/page?p=x&decision=rescan"}}
	res, err := noRedirect.PostForm(ts.URL+"/decide", v)
	if err != nil {
		t.Fatal(err)
	}
	res.Body.Close()
	if res.StatusCode != http.StatusSeeOther || res.Header.Get("Location") != "/page?p=x&decision=rescan" {
		t.Errorf("form post: %s to %q", res.Status, res.Header.Get("Location"))
	}
	v.Set("back", "https://attacker.example/")
	res, _ = noRedirect.PostForm(ts.URL+"/decide", v)
	res.Body.Close()
	if loc := res.Header.Get("Location"); !strings.HasPrefix(loc, "/page?p=") {
		t.Errorf("form post with a foreign back address redirected to %q", loc)
	}
	if r, _ := s.l.ReviewOf(ctx, page.Rel); r.Decision != "accept" {
		t.Errorf("form post not stored: %+v", r)
	}
	// The overview's button rebuilds the reports as recto report does.
	res = post(t, c, s, ts.URL+"/report", url.Values{})
	var rep map[string]string
	json.NewDecoder(res.Body).Decode(&rep)
	res.Body.Close()
	pages, _ := os.ReadFile(filepath.Join(dir, "report", "pages.csv"))
	if res.StatusCode != 200 || rep["report"] != filepath.Join(dir, "report", "report.html") || !strings.Contains(string(pages), ",accept,") || !strings.Contains(string(pages), ",ann,") {
		t.Errorf("rebuild: %s %v; pages.csv:\n%s", res.Status, rep, pages)
	}
}

// TestThumbnailsCached: thumbnails are JPEG renditions of the source made
// once and kept in RUNDIR/review, and so are the page images of sources a
// browser cannot show (here a TIFF); a PNG page is shown as it is. The
// background pass makes the missing ones only.
func TestThumbnailsCached(t *testing.T) {
	ctx := context.Background()
	_, dir, rows := testRun(t, 1, 3, func(coll string) {
		f, _ := os.Open(filepath.Join(coll, "Title A", "p000.png"))
		img, _ := png.Decode(f)
		f.Close()
		g := img.(*image.Gray)
		g.Pix[2] ^= 0x33
		var buf bytes.Buffer
		if err := tiff.Encode(&buf, g, nil); err != nil {
			t.Fatal(err)
		}
		fake, _ := os.ReadFile(filepath.Join(coll, "Title A", "p000.png") + runtest.FakeSuffix)
		runtest.MustWrite(t, filepath.Join(coll, "Title A", "scan.tif"), buf.Bytes())
		runtest.MustWrite(t, filepath.Join(coll, "Title A", "scan.tif")+runtest.FakeSuffix, fake)
	})
	s, ts, c := testServer(t, Options{Dir: dir, Jobs: 2})
	if n := s.Warm(ctx); n != len(rows)+1 {
		t.Fatalf("first pass made %d, want %d thumbnails and 1 page image", n, len(rows))
	}
	if n := s.Warm(ctx); n != 0 {
		t.Errorf("second pass made %d, want 0 (cached)", n)
	}
	files, _ := filepath.Glob(filepath.Join(dir, cacheDir, "*", "*", "*.jpg"))
	if len(files) != len(rows)+1 {
		t.Errorf("%d cached files, want %d", len(files), len(rows)+1)
	}
	for _, c2 := range []struct {
		kind, rel, ctype string
		width            int
	}{
		{"thumb", "Title A/p000.png", "image/jpeg", ThumbWidth},
		{"image", "Title A/p000.png", "image/png", 620},
		{"image", "Title A/scan.tif", "image/jpeg", 620},
	} {
		res, body := get(t, c, ts.URL+"/"+c2.kind+"?p="+url.QueryEscape(c2.rel))
		if ct := res.Header.Get("Content-Type"); ct != c2.ctype {
			t.Fatalf("%s of %s: %s %s, want %s", c2.kind, c2.rel, res.Status, ct, c2.ctype)
		}
		cfg, _, err := image.DecodeConfig(strings.NewReader(body))
		if err != nil || cfg.Width != c2.width {
			t.Errorf("%s of %s: %v, width %d, want %d", c2.kind, c2.rel, err, cfg.Width, c2.width)
		}
	}
}

// TestMissingOutputsShown: a page whose record was deleted from the run
// folder is still shown, saying what is missing, and can be decided.
func TestMissingOutputsShown(t *testing.T) {
	_, dir, rows := testRun(t, 1, 1, nil)
	if err := os.Remove(filepath.Join(dir, "ocr", "Title A", "p000.png.json")); err != nil {
		t.Fatal(err)
	}
	s, ts, c := testServer(t, Options{Dir: dir})
	res, body := get(t, c, ts.URL+"/page?p="+url.QueryEscape(rows[0].Rel))
	if res.StatusCode != 200 || !strings.Contains(body, "Cannot show the page") || !strings.Contains(body, "text and boxes: ") {
		t.Errorf("page without its record: %s\n%.300s", res.Status, body)
	}
	if res := post(t, c, s, ts.URL+"/decide", url.Values{"p": {rows[0].Rel}, "decision": {"rescan"}}); res.StatusCode != 200 {
		t.Errorf("deciding it: %s", res.Status)
	}
}
