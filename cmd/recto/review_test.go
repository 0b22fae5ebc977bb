package main

import (
	"context"
	"io"
	"net/http"
	"net/http/cookiejar"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"recto/cmd/internal/run/runtest"
)

// syncBuffer is a bytes buffer safe to read while the command writes.
type syncBuffer struct {
	mu sync.Mutex
	b  strings.Builder
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// TestReviewCommand: recto review prints the address with its token on
// stdout, serves the run there, warns on stderr when --listen is not a
// loopback address, and stops when its context ends.
func TestReviewCommand(t *testing.T) {
	coll, _ := runtest.Collection(t, 1, 2, false)
	out := filepath.Join(t.TempDir(), "run")
	testEngine = runtest.Engine(coll, 0)
	defer func() { testEngine = nil }()
	if _, se, err := runRecto(t, "run", coll, "--out", out); err != nil {
		t.Fatal(err, se)
	}
	for _, c := range []struct {
		args []string
		warn bool
	}{
		{[]string{"review", out}, false},
		{[]string{"review", out, "--listen", "0.0.0.0:0", "--read-only"}, true},
	} {
		root := newRootCommand()
		var stdout, stderr syncBuffer
		root.SetOut(&stdout)
		root.SetErr(&stderr)
		root.SetArgs(c.args)
		ctx, cancel := context.WithCancel(context.Background())
		done := make(chan error, 1)
		go func() { done <- root.ExecuteContext(ctx) }()
		var addr string
		for i := 0; i < 200 && addr == ""; i++ {
			time.Sleep(20 * time.Millisecond)
			addr = strings.TrimSpace(stdout.String())
		}
		if !strings.HasPrefix(addr, "http://127.0.0.1:") || !strings.Contains(addr, "/?token=") {
			cancel()
			t.Fatalf("%v: address %q, stderr %s", c.args, addr, stderr.String())
		}
		jar, _ := cookiejar.New(nil)
		res, err := (&http.Client{Jar: jar}).Get(addr)
		if err != nil {
			t.Fatal(err)
		}
		body, _ := io.ReadAll(res.Body)
		res.Body.Close()
		if res.StatusCode != 200 || !strings.Contains(string(body), "Title A") {
			t.Errorf("%v: GET %s: %s", c.args, addr, res.Status)
		}
		if got := strings.Contains(stderr.String(), "warning: listening on"); got != c.warn {
			t.Errorf("%v: warning shown %v, want %v:\n%s", c.args, got, c.warn, stderr.String())
		}
		cancel()
		select {
		case <-done:
		case <-time.After(10 * time.Second):
			t.Fatalf("%v: still serving 10 s after its context ended", c.args)
		}
	}
	if _, se, err := runRecto(t, "review", t.TempDir()); err == nil || !strings.Contains(se+err.Error(), "not a run folder") {
		t.Errorf("review of an empty folder: %v %s", err, se)
	}
}
