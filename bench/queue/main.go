package main

import (
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"

	"ordplan/plan"
)

func main() {
	planPath := flag.String("plan", filepath.Join("bench", "queue", "plan100.yaml"), "plan to run")
	workers := flag.String("workers", "1,2,4", "numbers of worker processes to measure")
	repeat := flag.Int("repeat", 5, "measurements per setup (the median is shown)")
	flag.Parse()
	counts, err := parseCounts(*workers)
	if err == nil && *repeat < 1 {
		err = fmt.Errorf("-repeat must be at least 1")
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "bench/queue:", err)
		os.Exit(2)
	}
	if err := run(*planPath, counts, *repeat); err != nil {
		fmt.Fprintln(os.Stderr, "bench/queue:", err)
		os.Exit(1)
	}
}

func parseCounts(s string) ([]int, error) {
	var out []int
	for _, f := range strings.Split(s, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(f))
		if err != nil || n < 1 {
			return nil, fmt.Errorf("-workers: %q is not a positive number", f)
		}
		out = append(out, n)
	}
	return out, nil
}

func run(planPath string, counts []int, repeat int) error {
	p, err := plan.Load(planPath)
	if err != nil {
		return err
	}
	tmp, err := os.MkdirTemp("", "ordplan-bench-queue")
	if err != nil {
		return err
	}
	defer os.RemoveAll(tmp)
	bin := filepath.Join(tmp, "ordplan")
	if out, err := exec.Command("go", "build", "-o", bin, "ordplan/cmd/ordplan").CombinedOutput(); err != nil {
		return fmt.Errorf("go build: %v: %s", err, out)
	}
	ref, err := localOutputs(p)
	if err != nil {
		return err
	}
	var setups []setup
	for _, k := range []int{1, 2} {
		setups = append(setups, setup{fmt.Sprintf("in process, %d at once", k), func() (sample, error) { return localRun(p, k, ref) }})
	}
	for _, n := range counts {
		name := fmt.Sprintf("queue, %d worker process", n)
		if n > 1 {
			name += "es"
		}
		setups = append(setups, setup{name, func() (sample, error) { return queueRun(p, bin, tmp, n, ref) }})
	}
	rows, err := measure(setups, repeat)
	if err != nil {
		return err
	}
	printTable(os.Stdout, rows, repeat)
	return nil
}
