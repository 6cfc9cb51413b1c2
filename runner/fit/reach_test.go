package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"testing"
)

// reachColumn is one simulated predictor: "rare" a 0/1 column with share
// p of ones, "t" Student's t with p degrees of freedom (heavy tails),
// "lognormal" exp(p z) (strongly skewed), "normal" standard normal.
type reachColumn struct {
	kind string
	p    float64
}

// reachCase is simulated data on which the approximation around the
// partial fit is at its least accurate, for the search's screening.
type reachCase struct {
	label string
	n, J  int
	cols  []reachColumn
	// slopes[k][j]: predictor k's slope in the log-odds of category j+2
	// against j+1 (an adjacent-category logit truth: a valid distribution
	// for any slopes, so strongly nonparallel effects are possible).
	slopes      [][]float64
	constrained []int
	weights     string // "", "frequency" (1 to 4) or "sampling" (log-normal, scaled to sum to n)
	seed        uint64
	long        bool // only with ORDPLAN_REACH_LONG=1
}

func (c reachCase) data() *Data {
	rng := rand.New(rand.NewPCG(c.seed, 17))
	K := len(c.cols)
	d := &Data{J: c.J, Y: make([]int, c.n), X: make([]float64, 0, c.n*K)}
	for k := range c.cols {
		d.Predictors = append(d.Predictors, fmt.Sprintf("x%d_%s", k+1, c.cols[k].kind))
	}
	p := make([]float64, c.J)
	for i := range d.Y {
		x := make([]float64, K)
		for k, col := range c.cols {
			switch col.kind {
			case "rare":
				if rng.Float64() < col.p {
					x[k] = 1
				}
			case "t":
				chi := 0.0
				for r := 0; r < int(col.p); r++ {
					z := rng.NormFloat64()
					chi += z * z
				}
				if f := col.p - math.Floor(col.p); f > 0 {
					// A fractional degree: a gamma(f/2, 2) part by the
					// square of a normal scaled to its mean (adequate here).
					z := rng.NormFloat64()
					chi += f * z * z
				}
				x[k] = rng.NormFloat64() / math.Sqrt(chi/col.p)
			case "lognormal":
				x[k] = math.Exp(col.p * rng.NormFloat64())
			default:
				x[k] = rng.NormFloat64()
			}
		}
		d.X = append(d.X, x...)
		// Adjacent-category logit: log p_{j+1}/p_j = a_j + x'b_j.
		s, tot := 0.0, 1.0
		p[0] = 1
		for j := 0; j < c.J-1; j++ {
			s += 0.4 - 0.2*float64(j)
			for k := range x {
				s += c.slopes[k][j] * x[k]
			}
			p[j+1] = math.Exp(s)
			tot += p[j+1]
		}
		u, y := rng.Float64()*tot, c.J-1
		for j := 0; j < c.J; j++ {
			if u < p[j] {
				y = j
				break
			}
			u -= p[j]
		}
		d.Y[i] = y
	}
	switch c.weights {
	case "frequency":
		d.Weights = make([]float64, c.n)
		for i := range d.Weights {
			d.Weights[i] = float64(1 + rng.IntN(4))
		}
	case "sampling":
		d.Weights = make([]float64, c.n)
		sum := 0.0
		for i := range d.Weights {
			d.Weights[i] = math.Exp(0.8 * rng.NormFloat64())
			sum += d.Weights[i]
		}
		for i := range d.Weights {
			d.Weights[i] *= float64(c.n) / sum
		}
	}
	return d
}

// models are the searches run on the case: its constrained predictors
// (one group) with the others parallel, for the three comparisons, and
// the adjacent stereotype model (once: with every predictor constrained
// the adjacent constrained model is the stereotype model).
func (c reachCase) models() []Model {
	var out []Model
	for _, cmp := range []Comparison{Cumulative, Stage, Adjacent} {
		m := Model{Comparison: cmp, Link: Logit, Effects: make([]Effect, len(c.cols))}
		for _, k := range c.constrained {
			m.Effects[k] = Constrained
		}
		if m.Structure() != StereotypeEffects {
			out = append(out, m)
		}
	}
	st := Model{Comparison: Adjacent, Link: Logit, Effects: make([]Effect, len(c.cols))}
	for k := range st.Effects {
		st.Effects[k] = Constrained
	}
	return append(out, st)
}

// reachCases are the data on which the approximation is least accurate:
// rare 0/1 constrained predictors (1 to 3% ones), heavy-tailed (Student's
// t) and skewed (log-normal) constrained predictors, a rank-2 truth (the
// constrained and stereotype likelihoods have several maxima), data just
// above the screening threshold, frequency and sampling weights; and
// rank-1 truths beside such predictors, where the approximation's maximum
// of the starts towards the ridge g -> 0, |phi| -> inf lies close enough
// to the partial fit for starts to be abandoned on it. Run with every
// start to its end, the rare 5% case has two converged maxima in the
// cumulative (-26140.10 and -26208.70) and stage models (-26186.05 and
// -26257.67), the rare 1% and 3% case in the adjacent model (-30445.38 and
// -30500.49); the other starts that miss the best climb the ridge. The
// cases marked long run only with ORDPLAN_REACH_LONG=1 (.ci/run).
func reachCases(long bool) []reachCase {
	all := []reachCase{
		{label: "rare 2% just above the screening threshold", n: 5200, J: 5, seed: 2,
			cols:        []reachColumn{{"rare", 0.02}, {"normal", 0}, {"rare", 0.5}},
			slopes:      [][]float64{{2, 0.5, -1, -2}, {0.4, 0.1, -0.2, -0.5}, {0.3, 0.3, 0.3, 0.3}},
			constrained: []int{0, 1}},
		{label: "rare 2% with frequency weights", n: 6000, J: 4, seed: 3, weights: "frequency",
			cols:        []reachColumn{{"rare", 0.02}, {"normal", 0}, {"normal", 0}},
			slopes:      [][]float64{{1.5, -0.5, -2}, {0.6, -0.3, 0.5}, {0.3, 0.3, 0.3}},
			constrained: []int{0, 1}},
		{label: "t(3), log-normal and rare 3% with sampling weights", n: 8000, J: 4, seed: 5, weights: "sampling",
			cols:        []reachColumn{{"t", 3}, {"lognormal", 0.8}, {"rare", 0.03}},
			slopes:      [][]float64{{0.4, -0.2, -0.4}, {0.2, 0.3, -0.3}, {1.5, 0, -1.5}},
			constrained: []int{0, 1, 2}},
		{label: "rank-2 truth, normal predictors", n: 8000, J: 5, seed: 6,
			cols:        []reachColumn{{"normal", 0}, {"normal", 0}, {"normal", 0}},
			slopes:      [][]float64{{1, 0, -1, -1.5}, {-0.5, 0.5, 1, 0.2}, {0.2, 0.2, 0.2, 0.2}},
			constrained: []int{0, 1}},
		{label: "t(3) beside a weak normal, rank-1 truth, frequency weights", n: 40000, J: 5, seed: 8, weights: "frequency",
			cols:        []reachColumn{{"t", 3}, {"normal", 0}, {"rare", 0.5}},
			slopes:      [][]float64{{0.1, 0.14, 0.18, 0.22}, {0.08, 0.112, 0.144, 0.176}, {0.3, 0.3, 0.3, 0.3}},
			constrained: []int{0, 1}},
		{label: "log-normal, rank-1 truth, sampling weights", n: 40000, J: 4, seed: 9, weights: "sampling",
			cols:        []reachColumn{{"lognormal", 0.7}, {"normal", 0}},
			slopes:      [][]float64{{0.1, 0.15, 0.2}, {0.08, 0.12, 0.16}},
			constrained: []int{0, 1}},
		{label: "rare 5% beside a weak normal, rank-1 truth", n: 20000, J: 4, seed: 10,
			cols:        []reachColumn{{"rare", 0.05}, {"normal", 0}, {"normal", 0}},
			slopes:      [][]float64{{0.4, 0.6, 0.8}, {0.06, 0.09, 0.12}, {0.3, 0.3, 0.3}},
			constrained: []int{0, 1}},
		{label: "rare 1% and 3% in one group, opposite nonparallel effects", n: 20000, J: 5, seed: 1, long: true,
			cols:        []reachColumn{{"rare", 0.01}, {"rare", 0.03}, {"normal", 0}, {"normal", 0}},
			slopes:      [][]float64{{2, 0.5, -1, -2}, {-1.5, -0.5, 1, 1.5}, {0.3, 0.3, 0.3, 0.3}, {0.5, 0.2, -0.1, -0.4}},
			constrained: []int{0, 1}},
		{label: "t(2.5) and log-normal, weak nonparallel effects", n: 10000, J: 5, seed: 4, long: true,
			cols:        []reachColumn{{"t", 2.5}, {"lognormal", 1}, {"normal", 0}},
			slopes:      [][]float64{{0.3, 0.1, -0.1, -0.3}, {0.2, -0.1, 0.1, -0.2}, {0.3, 0.3, 0.3, 0.3}},
			constrained: []int{0, 1}},
		{label: "rare 2% beside a weak normal, rank-1 truth", n: 60000, J: 5, seed: 7, long: true,
			cols:        []reachColumn{{"rare", 0.02}, {"normal", 0}, {"normal", 0}},
			slopes:      [][]float64{{0.6, 0.84, 1.08, 1.32}, {0.08, 0.112, 0.144, 0.176}, {0.3, 0.3, 0.3, 0.3}},
			constrained: []int{0, 1}},
	}
	var out []reachCase
	for _, c := range all {
		if !c.long || long {
			out = append(out, c)
		}
	}
	return out
}

// reachFinding is one start abandoned on the approximation alone, run to
// its end.
type reachFinding struct {
	label       string
	claimed     float64 // how far below the best the approximation put it
	below       float64 // how far below the reported best it ended
	above       bool    // it ended above the reported best: the answer would change
	reachedBest bool
}

// failed: the start, run to its end, ends less far below the best than
// claimed, reaches it, or passes it.
func (f reachFinding) failed() bool {
	return f.above || f.reachedBest || !(f.below >= f.claimed)
}

// reachFindings fits every model of every case with the starts screened
// (the cases have more rows than the threshold), with abandoning and
// without (Options.KeepStarts): both must report the same maximum (the
// bits, or 1e-9, as in TestKeepStartsSameMaximum). It returns every start
// abandoned on the approximation alone with where it ends when run, and,
// with strict false (an allowance broken on purpose), counts the fits
// whose maxima differ (moved) instead of failing on them.
func reachFindings(t *testing.T, cases []reachCase, strict bool) (out []reachFinding, moved int) {
	t.Helper()
	var tally startsTally
	for _, c := range cases {
		d := c.data()
		for _, m := range c.models() {
			label := fmt.Sprintf("%s: %s/%s", c.label, m.Comparison, m.Structure())
			on, err := Fit(d, m, Options{})
			if err != nil {
				t.Fatalf("%s: %v", label, err)
			}
			off, err := Fit(d, m, Options{KeepStarts: true})
			if err != nil {
				t.Fatalf("%s: %v", label, err)
			}
			if strict {
				tally.compare(t, label, on, off)
			} else if on.LogLik != off.LogLik {
				moved++
				t.Logf("%s: the maximum moved: log-likelihood %.10f with abandoning, %.10f without", label, on.LogLik, off.LogLik)
			}
			for i, s := range on.Starts {
				if s.outOfReach == 0 {
					continue
				}
				kept := off.Starts[i]
				f := reachFinding{label: label + ", " + s.Label, claimed: s.outOfReach, below: on.LogLik - kept.LogLik, reachedBest: kept.ReachedBest}
				// Within the convergence rule's tolerance of the best, a
				// start reached the same maximum (bestRun).
				f.above = kept.LogLik > on.LogLik+tieLL*math.Max(1, math.Abs(on.LogLik))+sameLL
				out = append(out, f)
				t.Logf("  %s: out of reach by %.4g; run to its end %.6f, %.4g below (%s)", s.Label, s.outOfReach, kept.LogLik, f.below, kept.Reason)
			}
		}
	}
	return out, moved
}

// TestOutOfReachAdversarial: on data where the approximation around the
// partial fit is least accurate (reachCases), the search reports the same
// maximum with abandoning as with every start run to its end, and every
// start that the approximation put out of reach (outOfReach), run to its
// end instead, ends at least as far below the reported best as the
// approximation said, never at or above it. The check can fail: with the
// allowance for the approximation's error turned against it (added to the
// claim instead of taken from it), on the data with a rare 0/1 predictor
// just above the screening threshold a stereotype start claimed out of
// reach by 509.7 ends 15.3 below the best. (Taken away alone, the
// allowance is no longer needed on these data since the cumulative models,
// whose rows have no bound R, abandon nothing on the approximation.)
func TestOutOfReachAdversarial(t *testing.T) {
	long := os.Getenv("ORDPLAN_REACH_LONG") != ""
	found, _ := reachFindings(t, reachCases(long), true)
	for _, f := range found {
		if f.failed() {
			t.Errorf("%s: out of reach by %.6g, but run to its end it is %.6g below the best (reached the best %v)", f.label, f.claimed, f.below, f.reachedBest)
		}
	}
	t.Logf("%d starts abandoned on the approximation alone", len(found))
	if len(found) < 3 {
		t.Errorf("only %d starts abandoned on the approximation alone: the check compares too little", len(found))
	}
	defer func(a float64) { reachAllowance = a }(reachAllowance)
	reachAllowance = -reachAllowance
	bad := 0
	for _, c := range reachCases(long) {
		if c.label != "rare 2% just above the screening threshold" && !c.long {
			continue
		}
		found, moved := reachFindings(t, []reachCase{c}, false)
		bad += moved
		for _, f := range found {
			if f.failed() {
				bad++
				t.Logf("with the allowance turned against it: %s: claimed %.6g, ends %.6g below", f.label, f.claimed, f.below)
			}
		}
	}
	if bad == 0 {
		t.Error("with the allowance turned against it no claim fails: the check cannot tell a margin too small")
	}
}

// TestOutOfReachOnlyLogit: no link but the logit bounds the third
// derivatives of the log-likelihood by the second (outOfReach), and the
// approximation is not trusted there: with the probit link no start is
// abandoned on the approximation alone, and the search's maximum is the one
// every start run to its end gives. With ORDPLAN_REACH_LONG=1 (.ci/run) on
// 200000 rows of simulated data (ridgeData), where the cumulative probit
// model's starts drawn with phi[2] = 1 and phi[4] = 1 have maxima of the
// approximation 727.7 below the best even after an allowance of
// 4 Q sqrt(Q / N) (N the rows: an allowance read off logit fits), yet run
// on the data they reach the best; on 20000 rows (the default) they end
// below it.
func TestOutOfReachOnlyLogit(t *testing.T) {
	long := os.Getenv("ORDPLAN_REACH_LONG") != ""
	n := 20000
	if long {
		n = 200000
	}
	d := ridgeData(n)
	m := Model{Comparison: Cumulative, Link: Probit, Effects: make([]Effect, 10)}
	m.Effects[0], m.Effects[1] = Constrained, Constrained
	on, err := Fit(d, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	off, err := Fit(d, m, Options{KeepStarts: true})
	if err != nil {
		t.Fatal(err)
	}
	var tally startsTally
	tally.compare(t, fmt.Sprintf("ridgeData(%d)/cumulative/probit", n), on, off)
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		t.Fatal(err)
	}
	sh := &shared{fitted: map[string]gridFit{}}
	aux, err := newAuxiliary(d, m, ly, Options{}, sh)
	if err != nil || !aux.screen || aux.sur.ratio != 0 {
		t.Fatalf("auxiliary fits: %v (screened %v)", err, aux != nil && aux.screen)
	}
	wrong := 0
	for i, s := range aux.starts(d, m, ly, Options{}) {
		sur := aux.sur.maximize(s.theta)
		if _, out := aux.sur.outOfReach(sur, on.LogLik); out || on.Starts[i].outOfReach != 0 {
			t.Errorf("%s: out of reach on the approximation with the probit link", s.label)
		}
		Q, _ := aux.sur.value(sur)
		claim := Q - 4*Q*math.Sqrt(Q/d.NObs()) - (aux.sur.peak - on.LogLik)
		t.Logf("%s: an allowance of 4 Q sqrt(Q / N) would put it %.4g below the best; run to its end %.6f (reached the best %v)", s.label, claim, off.Starts[i].LogLik, off.Starts[i].ReachedBest)
		if claim > 0 && off.Starts[i].ReachedBest {
			wrong++
		}
	}
	if long && wrong == 0 {
		t.Error("no start that an allowance read off logit fits puts out of reach reaches the best: the test shows nothing")
	}
}
