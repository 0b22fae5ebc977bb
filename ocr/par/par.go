// Package par is recto's one worker pool: one job per item (a page, a
// file) with at most a fixed number running at once, each job handed a
// worker slot so that it can use memory or an engine kept per slot. It is
// built on golang.org/x/sync/errgroup with SetLimit; every batch step of
// recto (recognition, scoring, triage, correction, the run, the corpus
// builder) uses it.
package par

import (
	"context"
	"runtime"
	"sync/atomic"

	"golang.org/x/sync/errgroup"
)

// Workers returns how many jobs Each runs at once for n items when asked
// for workers: GOMAXPROCS when workers <= 0, never more than n, at least 1.
func Workers(workers, n int) int {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	return max(1, min(workers, n))
}

// Each calls fn(w, i) for every i in [0, n), starting the items in order
// with at most Workers(workers, n) calls running at once; w (0 ≤ w <
// Workers) is the slot the call holds, never held by two calls at once, so
// that fn can keep scratch memory or an engine per slot. Once ctx is done
// no further item is started; Each waits for the calls in flight and
// returns ctx.Err(). A nil ctx never ends early.
func Each(ctx context.Context, n, workers int, fn func(w, i int)) error {
	return EachErr(ctx, n, workers, func(w, i int) error { fn(w, i); return nil })
}

// EachErr is Each for jobs that can fail in a way that must stop the batch
// (a worker's engine that cannot be made; a bad page is not such a
// failure): the first error stops further items from starting and is
// returned once the calls in flight are done.
func EachErr(ctx context.Context, n, workers int, fn func(w, i int) error) error {
	if n <= 0 {
		return nil
	}
	if ctx == nil {
		ctx = context.Background()
	}
	k := Workers(workers, n)
	slots := make(chan int, k)
	for w := range k {
		slots <- w
	}
	g, gctx := errgroup.WithContext(ctx)
	g.SetLimit(k)
	// failed is set the moment a call fails, before its worker is handed
	// back: errgroup cancels gctx only after the call's goroutine returns,
	// and on a busy machine the other workers could start hundreds of
	// items in between (seen under the race detector).
	var failed atomic.Bool
	stopped := func() bool { return failed.Load() || gctx.Err() != nil }
	for i := range n {
		if stopped() {
			break
		}
		g.Go(func() error { // blocks while k calls run
			if stopped() {
				return nil
			}
			w := <-slots // one is free: at most k goroutines run
			defer func() { slots <- w }()
			if stopped() {
				return nil
			}
			err := fn(w, i)
			if err != nil {
				failed.Store(true)
			}
			return err
		})
	}
	if err := g.Wait(); err != nil {
		return err
	}
	return ctx.Err()
}
