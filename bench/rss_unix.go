//go:build unix

package main

import (
	"os"
	"runtime"
	"syscall"
)

// peakRSS is the peak resident set of a finished child process, in bytes
// (getrusage's ru_maxrss: kilobytes on Linux, bytes on macOS).
func peakRSS(ps *os.ProcessState) int64 {
	ru, ok := ps.SysUsage().(*syscall.Rusage)
	if !ok {
		return 0
	}
	if runtime.GOOS == "darwin" || runtime.GOOS == "ios" {
		return int64(ru.Maxrss)
	}
	return int64(ru.Maxrss) * 1024
}
