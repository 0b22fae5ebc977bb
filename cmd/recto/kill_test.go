package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/runtest"
	"recto/correct"
)

// asRectoEnv makes the test binary act as recto with the test engine on
// the collection it names (its value): the process tests run this binary,
// so the shipped one needs no way to switch engines.
const asRectoEnv = "RECTO_TEST_AS_RECTO"

// TestMain runs recto itself when asked to by a process test.
func TestMain(m *testing.M) {
	if coll := os.Getenv(asRectoEnv); coll != "" {
		delay, _ := strconv.Atoi(os.Getenv("RECTO_TEST_DELAY_MS"))
		testEngine = runtest.Engine(coll, time.Duration(delay)*time.Millisecond)
		os.Args = append([]string{"recto"}, strings.Split(os.Getenv("RECTO_TEST_ARGS"), "\x1f")...)
		main()
		return
	}
	code := m.Run()
	if testLexDir != "" { // lang_engine_test.go's lexicons
		os.RemoveAll(testLexDir)
	}
	os.Exit(code)
}

// recto returns a command that runs this test binary as recto with the
// test engine on coll, each page taking delay.
func recto(coll string, delay time.Duration, args ...string) *exec.Cmd {
	c := exec.Command(os.Args[0])
	c.Env = append(os.Environ(), asRectoEnv+"="+coll, fmt.Sprintf("RECTO_TEST_DELAY_MS=%d", delay.Milliseconds()),
		"RECTO_TEST_ARGS="+strings.Join(args, "\x1f"))
	return c
}

// TestKillAndResume kills a run with SIGKILL at random moments, resumes
// it each time, and checks that the finished ledger and reports equal
// those of an uninterrupted run.
func TestKillAndResume(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("SIGKILL test needs a Unix system")
	}
	coll, truth := runtest.Collection(t, 3, 12, true)
	base := t.TempDir()
	run := func(out string) *exec.Cmd {
		// No page is corrected (building the corrector takes seconds per
		// process); the shard tests cover correction.
		return recto(coll, 25*time.Millisecond, "run", coll, "--out", out, "--truth", truth, "--jobs", "2", "--quiet", "--correct", "0.99", "--rescan", "1")
	}
	clean := filepath.Join(base, "clean")
	t0 := time.Now()
	if err := run(clean).Run(); exitStatus(err) != exitPartial {
		t.Fatalf("uninterrupted run: %v, want exit status 3", err)
	}
	whole := time.Since(t0) // kill moments are spread over a whole run
	total := len(runtest.LedgerRows(t, clean))

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
			if n := len(runtest.LedgerRows(t, killed)); n > 0 && n < total {
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
	runtest.SameRun(t, clean, killed)
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
	coll, _ := runtest.Collection(t, 2, 20, false)
	out := filepath.Join(t.TempDir(), "out")
	args := []string{"run", coll, "--out", out, "--jobs", "2", "--quiet", "--correct", "0.99", "--rescan", "1"}
	c := recto(coll, 30*time.Millisecond, args...)
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
	rows := runtest.LedgerRows(t, out)
	if len(rows) == 0 || len(rows) >= 40 {
		t.Fatalf("%d pages committed before the interrupt, want some but not all 40", len(rows))
	}
	for _, r := range rows {
		if r.State != ledger.StateDone {
			t.Errorf("%s recorded as %s (%s): an interrupted page must not be recorded", r.Rel, r.State, r.Error)
		}
	}
	c = recto(coll, 30*time.Millisecond, args...)
	if err := c.Run(); err != nil {
		t.Fatalf("resumed run: %v", err)
	}
	if n := len(runtest.LedgerRows(t, out)); n != 40 {
		t.Errorf("%d pages after resuming, want 40", n)
	}
}

// TestRunUsageErrors: bad flag values of `recto run` are usage errors.
func TestRunUsageErrors(t *testing.T) {
	coll, _ := runtest.Collection(t, 1, 1, false)
	for _, args := range [][]string{
		{"run", coll},
		{"run", coll, "--out", "x", "--shard", "3/3"},
		{"run", coll, "--out", "x", "--rescan", "1.5"},
		{"run", coll, "--out", "x", "--correct", "0.5", "--rescan", "0.2"},
		{"run", coll, "--out", "x", "--jobs", "-1"},
		{"run", "--out", "x"},
	} {
		_, _, err := runRecto(t, args...)
		var ue *usageError
		if !errors.As(err, &ue) {
			t.Errorf("%q: err = %v, want a usage error", args, err)
		}
	}
}

// TestRunHelpMarginDefault: the help of `recto run` gives the margin the
// code uses when --margin is 0.
func TestRunHelpMarginDefault(t *testing.T) {
	f := newRootCommand()
	c, _, err := f.Find([]string{"run"})
	if err != nil {
		t.Fatal(err)
	}
	want := fmt.Sprintf("(default %g)", correct.DefaultMargin)
	if u := c.Flags().Lookup("margin").Usage; !strings.Contains(u, want) {
		t.Errorf("--margin help %q does not give the default %s", u, want)
	}
}

// TestUnknownCommandExit2: an unknown command is a usage error (exit status 2).
func TestUnknownCommandExit2(t *testing.T) {
	_, _, err := runRecto(t, "bogus-command")
	if err == nil {
		t.Fatal("an unknown command succeeded")
	}
	if st := exitCode(context.Background(), io.Discard, "recto", err); st != exitUsage {
		t.Errorf("exit status %d for %v, want %d", st, err, exitUsage)
	}
}

// TestBinaryHasNoTestCode: the shipped binary links neither the testing
// package nor the test engine (issue 15: no back door to a fake engine).
func TestBinaryHasNoTestCode(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary")
	}
	bin := filepath.Join(t.TempDir(), "recto")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	out, err := exec.Command("go", "tool", "nm", bin).Output()
	if err != nil {
		t.Fatalf("go tool nm: %v", err)
	}
	for _, pkg := range []string{" testing.", "recto/ocr/ocrtest.", "recto/cmd/internal/run/runtest."} {
		if strings.Contains(string(out), pkg) {
			t.Errorf("the binary links %q", strings.TrimSpace(pkg))
		}
	}
}
