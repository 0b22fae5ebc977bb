package main

import (
	"bufio"
	"bytes"
	"context"
	"fmt"
	"io"
	"math/rand/v2"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"

	"recto/cmd/internal/cli"
	"recto/cmd/internal/run/runtest"
)

// TestStopExits130EveryTime is defect 9 of #16: SIGTERM and SIGINT at
// eight moments of a run (from its first line on stderr to its end) give
// exit status 130 each time, and stderr says how many pages in flight are
// being finished. (A signal that arrives before the program has started
// at all, in the few milliseconds the system takes to load it, still ends
// it with the system's default, status 143; README says so.)
func TestStopExits130EveryTime(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("needs Unix signals")
	}
	coll, _ := runtest.Collection(t, 2, 10, false)
	rng := rand.New(rand.NewPCG(16, 9))
	interrupted := 0
	for try := range 8 {
		sig := syscall.SIGTERM
		if try%2 == 1 {
			sig = syscall.SIGINT
		}
		out := filepath.Join(t.TempDir(), "out")
		c := recto(coll, 40*time.Millisecond, "run", coll, "--out", out, "--jobs", "2", "--correct", "0.99", "--rescan", "1")
		pr, pw := io.Pipe()
		c.Stderr = pw
		var rest bytes.Buffer
		first := make(chan struct{})
		read := make(chan struct{})
		go func() {
			defer close(read)
			sc := bufio.NewScanner(pr)
			for n := 0; sc.Scan(); n++ {
				if n == 0 {
					close(first)
				}
				rest.WriteString(sc.Text() + "\n")
			}
		}()
		if err := c.Start(); err != nil {
			t.Fatal(err)
		}
		select {
		case <-first:
		case <-time.After(30 * time.Second):
			t.Fatal("no line on stderr within 30 s")
		}
		// 20 pages at 40 ms on 2 workers take about 400 ms after start-up.
		time.Sleep(time.Duration(rng.IntN(350)) * time.Millisecond)
		c.Process.Signal(sig)
		st := exitStatus(c.Wait())
		pw.Close()
		<-read // the reader is done with rest
		if st != exitInterrupted && st != exitOK {
			t.Errorf("try %d (%v): exit status %d, want %d\n%s", try, sig, st, exitInterrupted, rest.String())
		}
		if st == exitInterrupted {
			interrupted++
		}
		if st == exitInterrupted && !strings.Contains(rest.String(), "pages in flight") {
			t.Errorf("try %d (%v): stderr does not say pages in flight are being finished:\n%s", try, sig, rest.String())
		}
	}
	if interrupted < 6 {
		t.Errorf("only %d of 8 runs were still going when signalled: the test no longer tests stopping", interrupted)
	}
}

// TestSetupErrorExit4: pages failed for set-up reasons give exit status 4,
// also when the error is wrapped.
func TestSetupErrorExit4(t *testing.T) {
	var buf bytes.Buffer
	err := fmt.Errorf("wrapped: %w", &cli.SetupError{Setup: 2, Total: 5, Report: "out/report/failures.csv", First: "x"})
	if st := exitCode(context.Background(), &buf, "recto run", err); st != cli.ExitSetup {
		t.Errorf("exit status %d, want %d", st, cli.ExitSetup)
	}
	if !strings.Contains(buf.String(), "failures.csv") {
		t.Errorf("message %q does not name failures.csv", buf.String())
	}
}
