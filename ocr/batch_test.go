package ocr_test

import (
	"context"
	"errors"
	"fmt"
	"image"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"recto/ocr"
	"recto/ocr/ocrtest"
)

// corpus writes n small pages and returns their paths; bad lists indices
// that get a broken file instead.
func corpus(t *testing.T, n int, bad ...int) []string {
	dir := t.TempDir()
	var paths []string
	for i := range n {
		p := filepath.Join(dir, fmt.Sprintf("p%03d.png", i))
		if contains(bad, i) {
			os.WriteFile(p, []byte("not a picture"), 0o644)
		} else {
			ocrtest.WritePNG(t, p, page(120+i, 80))
		}
		paths = append(paths, p)
	}
	return paths
}

func contains(list []int, v int) bool {
	for _, x := range list {
		if x == v {
			return true
		}
	}
	return false
}

type engines struct {
	mu   sync.Mutex
	list []*ocrtest.Engine

	inFlight, maxInFlight atomic.Int64 // across all engines
}

func (e *engines) new(delay time.Duration) func() (ocr.Engine, error) {
	return func() (ocr.Engine, error) {
		eng := &ocrtest.Engine{Func: func(ctx context.Context, _ *image.Gray, _ int) ([]ocr.Word, error) {
			n := e.inFlight.Add(1)
			defer e.inFlight.Add(-1)
			for m := e.maxInFlight.Load(); n > m && !e.maxInFlight.CompareAndSwap(m, n); m = e.maxInFlight.Load() {
			}
			select {
			case <-time.After(delay):
			case <-ctx.Done():
				return nil, ctx.Err()
			}
			return []ocr.Word{{Text: "Ledger", Conf: 0.9, Box: ocr.Box{X: 1, Y: 1, W: 5, H: 5}}}, nil
		}}
		e.mu.Lock()
		e.list = append(e.list, eng)
		e.mu.Unlock()
		return eng, nil
	}
}

func TestRunBatch(t *testing.T) {
	paths := corpus(t, 12, 3, 7)
	var es engines
	var written sync.Map
	res, err := ocr.RunBatch(context.Background(), paths, ocr.BatchConfig{
		Jobs:      3,
		NewEngine: es.new(20 * time.Millisecond),
		Done:      func(r *ocr.Result) error { written.Store(r.Index, true); return nil },
	})
	if err != nil {
		t.Fatal(err)
	}
	seen := map[int]bool{}
	var failed []int
	for r := range res {
		if seen[r.Index] {
			t.Errorf("page %d reported twice", r.Index)
		}
		seen[r.Index] = true
		if r.Path != paths[r.Index] {
			t.Errorf("result %d has path %q, want %q", r.Index, r.Path, paths[r.Index])
		}
		if r.Err != nil {
			failed = append(failed, r.Index)
			if r.Record != nil || !strings.Contains(r.Err.Error(), r.Path) {
				t.Errorf("failed page %d: record %v, error %v", r.Index, r.Record, r.Err)
			}
			continue
		}
		if r.Record == nil || r.Record.Source != r.Path || len(r.Record.Words) != 1 {
			t.Errorf("page %d: record %+v", r.Index, r.Record)
		}
		if _, ok := written.Load(r.Index); !ok {
			t.Errorf("Done not called for page %d", r.Index)
		}
	}
	sort.Ints(failed)
	if len(seen) != 12 || fmt.Sprint(failed) != "[3 7]" {
		t.Errorf("saw %d pages, failed %v; want 12 and [3 7]", len(seen), failed)
	}
	if len(es.list) != 3 {
		t.Errorf("%d engines created, want one per worker (3)", len(es.list))
	}
	// Pages really run in parallel, and never more than --jobs at once.
	if m := es.maxInFlight.Load(); m < 2 || m > 3 {
		t.Errorf("at most %d pages were recognised at once, want 2 or 3 with 3 workers", m)
	}
	total := 0
	for i, e := range es.list {
		total += e.Calls()
		if e.MaxInFlight() > 1 {
			t.Errorf("engine %d used by %d goroutines at once", i, e.MaxInFlight())
		}
		if !e.Closed() {
			t.Errorf("engine %d not closed", i)
		}
	}
	if total != 10 {
		t.Errorf("engines recognised %d pages, want the 10 good ones", total)
	}
}

func TestRunBatchDoneError(t *testing.T) {
	paths := corpus(t, 3)
	var es engines
	res, err := ocr.RunBatch(context.Background(), paths, ocr.BatchConfig{
		Jobs: 2, NewEngine: es.new(0),
		Done: func(r *ocr.Result) error {
			if r.Index == 1 {
				return errors.New("disk full")
			}
			return nil
		},
	})
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for r := range res {
		n++
		if (r.Err != nil) != (r.Index == 1) || (r.Err != nil && r.Record != nil) {
			t.Errorf("page %d: err %v record %v", r.Index, r.Err, r.Record != nil)
		}
	}
	if n != 3 {
		t.Errorf("%d results, want 3", n)
	}
}

func TestRunBatchCancel(t *testing.T) {
	paths := corpus(t, 40)
	var es engines
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	res, err := ocr.RunBatch(ctx, paths, ocr.BatchConfig{Jobs: 2, NewEngine: es.new(20 * time.Millisecond)})
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for r := range res {
		n++
		if r.Err != nil {
			t.Errorf("page %d: %v (an interruption is not a page failure)", r.Index, r.Err)
		}
		if n == 2 {
			cancel()
		}
	}
	if n >= 40 {
		t.Errorf("all %d pages ran despite the cancellation", n)
	}
	for i, e := range es.list {
		if !e.Closed() {
			t.Errorf("engine %d not closed after cancellation", i)
		}
	}
}

func TestRunBatchEngineFailure(t *testing.T) {
	paths := corpus(t, 4)
	calls := 0
	var made []*ocrtest.Engine
	_, err := ocr.RunBatch(context.Background(), paths, ocr.BatchConfig{Jobs: 3, NewEngine: func() (ocr.Engine, error) {
		calls++
		if calls == 2 {
			return nil, ocr.ErrEngineUnavailable
		}
		e := &ocrtest.Engine{}
		made = append(made, e)
		return e, nil
	}})
	if !errors.Is(err, ocr.ErrEngineUnavailable) {
		t.Errorf("err %v, want ErrEngineUnavailable", err)
	}
	for _, e := range made {
		if !e.Closed() {
			t.Error("engine created before the failure was not closed")
		}
	}
	if _, err := ocr.RunBatch(context.Background(), paths, ocr.BatchConfig{}); err == nil {
		t.Error("nil NewEngine accepted")
	}
}
