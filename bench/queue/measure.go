package main

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"runtime"
	"slices"
	"strings"
	"sync"
	"time"

	"ordplan/plan"
	"ordplan/render"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// sample is one measured run.
type sample struct {
	fits     int
	fitTime  time.Duration // inside the executor: publishing to collecting
	runTime  time.Duration // the whole plan run
	sameFile bool          // report files equal to the local run's
}

// row is one setup's median sample.
type row struct {
	setup string
	sample
}

// setup is one way of running the plan.
type setup struct {
	name string
	run  func() (sample, error)
}

// measure runs every setup repeat times, in turns, and keeps each setup's
// median by the time of the fits.
func measure(setups []setup, repeat int) ([]row, error) {
	samples := make([][]sample, len(setups))
	for range repeat {
		for i, s := range setups {
			x, err := s.run()
			if err != nil {
				return nil, fmt.Errorf("%s: %v", s.name, err)
			}
			samples[i] = append(samples[i], x)
		}
	}
	rows := make([]row, len(setups))
	for i, ss := range samples {
		slices.SortFunc(ss, func(a, b sample) int { return int(a.fitTime - b.fitTime) })
		rows[i] = row{setup: setups[i].name, sample: ss[len(ss)/2]}
		for _, x := range ss {
			rows[i].sameFile = rows[i].sameFile && x.sameFile
		}
	}
	return rows, nil
}

// timed wraps an executor and records the time and the number of its fits.
type timed struct {
	inner runner.Executor
	fits  int
	took  time.Duration
}

func (t *timed) Execute(jobs []runner.Job) ([]*fit.Result, []error) {
	start := time.Now()
	r, e := t.inner.Execute(jobs)
	t.took += time.Since(start)
	t.fits += len(jobs)
	return r, e
}

// localExecutor does a worker's work (runner.ExecuteJob per job) in this
// process, k jobs at once: the queue's runs minus the queue.
type localExecutor struct {
	path string
	k    int
}

func (l localExecutor) Execute(jobs []runner.Job) ([]*fit.Result, []error) {
	res := make([]*fit.Result, len(jobs))
	errs := make([]error, len(jobs))
	var wg sync.WaitGroup
	sem := make(chan struct{}, l.k)
	for i, j := range jobs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sem <- struct{}{}
			defer func() { <-sem }()
			res[i], errs[i] = runner.ExecuteJob(l.path, j)
		}()
	}
	wg.Wait()
	return res, errs
}

// outputs runs the plan with the options and renders its files.
func outputs(p *plan.Plan, opt runner.Options) (map[string][]byte, error) {
	res, err := runner.Run(p, opt)
	if err != nil {
		return nil, err
	}
	return render.Outputs(res, runner.BuildDecisions(res), nil)
}

func localOutputs(p *plan.Plan) (map[string][]byte, error) {
	return outputs(p, runner.Options{Workers: runtime.GOMAXPROCS(0)})
}

func equalFiles(a, b map[string][]byte) bool {
	if len(a) != len(b) {
		return false
	}
	for k, v := range a {
		if !bytes.Equal(v, b[k]) {
			return false
		}
	}
	return true
}

func localRun(p *plan.Plan, k int, ref map[string][]byte) (sample, error) {
	ex := &timed{inner: localExecutor{path: p.Data.Path, k: k}}
	start := time.Now()
	files, err := outputs(p, runner.Options{Workers: k, Executor: ex})
	if err != nil {
		return sample{}, err
	}
	return sample{fits: ex.fits, fitTime: ex.took, runTime: time.Since(start), sameFile: equalFiles(files, ref)}, nil
}

func printTable(w io.Writer, rows []row, repeat int) {
	fmt.Fprintf(w, "| setup | fits | time of the fits (s) | fits per second | whole run (s) | files equal to the local run |\n")
	fmt.Fprintf(w, "|---|---:|---:|---:|---:|---|\n")
	for _, r := range rows {
		same := "yes"
		if !r.sameFile {
			same = "NO"
		}
		fmt.Fprintf(w, "| %s | %d | %.2f | %.1f | %.2f | %s |\n", r.setup, r.fits, r.fitTime.Seconds(),
			float64(r.fits)/r.fitTime.Seconds(), r.runTime.Seconds(), same)
	}
	fmt.Fprintf(w, "\nMedian of %d runs per setup; %d cores (GOMAXPROCS %d)%s.\n", repeat, runtime.NumCPU(), runtime.GOMAXPROCS(0), loadNote())
}

// loadNote gives the machine's load averages (Linux), which tell whether
// other programs shared the cores during the measurement.
func loadNote() string {
	b, err := os.ReadFile("/proc/loadavg")
	f := strings.Fields(string(b))
	if err != nil || len(f) < 3 {
		return ""
	}
	return fmt.Sprintf("; load average at the end %s (1 min), %s (5 min)", f[0], f[1])
}
