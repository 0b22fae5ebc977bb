//go:build unix

package review

import "syscall"

// cpuSeconds is the CPU time (user and system) this process has used: on
// a machine shared with other work it says what a page costs, where wall
// time says how busy the machine was.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Sec+ru.Stime.Sec) + float64(ru.Utime.Usec+ru.Stime.Usec)/1e6
}
