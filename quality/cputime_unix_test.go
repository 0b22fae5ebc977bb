//go:build unix

package quality

import (
	"syscall"
	"time"
)

// cpuTime returns the CPU time (user and system) the process has used, so
// that benchmarks on a shared, oversubscribed machine can report a rate
// that does not count the time other processes held the core.
func cpuTime() (time.Duration, bool) {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0, false
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano()), true
}
