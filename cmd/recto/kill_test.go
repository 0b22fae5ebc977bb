package main

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"sync"
	"syscall"
	"testing"
	"time"

	"recto/ocr/ledger"
)

var (
	buildOnce sync.Once
	buildDir  string
	buildBin  string
	buildErr  error
)

// TestMain removes the binary the process tests share.
func TestMain(m *testing.M) {
	code := m.Run()
	if buildDir != "" {
		os.RemoveAll(buildDir)
	}
	os.Exit(code)
}

// buildRecto compiles the command once for the tests that run it as a
// process.
func buildRecto(t *testing.T) string {
	t.Helper()
	buildOnce.Do(func() {
		if buildDir, buildErr = os.MkdirTemp("", "recto-test-bin-"); buildErr != nil {
			return
		}
		buildBin = filepath.Join(buildDir, "recto")
		if runtime.GOOS == "windows" {
			buildBin += ".exe"
		}
		out, err := exec.Command("go", "build", "-o", buildBin, ".").CombinedOutput()
		if err != nil {
			buildErr = fmt.Errorf("go build: %v\n%s", err, out)
		}
	})
	if buildErr != nil {
		t.Fatal(buildErr)
	}
	return buildBin
}

// TestKillAndResume kills a run with SIGKILL at random moments, resumes
// it each time, and checks that the finished ledger and reports equal
// those of an uninterrupted run.
func TestKillAndResume(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("SIGKILL test needs a Unix system")
	}
	bin := buildRecto(t)
	coll, truth := testCollection(t, 3, 12, true)
	base := t.TempDir()
	env := append(os.Environ(), "RECTO_FAKE_ENGINE=1", "RECTO_FAKE_DELAY_MS=25")
	run := func(out string) *exec.Cmd {
		// No page is corrected (building the corrector takes seconds per
		// process); the shard tests cover correction.
		c := exec.Command(bin, "run", coll, "--out", out, "--truth", truth, "--jobs", "2", "--quiet", "--correct", "0.99", "--rescan", "1")
		c.Env = env
		return c
	}
	clean := filepath.Join(base, "clean")
	t0 := time.Now()
	if err := run(clean).Run(); exitStatus(err) != exitPartial {
		t.Fatalf("uninterrupted run: %v, want exit status 3", err)
	}
	whole := time.Since(t0) // kill moments are spread over a whole run
	total := len(ledgerRows(t, clean))

	seed := time.Now().UnixNano()
	t.Logf("kill seed %d", seed)
	rng := rand.New(rand.NewPCG(uint64(seed), 7))
	killed := filepath.Join(base, "killed")
	kills, midway := 0, 0
	for attempt := 0; attempt < 30 && midway < 3; attempt++ {
		c := run(killed)
		if err := c.Start(); err != nil {
			t.Fatal(err)
		}
		// Kill at a random moment after this run has committed a page of
		// its own (start-up, which loads the lexicon, varies a lot).
		before := countRows(killed)
		exited := make(chan error, 1)
		go func() { exited <- c.Wait() }()
		var err error
		waiting := true
		for deadline := time.Now().Add(whole); waiting && time.Now().Before(deadline) && countRows(killed) <= before; {
			select {
			case err = <-exited:
				waiting = false
			case <-time.After(10 * time.Millisecond):
			}
		}
		if waiting {
			time.Sleep(time.Duration(rng.Int64N(int64(300 * time.Millisecond))))
			if err := c.Process.Signal(syscall.SIGKILL); err == nil {
				kills++
			}
			err = <-exited
		}
		if st := exitStatus(err); st == exitPartial || st == exitOK {
			if midway >= 1 {
				break // finished before the kill landed
			}
			os.RemoveAll(killed) // nothing was proved yet: start over
			continue
		}
		if _, err := os.Stat(filepath.Join(killed, ledger.FileName)); err == nil {
			if n := len(ledgerRows(t, killed)); n > 0 && n < total {
				midway++
			}
		}
	}
	if err := run(killed).Run(); exitStatus(err) != exitPartial {
		t.Fatalf("final resumed run: %v, want exit status 3", err)
	}
	t.Logf("%d kills, %d with the ledger part-way (run takes %v)", kills, midway, whole)
	if midway == 0 {
		t.Fatal("no kill landed part-way through a run: the test proved nothing")
	}
	sameRun(t, clean, killed)
}

// countRows returns the rows in the ledger of dir, 0 when there is none yet.
func countRows(dir string) int {
	l, err := ledger.OpenReadOnly(filepath.Join(dir, ledger.FileName))
	if err != nil {
		return 0
	}
	defer l.Close()
	rows, _ := l.Pages(context.Background())
	return len(rows)
}

// exitStatus returns a command's exit status, -1 when killed by a signal.
func exitStatus(err error) int {
	if err == nil {
		return 0
	}
	var ee *exec.ExitError
	if errors.As(err, &ee) {
		return ee.ExitCode()
	}
	return -2
}

// TestInterruptExits130 sends SIGINT mid-run: the run stops taking pages,
// commits the pages it finished, exits 130, and a rerun completes the job.
func TestInterruptExits130(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("needs Unix signals")
	}
	bin := buildRecto(t)
	coll, _ := testCollection(t, 2, 20, false)
	out := filepath.Join(t.TempDir(), "out")
	env := append(os.Environ(), "RECTO_FAKE_ENGINE=1", "RECTO_FAKE_DELAY_MS=30")
	c := exec.Command(bin, "run", coll, "--out", out, "--jobs", "2", "--quiet", "--correct", "0.99", "--rescan", "1")
	c.Env = env
	if err := c.Start(); err != nil {
		t.Fatal(err)
	}
	// Interrupt once some pages are committed (start-up time varies).
	for deadline := time.Now().Add(30 * time.Second); time.Now().Before(deadline); time.Sleep(20 * time.Millisecond) {
		if l, err := ledger.OpenReadOnly(filepath.Join(out, ledger.FileName)); err == nil {
			rows, _ := l.Pages(context.Background())
			l.Close()
			if len(rows) > 0 {
				break
			}
		}
	}
	c.Process.Signal(os.Interrupt)
	if st := exitStatus(c.Wait()); st != exitInterrupted {
		t.Fatalf("exit status %d after SIGINT, want %d", st, exitInterrupted)
	}
	rows := ledgerRows(t, out)
	if len(rows) == 0 || len(rows) >= 40 {
		t.Fatalf("%d pages committed before the interrupt, want some but not all 40", len(rows))
	}
	for _, r := range rows {
		if r.State != ledger.StateDone {
			t.Errorf("%s recorded as %s (%s): an interrupted page must not be recorded", r.Rel, r.State, r.Error)
		}
	}
	c = exec.Command(bin, "run", coll, "--out", out, "--jobs", "2", "--quiet", "--correct", "0.99", "--rescan", "1")
	c.Env = env
	if err := c.Run(); err != nil {
		t.Fatalf("resumed run: %v", err)
	}
	if n := len(ledgerRows(t, out)); n != 40 {
		t.Errorf("%d pages after resuming, want 40", n)
	}
}
