package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
	"time"
)

// processCPU is the CPU time (user and system) the process has used: on a
// machine shared with other work it measures a fit's own cost better than
// the wall clock.
func processCPU() time.Duration { return CPUTime() }

// speedData draws n rows with K predictors (half 0/1, half standard
// normal) and J categories from a cumulative logit. Fixed seed.
func speedData(n, K, J int) *Data {
	rng := rand.New(rand.NewPCG(19, uint64(n)))
	d := &Data{J: J, X: make([]float64, n*K), Y: make([]int, n)}
	for k := 0; k < K; k++ {
		d.Predictors = append(d.Predictors, fmt.Sprintf("x%d", k+1))
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
			eta += 0.3 * x[k]
		}
		u := rng.Float64()
		y := J - 1
		for m := 0; m < J-1; m++ {
			if u < 1/(1+math.Exp(-(-1.5+3*float64(m)/float64(max(J-2, 1))-eta))) {
				y = m
				break
			}
		}
		d.Y[i] = y
	}
	return d
}

func speedModel(c Comparison, e Effect, K int) Model {
	eff := make([]Effect, K)
	for k := range eff {
		eff[k] = e
	}
	return Model{Comparison: c, Link: Logit, Effects: eff}
}

// BenchmarkSpeedFit times whole fits of the models the speed targets name
// (one worker, so that runs with other work on the machine compare).
func BenchmarkSpeedFit(b *testing.B) {
	for _, tc := range []struct {
		name string
		n, J int
		m    Model
	}{
		{"binary-logit", 200000, 2, speedModel(Cumulative, Parallel, 10)},
		{"cumulative-parallel", 200000, 5, speedModel(Cumulative, Parallel, 10)},
		{"cumulative-nonparallel", 200000, 5, speedModel(Cumulative, Nonparallel, 10)},
		{"stage-nonparallel", 200000, 5, speedModel(Stage, Nonparallel, 10)},
		{"adjacent-parallel", 200000, 5, speedModel(Adjacent, Parallel, 10)},
		{"adjacent-nonparallel", 200000, 5, speedModel(Adjacent, Nonparallel, 10)},
	} {
		d := speedData(tc.n, 10, tc.J)
		b.Run(tc.name, func(b *testing.B) {
			cpu0 := processCPU()
			for i := 0; i < b.N; i++ {
				if _, err := Fit(d, tc.m, Options{Workers: 1}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(processCPU()-cpu0)/float64(b.N), "cpu-ns/op")
		})
	}
}
