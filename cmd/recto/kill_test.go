package main

import (
	"errors"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"syscall"
	"testing"
	"time"
)

// buildRecto compiles the command into a temporary folder.
func buildRecto(t *testing.T) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "recto")
	if runtime.GOOS == "windows" {
		bin += ".exe"
	}
	cmd := exec.Command("go", "build", "-o", bin, ".")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
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
	env := append(os.Environ(), "RECTO_FAKE_ENGINE=1", "RECTO_FAKE_DELAY_MS=4")
	run := func(out string) *exec.Cmd {
		c := exec.Command(bin, "run", coll, "--out", out, "--truth", truth, "--jobs", "2", "--quiet")
		c.Env = env
		return c
	}
	clean := filepath.Join(base, "clean")
	if err := run(clean).Run(); exitStatus(err) != exitPartial {
		t.Fatalf("uninterrupted run: %v, want exit status 3", err)
	}

	seed := time.Now().UnixNano()
	t.Logf("kill seed %d", seed)
	rng := rand.New(rand.NewPCG(uint64(seed), 7))
	killed := filepath.Join(base, "killed")
	kills := 0
	for attempt := 0; attempt < 40; attempt++ {
		c := run(killed)
		if err := c.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(time.Duration(rng.IntN(120)) * time.Millisecond)
		if err := c.Process.Signal(syscall.SIGKILL); err == nil {
			kills++
		}
		err := c.Wait()
		if st := exitStatus(err); st == exitPartial || st == exitOK {
			break // finished before the kill landed
		}
	}
	if err := run(killed).Run(); exitStatus(err) != exitPartial {
		t.Fatalf("final resumed run: %v, want exit status 3", err)
	}
	t.Logf("%d kills", kills)
	if kills == 0 {
		t.Fatal("no run was killed: the test proved nothing")
	}
	sameRun(t, clean, killed)
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
