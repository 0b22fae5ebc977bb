// Package ocrtest provides a fake ocr.Engine and helpers for tests that
// must run without the Tesseract library.
package ocrtest

import (
	"context"
	"image"
	"image/png"
	"os"
	"path/filepath"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"recto/ocr"
)

// Engine is a fake ocr.Engine. Recognize returns Words (copied), or the
// result of Func when it is set, after waiting Delay; it counts calls and
// the largest number of calls in flight at once. The zero value returns no
// words. It is safe for concurrent use so that tests can detect sharing.
type Engine struct {
	Words []ocr.Word
	Func  func(ctx context.Context, img *image.Gray, dpi int) ([]ocr.Word, error)
	Delay time.Duration

	calls, inFlight, maxInFlight atomic.Int64
	closed                       atomic.Bool
	mu                           sync.Mutex
	dpis                         []int
}

var _ ocr.Engine = (*Engine)(nil)

// Recognize implements ocr.Engine.
func (e *Engine) Recognize(ctx context.Context, img *image.Gray, dpi int) ([]ocr.Word, error) {
	e.calls.Add(1)
	n := e.inFlight.Add(1)
	defer e.inFlight.Add(-1)
	for {
		m := e.maxInFlight.Load()
		if n <= m || e.maxInFlight.CompareAndSwap(m, n) {
			break
		}
	}
	e.mu.Lock()
	e.dpis = append(e.dpis, dpi)
	e.mu.Unlock()
	if e.Delay > 0 {
		select {
		case <-time.After(e.Delay):
		case <-ctx.Done():
			return nil, ctx.Err()
		}
	}
	if e.Func != nil {
		return e.Func(ctx, img, dpi)
	}
	return append([]ocr.Word(nil), e.Words...), nil
}

// Close implements ocr.Engine.
func (e *Engine) Close() error { e.closed.Store(true); return nil }

// Calls is the number of Recognize calls so far.
func (e *Engine) Calls() int { return int(e.calls.Load()) }

// MaxInFlight is the largest number of Recognize calls that overlapped.
func (e *Engine) MaxInFlight() int { return int(e.maxInFlight.Load()) }

// Closed reports whether Close was called.
func (e *Engine) Closed() bool { return e.closed.Load() }

// DPIs returns the resolutions Recognize was called with, in call order.
func (e *Engine) DPIs() []int {
	e.mu.Lock()
	defer e.mu.Unlock()
	return append([]int(nil), e.dpis...)
}

// PageFile writes img as a PNG file in a fresh temporary directory and
// returns its path.
func PageFile(tb testing.TB, img image.Image) string {
	tb.Helper()
	path := filepath.Join(tb.TempDir(), "page.png")
	WritePNG(tb, path, img)
	return path
}

// WritePNG writes img as a PNG file at path, creating directories.
func WritePNG(tb testing.TB, path string, img image.Image) {
	tb.Helper()
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		tb.Fatal(err)
	}
	f, err := os.Create(path)
	if err != nil {
		tb.Fatal(err)
	}
	if err := png.Encode(f, img); err != nil {
		f.Close()
		tb.Fatal(err)
	}
	if err := f.Close(); err != nil {
		tb.Fatal(err)
	}
}
