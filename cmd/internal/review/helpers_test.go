package review

import (
	"bytes"
	"context"
	"crypto/sha256"
	"fmt"
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
	"recto/ocr/synth"
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

// synthRun runs four pages of the fictional demo title (synth.Demo,
// rendered at 150 dpi) through the batch run with a simulated engine: it
// "reads" each page's laid-out words with their real boxes, confusing a
// growing share of them (e→c, m→rn, the→tbe, read with low confidence),
// so the review page shows real word images under real boxes.
func synthRun(t testing.TB) (string, []ledger.Page) {
	t.Helper()
	base := t.TempDir()
	coll, truth, out := filepath.Join(base, "collection"), filepath.Join(base, "truth"), filepath.Join(base, "run")
	title := synth.Demo()[0]
	lay := title.Layout
	lay.DPI = 150
	words := map[[32]byte][]ocr.Word{}
	for i, share := range []int{3, 12, 30, 80} { // per cent of words confused
		p, _, err := synth.Render(title.Pages[i], lay)
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := synth.WritePNG(&buf, p.Image, float64(lay.DPI)); err != nil {
			t.Fatal(err)
		}
		name := fmt.Sprintf("p%04d", i+1)
		runtest.MustWrite(t, filepath.Join(coll, title.ID, name+".png"), buf.Bytes())
		runtest.MustWrite(t, filepath.Join(truth, title.ID, name+".txt"), []byte(p.Truth+"\n"))
		var ws []ocr.Word
		n := 0
		for li, l := range p.Lines {
			for _, w := range l.Words {
				text, conf := w.Text, 0.9+float64(n%10)/100
				if n*37%100 < share {
					r := strings.NewReplacer("the", "tbe", "m", "rn", "e", "c")
					if c := r.Replace(text); c != text {
						text, conf = c, 0.45+float64(n%20)/100
					}
				}
				b := w.Box
				ws = append(ws, ocr.Word{Text: text, Conf: conf, Line: li, Box: ocr.Box{X: b.Min.X, Y: b.Min.Y, W: b.Dx(), H: b.Dy()}})
				n++
			}
		}
		words[sha256.Sum256(p.Image.Pix)] = ws
	}
	engine := func() (ocr.Engine, error) {
		return &ocrtest.Engine{Func: func(_ context.Context, img *image.Gray, _ int) ([]ocr.Word, error) {
			return append([]ocr.Word(nil), words[sha256.Sum256(img.Pix)]...), nil
		}}, nil
	}
	var stderr bytes.Buffer
	_, err := run.Run(context.Background(), run.Options{Collection: coll, Out: out, Truth: truth, Correct: 0.001, Rescan: 0.08,
		NewEngine: engine, NoPrepare: true, Stderr: &stderr, Getenv: func(string) string { return "" }})
	if err != nil {
		t.Fatalf("run: %v\n%s", err, stderr.String())
	}
	return out, runtest.LedgerRows(t, out)
}
