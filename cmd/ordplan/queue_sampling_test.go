package main

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// A plan with sampling weights on data held as parts runs through the
// queue, its fits summed over the workers part by part: every part's
// weights are rescaled by the whole data's total (data.PartsSummary), so
// the log-likelihoods and estimates are the local run's, which reads the
// parts as one data set, to rounding, and the decisions are the same.
// Before, the parts were read and summed with the weights as given, so the
// summed log-likelihood was the local one times the weights' mean. The
// data are invented (seeded here): y in 1..3 from a logistic latent
// variable in x and z, weights between 50 and 300.
func TestQueueRunOverPartsSampling(t *testing.T) {
	if testing.Short() {
		t.Skip("starts worker processes")
	}
	rng := rand.New(rand.NewPCG(20261203, 9))
	var b strings.Builder
	b.WriteString("y,x,z,w\n")
	for i := 0; i < 300; i++ {
		x, z := rng.NormFloat64(), rng.Float64()
		u := rng.Float64()
		s := 0.8*x - 1.2*z + math.Log(u/(1-u))
		y := 1
		if s > -0.5 {
			y++
		}
		if s > 0.8 {
			y++
		}
		fmt.Fprintf(&b, "%d,%.4f,%.4f,%.2f\n", y, x, z, 50+250*rng.Float64())
	}
	dir := t.TempDir()
	var files []string
	for p, raw := range splitInTurn([]byte(b.String()), 3) {
		name := fmt.Sprintf("part%d.csv", p)
		if err := os.WriteFile(filepath.Join(dir, name), raw, 0o644); err != nil {
			t.Fatal(err)
		}
		files = append(files, name)
	}
	plan := filepath.Join(dir, "plan.yaml")
	os.WriteFile(plan, []byte(`version: 1
data:
  parts: [`+strings.Join(files, ", ")+`]
  weights: w
  weight_kind: sampling
outcomes:
  - column: y
    categories: ["1", "2", "3"]
predictors: [x, z]
models:
  approaches: [cumulative, stage]
  effects: [parallel, nonparallel]
  links: [logit]
tests: {parallel_lines: [wald]}
rules:
  - reject_unconverged: true
  - choose: {by: tic}
`), 0o644)
	local, remote, r := runHereAndQueued(t, plan, 2)
	if !regexp.MustCompile(`: 4 of 4 fits summed over 3 parts by the workers`).MatchString(r[1]) {
		t.Errorf("the fits did not go over the parts:\n%s", r[1])
	}
	type fitRec struct {
		ID        string             `json:"id"`
		LogLik    float64            `json:"loglik"`
		NObs      float64            `json:"nobs"`
		Estimates map[string]float64 `json:"estimates"`
		StdErrors map[string]float64 `json:"std_errors"`
	}
	var dec [2]struct {
		Outcomes []struct {
			Chosen *string  `json:"chosen"`
			NObs   float64  `json:"nobs"`
			Fits   []fitRec `json:"fits"`
		} `json:"outcomes"`
	}
	for i, d := range []string{local, remote} {
		raw, err := os.ReadFile(filepath.Join(d, "decisions.json"))
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(raw, &dec[i]); err != nil {
			t.Fatal(err)
		}
	}
	a, q := dec[0].Outcomes[0], dec[1].Outcomes[0]
	if a.Chosen == nil || q.Chosen == nil || *a.Chosen != *q.Chosen || len(a.Fits) != len(q.Fits) || a.NObs != 300 || q.NObs != 300 {
		t.Fatalf("local and queue runs differ: chosen %v %v, observations %v %v", a.Chosen, q.Chosen, a.NObs, q.NObs)
	}
	for k, f := range a.Fits {
		g := q.Fits[k]
		if f.ID != g.ID || math.Abs(f.LogLik-g.LogLik) > 1e-8*math.Abs(f.LogLik) || f.NObs != 300 || g.NObs != 300 {
			t.Errorf("%s: loglik %v (%v observations) here, %v (%v) over the parts", f.ID, f.LogLik, f.NObs, g.LogLik, g.NObs)
		}
		for n, v := range f.Estimates {
			if w, ok := g.Estimates[n]; !ok || math.Abs(v-w) > 1e-7 {
				t.Errorf("%s estimate %s: %v here, %v over the parts", f.ID, n, v, w)
			}
			if se, w := f.StdErrors[n], g.StdErrors[n]; math.Abs(se-w) > 1e-7*se {
				t.Errorf("%s error %s: %v here, %v over the parts", f.ID, n, se, w)
			}
		}
	}
}
