package fit

import (
	"math"
	"runtime/debug"
	"testing"
)

// TestGridLimitRestored: grids holding the limit at once raise it by their
// budgets, a lower limit set before is kept, and the last grid to end
// restores the one in force before.
func TestGridLimitRestored(t *testing.T) {
	prev := debug.SetMemoryLimit(-1)
	defer debug.SetMemoryLimit(prev)
	debug.SetMemoryLimit(math.MaxInt64)
	a := holdGridLimit(100 << 20)
	la := debug.SetMemoryLimit(-1)
	b := holdGridLimit(50 << 20)
	lb := debug.SetMemoryLimit(-1)
	if la == math.MaxInt64 || lb < la+50<<20 {
		t.Errorf("limits %d then %d: want a limit, raised by the second grid's 50 MB", la, lb)
	}
	b()
	if l := debug.SetMemoryLimit(-1); l > lb-50<<20 {
		t.Errorf("after the second grid: %d, want at most %d", l, lb-50<<20)
	}
	a()
	if l := debug.SetMemoryLimit(-1); l != math.MaxInt64 {
		t.Errorf("after both: %d, want no limit again", l)
	}
	debug.SetMemoryLimit(1 << 20)
	c := holdGridLimit(100 << 20)
	if l := debug.SetMemoryLimit(-1); l != 1<<20 {
		t.Errorf("under a lower limit set before: %d, want it kept", l)
	}
	c()
	if l := debug.SetMemoryLimit(-1); l != 1<<20 {
		t.Errorf("after: %d, want the limit set before", l)
	}
}
