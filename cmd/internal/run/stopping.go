package run

import (
	"context"
	"fmt"

	"recto/cmd/internal/progress"
)

// sayStopping waits for ctx to be cancelled (SIGINT or SIGTERM) and then
// says once on stderr how many pages are being finished; it returns when
// ctx is cancelled or done is closed. Pages in flight are finished and
// committed; pages not started are left for the next run.
func (st *runState) sayStopping(ctx context.Context, prog *progress.Reporter, command string, total int, done <-chan struct{}) {
	select {
	case <-done:
		return
	case <-ctx.Done():
	}
	n := st.inFlight.Load()
	left := int64(total-prog.Done()-prog.Skipped()) - n
	prog.Message(fmt.Sprintf("%s: stopping: finishing the %d pages in flight and committing them; %d pages not started are left for the next run (the same command resumes)",
		command, n, max(0, left)))
}
