package run

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

// runProgress reports a run on stderr: a redrawn bar when stderr is a
// terminal, a plain line every runPlainEvery otherwise, nothing under --quiet.
// Counters are atomics; one goroutine draws.
type runProgress struct {
	w      io.Writer
	prefix string // "recto run"
	tty    bool
	quiet  bool
	total  int
	start  time.Time

	done    atomic.Int64 // pages finished by this run (done or failed)
	failed  atomic.Int64
	skipped atomic.Int64 // pages already in the ledger

	mu   sync.Mutex // serialises drawing with other stderr writes
	stop chan struct{}
	wg   sync.WaitGroup
}

const (
	runTTYEvery   = 250 * time.Millisecond
	runPlainEvery = 10 * time.Second
)

func newRunProgress(w io.Writer, prefix string, quiet bool, total int) *runProgress {
	p := &runProgress{w: w, prefix: prefix, quiet: quiet, total: total, start: time.Now(), stop: make(chan struct{})}
	if f, ok := w.(*os.File); ok && os.Getenv("TERM") != "dumb" {
		p.tty = isatty.IsTerminal(f.Fd())
	}
	if quiet {
		return p
	}
	every := runPlainEvery
	if p.tty {
		every = runTTYEvery
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

func (p *runProgress) add(failed bool) {
	p.done.Add(1)
	if failed {
		p.failed.Add(1)
	}
}

func (p *runProgress) skip() { p.skipped.Add(1) }

// message prints one line (a failed page) on the progress writer, erasing
// the bar first on a terminal; the next tick redraws it. Messages are
// printed under --quiet too: failures are never silent.
func (p *runProgress) message(line string) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.tty && !p.quiet {
		fmt.Fprint(p.w, "\r\033[K")
	}
	fmt.Fprintln(p.w, line)
}

// finish stops drawing and prints the last state on its own line.
func (p *runProgress) finish() {
	if p.quiet {
		return
	}
	close(p.stop)
	p.wg.Wait()
	p.draw(true)
}

// line formats the state: counts, rate and time left.
func (p *runProgress) line(now time.Time) string {
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

func (p *runProgress) draw(last bool) {
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
