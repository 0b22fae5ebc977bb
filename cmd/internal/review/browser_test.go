package review

import (
	"context"
	"fmt"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"recto/cmd/internal/run"
	"recto/cmd/internal/run/ledger"
)

// chromium returns Debian's Chromium (scripts/setup installs it for the
// tests), or skips the test saying so.
func chromium(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser", "/usr/bin/chromium"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	t.Skip("SKIPPED: no chromium on PATH, the review page was NOT checked in a browser (scripts/setup installs Debian's chromium)")
	return ""
}

// TestReviewInBrowser drives the review page in headless Chromium as #13
// asks: open the overview, filter to rescan, open a page, change its
// decision by keyboard, reject a correction on another page, reload and
// see both kept, rebuild the reports as recto report does and find the
// changes in rescan.csv. It also clicks a word and checks its box lands
// on the word's pixels. Set RECTO_SCREENSHOTS to a folder to keep the
// screenshots it takes.
func TestReviewInBrowser(t *testing.T) {
	bin := chromium(t)
	dir, rows := synthRun(t)
	pick(t, rows, "rescan", false, dir)
	corrected := pick(t, rows, "correct", true, dir)

	s, err := New(context.Background(), Options{Dir: dir, User: "ann", Jobs: -1})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	ln, addr, _, err := s.Listen()
	if err != nil {
		t.Fatal(err)
	}
	sctx, stop := context.WithCancel(context.Background())
	served := make(chan error, 1)
	go func() { served <- s.Serve(sctx, ln) }()
	defer func() { stop(); <-served }()
	base := strings.SplitN(addr, "/?", 2)[0]

	opts := append(chromedp.DefaultExecAllocatorOptions[:], chromedp.ExecPath(bin), chromedp.NoSandbox,
		chromedp.Flag("disable-quic", true), chromedp.Flag("disable-component-update", true),
		chromedp.UserDataDir(t.TempDir()), chromedp.WindowSize(1400, 1000))
	actx, cancelA := chromedp.NewExecAllocator(context.Background(), opts...)
	defer cancelA()
	ctx, cancelB := chromedp.NewContext(actx)
	defer cancelB()
	ctx, cancelT := context.WithTimeout(ctx, 90*time.Second)
	defer cancelT()

	shots := os.Getenv("RECTO_SCREENSHOTS")
	if shots == "" {
		shots = t.TempDir()
	}
	shot := func(name string) chromedp.Action[chromedp.Void] {
		return func(ctx context.Context, tg *chromedp.Target) (chromedp.Void, error) {
			buf, err := chromedp.FullScreenshot(90)(ctx, tg)
			if err != nil {
				return chromedp.Void{}, err
			}
			return chromedp.Void{}, os.WriteFile(filepath.Join(shots, name), buf, 0o644)
		}
	}
	step := func(what string, actions ...chromedp.Action[chromedp.Void]) {
		t.Helper()
		if err := chromedp.Do(ctx, actions...); err != nil {
			t.Fatalf("%s: %v", what, err)
		}
	}
	eval := func(expr string) string {
		t.Helper()
		v, err := chromedp.Run(ctx, chromedp.Evaluate[string](expr))
		if err != nil {
			t.Fatalf("%s: %v", expr, err)
		}
		return v
	}
	text := func(sel string) string {
		t.Helper()
		v, err := chromedp.Run(ctx, chromedp.Text(chromedp.CSS(sel)))
		if err != nil {
			t.Fatalf("read %s: %v", sel, err)
		}
		return strings.TrimSpace(v)
	}
	// until waits for expr to be true, across page loads (an evaluation
	// cut by a navigation is tried again).
	until := func(expr string) chromedp.Action[chromedp.Void] {
		return func(ctx context.Context, tg *chromedp.Target) (chromedp.Void, error) {
			for {
				v, err := chromedp.Evaluate[bool](expr)(ctx, tg)
				if err == nil && v {
					return chromedp.Void{}, nil
				}
				select {
				case <-ctx.Done():
					return chromedp.Void{}, fmt.Errorf("waiting for %s: %w (last: %v)", expr, ctx.Err(), err)
				case <-time.After(50 * time.Millisecond):
				}
			}
		}
	}
	css := func(sel string) chromedp.CSS { return chromedp.CSS(sel) }

	// The overview, filtered to rescan.
	step("open the overview", chromedp.Navigate(addr), chromedp.WaitVisible(css("#grid")))
	step("filter to rescan",
		chromedp.Evaluate[chromedp.Void](`var f = document.getElementById("fdecision"); f.value = "rescan"; setTimeout(function () { f.dispatchEvent(new Event("change")); }, 0);`),
		until(`location.search.indexOf("decision=rescan") >= 0 && document.readyState === "complete"`),
		chromedp.WaitVisible(css("#grid .card")),
		shot("overview-rescan.png"))
	cards := strings.Fields(eval(`Array.from(document.querySelectorAll("#grid .card")).map(function (c) { return c.dataset.decision; }).join(" ")`))
	for _, d := range cards {
		if d != "rescan" {
			t.Fatalf("filtered overview shows a %s page: %v", d, cards)
		}
	}
	if len(cards) == 0 {
		t.Fatal("no page shown under the rescan filter")
	}

	// Open the first page and accept it by keyboard.
	step("open a page", chromedp.Click(css("#grid .card")), until(`location.pathname === "/page" && document.readyState === "complete"`))
	rel := eval(`document.body.dataset.rel`)
	if got := text("#decision"); got != "rescan" {
		t.Fatalf("page %s shows decision %q, want rescan", rel, got)
	}
	step("press a", chromedp.KeyEvent("a"), until(`document.getElementById("decision").textContent === "accept"`))
	// j and k walk the overview's selection (the page just accepted stays in it).
	step("press j", chromedp.KeyEvent("j"), until(`document.readyState === "complete" && document.body.dataset.rel && document.body.dataset.rel !== `+strconv.Quote(rel)))
	if next := eval(`document.body.dataset.rel`); !strings.Contains(eval(`location.search`), "decision=rescan") || len(cards) < 2 {
		t.Errorf("j went to %s (%s), want the next rescan page", next, eval(`location.search`))
	}
	step("press k", chromedp.KeyEvent("k"), until(`document.readyState === "complete" && document.body.dataset.rel === `+strconv.Quote(rel)))
	// g shows the ground truth beside the text.
	step("press g", chromedp.KeyEvent("g"), until(`document.getElementById("truth").textContent.length > 100`), shot("truth.png"))
	if gt := text("#truth"); !strings.HasPrefix(gt, strings.SplitN(truthOf(t, dir, rel), "\n", 2)[0]) {
		t.Errorf("ground truth shown %.60q, want the page's", gt)
	}

	// Another page: rescan by keyboard, reject its first correction, and
	// click a word.
	step("open a corrected page",
		chromedp.Navigate(base+"/page?p="+url.QueryEscape(corrected.Rel)),
		chromedp.WaitVisible(css("#changes")),
		chromedp.KeyEvent("r"),
		until(`document.getElementById("decision").textContent === "rescan"`))
	key := eval(`document.querySelector(".chg").dataset.key`)
	step("reject a correction",
		chromedp.Click(css(`.chg button[value=rejected]`)),
		until(`document.querySelector(".chg").dataset.state === "rejected"`),
		until(`document.getElementById("history").textContent.indexOf("rejected") >= 0`)) // the history follows
	step("click a word",
		until(`document.getElementById("pg").complete && document.getElementById("pg").naturalWidth > 0`),
		chromedp.Click(css(`#text .w`)),
		until(`!document.getElementById("box").hidden`),
		shot("page.png"))
	word := eval(`document.querySelector("#text .w").dataset.b`)
	box := eval(`(function(){var b = document.getElementById("box").style, i = document.getElementById("pg");
		var r = i.naturalWidth / Number(i.dataset.w);
		return [parseFloat(b.left)/r, parseFloat(b.top)/r, parseFloat(b.width)/r, parseFloat(b.height)/r].map(Math.round).join(",");})()`)
	if box != word {
		t.Errorf("box drawn at %s (original pixels), want the word's box %s", box, word)
	}

	// Reload both pages: the changes are kept.
	step("reload the corrected page", chromedp.Reload(), chromedp.WaitVisible(css("#changes")))
	if d, st := text("#decision"), text(".chg .state"); d != "rescan" || st != "rejected" {
		t.Errorf("after reload: decision %q, correction %q; want rescan and rejected", d, st)
	}
	if rv := text("#revmark"); rv != "reviewed by ann" {
		t.Errorf("reviewed mark %q", rv)
	}
	step("reload the accepted page", chromedp.Navigate(base+"/page?p="+url.QueryEscape(rel)), chromedp.WaitVisible(css("#decision")))
	if d := text("#decision"); d != "accept" {
		t.Errorf("accepted page after reload shows %q", d)
	}

	// The reports follow, as 'recto report' builds them.
	if _, err := run.Report(context.Background(), dir); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(filepath.Join(dir, "report", "rescan.csv"))
	if err != nil {
		t.Fatal(err)
	}
	csv := string(data)
	if !strings.Contains(csv, corrected.Rel+",") || !strings.Contains(csv, "reviewed by ann") {
		t.Errorf("rescan.csv lacks the page made rescan in review (%s):\n%s", corrected.Rel, csv)
	}
	if strings.Contains(csv, rel+",") {
		t.Errorf("rescan.csv still lists the page accepted in review (%s):\n%s", rel, csv)
	}
	l, _ := ledger.OpenReview(filepath.Join(dir, ledger.FileName), true)
	defer l.Close()
	rev, _ := l.ReviewOf(context.Background(), corrected.Rel)
	if !rev.Rejected(key) {
		t.Errorf("ledger: correction %q not rejected: %+v", key, rev)
	}
	t.Logf("screenshots in %s; %d rescan pages shown; box %s", shots, len(cards), box)
}

// truthOf reads page rel's ground truth as the run found it.
func truthOf(t *testing.T, dir, rel string) string {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(filepath.Dir(dir), "truth", strings.TrimSuffix(rel, ".png")+".txt"))
	if err != nil {
		t.Fatal(err)
	}
	return string(data)
}
