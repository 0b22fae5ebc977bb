package review

import (
	"bytes"
	"context"
	"image"
	"net/http"
	"net/http/cookiejar"
	"net/http/httptest"
	"net/url"
	"path/filepath"
	"strings"
	"testing"

	"recto/cmd/internal/run"
	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/runtest"
	"recto/ocr"
	"recto/ocr/ocrtest"
)

// testRun runs the test engine over a small collection (runtest) and
// returns the collection, the run folder and its rows. Every page is
// corrected and those predicted worse than about 12 % are marked rescan (a 16 % threshold less triage's margin), so the
// run has both decisions and changes to judge.
func testRun(t testing.TB, titles, perTitle int, extra func(coll string)) (string, string, []ledger.Page) {
	t.Helper()
	coll, truth := runtest.Collection(t, titles, perTitle, false)
	if extra != nil {
		extra(coll)
	}
	out := filepath.Join(t.TempDir(), "run")
	runAgain(t, coll, truth, out)
	return coll, out, runtest.LedgerRows(t, out)
}

func runAgain(t testing.TB, coll, truth, out string) {
	t.Helper()
	var stderr bytes.Buffer
	_, err := run.Run(context.Background(), run.Options{Collection: coll, Out: out, Truth: truth, Correct: 0.001, Rescan: 0.16,
		NewEngine: boxedEngine(coll), NoPrepare: true, Stderr: &stderr, Getenv: func(string) string { return "" }})
	if err != nil {
		t.Fatalf("run: %v\n%s", err, stderr.String())
	}
}

// boxedEngine is runtest's engine with a box for every word: 6 pixels a
// character along its line, lines 40 pixels apart, in the page's pixels.
func boxedEngine(coll string) func() (ocr.Engine, error) {
	inner := runtest.Engine(coll, 0)
	return func() (ocr.Engine, error) {
		e, err := inner()
		if err != nil {
			return nil, err
		}
		return &ocrtest.Engine{Func: func(ctx context.Context, img *image.Gray, dpi int) ([]ocr.Word, error) {
			ws, err := e.Recognize(ctx, img, dpi)
			line, col := -1, 0
			for i := range ws {
				if ws[i].Line != line {
					line, col = ws[i].Line, 0
				}
				n := len([]rune(ws[i].Text))
				ws[i].Box = ocr.Box{X: 10 + 6*col, Y: 20 + 40*line, W: 6 * n, H: 24}
				col += n + 1
			}
			return ws, err
		}}, nil
	}
}

// testServer serves dir on an httptest server and returns it with a
// client that has been given the access cookie.
func testServer(t testing.TB, o Options) (*Server, *httptest.Server, *http.Client) {
	t.Helper()
	if o.User == "" {
		o.User = "ann"
	}
	if o.Jobs == 0 {
		o.Jobs = -1 // thumbnails on request only
	}
	s, err := New(context.Background(), o)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.Close() })
	ts := httptest.NewServer(s.Handler())
	t.Cleanup(ts.Close)
	u, _ := url.Parse(ts.URL)
	s.AllowHosts(u.Host)
	jar, _ := cookiejar.New(nil)
	c := &http.Client{Jar: jar}
	res, err := c.Get(ts.URL + "/?token=" + s.Token())
	if err != nil {
		t.Fatal(err)
	}
	res.Body.Close()
	if res.StatusCode != 200 {
		t.Fatalf("first visit with the token: %s", res.Status)
	}
	return s, ts, c
}

// form posts values with the page's CSRF token as the page's script does.
func post(t testing.TB, c *http.Client, s *Server, u string, v url.Values) *http.Response {
	t.Helper()
	v.Set("csrf", s.csrf)
	req, _ := http.NewRequest("POST", u, strings.NewReader(v.Encode()))
	req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	req.Header.Set("Accept", "application/json")
	res, err := c.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	return res
}
