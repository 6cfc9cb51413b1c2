package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"runtime/debug"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"ordplan/runner/fit"
)

func main() {
	out := flag.String("out", "", "write the Markdown report to this new file (default: stdout); an existing file is refused, so that bench/README.md's hand-written history is never overwritten: copy the sections into it by hand")
	smoke := flag.Bool("smoke", false, "small sizes only (CI smoke test)")
	only := flag.String("only", "", "run one part only: ingest (reading data files), targets (the fitting engine's speed targets, the table of bench/README.md's first section), iteration (the targets' rows of one Newton iteration against one X'WX plus one kernel pass), links (single fits of the three comparisons, parallel and nonparallel, under every link: CPU seconds and passes over the data against the logit's, at -targets-rows), grid (the targets' grid row with every model's time and passes over the data, and the grid's peak heap / X, at -targets-grid-rows) or separated (the parallel and nonparallel fits of a 300-level factor that separates: seconds and Newton iterations)")
	ingestRows := flag.Int("ingest-rows", 1_000_000, "rows of the files the ingest part reads")
	ingestRepeats := flag.Int("ingest-repeats", 5, "readings of each file by each reader")
	child := flag.String("ingest-child", "", "(internal) read this file once and print what was measured")
	childMode := flag.String("ingest-mode", "load", "(internal) the reader of -ingest-child: load, pin (Pin, then Load: a plan run's reading) or stream")
	childDelim := flag.String("ingest-delim", "", "(internal) the delimiter of -ingest-child")
	childComma := flag.Bool("ingest-decimal-comma", false, "(internal) -ingest-child has a decimal comma")
	ingestWrite := flag.String("ingest-write", "", "write the files of -only ingest into this folder and stop (for profiling a reading: bench -ingest-child FILE)")
	speedRows := flag.Int("targets-rows", 1_000_000, "rows of the data of -only targets")
	speedGrid := flag.Int("targets-grid-rows", 1_000_000, "rows of the data of the grid in -only targets")
	speedRepeats := flag.Int("targets-repeats", 3, "runs of each timing of -only targets (best and median reported)")
	linksRepeats := flag.Int("links-repeats", 2, "runs of each fit of -only links (the best reported)")
	memChild := flag.String("memory-child", "", "(internal) fit this model (binary, cumulative/nonparallel, or grid: the 13-model grid through fit.FitGrid) in this process and print its peak memory")
	memRows := flag.Int("memory-rows", 1_000_000, "(internal) rows of -memory-child")
	writeOnly := flag.String("write-csv", "", "write the CSV that -only targets times `ordplan fit` on (-targets-rows rows, 10 predictors, two categories) to this file and stop")
	sepWrite := flag.String("write-separated", "", "write the data and plan of -only separated (sep.csv, sep.yaml) into this folder and stop (for timing `ordplan run FOLDER/sep.yaml`)")
	flag.Parse()
	if *writeOnly != "" {
		if err := writeCSV(*writeOnly, generate(*speedRows, 10, 2, 11)); err != nil {
			fmt.Fprintln(os.Stderr, "bench:", err)
			os.Exit(1)
		}
		return
	}
	if *memChild != "" {
		runMemoryChild(*memChild, *memRows)
		return
	}
	if *ingestWrite != "" {
		if _, err := writeIngestFiles(*ingestWrite, *ingestRows, 10); err != nil {
			fmt.Fprintln(os.Stderr, "bench:", err)
			os.Exit(1)
		}
		return
	}
	if *sepWrite != "" {
		if err := writeSeparated(*sepWrite); err != nil {
			fmt.Fprintln(os.Stderr, "bench:", err)
			os.Exit(1)
		}
		return
	}
	if *child != "" {
		ingestChild(*child, *childMode, *childDelim, *childComma, 10)
		return
	}
	w := io.Writer(os.Stdout)
	if *out != "" {
		// A new file only: O_EXCL refuses a name that exists, at once,
		// before anything is measured.
		f, err := os.OpenFile(*out, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if errors.Is(err, fs.ErrExist) {
			fmt.Fprintf(os.Stderr, "bench: -out %s: the file exists; -out writes a new file only (bench/README.md holds the measurements of earlier sessions): give a new name, then copy the sections into bench/README.md by hand\n", *out)
			os.Exit(1)
		}
		if err != nil {
			fmt.Fprintln(os.Stderr, "bench:", err)
			os.Exit(1)
		}
		defer f.Close()
		w = f
	}
	cfg := config{sizes: []int{1e4, 1e5, 1e6, 1e7}, gridN: 1e6, wideN: 1e5, bigModels: 2, ingestN: *ingestRows, ingestRepeats: *ingestRepeats}
	if *smoke {
		cfg = config{sizes: []int{2e3, 1e4}, gridN: 1e4, wideN: 2e4, bigModels: 12, ingestN: 1e4, ingestRepeats: 1}
	}
	if *only == "ingest" {
		ingest(w, cfg.ingestN, cfg.ingestRepeats)
		return
	}
	if *only == "grid" {
		gridReport(w, *speedGrid)
		return
	}
	if *only == "iteration" {
		iterationReport(w, *speedRows, *speedRepeats)
		return
	}
	if *only == "links" {
		linksReport(w, *speedRows, *linksRepeats)
		return
	}
	if *only == "separated" {
		separatedReport(w)
		return
	}
	if *only == "targets" {
		targets(w, *speedRows, *speedGrid, *speedRepeats)
		return
	}
	run(w, cfg)
}

type config struct {
	sizes     []int
	gridN     int
	wideN     int
	bigModels int // at the largest size, fit only the first bigModels cells
	// ingestN rows are written as CSV and Parquet and read ingestRepeats
	// times by each reader.
	ingestN, ingestRepeats int
}

// generate draws n rows with K predictors (half 0/1, half standard normal)
// and an outcome with J categories from a cumulative logit whose slopes
// differ a little across boundaries.
func generate(n, K, J int, seed uint64) *fit.Data {
	rng := rand.New(rand.NewPCG(seed, 1))
	d := &fit.Data{J: J, X: make([]float64, n*K), Y: make([]int, n)}
	for k := 0; k < K; k++ {
		d.Predictors = append(d.Predictors, fmt.Sprintf("x%d", k+1))
	}
	cut := make([]float64, J-1)
	for m := range cut {
		cut[m] = -1.5 + 3*float64(m)/float64(max(J-2, 1))
	}
	for i := 0; i < n; i++ {
		x := d.X[i*K : (i+1)*K]
		eta := 0.0
		for k := range x {
			if k%2 == 0 {
				x[k] = float64(rng.IntN(2))
			} else {
				x[k] = rng.NormFloat64()
			}
			eta += 0.3 * x[k] / math.Sqrt(float64(K)/10)
		}
		u := rng.Float64()
		y := J - 1
		for m := 0; m < J-1; m++ {
			b := 1 + 0.1*float64(m)
			if u < 1/(1+math.Exp(-(cut[m]-b*eta))) {
				y = m
				break
			}
		}
		d.Y[i] = y
	}
	for c := 0; c < J && c < n; c++ {
		d.Y[c] = c
	}
	return d
}

type cell struct {
	name string
	m    fit.Model
}

func cells(K int) []cell {
	var out []cell
	for _, c := range []fit.Comparison{fit.Cumulative, fit.Stage, fit.Adjacent} {
		for _, lv := range []string{"parallel", "nonparallel", "partial", "constrained"} {
			eff := make([]fit.Effect, K)
			for k := range eff {
				switch {
				case lv == "nonparallel":
					eff[k] = fit.Nonparallel
				case lv == "partial" && k < 2:
					eff[k] = fit.Nonparallel
				case lv == "constrained" && k < 2:
					eff[k] = fit.Constrained
				}
			}
			m := fit.Model{Comparison: c, Link: fit.Logit, Effects: eff}
			out = append(out, cell{c.String() + "/" + lv, m})
		}
	}
	return out
}

// peak samples the heap while f runs and returns the largest in-use size.
func peak(f func()) uint64 {
	var stop atomic.Bool
	var mx uint64
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		var ms runtime.MemStats
		for !stop.Load() {
			runtime.ReadMemStats(&ms)
			mx = max(mx, ms.HeapInuse)
			time.Sleep(20 * time.Millisecond)
		}
	}()
	f()
	stop.Store(true)
	wg.Wait()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	return max(mx, ms.HeapInuse)
}

func run(w io.Writer, cfg config) {
	const K, J = 10, 5
	fmt.Fprintf(w, "# Benchmarks\n\nMachine: %d cores (GOMAXPROCS %d), %s/%s, %s. Data: K = %d predictors (half 0/1), J = %d categories, generated with a fixed seed. Logit link. \"Iteration / cross-products\" is the time of one Newton iteration (assembly, direction, one pass over the data with derivatives) over the time of the weighted cross-products U'WU it needs, measured in the same call with one worker. \"Peak / X\" is the largest heap in use during the fit (including the data) over the size of the design matrix (n K 8 bytes).\n\n",
		runtime.NumCPU(), runtime.GOMAXPROCS(0), runtime.GOOS, runtime.GOARCH, runtime.Version(), K, J)
	fmt.Fprintf(w, "Command: `go run ./bench -out bench/README.md`.\n\n")
	fmt.Fprintln(w, "## Single fits\n\n| n | model | params | seconds | Newton iterations | iteration / cross-products | peak / X |\n|---|---|---|---|---|---|---|")
	times := map[string][]float64{}
	for si, n := range cfg.sizes {
		runtime.GC()
		debug.FreeOSMemory()
		d := generate(n, K, J, 42)
		xBytes := float64(n * K * 8)
		all := cells(K)
		if si == len(cfg.sizes)-1 && cfg.bigModels < len(all) {
			all = all[:cfg.bigModels]
		}
		for _, c := range all {
			var res *fit.Result
			var err error
			var secs float64
			pk := peak(func() {
				t0 := time.Now()
				res, err = fit.Fit(d, c.m, fit.Options{Workers: runtime.GOMAXPROCS(0)})
				secs = time.Since(t0).Seconds()
			})
			if err != nil {
				fmt.Fprintf(w, "| %d | %s | | error: %v | | | |\n", n, c.name, err)
				continue
			}
			ratio := "n/a"
			if c.m.Structure() == fit.ParallelEffects || c.m.Structure() == fit.NonparallelEffects {
				pr, err := fit.ProfileIteration(d, c.m, 2, 1)
				if err == nil && pr.CrossProducts > 0 {
					ratio = fmt.Sprintf("%.2f", float64(pr.Iteration)/float64(pr.CrossProducts))
				}
			}
			times[c.name] = append(times[c.name], secs)
			fmt.Fprintf(w, "| %d | %s | %d | %.3f | %d | %s | %.2f |\n", n, c.name, res.NParams, secs, res.Iterations, ratio, float64(pk)/xBytes)
		}
	}
	// Time against n: the slope of log(time) on log(n) per model.
	fmt.Fprintln(w, "\n## Time against n\n\nSlope of log(seconds) on log(n) over the sizes above (1 = linear).\n\n| model | slope |\n|---|---|")
	for _, c := range cells(K) {
		ts := times[c.name]
		if len(ts) < 2 {
			continue
		}
		var xs, ys []float64
		for i, t := range ts {
			if t > 0.05 { // below that, fixed costs dominate
				xs = append(xs, math.Log(float64(cfg.sizes[i])))
				ys = append(ys, math.Log(t))
			}
		}
		if len(xs) >= 2 {
			fmt.Fprintf(w, "| %s | %.2f |\n", c.name, slope(xs, ys))
		}
	}
	grid(w, cfg.gridN, K, J)
	wide(w, cfg.wideN, J)
	ingest(w, cfg.ingestN, cfg.ingestRepeats)
}

// fitOneByOne fits every cell on d, one after another with workers each,
// and returns each fit's wall and CPU seconds and passes over the data.
func fitOneByOne(d *fit.Data, all []cell, workers int) (wall, cpu, passes []float64) {
	for _, c := range all {
		r0 := fit.RowsEvaluated()
		c0 := cpuSeconds()
		t0 := time.Now()
		fit.Fit(d, c.m, fit.Options{Workers: workers})
		wall = append(wall, time.Since(t0).Seconds())
		cpu = append(cpu, cpuSeconds()-c0)
		passes = append(passes, float64(fit.RowsEvaluated()-r0)/float64(d.N()))
	}
	return wall, cpu, passes
}

// fitAtOnce fits every cell on d through fit.FitGrid, as a plan's grid
// runs (one fit per core, each over every core), and returns the seconds
// it took.
func fitAtOnce(d *fit.Data, all []cell) float64 {
	models := make([]fit.Model, len(all))
	for i, c := range all {
		models[i] = c.m
	}
	workers := runtime.GOMAXPROCS(0)
	t0 := time.Now()
	fit.FitGrid(d, models, fit.Options{Workers: workers}, workers, func(int, *fit.Result, error) {})
	return time.Since(t0).Seconds()
}

func slope(x, y []float64) float64 {
	var mx, my float64
	for i := range x {
		mx += x[i]
		my += y[i]
	}
	mx /= float64(len(x))
	my /= float64(len(y))
	var sxy, sxx float64
	for i := range x {
		sxy += (x[i] - mx) * (y[i] - my)
		sxx += (x[i] - mx) * (x[i] - mx)
	}
	return sxy / sxx
}

// grid times the twelve-model grid (cells: the targets' 13-model grid,
// gridCells, without adjacent/stereotype): every fit one after another
// (one worker each), then all of them at once on every core.
func grid(w io.Writer, n, K, J int) {
	d := generate(n, K, J, 7)
	all := cells(K)
	wall, _, _ := fitOneByOne(d, all, 1)
	var serial float64
	for _, s := range wall {
		serial += s
	}
	par := fitAtOnce(d, all)
	fmt.Fprintf(w, "\n## The twelve-model grid (the 13-model grid without adjacent/stereotype)\n\nn = %d: one after another %.2f s; on %d cores %.2f s; speed-up %.2f.\n", n, serial, runtime.GOMAXPROCS(0), par, serial/par)
}

// wide fits the parallel and nonparallel cumulative models with 100
// predictors.
func wide(w io.Writer, n, J int) {
	const K = 100
	d := generate(n, K, J, 9)
	fmt.Fprintf(w, "\n## Wide design\n\nn = %d, K = %d.\n\n| model | params | seconds | Newton iterations | iteration / cross-products |\n|---|---|---|---|---|\n", n, K)
	for _, c := range cells(K) {
		if !strings.HasPrefix(c.name, "cumulative/") || (c.m.Structure() != fit.ParallelEffects && c.m.Structure() != fit.NonparallelEffects) {
			continue
		}
		t0 := time.Now()
		res, err := fit.Fit(d, c.m, fit.Options{Workers: runtime.GOMAXPROCS(0)})
		secs := time.Since(t0).Seconds()
		if err != nil {
			fmt.Fprintf(w, "| %s | | error: %v | | |\n", c.name, err)
			continue
		}
		pr, _ := fit.ProfileIteration(d, c.m, 1, 1)
		fmt.Fprintf(w, "| %s | %d | %.3f | %d | %.2f |\n", c.name, res.NParams, secs, res.Iterations, float64(pr.Iteration)/float64(pr.CrossProducts))
	}
}
