//go:build cgo && !notesseract

package tesseract

import (
	"bufio"
	"context"
	"image"
	"image/draw"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"recto/ocr"
)

// benchPage is a 300 dpi 2560×3300 magazine scan, about the pixel count of
// an A4 page at 300 dpi (2480×3508); testdata/engine/SOURCES.md.
const benchPage = "../../testdata/engine/8087_054.3B.tif"

// benchPages is the batch size of the throughput benchmarks: small enough
// to run in a minute on two cores.
const benchPages = 4

func batchPaths(n int) []string {
	p := make([]string, n)
	for i := range p {
		p[i] = benchPage
	}
	return p
}

// runBatch recognises paths with jobs workers and returns the wall time.
func runBatch(b *testing.B, paths []string, jobs int, onResult func(ocr.Result)) time.Duration {
	b.Helper()
	start := time.Now()
	res, err := ocr.RunBatch(context.Background(), paths, ocr.BatchConfig{
		Jobs:      jobs,
		NewEngine: func() (ocr.Engine, error) { return New(Config{}) },
	})
	if err != nil {
		b.Fatal(err)
	}
	for r := range res {
		if r.Err != nil {
			b.Fatal(r.Err)
		}
		if onResult != nil {
			onResult(r)
		}
	}
	return time.Since(start)
}

func skipWithoutEngine(b *testing.B) {
	b.Helper()
	e := engineOrSkip(b, Config{})
	_ = e
	if _, err := os.Stat(benchPage); err != nil {
		b.Skip(err)
	}
}

// BenchmarkBatchScaling recognises the same batch with one and with two
// workers and reports both rates and their ratio (the target is 1.8 or more
// on two cores).
func BenchmarkBatchScaling(b *testing.B) {
	skipWithoutEngine(b)
	paths := batchPaths(benchPages)
	var t1, t2, c1, c2 time.Duration
	for b.Loop() {
		c := cpuTime()
		t1 += runBatch(b, paths, 1, nil)
		c1 += cpuTime() - c
		c = cpuTime()
		t2 += runBatch(b, paths, 2, nil)
		c2 += cpuTime() - c
	}
	n := float64(b.N * len(paths))
	b.ReportMetric(n/t1.Minutes(), "pages/min-jobs1")
	b.ReportMetric(n/t2.Minutes(), "pages/min-jobs2")
	b.ReportMetric(t1.Seconds()/t2.Seconds(), "speedup")
	// CPU seconds per page: equal for both means no parallel overhead, so
	// the speedup is bounded only by the cores free on the machine.
	b.ReportMetric(c1.Seconds()/n, "cpu-s/page-jobs1")
	b.ReportMetric(c2.Seconds()/n, "cpu-s/page-jobs2")
	b.ReportMetric(c2.Seconds()/t2.Seconds(), "cores-busy-jobs2")
}

// BenchmarkVersusCLI compares recto with two workers against the plain
// tesseract command run page by page with its defaults (its own threads,
// no OMP_THREAD_LIMIT), on the same pages. The target is 3× or more.
func BenchmarkVersusCLI(b *testing.B) {
	skipWithoutEngine(b)
	tess, err := exec.LookPath("tesseract")
	if err != nil {
		b.Skip("the tesseract command is not installed")
	}
	paths := batchPaths(benchPages)
	env := []string{}
	for _, kv := range os.Environ() {
		if !strings.HasPrefix(kv, "OMP_THREAD_LIMIT=") { // this process set it for itself
			env = append(env, kv)
		}
	}
	dir := b.TempDir()
	var tr, tc time.Duration
	for b.Loop() {
		tr += runBatch(b, paths, 2, nil)
		start := time.Now()
		for i, p := range paths {
			cmd := exec.Command(tess, p, filepath.Join(dir, "out"+strconv.Itoa(i)))
			cmd.Env = env
			if out, err := cmd.CombinedOutput(); err != nil {
				b.Fatalf("tesseract: %v\n%s", err, out)
			}
		}
		tc += time.Since(start)
	}
	n := float64(b.N * len(paths))
	b.ReportMetric(n/tr.Minutes(), "pages/min-recto")
	b.ReportMetric(n/tc.Minutes(), "pages/min-cli")
	b.ReportMetric(tc.Seconds()/tr.Seconds(), "ratio")
}

// BenchmarkBatchMemory runs a batch of A4-sized pages with two workers and
// reports the peak resident set of the process (VmHWM) per worker, and the
// trend of the resident set over the second half of the batch, by least
// squares over one sample per finished page (flat means about 0 MB/page).
func BenchmarkBatchMemory(b *testing.B) {
	skipWithoutEngine(b)
	const jobs, pages = 2, 12
	paths := batchPaths(pages)
	var rss []float64
	var peak float64
	for b.Loop() {
		rss = rss[:0]
		runBatch(b, paths, jobs, func(ocr.Result) { rss = append(rss, procStatusMB("VmRSS")) })
		peak = procStatusMB("VmHWM")
	}
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	b.Logf("RSS after each page, MB: %.0f", rss)
	b.ReportMetric(peak/jobs, "peakRSS-MB/worker")
	b.ReportMetric(slope(rss[len(rss)/2:]), "RSS-MB/page")
	b.ReportMetric(rss[len(rss)/2], "RSS-MB-mid")
	b.ReportMetric(rss[len(rss)-1], "RSS-MB-end")
	b.ReportMetric(float64(ms.HeapSys)/(1<<20), "GoHeapSys-MB")
}

// slope is the least-squares slope of ys against 0, 1, 2, ...
func slope(ys []float64) float64 {
	n := float64(len(ys))
	if n < 2 {
		return 0
	}
	var sx, sy, sxx, sxy float64
	for i, y := range ys {
		x := float64(i)
		sx, sy, sxx, sxy = sx+x, sy+y, sxx+x*x, sxy+x*y
	}
	return (n*sxy - sx*sy) / (n*sxx - sx*sx)
}

// cpuTime is the user plus system CPU time of this process so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// procStatusMB reads a kB field of /proc/self/status in MiB; 0 if absent.
func procStatusMB(field string) float64 {
	f, err := os.Open("/proc/self/status")
	if err != nil {
		return 0
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		k, v, ok := strings.Cut(sc.Text(), ":")
		if ok && k == field {
			kb, _ := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(v), " kB"), 64)
			return kb / 1024
		}
	}
	return 0
}

// BenchmarkOnePass checks two properties of Recognize on a real scan:
// it recognises the page once (its time matches one gosseract Text call,
// not the sum of Text and the box listing), and Tesseract runs on one
// thread (CPU time over wall time at most about 1 on an idle machine;
// run with OMP_THREAD_LIMIT=2, which the adapter respects, to see the cost
// of Tesseract's own threads).
func BenchmarkOnePass(b *testing.B) {
	e := engineOrSkip(b, Config{}).(*engine)
	g := mustDecode(b, "../../testdata/engine/phototest.tif")
	var tRec, tText, tBoth, cpu time.Duration
	for b.Loop() {
		c0, t0 := cpuTime(), time.Now()
		if _, err := e.Recognize(context.Background(), g, 300); err != nil {
			b.Fatal(err)
		}
		t1 := time.Now()
		cpu += cpuTime() - c0
		tRec += t1.Sub(t0)
		e.client.Text()
		t2 := time.Now()
		tText += t2.Sub(t1)
		e.client.Text()
		e.client.GetBoundingBoxesVerbose()
		tBoth += time.Since(t2)
	}
	n := float64(b.N)
	b.ReportMetric(tRec.Seconds()*1000/n, "recognize-ms")
	b.ReportMetric(tText.Seconds()*1000/n, "text-only-ms")
	b.ReportMetric(tBoth.Seconds()*1000/n, "text+boxes-ms")
	b.ReportMetric(cpu.Seconds()*1000/n, "recognize-cpu-ms")
	b.ReportMetric(cpu.Seconds()/tRec.Seconds(), "cpu/wall")
}

func mustDecode(b *testing.B, path string) *image.Gray {
	d, err := ocr.DecodeFile(path, ocr.DecodeOptions{})
	if err != nil {
		b.Fatal(err)
	}
	r := d.Image.Bounds()
	g := image.NewGray(image.Rect(0, 0, r.Dx(), r.Dy()))
	draw.Draw(g, g.Bounds(), d.Image, r.Min, draw.Src)
	return g
}
