package run

import (
	"context"
	"fmt"
	"image"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"recto/cmd/internal/run/runtest"
	"recto/ocr"
)

// BenchmarkManyPagesMemory runs the whole job (test engine, no
// preparation, one worker) on one multi-page TIFF and on one PDF of 50 and
// of 500 pages, each run in a child process, and reports the child's peak
// resident set size (VmHWM of /proc/self/status, read by the child at its
// end; the ru_maxrss that wait4 gives would include the parent's own size,
// which the child inherits until exec, proc(5)): memory must stay flat in
// the number of pages of a file (issue 11: pages are decoded one at a
// time). The PDF is made with img2pdf, its pages read back with poppler,
// whose short-lived processes are not counted. About three minutes:
//
//	go test -run '^$' -bench BenchmarkManyPagesMemory -benchtime 1x ./cmd/internal/run
func BenchmarkManyPagesMemory(b *testing.B) {
	for _, kind := range []string{"tiff", "pdf"} {
		for _, n := range []int{50, 500} {
			b.Run(fmt.Sprintf("%s/%d", kind, n), func(b *testing.B) {
				coll, _ := runtest.Collection(b, 1, 3, false)
				var srcs []string
				var imgs []*image.Gray
				for i := range 3 {
					src := filepath.Join(coll, "Title A", fmt.Sprintf("p%03d.png", i))
					d, err := ocr.DecodeFile(src, ocr.DecodeOptions{})
					if err != nil {
						b.Fatal(err)
					}
					srcs, imgs = append(srcs, src), append(imgs, d.Image.(*image.Gray))
				}
				reel := filepath.Join(coll, "Title B", "reel."+kind)
				if err := os.MkdirAll(filepath.Dir(reel), 0o755); err != nil {
					b.Fatal(err)
				}
				if kind == "tiff" {
					pages := make([]*image.Gray, n)
					for i := range pages {
						pages[i] = imgs[i%3]
					}
					runtest.MultiPageTIFF(b, reel, pages)
				} else {
					args := make([]string, 0, n+2)
					for i := range n {
						args = append(args, srcs[i%3])
					}
					if out, err := exec.Command("img2pdf", append(args, "-o", reel)...).CombinedOutput(); err != nil {
						b.Fatalf("img2pdf (Debian: img2pdf): %v: %s", err, out)
					}
				}
				var rss int64
				for b.Loop() {
					out := filepath.Join(b.TempDir(), "run")
					cmd := exec.Command(os.Args[0], "-test.run=^TestHelperRunProcess$")
					cmd.Env = append(os.Environ(), "RECTO_HELPER_RUN="+coll, "RECTO_HELPER_OUT="+out)
					msg, err := cmd.CombinedOutput()
					if err != nil {
						b.Fatalf("child run: %v: %s", err, msg)
					}
					_, after, ok := strings.Cut(string(msg), "VmHWM:")
					var kb int64
					if _, err := fmt.Sscan(after, &kb); !ok || err != nil {
						b.Fatalf("child run: no VmHWM line in its output: %s", msg)
					}
					rss = max(rss, kb<<10)
				}
				b.ReportMetric(float64(rss)/(1<<20), "peak-RSS-MB")
			})
		}
	}
}

// TestHelperRunProcess is the child of BenchmarkManyPagesMemory (the
// helper-process pattern of os/exec's own tests): with RECTO_HELPER_RUN set
// to the collection and RECTO_HELPER_OUT to the run folder it runs the job and checks every page was
// done; otherwise it does nothing.
func TestHelperRunProcess(t *testing.T) {
	v := os.Getenv("RECTO_HELPER_RUN")
	if v == "" {
		t.Skip("the child process of BenchmarkManyPagesMemory")
	}
	coll, out := v, os.Getenv("RECTO_HELPER_OUT")
	o := Options{Collection: coll, Out: out, NewEngine: runtest.Engine(coll, 0), NoPrepare: true, Quiet: true, Correct: 1, Rescan: 1, Jobs: 1}
	sum, err := Run(context.Background(), o)
	if err != nil {
		t.Fatal(err)
	}
	if sum.Done != sum.Pages || sum.Pages < 50 {
		t.Fatalf("%d of %d pages done", sum.Done, sum.Pages)
	}
	status, err := os.ReadFile("/proc/self/status")
	if err != nil {
		t.Fatal(err)
	}
	for line := range strings.Lines(string(status)) {
		if strings.HasPrefix(line, "VmHWM:") {
			fmt.Print(line)
		}
	}
}
