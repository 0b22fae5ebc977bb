package par

import (
	"context"
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
