//go:build windows

package fit

import (
	"syscall"
	"time"
)

// CPUTime is the CPU time the process has used so far: user and kernel
// time of all its threads (GetProcessTimes).
func CPUTime() time.Duration {
	h, err := syscall.GetCurrentProcess()
	if err != nil {
		return 0
	}
	var created, exited, kernel, user syscall.Filetime
	if syscall.GetProcessTimes(h, &created, &exited, &kernel, &user) != nil {
		return 0
	}
	// A Filetime counts 100-nanosecond intervals.
	ticks := func(f syscall.Filetime) int64 { return int64(f.HighDateTime)<<32 | int64(f.LowDateTime) }
	return time.Duration((ticks(kernel) + ticks(user)) * 100)
}
