package main

import (
	"fmt"
	"io"
	"os"
	"runtime"
	"time"

	"ordplan/runner/fit"
)

// linkCells are the single fits of -only links: the three comparisons,
// parallel and nonparallel, each under every link (the logit first).
func linkCells(K int) []cell {
	var out []cell
	for _, c := range []fit.Comparison{fit.Cumulative, fit.Stage, fit.Adjacent} {
		for _, lv := range []string{"parallel", "nonparallel"} {
			for _, l := range fit.LinkWords.All() {
				eff := make([]fit.Effect, K)
				if lv == "nonparallel" {
					for k := range eff {
						eff[k] = fit.Nonparallel
					}
				}
				out = append(out, cell{c.String() + "/" + lv + "/" + l.String(), fit.Model{Comparison: c, Link: l, Effects: eff}})
			}
		}
	}
	return out
}

// linksReport fits every model of linkCells alone on every core at n rows
// (K = 10, J = 5, the grid's data), repeats times each, and writes each
// fit's best wall and CPU seconds, its passes over the data and its CPU
// per pass, against the logit fit of the same comparison and effects
// measured in the same run.
func linksReport(w io.Writer, n, repeats int) {
	const K = 10
	d := generate(n, K, 5, 42)
	fmt.Fprintf(w, "Load average when the run began: %s (on %d cores). n = %s, K = %d, J = 5; each fit alone on %d workers, the best of %d runs.\n\n",
		loadAverage(), runtime.NumCPU(), count(n), K, runtime.GOMAXPROCS(0), max(repeats, 1))
	fmt.Fprintf(w, "| model | seconds | CPU seconds | passes over the data | CPU ms per pass | CPU / logit's | CPU per pass / logit's |\n|---|---|---|---|---|---|---|\n")
	all := linkCells(K)
	// One fit untimed first, so that the first row does not pay for
	// what the process does once (the heap's growth to the fits' size).
	fit.Fit(d, all[0].m, fit.Options{Workers: runtime.GOMAXPROCS(0)})
	var logitCPU, logitPerPass float64
	for _, c := range all {
		var walls, cpus []float64
		var passes float64
		var ferr error
		for r := 0; r < max(repeats, 1); r++ {
			r0 := fit.RowsEvaluated()
			c0 := cpuSeconds()
			t0 := time.Now()
			_, err := fit.Fit(d, c.m, fit.Options{Workers: runtime.GOMAXPROCS(0)})
			walls = append(walls, time.Since(t0).Seconds())
			cpus = append(cpus, cpuSeconds()-c0)
			passes = float64(fit.RowsEvaluated()-r0) / float64(d.N())
			if err != nil {
				ferr = err
				break
			}
		}
		if ferr != nil {
			fmt.Fprintf(w, "| %s | error: %v | | | | | |\n", c.name, ferr)
			fmt.Fprintf(os.Stderr, "bench: %s: %v\n", c.name, ferr)
			continue
		}
		wall, _ := bestMedian(walls)
		cpu, _ := bestMedian(cpus)
		perPass := cpu / passes
		if c.m.Link == fit.Logit {
			logitCPU, logitPerPass = cpu, perPass
		}
		line := fmt.Sprintf("| %s | %.2f | %.2f | %.1f | %.0f | %.2f | %.2f |", c.name, wall, cpu, passes, 1000*perPass, cpu/logitCPU, perPass/logitPerPass)
		fmt.Fprintln(w, line)
		fmt.Fprintln(os.Stderr, "bench:", line)
	}
}
