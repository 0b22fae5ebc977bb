package par

import (
	"context"
	"errors"
	"runtime"
	"sync/atomic"
	"testing"
)

func TestEachVisitsEveryItemOnce(t *testing.T) {
	for _, workers := range []int{0, 1, 3, 100} {
		const n = 1000
		var seen [n]atomic.Int32
		var busy [100]atomic.Int32 // calls per worker index
		if err := Each(context.Background(), n, workers, func(w, i int) {
			seen[i].Add(1)
			busy[w].Add(1)
		}); err != nil {
			t.Fatal(err)
		}
		for i := range seen {
			if got := seen[i].Load(); got != 1 {
				t.Fatalf("workers %d: item %d visited %d times", workers, i, got)
			}
		}
		for w := Workers(workers, n); w < len(busy); w++ {
			if busy[w].Load() != 0 {
				t.Errorf("workers %d: worker index %d used, want below %d", workers, w, Workers(workers, n))
			}
		}
	}
}

func TestWorkers(t *testing.T) {
	if got := Workers(0, 1000); got != runtime.GOMAXPROCS(0) {
		t.Errorf("Workers(0, 1000) = %d, want GOMAXPROCS %d", got, runtime.GOMAXPROCS(0))
	}
	if got := Workers(8, 3); got != 3 {
		t.Errorf("Workers(8, 3) = %d, want 3", got)
	}
	if got := Workers(4, 0); got != 1 {
		t.Errorf("Workers(4, 0) = %d, want 1", got)
	}
}

// TestEachStopsWhenCancelled: after the context is done no new item
// starts, the calls in flight finish, and the error is the context's.
func TestEachStopsWhenCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	var started atomic.Int32
	err := Each(ctx, 1000, 2, func(w, i int) {
		if started.Add(1) == 10 {
			cancel()
		}
	})
	if err != context.Canceled {
		t.Errorf("err = %v, want context.Canceled", err)
	}
	// Each worker may have taken one more item before seeing the cancel.
	if n := started.Load(); n < 10 || n > 12 {
		t.Errorf("%d items started, want 10 to 12", n)
	}
	if err := Each(nil, 5, 2, func(w, i int) {}); err != nil {
		t.Errorf("nil context: %v", err)
	}
}

// TestEachSlotsExclusive: a slot is held by one call at a time and no more
// than Workers calls run at once (the contract of errgroup.SetLimit, which
// Each is built on: golang.org/x/sync/errgroup documentation).
func TestEachSlotsExclusive(t *testing.T) {
	var held [3]atomic.Int32
	var running, peak atomic.Int32
	Each(context.Background(), 300, 3, func(w, i int) {
		if held[w].Add(1) != 1 {
			t.Errorf("slot %d held twice", w)
		}
		n := running.Add(1)
		for {
			p := peak.Load()
			if n <= p || peak.CompareAndSwap(p, n) {
				break
			}
		}
		runtime.Gosched()
		running.Add(-1)
		held[w].Add(-1)
	})
	if p := peak.Load(); p > 3 {
		t.Errorf("%d calls ran at once, want at most 3", p)
	}
}

// TestEachErrStops: the first error stops new items and is returned.
func TestEachErrStops(t *testing.T) {
	boom := errors.New("no engine")
	var started atomic.Int32
	err := EachErr(context.Background(), 1000, 2, func(w, i int) error {
		started.Add(1)
		if i == 5 {
			return boom
		}
		return nil
	})
	if !errors.Is(err, boom) {
		t.Errorf("err = %v, want %v", err, boom)
	}
	if n := started.Load(); n > 8 {
		t.Errorf("%d items started after the failure at item 5, want at most 8", n)
	}
}
