package main

import (
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"time"

	"ordplan/internal/testsurvey"
	"ordplan/runner/fit"
)

// The separating survey of -only separated and -write-separated: 3000 rows,
// a factor of 300 levels, 4 categories (testsurvey.LevelSeparated, seed 21).
const (
	separatedRows   = 3000
	separatedLevels = 300
	separatedSeed   = 21
)

func separatedSurvey() testsurvey.LevelSeparated {
	return testsurvey.NewLevelSeparated(rand.New(rand.NewPCG(separatedSeed, 21)), separatedRows, separatedLevels)
}

// writeSeparated writes the survey (sep.csv) and its plan (sep.yaml) into
// dir, for timing `ordplan run dir/sep.yaml`; files that exist are refused.
func writeSeparated(dir string) error {
	s := separatedSurvey()
	for _, f := range []struct{ name, text string }{{"sep.csv", s.CSV()}, {"sep.yaml", s.Plan("sep.csv")}} {
		p := filepath.Join(dir, f.name)
		h, err := os.OpenFile(p, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if err != nil {
			return err
		}
		if _, err := io.WriteString(h, f.text); err != nil {
			h.Close()
			return err
		}
		if err := h.Close(); err != nil {
			return err
		}
	}
	return nil
}

// separatedReport fits the survey's cumulative logit with parallel and with
// nonparallel effects (P = 304 and 906), each once on every core, and
// writes each fit's seconds, CPU seconds, Newton iterations, status and
// log-likelihood reached.
func separatedReport(w io.Writer) {
	s := separatedSurvey()
	x, names := s.Design()
	d := &fit.Data{J: 4, X: x, Predictors: names}
	for _, y := range s.Y {
		d.Y = append(d.Y, y-1)
	}
	fmt.Fprintf(w, "Load average when the run began: %s (on %d cores). n = %d, a factor of %d levels and 2 numeric predictors, J = 4 (testsurvey.LevelSeparated, seed %d); each fit once on %d workers.\n\n",
		loadAverage(), runtime.NumCPU(), separatedRows, separatedLevels, separatedSeed, runtime.GOMAXPROCS(0))
	fmt.Fprintf(w, "| model | parameters | seconds | CPU seconds | Newton iterations | status | log-likelihood reached |\n|---|---|---|---|---|---|---|\n")
	for _, lv := range []string{"parallel", "nonparallel"} {
		eff := make([]fit.Effect, len(names))
		if lv == "nonparallel" {
			for k := range eff {
				eff[k] = fit.Nonparallel
			}
		}
		c0 := cpuSeconds()
		t0 := time.Now()
		r, err := fit.Fit(d, fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: eff}, fit.Options{Workers: runtime.GOMAXPROCS(0)})
		sec, cpu := time.Since(t0).Seconds(), cpuSeconds()-c0
		if err != nil {
			fmt.Fprintf(w, "| cumulative/%s/logit | | %.1f | %.1f | | error: %v | |\n", lv, sec, cpu, err)
			continue
		}
		fmt.Fprintf(w, "| cumulative/%s/logit | %d | %.1f | %.1f | %d | %s | %.6f |\n", lv, r.NParams, sec, cpu, r.Iterations, r.Status, r.SupLogLik)
	}
}
