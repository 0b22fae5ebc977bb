// Package progress is the one progress reporter of recto's batch commands
// (ocr, run, demo): on stderr, a bar redrawn in place when it is a
// terminal, a plain line every ten seconds otherwise, nothing under
// --quiet but the messages about failed pages, which are never silent.
// Counters are atomics; one goroutine draws.
package progress

import (
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/mattn/go-isatty"
)

// Reporter reports a batch on stderr: a redrawn bar when stderr is a
// terminal, a plain line every plainEvery otherwise, nothing under --quiet.
type Reporter struct {
	w      io.Writer
	prefix string // "recto run"
	tty    bool
	quiet  bool
	total  int
	start  time.Time

	done    atomic.Int64 // pages finished by this run (done or failed)
	failed  atomic.Int64
	skipped atomic.Int64 // pages already in the ledger

	perPage bool // a plain line per finished page, no drawing goroutine

	mu   sync.Mutex // serialises drawing with other stderr writes
	stop chan struct{}
	wg   sync.WaitGroup
}

const ttyEvery = 250 * time.Millisecond

// PlainEvery is how often a plain line is written when stderr is not a
// terminal; 0 writes one per finished page (tests use it).
var PlainEvery = 10 * time.Second

// New starts reporting total pages on w; every line starts with prefix
// ("recto run") and a colon. Call Finish when the batch is done.
func New(w io.Writer, prefix string, quiet bool, total int) *Reporter {
	p := &Reporter{w: w, prefix: prefix, quiet: quiet, total: total, start: time.Now(), stop: make(chan struct{})}
	if f, ok := w.(*os.File); ok && os.Getenv("TERM") != "dumb" {
		p.tty = isatty.IsTerminal(f.Fd())
	}
	if quiet {
		return p
	}
	every := PlainEvery
	if p.tty {
		every = ttyEvery
	}
	if every <= 0 {
		p.perPage = true
		return p
	}
	p.wg.Add(1)
	go func() {
		defer p.wg.Done()
		t := time.NewTicker(every)
		defer t.Stop()
		for {
			select {
			case <-t.C:
				p.draw(false)
			case <-p.stop:
				return
			}
		}
	}()
	return p
}

// Add counts a page finished by this batch, failed or not.
func (p *Reporter) Add(failed bool) {
	p.done.Add(1)
	if failed {
		p.failed.Add(1)
	}
	if p.perPage && !p.quiet {
		p.draw(false)
	}
}

// Skip counts a page found already done (a resumed run).
func (p *Reporter) Skip() { p.skipped.Add(1) }

// Done, Failed and Skipped return the counts so far: pages finished by
// this batch (failed ones included), failed, and already done.
func (p *Reporter) Done() int    { return int(p.done.Load()) }
func (p *Reporter) Failed() int  { return int(p.failed.Load()) }
func (p *Reporter) Skipped() int { return int(p.skipped.Load()) }

// Message prints one line (a failed page) on the progress writer, erasing
// the bar first on a terminal; the next tick redraws it. Messages are
// printed under --quiet too: failures are never silent.
func (p *Reporter) Message(line string) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.tty && !p.quiet {
		fmt.Fprint(p.w, "\r\033[K")
	}
	fmt.Fprintln(p.w, line)
}

// Finish stops drawing and prints the last state on its own line.
func (p *Reporter) Finish() {
	if p.quiet {
		return
	}
	if !p.perPage {
		close(p.stop)
		p.wg.Wait()
	}
	p.draw(true)
}

// line formats the state: counts, rate and time left.
func (p *Reporter) line(now time.Time) string {
	done, failed, skipped := p.done.Load(), p.failed.Load(), p.skipped.Load()
	finished := done + skipped
	var b strings.Builder
	fmt.Fprintf(&b, "%d/%d pages", finished, p.total)
	if skipped > 0 {
		fmt.Fprintf(&b, " (%d already done)", skipped)
	}
	if failed > 0 {
		fmt.Fprintf(&b, ", %d failed", failed)
	}
	el := now.Sub(p.start)
	if done > 0 && el > 0 {
		rate := float64(done) / el.Minutes()
		fmt.Fprintf(&b, ", %.1f pages/min", rate)
		if left := int64(p.total) - finished; left > 0 {
			eta := time.Duration(float64(left) / rate * float64(time.Minute))
			fmt.Fprintf(&b, ", about %s left", eta.Round(time.Second))
		}
	}
	return b.String()
}

func (p *Reporter) draw(last bool) {
	p.mu.Lock()
	defer p.mu.Unlock()
	text := p.line(time.Now())
	if !p.tty {
		fmt.Fprintf(p.w, "%s: %s\n", p.prefix, text)
		return
	}
	const width = 30
	fill := width
	if p.total > 0 {
		fill = int(int64(width) * (p.done.Load() + p.skipped.Load()) / int64(p.total))
	}
	bar := strings.Repeat("█", fill) + strings.Repeat("░", width-fill)
	fmt.Fprintf(p.w, "\r\033[K%s %s", bar, text)
	if last {
		fmt.Fprintln(p.w)
	}
}
