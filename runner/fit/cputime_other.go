//go:build !unix && !windows

package fit

import "time"

// processStart is when the package was initialised.
var processStart = time.Now()

// CPUTime is, on systems without a per-process CPU clock the standard
// library reaches (such as WebAssembly), the wall time since the program
// started: the iteration profile's ratios then mix in any other work on
// the machine.
func CPUTime() time.Duration { return time.Since(processStart) }
