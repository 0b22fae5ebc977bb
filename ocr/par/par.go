// Package par runs one job per item (a page, a file) on a fixed number of
// goroutines: the loop every batch step of recto uses when its items do not
// each need an engine of their own.
package par

import (
	"context"
	"runtime"
	"sync"
)

// Workers returns how many goroutines Each starts for n items when asked
// for workers: GOMAXPROCS when workers <= 0, never more than n, at least 1.
func Workers(workers, n int) int {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	return max(1, min(workers, n))
}

// Each calls fn(w, i) for every i in [0, n), handing the items out in
// order to Workers(workers, n) goroutines; w (0 ≤ w < Workers) names the
// goroutine, so that fn can keep scratch memory per goroutine. Once ctx is
// done no further item is handed out; Each waits for the calls in flight
// and returns ctx.Err(). A nil ctx never ends early.
func Each(ctx context.Context, n, workers int, fn func(w, i int)) error {
	if n <= 0 {
		return nil
	}
	if ctx == nil {
		ctx = context.Background()
	}
	next := make(chan int)
	var wg sync.WaitGroup
	for w := range Workers(workers, n) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				fn(w, i)
			}
		}()
	}
feed:
	for i := range n {
		if ctx.Err() != nil {
			break // select picks at random when both cases are ready
		}
		select {
		case next <- i:
		case <-ctx.Done():
			break feed
		}
	}
	close(next)
	wg.Wait()
	return ctx.Err()
}
