package progress

import (
	"bytes"
	"strings"
	"testing"
	"time"
)

func TestProgressLine(t *testing.T) {
	var buf bytes.Buffer
	p := New(&buf, "recto run", true, 100) // quiet: no drawing goroutine
	p.start = time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	for range 10 {
		p.Skip()
	}
	for i := range 30 {
		p.Add(i%10 == 0)
	}
	got := p.line(p.start.Add(3 * time.Minute))
	// 30 pages in 3 minutes: 10 pages/min; 60 left: 6 minutes.
	want := "40/100 pages (10 already done), 3 failed, 10.0 pages/min, about 6m0s left"
	if got != want {
		t.Errorf("line = %q, want %q", got, want)
	}
	p.Finish()
	if buf.Len() != 0 {
		t.Errorf("quiet progress wrote %q", buf.String())
	}
}

func TestProgressPlainWhenNotTerminal(t *testing.T) {
	var buf bytes.Buffer
	p := New(&buf, "recto run", false, 2) // a buffer is not a terminal
	p.Add(false)
	p.Add(false)
	p.Finish()
	out := buf.String()
	if strings.Contains(out, "\r") || strings.Contains(out, "\033") || !strings.HasPrefix(out, "recto run: 2/2 pages") {
		t.Errorf("plain progress = %q", out)
	}
}
