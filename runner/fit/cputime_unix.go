//go:build unix

package fit

import (
	"syscall"
	"time"
)

// CPUTime is the CPU time the process has used so far: user and system
// time of all its threads (getrusage).
func CPUTime() time.Duration {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
