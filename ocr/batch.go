package ocr

import (
	"context"
	"errors"
	"fmt"
	"image"
	"runtime"

	"recto/ocr/par"
)

// BatchConfig configures RunBatch. NewEngine is required; the zero value of
// every other field means its default.
type BatchConfig struct {
	Jobs      int                    // workers, each with its own engine; 0 means GOMAXPROCS
	NewEngine func() (Engine, error) // called once per worker
	Options   Options                // per-page options

	// Pages, when not nil, gives for each path the page to read of a
	// multi-page file (from 1; ProcessFilePage), 0 for a single image.
	Pages []int

	// Done, when not nil, is called by the worker that processed a page,
	// before the result is sent, e.g. to write the page's outputs; an error
	// it returns becomes the result's Err. It runs concurrently on
	// different workers.
	Done func(r *Result) error
}

// Result is the outcome of one page of a batch.
type Result struct {
	Index    int         // position of the page in the paths given to RunBatch
	Path     string      // the page's path
	Record   *Record     // nil when Err is not nil
	Prepared *image.Gray // prepared image when Options.KeepImage is set
	Err      error       // what went wrong with this page; names the file
}

// RunBatch recognises the pages at paths with a bounded pool of workers,
// one engine each (never shared), and sends one Result per page on the
// returned channel, in completion order; Result.Index says which page it
// is. The channel is closed when every worker has finished.
//
// A page that fails gets a Result with Err set and the batch goes on. When
// ctx is cancelled, workers finish the page in hand and stop; pages not
// started get no Result. RunBatch returns an error, and no channel, when an
// engine cannot be created.
func RunBatch(ctx context.Context, paths []string, c BatchConfig) (<-chan Result, error) {
	if c.NewEngine == nil {
		return nil, errors.New("ocr: BatchConfig.NewEngine is nil")
	}
	jobs := c.Jobs
	if jobs <= 0 {
		jobs = runtime.GOMAXPROCS(0)
	}
	jobs = max(1, min(jobs, len(paths)))
	engines := make([]Engine, 0, jobs)
	for range jobs {
		e, err := c.NewEngine()
		if err != nil {
			for _, e := range engines {
				e.Close()
			}
			return nil, err
		}
		engines = append(engines, e)
	}

	results := make(chan Result)
	go func() {
		defer close(results)
		defer func() {
			for _, e := range engines {
				e.Close()
			}
		}()
		par.Each(ctx, len(paths), len(engines), func(w, i int) {
			r := processOne(ctx, engines[w], i, paths[i], c)
			if r.Err != nil && ctx.Err() != nil {
				return // interrupted, not a bad page
			}
			select {
			case results <- r:
			case <-ctx.Done():
			}
		})
	}()
	return results, nil
}

// processOne processes one page, turning a panic in the engine or in the
// preparation of a strange image into that page's error.
func processOne(ctx context.Context, eng Engine, i int, path string, c BatchConfig) (r Result) {
	r = Result{Index: i, Path: path}
	defer func() {
		if p := recover(); p != nil {
			r.Record, r.Prepared = nil, nil
			r.Err = fmt.Errorf("ocr: %q: internal error: %v", path, p)
		}
	}()
	n := 0
	if c.Pages != nil {
		n = c.Pages[i]
	}
	rec, img, err := ProcessFilePage(ctx, eng, path, n, "", c.Options)
	if err != nil {
		r.Err = err
		return r
	}
	r.Record, r.Prepared = rec, img
	if c.Done != nil {
		if err := c.Done(&r); err != nil {
			r.Record, r.Prepared, r.Err = nil, nil, err
		}
	}
	return r
}
