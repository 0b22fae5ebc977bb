package run

import (
	"os"
	"path/filepath"
	"runtime"
	"runtime/metrics"
	"strconv"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"recto/quality"
)

// peakHeap runs f and returns the most heap it held above what was held
// before, sampled every half millisecond (runtime/metrics, live objects).
func peakHeap(f func()) uint64 {
	runtime.GC()
	s := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	metrics.Read(s)
	base := s[0].Value.Uint64()
	var peak atomic.Uint64
	stop := make(chan struct{})
	done := make(chan struct{})
	go func() {
		defer close(done)
		t := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
		for {
			metrics.Read(t)
			if v := t[0].Value.Uint64(); v > base && v-base > peak.Load() {
				peak.Store(v - base)
			}
			select {
			case <-stop:
				return
			case <-time.After(500 * time.Microsecond):
			}
		}
	}()
	f()
	close(stop)
	<-done
	return peak.Load()
}

// BenchmarkTruthMemory reads a large ground-truth file the way the run
// does (readTruth: quality.FindTruth and quality.ReadTruth) and scores it
// against a page of OCR text (quality.Compare), reporting the peak heap
// held as a multiple of the file's size (#16: a 50 MB file must cost at
// most 3 times its size; measured 2.0: reading 2.0, scoring 1.0 above the
// text it holds, where it was 11.8 before the long-text path). RECTO_TRUTH_MB sets the size (default 50).
func BenchmarkTruthMemory(b *testing.B) {
	mb := 50
	if v, err := strconv.Atoi(os.Getenv("RECTO_TRUTH_MB")); err == nil && v > 0 {
		mb = v
	}
	dir := b.TempDir()
	line := "The harbour master of Wrenmouth noted that the northern quay was mended.\n"
	text := strings.Repeat(line, mb<<20/len(line))
	if err := os.MkdirAll(filepath.Join(dir, "T"), 0o755); err != nil {
		b.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "T", "p.txt"), []byte(text), 0o644); err != nil {
		b.Fatal(err)
	}
	size := float64(len(text))
	text = ""
	st := &runState{truthDir: dir}
	hyp := strings.Repeat(line, 40) // a page of OCR text, about 3,000 characters
	var readPeak, scorePeak uint64
	for b.Loop() {
		var ref string
		readPeak = max(readPeak, peakHeap(func() {
			var err error
			if ref, _, _, err = st.readTruth("T/p.png"); err != nil {
				b.Fatal(err)
			}
		}))
		scorePeak = max(scorePeak, peakHeap(func() { quality.Compare(ref, hyp, quality.NormOptions{}) }))
	}
	// Scoring holds the text read (1×) plus its own peak; reading holds
	// the file's bytes and the text at once. The larger is the cost.
	b.ReportMetric(float64(readPeak)/size, "read-peak/size")
	b.ReportMetric(float64(scorePeak)/size, "score-peak/size")
	b.ReportMetric(max(float64(readPeak)/size, 1+float64(scorePeak)/size), "peak/size")
}
