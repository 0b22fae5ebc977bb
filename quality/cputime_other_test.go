//go:build !unix

package quality

import "time"

func cpuTime() (time.Duration, bool) { return 0, false }
