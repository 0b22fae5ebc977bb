//go:build !unix

package correct

import "time"

// cpuTime is not measured on this system.
func cpuTime() time.Duration { return 0 }
