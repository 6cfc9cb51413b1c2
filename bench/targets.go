package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"time"

	"ordplan/runner/fit"
)

// The limits of the fitting engine's speed targets on this machine.
const (
	wholeLimit = 0.8  // seconds: ordplan fit, binary logit, 1e6 x 10, from CSV
	csvBudget  = 0.25 // seconds of it for reading the CSV file (the ingest target)
	iterLimit  = 1.5  // a parallel-effects iteration over one X'WX plus one kernel pass
	gridLimit  = 2.0  // the 13-model grid on every core over its slowest single fit
	memLimit   = 3.0  // peak memory over the design matrix
)

// targetRow is one row of the targets table.
type targetRow struct {
	what, measured string
	value, limit   float64
}

// targets measures the fitting engine against its speed targets at n rows
// (the grid at gridN rows), K = 10 predictors, and writes the table: each
// timing the best and the median of repeats runs.
func targets(w io.Writer, n, gridN, repeats int) {
	const K = 10
	var rows []targetRow
	add := func(r targetRow) {
		rows = append(rows, r)
		fmt.Fprintf(os.Stderr, "bench: %s: %s\n", r.what, r.measured)
	}
	xBytes := float64(n * K * 8)

	bin := generate(n, K, 2, 11)
	binary := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: make([]fit.Effect, K)}
	fmt.Fprintf(w, "Load average when the run began: %s (on %d cores).\n\n", loadAverage(), runtime.NumCPU())
	best, med, cpu := timeRepeats(repeats, func() {
		if _, err := fit.Fit(bin, binary, fit.Options{Workers: runtime.GOMAXPROCS(0)}); err != nil {
			fmt.Fprintln(os.Stderr, "bench:", err)
		}
	})
	add(targetRow{fmt.Sprintf("binary logit, %s x %d, the fit (data in memory), %d workers", count(n), K, runtime.GOMAXPROCS(0)),
		fmt.Sprintf("%.3f s (median %.3f; CPU %.3f s)", best, med, cpu), best, wholeLimit - csvBudget})

	if wp, err := wholeProcess(bin, repeats); err != nil {
		fmt.Fprintln(os.Stderr, "bench: whole process:", err)
	} else {
		add(targetRow{fmt.Sprintf("binary logit, %s x %d, whole process from CSV (`ordplan fit`)", count(n), K),
			fmt.Sprintf("%.3f s (median %.3f; CPU %.3f s; peak RSS %.0f MB, %.2f X)", wp.best, wp.median, wp.cpu, float64(wp.rss)/1e6, float64(wp.rss)/xBytes), wp.best, wholeLimit})
	}

	five := generate(n, K, 5, 42)
	for _, r := range iterationRows(bin, five, repeats) {
		add(r)
	}

	if gridN != n {
		five = generate(gridN, K, 5, 42)
	}
	g := gridTimes(five, K)
	add(targetRow{fmt.Sprintf("the 13-model grid, n = %s, on %d cores / its slowest single fit (on %d cores)", count(gridN), runtime.GOMAXPROCS(0), runtime.GOMAXPROCS(0)),
		fmt.Sprintf("%.2f (grid %.2f s, CPU %.2f s, %.1f passes over the data (%.1f fitted one by one); slowest %s %.2f s, CPU %.2f s, %.1f passes; CPU ratio %.2f)",
			g.grid/g.slowest, g.grid, g.gridCPU, g.gridPasses, g.singlePasses, g.name, g.slowest, g.slowestCPU, g.slowestPasses, g.gridCPU/g.slowestCPU),
		g.grid / g.slowest, gridLimit})

	for _, c := range []string{"binary", "cumulative/nonparallel", "grid"} {
		res, err := memoryChild(c, n)
		if err != nil {
			fmt.Fprintln(os.Stderr, "bench: memory:", err)
			continue
		}
		name := c
		if c == "grid" {
			name = "the 13-model grid (fit.FitGrid)"
		}
		add(targetRow{fmt.Sprintf("%s, n = %s: peak resident memory of the whole process / X", name, count(n)),
			fmt.Sprintf("%.2f (%.0f MB; peak heap / X %.2f; X = %.0f MB)", float64(res.RSS)/xBytes, float64(res.RSS)/1e6, float64(res.Heap)/xBytes, xBytes/1e6),
			float64(res.RSS) / xBytes, memLimit})
	}

	fmt.Fprintf(w, "| target | measured | limit | ratio to limit |\n|---|---|---|---|\n")
	for _, r := range rows {
		fmt.Fprintf(w, "| %s | %s | %s | %.2f |\n", r.what, r.measured, strconv.FormatFloat(r.limit, 'g', -1, 64), r.value/r.limit)
	}
}

// iterationRows measures one Newton iteration of the four parallel-effects
// models (binary logit on bin, the three comparisons on five) against one
// X'WX plus one kernel pass, each part the best of repeats runs on one
// worker.
func iterationRows(bin, five *fit.Data, repeats int) []targetRow {
	K := len(bin.Predictors)
	var rows []targetRow
	binary := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: make([]fit.Effect, K)}
	for _, c := range []struct {
		name string
		d    *fit.Data
		m    fit.Model
	}{
		{"binary logit", bin, binary},
		{"cumulative/parallel (J = 5)", five, fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: make([]fit.Effect, K)}},
		{"stage/parallel (J = 5)", five, fit.Model{Comparison: fit.Stage, Link: fit.Logit, Effects: make([]fit.Effect, K)}},
		{"adjacent/parallel (J = 5)", five, fit.Model{Comparison: fit.Adjacent, Link: fit.Logit, Effects: make([]fit.Effect, K)}},
	} {
		// Each part's best over the repeats: on a shared machine the
		// smallest time is the one least disturbed by other work.
		var iter, ref, kern, cross []float64
		for r := 0; r < repeats; r++ {
			pr, err := fit.ProfileIteration(c.d, c.m, 1, 1)
			if err != nil {
				fmt.Fprintln(os.Stderr, "bench:", err)
				break
			}
			iter, ref, kern, cross = append(iter, ms(pr.Iteration)), append(ref, ms(pr.Reference)), append(kern, ms(pr.Kernels)), append(cross, ms(pr.CrossProducts))
		}
		if len(iter) == 0 {
			continue
		}
		bi, _ := bestMedian(iter)
		br, _ := bestMedian(ref)
		bk, _ := bestMedian(kern)
		bc, _ := bestMedian(cross)
		ratio := bi / (br + bk)
		r := targetRow{fmt.Sprintf("%s: one iteration / (one X'WX + one kernel pass), one worker", c.name),
			fmt.Sprintf("%.2f (best of %d: iteration %.0f ms, X'WX %.0f ms, kernels %.0f ms; cross-products inside the iteration %.0f ms)",
				ratio, len(iter), bi, br, bk, bc), ratio, iterLimit}
		fmt.Fprintf(os.Stderr, "bench: %s: %s\n", r.what, r.measured)
		rows = append(rows, r)
	}
	return rows
}

// iterationReport measures the targets' iteration rows alone (-only
// iteration) at n rows and writes them as a table.
func iterationReport(w io.Writer, n, repeats int) {
	const K = 10
	fmt.Fprintf(w, "Load average when the run began: %s (on %d cores).\n\n", loadAverage(), runtime.NumCPU())
	rows := iterationRows(generate(n, K, 2, 11), generate(n, K, 5, 42), repeats)
	fmt.Fprintf(w, "| target | measured | limit | ratio to limit |\n|---|---|---|---|\n")
	for _, r := range rows {
		fmt.Fprintf(w, "| %s | %s | %s | %.2f |\n", r.what, r.measured, strconv.FormatFloat(r.limit, 'g', -1, 64), r.value/r.limit)
	}
}

func ms(d time.Duration) float64 { return float64(d) / 1e6 }

func count(n int) string {
	switch {
	case n >= 1e6 && n%1e6 == 0:
		return fmt.Sprintf("%de6", n/1e6)
	case n >= 1e3 && n%1e3 == 0:
		return fmt.Sprintf("%de3", n/1e3)
	}
	return strconv.Itoa(n)
}

// timeRepeats runs f repeats times and returns the best and the median
// seconds, and the best CPU seconds of this process (user and system,
// every thread) during one run: on a machine shared with other work the
// CPU time is the fit's own cost, the wall clock also its waiting.
func timeRepeats(repeats int, f func()) (float64, float64, float64) {
	var ts, cs []float64
	for r := 0; r < max(repeats, 1); r++ {
		c0 := cpuSeconds()
		t0 := time.Now()
		f()
		ts = append(ts, time.Since(t0).Seconds())
		cs = append(cs, cpuSeconds()-c0)
	}
	b, m := bestMedian(ts)
	c, _ := bestMedian(cs)
	return b, m, c
}

// loadAverage is the machine's one-minute load average ("" when unknown).
func loadAverage() string {
	raw, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return ""
	}
	return strings.Fields(string(raw))[0]
}

func bestMedian(v []float64) (float64, float64) {
	s := slices.Clone(v)
	slices.Sort(s)
	return s[0], s[len(s)/2]
}

// wholeRun is what the runs of `ordplan fit` took: the best and the median
// wall seconds, the best CPU seconds (user and system) and the largest
// peak resident set (bytes) of one run.
type wholeRun struct {
	best, median, cpu float64
	rss               int64
}

// wholeProcess builds ordplan, writes d (two categories) as CSV and times
// `ordplan fit` on it, each run a fresh process.
func wholeProcess(d *fit.Data, repeats int) (wholeRun, error) {
	var wr wholeRun
	dir, err := os.MkdirTemp("", "ordplan-bench-")
	if err != nil {
		return wr, err
	}
	defer os.RemoveAll(dir)
	exe := filepath.Join(dir, "ordplan")
	if out, err := exec.Command("go", "build", "-o", exe, "./cmd/ordplan").CombinedOutput(); err != nil {
		return wr, fmt.Errorf("go build ./cmd/ordplan (run the bench from the module root): %v: %s", err, out)
	}
	csv := filepath.Join(dir, "binary.csv")
	K := len(d.Predictors)
	if err := writeCSV(csv, d); err != nil {
		return wr, err
	}
	var errRun error
	var cpus []float64
	wr.best, wr.median, _ = timeRepeats(repeats, func() {
		cmd := exec.Command(exe, "fit", "--data", csv, "--outcome", "y", "--predictors", strings.Join(d.Predictors[:K], ","))
		if out, err := cmd.CombinedOutput(); err != nil {
			errRun = fmt.Errorf("%v: %s", err, out)
		}
		if ps := cmd.ProcessState; ps != nil {
			cpus = append(cpus, (ps.UserTime() + ps.SystemTime()).Seconds())
			wr.rss = max(wr.rss, peakRSS(ps))
		}
	})
	if len(cpus) > 0 {
		wr.cpu, _ = bestMedian(cpus)
	}
	return wr, errRun
}

// writeCSV writes the outcome y and the predictors (0/1 as integers, the
// others with 6 significant digits).
func writeCSV(path string, d *fit.Data) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(f, 1<<20)
	K := len(d.Predictors)
	bw.WriteString("y," + strings.Join(d.Predictors, ",") + "\n")
	var buf []byte
	for i, y := range d.Y {
		buf = strconv.AppendInt(buf[:0], int64(y), 10)
		for k := 0; k < K; k++ {
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, d.X[i*K+k], 'g', 6, 64)
		}
		buf = append(buf, '\n')
		bw.Write(buf)
	}
	if err := bw.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// gridCells are the 13 models of the example plan's grid: the three
// comparisons with parallel, partial (two nonparallel predictors),
// constrained (two) and nonparallel effects, and the adjacent stereotype.
func gridCells(K int) []cell {
	out := cells(K)
	eff := make([]fit.Effect, K)
	for k := range eff {
		eff[k] = fit.Constrained
	}
	return append(out, cell{"adjacent/stereotype", fit.Model{Comparison: fit.Adjacent, Link: fit.Logit, Effects: eff}})
}

// gridTimes fits every model of the grid alone on every core (the slowest
// of them: its wall and CPU seconds, and its passes over the data), then
// all of them through fit.FitGrid, the path of a plan's grid (the grid's
// wall and CPU seconds and passes over the data).
func gridTimes(d *fit.Data, K int) (g gridTiming) {
	g.cells = gridCells(K)
	workers := runtime.GOMAXPROCS(0)
	g.wall, g.cpu, g.passes = fitOneByOne(d, g.cells, workers)
	for i, s := range g.wall {
		g.singlePasses += g.passes[i]
		if s > g.slowest {
			g.slowest, g.slowestCPU, g.name, g.slowestPasses = s, g.cpu[i], g.cells[i].name, g.passes[i]
		}
	}
	r0 := fit.RowsEvaluated()
	// The heap the single fits left is not the grid's.
	runtime.GC()
	c0 := cpuSeconds()
	g.gridHeap = float64(peak(func() { g.grid = fitAtOnce(d, g.cells) })) / float64(8*d.N()*len(d.Predictors))
	g.gridCPU = cpuSeconds() - c0
	g.gridPasses = float64(fit.RowsEvaluated()-r0) / float64(d.N())
	return g
}

// gridTiming is what gridTimes measured.
type gridTiming struct {
	cells                              []cell
	wall, cpu, passes                  []float64 // each model fitted alone
	slowest, slowestCPU, slowestPasses float64
	name                               string
	grid, gridCPU, gridPasses          float64
	gridHeap                           float64 // the grid's peak heap in use (its data included) / X
	singlePasses                       float64 // the models fitted one by one, summed
}

// gridReport measures the grid at n rows (-only grid): every model fitted
// alone on every core, then the grid through fit.FitGrid, with the passes
// over the data of each, and the grid's ratio to its slowest fit.
func gridReport(w io.Writer, n int) {
	const K = 10
	d := generate(n, K, 5, 42)
	fmt.Fprintf(w, "Load average when the run began: %s (on %d cores). n = %s, K = %d, J = 5.\n\n", loadAverage(), runtime.NumCPU(), count(n), K)
	g := gridTimes(d, K)
	fmt.Fprintf(w, "| model | alone: seconds | CPU seconds | passes over the data |\n|---|---|---|---|\n")
	for i, c := range g.cells {
		fmt.Fprintf(w, "| %s | %.2f | %.2f | %.1f |\n", c.name, g.wall[i], g.cpu[i], g.passes[i])
	}
	fmt.Fprintf(w, "| the grid (fit.FitGrid, %d at once) | %.2f | %.2f | %.1f (alone, summed: %.1f) |\n\n", runtime.GOMAXPROCS(0), g.grid, g.gridCPU, g.gridPasses, g.singlePasses)
	fmt.Fprintf(w, "Grid / slowest single fit (%s): %.2f wall, %.2f CPU (limit %g).\n", g.name, g.grid/g.slowest, g.gridCPU/g.slowestCPU, gridLimit)
	fmt.Fprintf(w, "The grid's peak heap in use, its data included, / X (n K 8 bytes): %.2f (limit %g; sampled every 20 ms).\n", g.gridHeap, memLimit)
}

// memoryResult is what a fit in a fresh process used: the peak resident
// set and the largest heap in use, bytes.
type memoryResult struct {
	RSS  uint64 `json:"rss"`
	Heap uint64 `json:"heap"`
	// The grid's child says more (-memory-child grid): the resident set
	// before the data was made (the runtime's own) and after, the bytes
	// allocated and the collections during the grid, the largest heap
	// the runtime held from the system, and the grid's wall and CPU
	// seconds.
	StartRSS  uint64  `json:"start_rss,omitempty"`
	DataRSS   uint64  `json:"data_rss,omitempty"`
	Allocated uint64  `json:"allocated,omitempty"`
	GCs       uint32  `json:"gcs,omitempty"`
	HeapSys   uint64  `json:"heap_sys,omitempty"`
	Sys       uint64  `json:"sys,omitempty"`
	Wall      float64 `json:"wall,omitempty"`
	CPU       float64 `json:"cpu,omitempty"`
}

// memoryChild runs one fit of model (binary or cumulative/nonparallel),
// or the 13-model grid through fit.FitGrid (grid: a plan's path, J = 5),
// on n generated rows in a fresh process (this program with
// -memory-child) and returns what it used, data included.
func memoryChild(model string, n int) (memoryResult, error) {
	exe, err := os.Executable()
	if err != nil {
		return memoryResult{}, err
	}
	out, err := exec.Command(exe, "-memory-child", model, "-memory-rows", strconv.Itoa(n)).Output()
	if err != nil {
		return memoryResult{}, err
	}
	var r memoryResult
	err = json.Unmarshal(out, &r)
	return r, err
}

// runMemoryChild is the child of memoryChild: it generates the rows, fits
// and prints the peak resident set and heap as JSON.
func runMemoryChild(model string, n int) {
	const K = 10
	J := 5
	m := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: make([]fit.Effect, K)}
	if model == "binary" {
		J = 2
	} else {
		for k := range m.Effects {
			m.Effects[k] = fit.Nonparallel
		}
	}
	var ferr error
	var heap uint64
	if model == "grid" {
		r := memoryResult{StartRSS: vmRSS()}
		d := generate(n, K, 5, 42)
		runtime.GC()
		r.DataRSS = vmRSS()
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		cpu0 := cpuSeconds()
		r.Heap = peak(func() { r.Wall = fitAtOnce(d, gridCells(K)) })
		r.CPU = cpuSeconds() - cpu0
		runtime.ReadMemStats(&after)
		r.RSS = vmHWM()
		r.Allocated = after.TotalAlloc - before.TotalAlloc
		r.GCs = after.NumGC - before.NumGC
		r.HeapSys = after.HeapSys
		r.Sys = after.Sys
		json.NewEncoder(os.Stdout).Encode(r)
		runtime.KeepAlive(d)
		return
	}
	d := generate(n, K, J, 11)
	heap = peak(func() { _, ferr = fit.Fit(d, m, fit.Options{Workers: runtime.GOMAXPROCS(0)}) })
	if ferr != nil {
		fmt.Fprintln(os.Stderr, "bench:", ferr)
		os.Exit(1)
	}
	json.NewEncoder(os.Stdout).Encode(memoryResult{RSS: vmHWM(), Heap: heap})
	runtime.KeepAlive(d)
}
