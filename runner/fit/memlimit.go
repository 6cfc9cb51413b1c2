package fit

import (
	"math"
	"runtime/debug"
	"runtime/metrics"
	"sync"
)

// gridLimit is the soft memory limit (runtime/debug.SetMemoryLimit) the
// grids running in this process hold. The collector paces from twice the
// live heap, and a grid's live heap is at least X twice (the data and the
// column copy), so the fits' garbage could reach another 2 X before a
// collection; under the limit the collector runs when the memory the
// runtime holds nears what the grids need. The base is the memory held as
// a grid starts (the largest such, so that what was made while other
// grids ran, such as another grid's data, is counted in); each grid adds
// its budget (gridBudget); the limit in force before (GOMEMLIMIT, or none)
// is kept when lower and restored when the last grid ends. The limit
// changes only when collections run, never a result.
var gridLimit struct {
	mu        sync.Mutex
	grids     int
	base, sum int64
	prev      int64
}

// limitAbove is the size of X, bytes, from which a grid holds the limit:
// below it the memory at stake is a few megabytes. A variable so that
// tests hold the limit on small grids.
var limitAbove = 8 << 20

// gridHeadroom is the least room a grid's limit leaves the fits in flight
// beyond the data and the copy: their block scratch, sums and the start
// searches' small matrices take some megabytes whatever n.
const gridHeadroom = 16 << 20

// gridBudget is what a grid of these models on d adds to the limit: the
// column copy of X, and room for the fits in flight: half an X, at least
// gridHeadroom, and for each of workers fits sixteen P x P matrices (the
// information, its factors, covariances) of the largest model.
func gridBudget(d *Data, workers int) int64 {
	x := int64(8 * d.N() * d.width())
	p := int64(max(d.J-1, 1)) * int64(d.width()+1)
	room := max(x/2, gridHeadroom) + int64(max(workers, 1))*16*8*p*p
	return x + room
}

// holdGridLimit sets the limit for a grid of budget bytes and returns the
// function that gives it back.
func holdGridLimit(budget int64) func() {
	g := &gridLimit
	g.mu.Lock()
	defer g.mu.Unlock()
	if g.grids == 0 {
		g.prev = debug.SetMemoryLimit(-1)
		g.base = 0
	}
	g.base = max(g.base, runtimeHeld())
	g.grids++
	g.sum += budget
	debug.SetMemoryLimit(min(g.prev, g.base+g.sum))
	return func() {
		g.mu.Lock()
		defer g.mu.Unlock()
		g.grids--
		g.sum -= budget
		if g.grids == 0 {
			debug.SetMemoryLimit(g.prev)
			return
		}
		debug.SetMemoryLimit(min(g.prev, g.base+g.sum))
	}
}

// runtimeHeld is the memory the Go runtime holds from the system, as the
// memory limit counts it: all of it but the heap released.
func runtimeHeld() int64 {
	s := []metrics.Sample{{Name: "/memory/classes/total:bytes"}, {Name: "/memory/classes/heap/released:bytes"}}
	metrics.Read(s)
	if s[0].Value.Kind() != metrics.KindUint64 || s[1].Value.Kind() != metrics.KindUint64 {
		return math.MaxInt64
	}
	return int64(s[0].Value.Uint64() - s[1].Value.Uint64())
}
