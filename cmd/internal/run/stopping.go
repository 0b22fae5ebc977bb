package run

import (
	"context"
	"fmt"

	"recto/cmd/internal/progress"
)

// sayStopping waits for ctx to be cancelled (SIGINT or SIGTERM) and then
// says once on stderr how many pages are being finished; it returns when
// it has said so, or when done is closed on a run that was not cancelled.
// Pages in flight are finished and committed; pages not started are left
// for the next run. A cancellation always gets its message: on a busy
// machine this goroutine may first run after the pages in flight are done
// and done is closed (then none are in flight), and the caller waits for
// it before it says the run was interrupted.
func (st *runState) sayStopping(ctx context.Context, prog *progress.Reporter, command string, total int, done <-chan struct{}) {
	select {
	case <-ctx.Done():
	case <-done:
		if ctx.Err() == nil {
			return
		}
	}
	n := st.inFlight.Load()
	left := int64(total-prog.Done()-prog.Skipped()) - n
	if n == 0 {
		prog.Message(fmt.Sprintf("%s: stopping: no pages in flight; %d pages not started are left for the next run (the same command resumes)",
			command, max(0, left)))
		return
	}
	prog.Message(fmt.Sprintf("%s: stopping: finishing the %d pages in flight and committing them; %d pages not started are left for the next run (the same command resumes)",
		command, n, max(0, left)))
}
