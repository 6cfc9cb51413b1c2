package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestAbandonedStartsKeepTheBest: a start is abandoned when it cannot reach
// the best log-likelihood found so far, at its first evaluation when its
// quadratic model says so. On simulated data (ridgeData) the stage model
// with two constrained predictors has one maximum, and starts whose
// approximate maximum lies towards the ridge g -> 0, |phi| -> inf, which
// climb far below it (found by running every start of the search on its
// own). A start in the basin of the maximum is never abandoned when such a
// start ran first, and reaches the maximum; a start towards the ridge, with
// the maximum known, is abandoned after one evaluation.
func TestAbandonedStartsKeepTheBest(t *testing.T) {
	d := ridgeData(20000)
	m := Model{Comparison: Stage, Link: Logit, Effects: make([]Effect, 10)}
	m.Effects[0], m.Effects[1] = Constrained, Constrained
	if err := d.validate(); err != nil {
		t.Fatal(err)
	}
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		t.Fatal(err)
	}
	opt := Options{MaxIter: 200}
	sh := &shared{fitted: map[string]gridFit{}}
	aux, err := newAuxiliary(d, m, ly, opt, sh)
	if err != nil || !aux.screen {
		t.Fatalf("auxiliary fits: %v (screened %v)", err, aux != nil && aux.screen)
	}
	pr := newProblem(sh.design(d), m, ly, 2)
	// Every start run on its own, from where the screening begins it.
	var best, worst *newtonState
	var bestStart, worstStart []float64
	for _, s := range aux.starts(d, m, ly, opt) {
		th := aux.sur.maximize(s.theta)
		st := pr.runStart(th, nil, opt, math.Inf(-1))
		t.Logf("%-36s ll %.6f after %d iterations: %s", s.label, st.ll, st.iters, st.reason)
		if st.converged && (best == nil || st.ll > best.ll) {
			best, bestStart = &st, th
		}
		if worst == nil || st.ll < worst.ll {
			worst, worstStart = &st, th
		}
	}
	if best == nil || best.ll-worst.ll < 10 {
		t.Fatalf("some starts should end far below the maximum")
	}
	// The maximum's basin after the start that went far below it.
	st := pr.runStart(bestStart, nil, opt, worst.ll)
	if !st.converged || math.Abs(st.ll-best.ll) > sameLL {
		t.Errorf("after the worse start: ll %.6f (%s), want %.6f", st.ll, st.reason, best.ll)
	}
	// The worse start after the maximum: abandoned at once.
	st = pr.runStart(worstStart, nil, opt, best.ll)
	if !strings.HasPrefix(st.reason, "abandoned") || st.iters != 0 {
		t.Errorf("the worse start after the maximum: %s after %d iterations", st.reason, st.iters)
	}
}

// ridgeData simulates n rows of a five-category outcome from ten
// predictors (alternately 0/1 and standard normal), each with slope 0.3 in a
// cumulative logit whose slopes grow by 10% per equation. Fixed seed.
func ridgeData(n int) *Data {
	rng := rand.New(rand.NewPCG(42, 3))
	d := &Data{J: 5, Y: make([]int, n)}
	for k := 0; k < 10; k++ {
		d.Predictors = append(d.Predictors, fmt.Sprintf("x%d", k+1))
	}
	for i := range d.Y {
		eta := 0.0
		for k := 0; k < 10; k++ {
			v := rng.NormFloat64()
			if k%2 == 0 {
				v = float64(rng.IntN(2))
			}
			d.X = append(d.X, v)
			eta += 0.3 * v
		}
		u, y := rng.Float64(), 4
		for m := 0; m < 4; m++ {
			if u < Logit.CDF(-1.5+float64(m)-(1+0.1*float64(m))*eta) {
				y = m
				break
			}
		}
		d.Y[i] = y
	}
	return d
}

// TestKeepStartsSameMaximum: abandoning the starts that cannot reach the
// best log-likelihood found so far (runStart: at the first evaluation by
// startGap, later by the quadratic model and the progress) leaves the
// maximum as it is. Every constrained and stereotype record of the
// reference data (sources: refSources) is fitted with abandoning and
// without (Options.KeepStarts), with every start run on the data and with
// the starts screened on the quadratic approximation: the log-likelihood
// and every estimate agree to the bit or to 1e-9 (relative, absolute below
// 1). The example plan's constrained and stereotype models are checked the
// same way (TestExamplePlanKeepStartsSameMaximum).
func TestKeepStartsSameMaximum(t *testing.T) {
	var tally startsTally
	for _, rec := range refRecords(t, true) {
		name, rs, rm := rec.name, rec.rs, rec.rm
		for _, opt := range []Options{{}, {ScreenAbove: -1}} {
			label := fmt.Sprintf("%s/%s/screen-above-%d (%s)", name, rm.ID, opt.ScreenAbove, refSources[name])
			d, m := rs.data(rm.Predictors), rm.modelOf(t)
			on, err := Fit(d, m, opt)
			if err != nil {
				t.Fatalf("%s: %v", label, err)
			}
			opt.KeepStarts = true
			off, err := Fit(d, m, opt)
			if err != nil {
				t.Fatalf("%s: %v", label, err)
			}
			tally.compare(t, label, on, off)
		}
	}
	tally.check(t)
}

// startsTally compares fits of one model with abandoning (on) and
// without (off, Options.KeepStarts) and counts what the comparisons saw.
type startsTally struct{ fits, abandoned, atOnce, sameBits int }

// compare checks that on and off reach the same maximum: the same status,
// and a log-likelihood and estimates the same to the bit or to 1e-9
// (relative, absolute below 1); and that off abandoned no start.
func (c *startsTally) compare(t *testing.T, label string, on, off *Result) {
	t.Helper()
	n := 0
	for _, s := range on.Starts {
		if strings.HasPrefix(s.Reason, "abandoned") {
			n++
			if s.Iterations == 0 {
				c.atOnce++ // at its first evaluation (startGap)
			}
		}
	}
	for _, s := range off.Starts {
		if strings.HasPrefix(s.Reason, "abandoned") {
			t.Errorf("%s: start %s abandoned with KeepStarts", label, s.Label)
		}
	}
	c.fits++
	c.abandoned += n
	if on.Status != off.Status || len(on.Estimates) != len(off.Estimates) {
		t.Errorf("%s: status %s with abandoning, %s without; %d and %d estimates", label, on.Status, off.Status, len(on.Estimates), len(off.Estimates))
		return
	}
	worst, at := 0.0, ""
	for i, x := range append([]float64{on.LogLik}, on.Estimates...) {
		y := off.LogLik
		name := "loglik"
		if i > 0 {
			y, name = off.Estimates[i-1], on.ParamNames[i-1]
		}
		d := math.Abs(x-y) / math.Max(1, math.Abs(y))
		if x == y || (math.IsNaN(x) && math.IsNaN(y)) {
			d = 0
		} else if math.IsNaN(d) {
			d = math.Inf(1)
		}
		if d > worst {
			worst, at = d, fmt.Sprintf("%s %.15g with abandoning, %.15g without", name, x, y)
		}
	}
	t.Logf("%s: %d of %d starts abandoned; loglik %.10f; largest difference %.2g", label, n, len(on.Starts), on.LogLik, worst)
	if worst > 1e-9 {
		t.Errorf("%s: %s", label, at)
	}
	if worst == 0 {
		c.sameBits++
	}
}

// check says what the comparisons saw, and fails when no start was
// abandoned at its first evaluation: the rule would go unchecked.
func (c *startsTally) check(t *testing.T) {
	t.Helper()
	t.Logf("%d fits: %d starts abandoned, %d of them at their first evaluation; %d fits the same to the bit", c.fits, c.abandoned, c.atOnce, c.sameBits)
	if c.atOnce == 0 {
		t.Error("no start was abandoned at its first evaluation: the check compares nothing")
	}
}

// TestOutOfReachStartsEndBelow: a screened start that the approximation
// around the partial fit puts out of reach of the best (outOfReach) is
// abandoned without a pass over the data. Run to its end instead
// (Options.KeepStarts), every such start ends at least as far below the
// best log-likelihood as the approximation said, on every constrained and
// stereotype reference record (sources: refSources) with the starts
// screened, and on simulated data (ridgeData) for the three comparisons;
// and the search chooses the same maximum either way (the bits, as in
// TestKeepStartsSameMaximum).
func TestOutOfReachStartsEndBelow(t *testing.T) {
	type job struct {
		label string
		d     *Data
		m     Model
	}
	var jobs []job
	for _, r := range refRecords(t, true) {
		jobs = append(jobs, job{r.name + "/" + r.rm.ID + " (" + refSources[r.name] + ")", r.rs.data(r.rm.Predictors), r.rm.modelOf(t)})
	}
	rd := ridgeData(20000)
	for _, c := range []Comparison{Cumulative, Stage, Adjacent} {
		m := Model{Comparison: c, Link: Logit, Effects: make([]Effect, 10)}
		m.Effects[0], m.Effects[1] = Constrained, Constrained
		jobs = append(jobs, job{"ridgeData(20000)/" + c.String(), rd, m})
	}
	var tally startsTally
	out := 0
	for _, j := range jobs {
		on, err := Fit(j.d, j.m, Options{ScreenAbove: -1})
		if err != nil {
			t.Fatalf("%s: %v", j.label, err)
		}
		off, err := Fit(j.d, j.m, Options{ScreenAbove: -1, KeepStarts: true})
		if err != nil {
			t.Fatalf("%s: %v", j.label, err)
		}
		tally.compare(t, j.label, on, off)
		for i, s := range on.Starts {
			if s.outOfReach == 0 {
				continue
			}
			out++
			kept := off.Starts[i]
			below := on.LogLik - kept.LogLik
			t.Logf("%s, %s: out of reach by %.4g; run to its end: %.6f, %.4g below (%s)", j.label, s.Label, s.outOfReach, kept.LogLik, below, kept.Reason)
			if !math.IsNaN(s.LogLik) || s.Iterations != 0 {
				t.Errorf("%s, %s: abandoned on the approximation, but loglik %v after %d iterations", j.label, s.Label, s.LogLik, s.Iterations)
			}
			if kept.ReachedBest || !(below >= s.outOfReach) {
				t.Errorf("%s, %s: out of reach by %.6g, but run to its end it is %.6g below the best (reached %v)", j.label, s.Label, s.outOfReach, below, kept.ReachedBest)
			}
		}
	}
	t.Logf("%d starts abandoned on the approximation alone", out)
	if out < 5 {
		t.Errorf("only %d starts abandoned on the approximation alone: the check compares too little", out)
	}
}
