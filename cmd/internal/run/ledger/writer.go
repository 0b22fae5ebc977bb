package ledger

import (
	"context"
	"sync"
)

// Writer commits pages to a ledger from one goroutine, in the order they
// are handed over. A page is committed as soon as the goroutine takes it;
// pages that queued up meanwhile (up to maxGroup) share its transaction, so
// one disk sync serves several pages when pages finish faster than the disk
// syncs. Callers must call Close, which waits until every page handed to
// Put is committed.
type Writer struct {
	l        *Ledger
	ch       chan Page
	done     chan struct{}
	onCommit func(Page)

	mu  sync.Mutex
	err error
}

// NewWriter starts the writer goroutine. onCommit, when not nil, is called
// from that goroutine after each page is committed (e.g. to count progress).
// Pending pages are committed even after the caller's context is cancelled:
// a finished page is never thrown away.
func (l *Ledger) NewWriter(onCommit func(Page)) *Writer {
	w := &Writer{l: l, ch: make(chan Page, 16), done: make(chan struct{}), onCommit: onCommit}
	go w.loop()
	return w
}

// maxGroup bounds the pages committed in one transaction.
const maxGroup = 64

func (w *Writer) loop() {
	defer close(w.done)
	group := make([]Page, 0, maxGroup)
	for p := range w.ch {
		group = append(group[:0], p)
	more:
		for len(group) < maxGroup {
			select {
			case q, ok := <-w.ch:
				if !ok {
					break more
				}
				group = append(group, q)
			default:
				break more
			}
		}
		if w.Err() != nil {
			continue // drain so that producers never block
		}
		err := error(nil)
		if w.l.BeforeCommit != nil {
			err = w.l.BeforeCommit(group)
		}
		if err == nil {
			err = w.l.PutAll(context.Background(), group)
		}
		if err != nil {
			w.mu.Lock()
			w.err = err
			w.mu.Unlock()
			continue
		}
		if w.onCommit != nil {
			for _, q := range group {
				w.onCommit(q)
			}
		}
	}
}

// Put hands p to the writer goroutine. It may block while the queue is full.
func (w *Writer) Put(p Page) { w.ch <- p }

// Err returns the first commit error, if any; once set, later pages are
// dropped and the run should stop.
func (w *Writer) Err() error {
	w.mu.Lock()
	defer w.mu.Unlock()
	return w.err
}

// Close waits for every pending page to be committed and returns the first
// commit error.
func (w *Writer) Close() error {
	close(w.ch)
	<-w.done
	return w.Err()
}
