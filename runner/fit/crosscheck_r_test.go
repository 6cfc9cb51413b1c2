package fit_test

// The cross-check suite against R's general-purpose routines (stats::glm
// and nnet::multinom; no package made for ordinal regression). It runs when
// Rscript is on PATH and skips with one line otherwise. Each check writes
// its data to a temporary folder, runs an R script of testdata/rcheck
// (common.R first) and compares what R prints, to 17 digits, with the fits
// of this package through exact identities:
//
//   - two categories: every comparison and every link equals a binary glm;
//   - stage models (forward, backward; nonparallel and parallel) equal
//     binary glms on the expanded data;
//   - the adjacent nonparallel logit equals multinom's multinomial logit;
//   - frequency weights equal duplicated rows;
//   - the Pulkstenis-Robinson statistics of two categories equal grouped
//     statistics computed from glm's fitted values;
//   - sandwich (with and without small-sample factor) and cluster-robust
//     covariances equal a sandwich computed by hand in R from glm's score
//     contributions and the observed information.
//
// Data: R's own data sets (esoph, infert), exported by the R scripts, and
// seeded simulations made here. How ordplan's parameters map to glm's
// (including the loglog link) is derived in testdata/rcheck/common.R.

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"ordplan/internal/rscript"
	"ordplan/runner/fit"
)

// Tolerances of the suite (relative). Estimates compare relative to the
// larger of the value and its standard error, so that an estimate near zero
// is not held to digits it does not have; covariances relative to
// sqrt(V_ii V_jj).
const (
	tolLogLik = 1e-8
	tolEst    = 1e-6
	// nnet::multinom maximizes by BFGS, which stops on a relative change of
	// the log-likelihood (reltol 1e-15 here), not on the gradient: its
	// estimates and errors are held to 1e-5 relative. Measured with R 4.2
	// and nnet 7.3: within 5e-8 (estimates) and 1e-8 (errors); the
	// log-likelihood keeps tolLogLik.
	tolMultinom = 1e-5
)

func rfile(name string) string { return filepath.Join("testdata", "rcheck", name) }

// workDir is the folder a check and its R script work in: a temporary one,
// or, when ORDPLAN_RCHECK_DIR is set, a folder under it named after the
// check, kept afterwards (with check.R, the data and what R wrote) for
// running the script by hand.
func workDir(t *testing.T) string {
	root := os.Getenv("ORDPLAN_RCHECK_DIR")
	if root == "" {
		return t.TempDir()
	}
	dir := filepath.Join(root, strings.NewReplacer("/", "-", " ", "_").Replace(t.Name()))
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	return dir
}

// rLinks are the links with the names the R scripts print them under.
var rLinks = []struct {
	link fit.Link
	name string
}{
	{fit.Logit, "logit"}, {fit.Probit, "probit"}, {fit.Cloglog, "cloglog"},
	{fit.Loglog, "loglog"}, {fit.Cauchy, "cauchit"},
}

// comparisons are the four ways of comparing categories (stage in both
// directions).
var comparisons = []struct {
	name     string
	cmp      fit.Comparison
	backward bool
}{
	{"cumulative", fit.Cumulative, false},
	{"stage", fit.Stage, false},
	{"stage_backward", fit.Stage, true},
	{"adjacent", fit.Adjacent, false},
}

func TestAgainstR(t *testing.T) {
	rscript.Require(t)
	t.Run("two categories", testRTwoCategories)
	t.Run("frequency weights", testRFrequencyWeights)
	t.Run("stage models", testRStage)
	t.Run("multinomial logit", testRMultinomial)
	t.Run("Pulkstenis-Robinson", testRPatternSplit)
	t.Run("predictor far from zero", testRFarFromZero)
}

// ---- comparisons of numbers

// agreement compares values with R's and records the largest relative
// difference met per kind of value; report logs them (go test -v shows
// how far inside the tolerances the suite is).
type agreement struct {
	t     *testing.T
	worst map[string]float64
}

func newAgreement(t *testing.T) *agreement { return &agreement{t: t, worst: map[string]float64{}} }

func (a *agreement) note(kind string, rel float64) {
	if rel > a.worst[kind] || math.IsNaN(rel) {
		a.worst[kind] = rel
	}
}

func (a *agreement) report() {
	kinds := make([]string, 0, len(a.worst))
	for k := range a.worst {
		kinds = append(kinds, k)
	}
	sort.Strings(kinds)
	var b strings.Builder
	for _, k := range kinds {
		fmt.Fprintf(&b, " %s %.1e;", k, a.worst[k])
	}
	a.t.Logf("%s: largest relative differences from R:%s", a.t.Name(), b.String())
}

func (a *agreement) logLik(label string, got, want float64) {
	a.t.Helper()
	rel := math.Abs(got-want) / math.Abs(want)
	a.note("log-likelihood", rel)
	if !(rel <= tolLogLik) {
		a.t.Errorf("%s: log-likelihood %.15g, R %.15g", label, got, want)
	}
}

// stat compares a statistic relative to R's (tolEst).
func (a *agreement) stat(label string, got, want float64) {
	a.t.Helper()
	rel := math.Abs(got-want) / math.Abs(want)
	a.note("statistics", rel)
	if !(rel <= tolEst) {
		a.t.Errorf("%s: %.15g, R %.15g", label, got, want)
	}
}

// est compares estimates relative to max(|want|, se).
func (a *agreement) est(label string, names []string, got, want, se []float64, tol float64) {
	a.t.Helper()
	if len(got) != len(want) {
		a.t.Fatalf("%s: %d estimates, R has %d", label, len(got), len(want))
	}
	for i := range got {
		rel := math.Abs(got[i]-want[i]) / math.Max(math.Abs(want[i]), se[i])
		a.note("estimates", rel)
		if !(rel <= tol) {
			a.t.Errorf("%s: %s = %.12g, R %.12g", label, names[i], got[i], want[i])
		}
	}
}

// errors compares standard errors relative to each.
func (a *agreement) errors(label string, names []string, got, want []float64, tol float64) {
	a.t.Helper()
	if len(got) != len(want) {
		a.t.Fatalf("%s: %d values, R has %d", label, len(got), len(want))
	}
	for i := range got {
		rel := math.Abs(got[i]-want[i]) / math.Abs(want[i])
		a.note("standard errors", rel)
		if !(rel <= tol) {
			a.t.Errorf("%s: %s = %.12g, R %.12g", label, names[i], got[i], want[i])
		}
	}
}

// cov compares covariance matrices element by element relative to
// sqrt(V_ii V_jj) of R's matrix.
func (a *agreement) cov(label string, names []string, got, want []float64) {
	a.t.Helper()
	P := len(names)
	if len(got) != P*P || len(want) != P*P {
		a.t.Fatalf("%s: covariance sizes %d and %d, want %d", label, len(got), len(want), P*P)
	}
	for i := 0; i < P; i++ {
		for j := 0; j < P; j++ {
			rel := math.Abs(got[i*P+j]-want[i*P+j]) / math.Sqrt(want[i*P+i]*want[j*P+j])
			a.note("covariances", rel)
			if !(rel <= tolEst) {
				a.t.Errorf("%s: cov(%s, %s) = %.12g, R %.12g", label, names[i], names[j], got[i*P+j], want[i*P+j])
			}
		}
	}
}

// ---- data

// dataFrom builds fit data from table columns: the outcome column holds
// categories 1..J (or, with base 0, 0..J-1).
func dataFrom(t *testing.T, tab *rscript.Table, ycol string, base, J int, preds []string, wcol string) *fit.Data {
	t.Helper()
	d := &fit.Data{J: J, Predictors: preds}
	y := tab.Col(t, ycol)
	cols := make([][]float64, len(preds))
	for k, p := range preds {
		cols[k] = tab.Col(t, p)
	}
	for i := range y {
		d.Y = append(d.Y, int(y[i])-base)
		for k := range preds {
			d.X = append(d.X, cols[k][i])
		}
	}
	if wcol != "" {
		d.Weights = append([]float64(nil), tab.Col(t, wcol)...)
	}
	return d
}

// expand repeats every row as often as its (whole-number) weight says.
func expand(d *fit.Data) (*fit.Data, []int) {
	K := len(d.Predictors)
	x := &fit.Data{J: d.J, Predictors: d.Predictors}
	var from []int
	for i, w := range d.Weights {
		for r := 0; r < int(w); r++ {
			x.Y = append(x.Y, d.Y[i])
			x.X = append(x.X, d.X[i*K:(i+1)*K]...)
			from = append(from, i)
		}
	}
	return x, from
}

func ids(v []float64) []string {
	out := make([]string, len(v))
	for i, x := range v {
		out[i] = fmt.Sprint(x)
	}
	return out
}

func round(x float64, digits int) float64 {
	p := math.Pow(10, float64(digits))
	return math.Round(x*p) / p
}

// simTwoCategories is seeded data of our own with sampling weights and
// clusters: 400 rows in 40 clusters of 10; x1 ~ N(0,1) (three decimals),
// x2 ~ Bernoulli(0.4), a cluster effect u ~ N(0,1); category 2 when
// x1 - 0.5 x2 + u + e > 0.3 with e standard logistic, else 1; sampling
// weights uniform on [0.5, 3] (two decimals), unrelated to y.
func simTwoCategories() (names []string, cols [][]float64) {
	rng := rand.New(rand.NewPCG(20261202, 2))
	const n, G = 400, 40
	u := make([]float64, G)
	for g := range u {
		u[g] = rng.NormFloat64()
	}
	cols = make([][]float64, 5)
	for i := 0; i < n; i++ {
		g := i / (n / G)
		x1 := round(rng.NormFloat64(), 3)
		x2 := 0.0
		if rng.Float64() < 0.4 {
			x2 = 1
		}
		p := rng.Float64()
		e := math.Log(p / (1 - p))
		y := 1.0
		if x1-0.5*x2+u[g]+e > 0.3 {
			y = 2
		}
		sw := round(0.5+2.5*rng.Float64(), 2)
		for j, v := range []float64{y, x1, x2, sw, float64(g + 1)} {
			cols[j] = append(cols[j], v)
		}
	}
	return []string{"y", "x1", "x2", "sw", "g"}, cols
}

// simFourCategories is seeded data of our own with four categories: 600
// rows; x1 ~ Bernoulli(0.45), x2 ~ N(0,1), x3 ~ U(0,2) (three decimals); y
// drawn stage by stage, stopping at category m (m = 1, 2, 3) with
// probability logistic(tau_m - x'b_m), slopes differing by stage.
func simFourCategories() (names []string, cols [][]float64) {
	rng := rand.New(rand.NewPCG(20261202, 4))
	tau := []float64{-0.5, 0, 0.3}
	b := [][]float64{{0.6, 0.8, -0.4}, {0.3, 0.5, -0.2}, {0.9, 0.4, 0.1}}
	cols = make([][]float64, 4)
	for i := 0; i < 600; i++ {
		x := []float64{0, round(rng.NormFloat64(), 3), round(2*rng.Float64(), 3)}
		if rng.Float64() < 0.45 {
			x[0] = 1
		}
		y := 4
		for m := 0; m < 3; m++ {
			L := tau[m] - (x[0]*b[m][0] + x[1]*b[m][1] + x[2]*b[m][2])
			if rng.Float64() < 1/(1+math.Exp(-L)) {
				y = m + 1
				break
			}
		}
		for j, v := range []float64{float64(y), x[0], x[1], x[2]} {
			cols[j] = append(cols[j], v)
		}
	}
	return []string{"y", "x1", "x2", "x3"}, cols
}

func parallelModel(c fit.Comparison, backward bool, l fit.Link, K int, e fit.Effect) fit.Model {
	eff := make([]fit.Effect, K)
	for k := range eff {
		eff[k] = e
	}
	return fit.Model{Comparison: c, Backward: backward, Link: l, Effects: eff}
}

func mustFit(t *testing.T, label string, d *fit.Data, m fit.Model, opt fit.Options) *fit.Result {
	t.Helper()
	r, err := fit.Fit(d, m, opt)
	if err != nil {
		t.Fatalf("%s: %v", label, err)
	}
	if !r.OK() {
		t.Fatalf("%s: %s: %s", label, r.Status, r.Message)
	}
	return r
}

// checkSandwiches compares the four sandwich covariances of r with R's
// hand computation printed under prefix (see sandwich in common.R).
func (a *agreement) sandwiches(label string, d *fit.Data, r *fit.Result, clusters []string, sampling bool, vals rscript.Values, prefix string) {
	a.t.Helper()
	for _, c := range []struct {
		name     string
		clusters []string
		plain    bool
	}{
		{"sandwich", nil, false}, {"sandwich_plain", nil, true},
		{"clustered", clusters, false}, {"clustered_plain", clusters, true},
	} {
		var V []float64
		var err error
		switch {
		case c.plain && c.clusters == nil:
			V, _, err = fit.SandwichEstimate(d, r, fit.SandwichPlain, nil, sampling)
		case c.plain:
			// The cluster-robust estimate without a small-sample factor is
			// no covariance kind of its own: undo the factor.
			var info fit.SandwichInfo
			V, info, err = fit.SandwichEstimate(d, r, fit.Clustered, c.clusters, sampling)
			for i := range V {
				V[i] /= info.Factor
			}
		case c.clusters == nil:
			V, _, err = fit.SandwichEstimate(d, r, fit.Sandwich, nil, sampling)
		default:
			var info fit.SandwichInfo
			V, info, err = fit.SandwichEstimate(d, r, fit.Clustered, c.clusters, sampling)
			if err == nil {
				// Every slope of the fit (its parameters after the first).
				a.clusterWald(label+" "+c.name, r, V, info, len(r.Estimates)-1, vals, prefix+".clustered")
			}
		}
		if err != nil {
			a.t.Fatalf("%s %s: %v", label, c.name, err)
		}
		a.cov(label+" "+c.name, r.ParamNames, V, vals.Get(a.t, prefix+"."+c.name))
	}
}

// ---- the checks

// testRTwoCategories: with two categories every comparison reduces to one
// binary model, P(y = 1) = F(tau - x'b), which is R's glm, binomial family,
// with the link mapped as derived in common.R (loglog: cloglog on the other
// category with negated signs). Checked per link and comparison:
// log-likelihood, estimates, observed-information errors against the
// observed information computed by hand in R, expected-information errors
// against glm's own (summary.glm / vcov), and the sandwich and
// cluster-robust covariances against R's hand computation.
//
// Data: R's infert (datasets package, ?infert: Trichopoulos et al. 1976),
// outcome case, predictors age, parity, induced, spontaneous, clusters the
// matched sets (stratum); and seeded simulated data with sampling weights
// and 40 clusters (simTwoCategories), where R fits glm with the weights as
// prior weights and the sandwich uses the weighted scores.
func testRTwoCategories(t *testing.T) {
	a := newAgreement(t)
	defer a.report()
	dir := workDir(t)
	names, cols := simTwoCategories()
	rscript.WriteCSV(t, filepath.Join(dir, "sim2.csv"), names, cols)
	vals := rscript.Run(t, dir, rfile("common.R"), rfile("twocat.R"))

	inf := rscript.ReadCSV(t, filepath.Join(dir, "infert.csv"))
	sim := rscript.ReadCSV(t, filepath.Join(dir, "sim2.csv"))
	sets := []struct {
		name     string
		d        *fit.Data
		clusters []string
		sampling bool
	}{
		{"infert", dataFrom(t, inf, "y", 1, 2, []string{"age", "parity", "induced", "spontaneous"}, ""), ids(inf.Col(t, "stratum")), false},
		{"sim2", dataFrom(t, sim, "y", 1, 2, []string{"x1", "x2"}, "sw"), ids(sim.Col(t, "g")), true},
	}
	for _, s := range sets {
		for _, l := range rLinks {
			prefix := s.name + "." + l.name
			theta := vals.Get(t, prefix+".theta")
			seObs := vals.Get(t, prefix+".se_obs")
			for _, c := range comparisons {
				label := fmt.Sprintf("%s %s %s (glm, binomial(%s))", s.name, c.name, l.name, l.name)
				m := parallelModel(c.cmp, c.backward, l.link, len(s.d.Predictors), fit.Parallel)
				r := mustFit(t, label, s.d, m, fit.Options{})
				a.logLik(label, r.LogLik, vals.Scalar(t, prefix+".ll"))
				a.est(label, r.ParamNames, r.Estimates, theta, seObs, tolEst)
				if !s.sampling {
					a.logLik(label+" logLik.glm", r.LogLik, vals.Scalar(t, prefix+".ll_glm"))
					a.errors(label+" observed-information errors", r.ParamNames, r.StdErrors, seObs, tolEst)
					re := mustFit(t, label, s.d, m, fit.Options{Covariance: fit.Expected})
					a.errors(label+" expected-information errors (glm's)", r.ParamNames, re.StdErrors, vals.Get(t, prefix+".se_glm"), tolEst)
				}
				a.sandwiches(label, s.d, r, s.clusters, s.sampling, vals, prefix)
				if s.name == "infert" {
					a.fewClusters(label, s.d, r, ids(inf.Col(t, "education")), vals, prefix)
					a.jackknife(label+" clustered by education", s.d, r, ids(inf.Col(t, "education")), s.sampling, vals, prefix+".jack_education")
					a.jackknife(label+" clustered by stratum mod 10", s.d, r, ids(inf.Col(t, "set10")), s.sampling, vals, prefix+".jack_set10")
				} else {
					a.jackknife(label+" clustered by g", s.d, r, s.clusters, s.sampling, vals, prefix+".jack_g")
				}
			}
		}
	}
}

// fewClusters checks the cluster-robust covariance of infert's fit r with
// its 3 education groups as clusters against R's hand computation, its
// numerical rank (RankTolerance on the covariance scaled to unit
// diagonal) against R's eigenvalues (both G-1 = 2), and that a Wald test
// of 2 restrictions is made from it and of 3 refused.
func (a *agreement) fewClusters(label string, d *fit.Data, r *fit.Result, clusters []string, vals rscript.Values, prefix string) {
	t := a.t
	t.Helper()
	V, info, err := fit.SandwichEstimate(d, r, fit.Clustered, clusters, false)
	if err != nil || info.Clusters != 3 {
		t.Fatalf("%s: %d clusters, %v", label, info.Clusters, err)
	}
	a.cov(label+" clustered by education (3 clusters)", r.ParamNames, V, vals.Get(t, prefix+".clustered3"))
	P := len(r.Estimates)
	all := make([][]float64, P)
	for i := range all {
		all[i] = make([]float64, P)
		all[i][i] = 1
	}
	want := vals.Scalar(t, prefix+".clustered3_rank")
	if got := fit.RestrictionRank(all, V); float64(got) != want || got != 2 {
		t.Errorf("%s: rank of the 3-cluster covariance %d, R's %g, want G-1 = 2", label, got, want)
	}
	rc := *r
	rc.UseCovariance(V, info)
	two := fit.WaldLinear(&rc, &fit.Hypothesis{R: all[1:3], C: []float64{0, 0}})
	three := fit.WaldLinear(&rc, &fit.Hypothesis{R: all[1:4], C: []float64{0, 0, 0}})
	if !two.OK || three.OK || !strings.Contains(three.Reason, "3 restrictions need at least 4 clusters") {
		t.Errorf("%s: Wald tests of 2 restrictions %+v, of 3 %+v", label, two, three)
	}
	a.clusterWald(label+" clustered by education (3 clusters)", r, V, info, 2, vals, prefix+".clustered3")
}

// jackknife checks the delete-one-cluster jackknife covariance of fit r
// (each refit from r's estimates) against R's: glm refitted without each
// cluster and the same formula by hand (jackknife in common.R, under
// prefix); then, on that covariance, each estimate's two-sided p-value on
// t(G-1) against R's pt, and the Wald test of the first two slopes = 0
// (parameters 2 and 3), W and the p-value of W/2 on F(2, G-1), against
// R's pf.
func (a *agreement) jackknife(label string, d *fit.Data, r *fit.Result, clusters []string, sampling bool, vals rscript.Values, prefix string) {
	t := a.t
	t.Helper()
	V, info, err := fit.ClusterJackknife(d, r, clusters, fit.Options{Sampling: sampling})
	if err != nil {
		t.Fatalf("%s: %v", label, err)
	}
	a.cov(label+" jackknife (glm refits)", r.ParamNames, V, vals.Get(t, prefix))
	if info.Correction != fit.Jackknife {
		t.Errorf("%s: correction %s", label, info.Correction)
	}
	a.clusterWald(label+" jackknife", r, V, info, 2, vals, prefix)
}

// clusterWald checks the references of a cluster-robust covariance V
// (the clustered sandwich or the jackknife, info from its estimator) of
// fit r against R's (printclusterwald in common.R, under prefix): each
// estimate's two-sided p-value on t(G-1) against R's pt, and the Wald test
// that the q slopes after the intercept are 0 (parameters 2 to q+1), its
// statistic W and the p-value of W (G-q)/((G-1) q) on F(q, G-q) against
// R's pf.
func (a *agreement) clusterWald(label string, r *fit.Result, V []float64, info fit.SandwichInfo, q int, vals rscript.Values, prefix string) {
	t := a.t
	t.Helper()
	if info.DF != float64(info.Clusters-1) {
		t.Errorf("%s: %d clusters, reference df %g", label, info.Clusters, info.DF)
	}
	rc := *r
	rc.UseCovariance(V, info)
	for i, want := range vals.Get(t, prefix+"_p") {
		a.stat(fmt.Sprintf("%s %s: p-value on t(%g) (R's pt)", label, r.ParamNames[i], info.DF), rc.ParamInference(i, 0.95).P, want)
	}
	P := len(r.Estimates)
	rows := make([][]float64, q)
	for i := range rows {
		rows[i] = make([]float64, P)
		rows[i][i+1] = 1
	}
	w := fit.WaldLinear(&rc, &fit.Hypothesis{R: rows, C: make([]float64, q)})
	want := vals.Get(t, prefix+"_wald")
	G := info.DF + 1
	if !w.OK || !w.FRef || w.DF != q || w.DF2 != G-float64(q) {
		t.Fatalf("%s: Wald test %+v", label, w)
	}
	a.stat(label+" Wald statistic", w.Chi2, want[0])
	a.stat(fmt.Sprintf("%s Wald p-value of W (G-q)/((G-1) q) on F(%d, %g) (R's pf)", label, q, w.DF2), w.P, want[1])
}

// testRFarFromZero: a predictor near 1e6 with a spread of about 1 (the
// fit centres it, centre.go), for every comparison and link, against the
// binary glm (farzero.R: on the column less 1e6, mapped back by the exact
// identity of the linear predictor; for the logit also on the column as it
// is): log-likelihood, estimates in the data's units, observed- and
// expected-information errors. Without centring the fit reported no finite
// maximum there. The fit summed over three parts of the rows (as queue
// workers sum it, centred by the whole data's shift) against the same
// values.
func testRFarFromZero(t *testing.T) {
	a := newAgreement(t)
	defer a.report()
	dir := workDir(t)
	names, cols := simFarFromZero()
	rscript.WriteCSV(t, filepath.Join(dir, "far.csv"), names, cols)
	vals := rscript.Run(t, dir, rfile("common.R"), rfile("farzero.R"))
	far := rscript.ReadCSV(t, filepath.Join(dir, "far.csv"))
	d := dataFrom(t, far, "y", 1, 2, []string{"x1", "x2"}, "")
	for _, l := range rLinks {
		prefix := "far." + l.name
		theta := vals.Get(t, prefix+".theta")
		seObs := vals.Get(t, prefix+".se_obs")
		for _, c := range comparisons {
			label := fmt.Sprintf("far %s %s (glm, binomial(%s))", c.name, l.name, l.name)
			m := parallelModel(c.cmp, c.backward, l.link, len(d.Predictors), fit.Parallel)
			r := mustFit(t, label, d, m, fit.Options{})
			a.logLik(label, r.LogLik, vals.Scalar(t, prefix+".ll"))
			a.est(label, r.ParamNames, r.Estimates, theta, seObs, tolEst)
			a.errors(label+" observed-information errors", r.ParamNames, r.StdErrors, seObs, tolEst)
			re := mustFit(t, label, d, m, fit.Options{Covariance: fit.Expected})
			a.errors(label+" expected-information errors (glm's)", r.ParamNames, re.StdErrors, vals.Get(t, prefix+".se_glm"), tolEst)
			p := overParts(t, label+" over 3 parts", d, m, 3)
			a.logLik(label+" over 3 parts", p.LogLik, vals.Scalar(t, prefix+".ll"))
			a.est(label+" over 3 parts", p.ParamNames, p.Estimates, theta, seObs, tolEst)
			a.errors(label+" over 3 parts, observed-information errors", p.ParamNames, p.StdErrors, seObs, tolEst)
			if l.link == fit.Logit {
				label += " on x1 as it is"
				a.logLik(label, r.LogLik, vals.Scalar(t, "far.raw_logit.ll"))
				a.est(label, r.ParamNames, r.Estimates, vals.Get(t, "far.raw_logit.theta"), seObs, tolEst)
				a.errors(label+" errors (glm's)", r.ParamNames, r.StdErrors, vals.Get(t, "far.raw_logit.se_glm"), tolEst)
			}
		}
	}
}

// overParts fits m on d summed over nparts parts of its rows, as queue
// workers sum it: the whole data's spread, its shift (Spread.Shift), each
// part centred by it (Data.Centred) and FitFromSums.
func overParts(t *testing.T, label string, d *fit.Data, m fit.Model, nparts int) *fit.Result {
	t.Helper()
	K, n := len(d.Predictors), d.N()
	w := fit.Whole{J: d.J, Predictors: d.Predictors, Categories: d.Categories, Counts: make([]float64, d.J), Rows: n, Spread: &fit.Spread{}}
	var parts []*fit.Data
	for p := 0; p < nparts; p++ {
		lo, hi := p*n/nparts, (p+1)*n/nparts
		part := &fit.Data{J: d.J, Predictors: d.Predictors, Categories: d.Categories, Y: d.Y[lo:hi], X: d.X[lo*K : hi*K]}
		w.Spread.Merge(fit.SpreadOf(part))
		parts = append(parts, part)
	}
	for _, y := range d.Y {
		w.Counts[y]++
	}
	w.Shift = w.Spread.Shift()
	for i, p := range parts {
		c, err := p.Centred(w.Shift)
		if err != nil {
			t.Fatal(err)
		}
		parts[i] = c
	}
	r, err := fit.FitFromSums(w, m, func(theta []float64, order int) (*fit.Sums, error) {
		total := &fit.Sums{}
		for _, p := range parts {
			s, err := fit.PartitionSums(p, m, theta, order)
			if err != nil {
				return nil, err
			}
			total.Add(s)
		}
		return total, nil
	}, nil, fit.Options{})
	if err != nil {
		t.Fatalf("%s: %v", label, err)
	}
	if !r.OK() {
		t.Fatalf("%s: %s: %s", label, r.Status, r.Message)
	}
	return r
}

// simFarFromZero is seeded data of our own: 400 rows, x1 = 1e6 + N(0,1)
// (three decimals), x2 ~ Bernoulli(0.4), y = 2 when
// (x1 - 1e6) - 0.5 x2 + logistic noise > 0.3.
func simFarFromZero() (names []string, cols [][]float64) {
	rng := rand.New(rand.NewPCG(20261203, 3))
	const n = 400
	cols = make([][]float64, 3)
	for i := 0; i < n; i++ {
		z := round(rng.NormFloat64(), 3)
		x2 := 0.0
		if rng.Float64() < 0.4 {
			x2 = 1
		}
		p := rng.Float64()
		y := 1.0
		if z-0.5*x2+math.Log(p/(1-p)) > 0.3 {
			y = 2
		}
		for j, v := range []float64{y, 1e6 + z, x2} {
			cols[j] = append(cols[j], v)
		}
	}
	return []string{"y", "x1", "x2"}, cols
}

// testRFrequencyWeights: frequency weights equal duplicated rows, in R
// (glm with prior weights against glm on the rows repeated) and here (a
// weighted fit and a fit of the repeated rows, both against R's weighted
// glm), for every link: log-likelihood, estimates, both kinds of errors and
// the sandwiches (frequency weights: B = sum w_i s_i s_i', N = sum of
// weights; clusters: the cells).
//
// Data: R's esoph (datasets package, ?esoph: Breslow & Day 1980), one row
// per cell and case status weighted by the number of subjects; outcome case
// status, predictors the scores of agegp, alcgp and tobgp.
func testRFrequencyWeights(t *testing.T) {
	a := newAgreement(t)
	defer a.report()
	dir := workDir(t)
	vals := rscript.Run(t, dir, rfile("common.R"), rfile("weights.R"))
	tab := rscript.ReadCSV(t, filepath.Join(dir, "esoph.csv"))
	preds := []string{"agegp", "alcgp", "tobgp"}
	dw := dataFrom(t, tab, "case", 0, 2, preds, "w")
	cells := ids(tab.Col(t, "cell"))
	dx, from := expand(dw)
	cellsX := make([]string, len(from))
	for i, j := range from {
		cellsX[i] = cells[j]
	}
	for _, l := range rLinks {
		w, x := "esoph.w."+l.name, "esoph.x."+l.name
		m := parallelModel(fit.Cumulative, false, l.link, len(preds), fit.Parallel)
		label := fmt.Sprintf("esoph %s (glm, binomial(%s))", l.name, l.name)
		rw := mustFit(t, label+" weighted", dw, m, fit.Options{})
		seObs := vals.Get(t, w+".se_obs")

		// In R: the weighted glm equals the glm of the repeated rows.
		a.logLik(label+" R repeated vs weighted", vals.Scalar(t, x+".ll_glm"), vals.Scalar(t, w+".ll_glm"))
		a.est(label+" R repeated vs weighted", rw.ParamNames, vals.Get(t, x+".theta"), vals.Get(t, w+".theta"), seObs, tolEst)
		a.errors(label+" R repeated vs weighted", rw.ParamNames, vals.Get(t, x+".se_obs"), seObs, tolEst)
		for _, kind := range []string{"sandwich", "sandwich_plain", "clustered", "clustered_plain"} {
			a.cov(label+" R repeated vs weighted "+kind, rw.ParamNames, vals.Get(t, x+"."+kind), vals.Get(t, w+"."+kind))
		}

		// Here: the weighted fit and the fit of the repeated rows, against
		// R's weighted glm.
		for _, c := range []struct {
			name     string
			d        *fit.Data
			clusters []string
		}{{"weighted", dw, cells}, {"repeated rows", dx, cellsX}} {
			lab := label + " " + c.name
			r := mustFit(t, lab, c.d, m, fit.Options{})
			a.logLik(lab, r.LogLik, vals.Scalar(t, w+".ll_glm"))
			a.est(lab, r.ParamNames, r.Estimates, vals.Get(t, w+".theta"), seObs, tolEst)
			a.errors(lab+" observed-information errors", r.ParamNames, r.StdErrors, seObs, tolEst)
			re := mustFit(t, lab, c.d, m, fit.Options{Covariance: fit.Expected})
			a.errors(lab+" expected-information errors (glm's)", r.ParamNames, re.StdErrors, vals.Get(t, w+".se_glm"), tolEst)
			if r.NObs != float64(len(dx.Y)) {
				t.Errorf("%s: %g observations, want %d", lab, r.NObs, len(dx.Y))
			}
			a.sandwiches(lab, c.d, r, c.clusters, false, vals, w)
		}
	}
}

// testRStage: the forward and backward stage models equal binary glms on
// the expanded data (stage.R): nonparallel, one glm per stage (the
// log-likelihood is the sum of the stages'); parallel, one glm of all
// stages' rows with a threshold per stage. Checked for every link:
// log-likelihood, estimates, and observed-information errors against the
// observed information of the stage glms computed by hand in R (for the
// logit, glm's own errors, which are then the same). The program's
// expected information takes the expectation over the whole outcome, the
// stages a row would reach included, so it is not the stage glms' and is
// not compared.
//
// Data: R's esoph (datasets package, ?esoph: Breslow & Day 1980) with the
// alcohol group as the outcome (4 categories), predictors the agegp and
// tobgp scores and case status, frequency weights the number of subjects;
// and seeded simulated data with four categories (simFourCategories).
func testRStage(t *testing.T) {
	a := newAgreement(t)
	defer a.report()
	vals, sets := fourCategorySets(t, "stage.R")
	for _, s := range sets {
		for _, l := range rLinks {
			for _, dir := range []string{"forward", "backward"} {
				for _, eff := range []fit.Effect{fit.Parallel, fit.Nonparallel} {
					prefix := fmt.Sprintf("%s.%s.%s.%s", s.name, dir, eff, l.name)
					label := fmt.Sprintf("%s stage %s %s %s (glm, binomial(%s), expanded data)", s.name, dir, eff, l.name, l.name)
					m := parallelModel(fit.Stage, dir == "backward", l.link, len(s.d.Predictors), eff)
					r := mustFit(t, label, s.d, m, fit.Options{})
					seObs := vals.Get(t, prefix+".se_obs")
					a.logLik(label, r.LogLik, vals.Scalar(t, prefix+".ll"))
					a.logLik(label+" logLik.glm", r.LogLik, vals.Scalar(t, prefix+".ll_glm"))
					a.est(label, r.ParamNames, r.Estimates, vals.Get(t, prefix+".theta"), seObs, tolEst)
					a.errors(label+" observed-information errors", r.ParamNames, r.StdErrors, seObs, tolEst)
					if l.link == fit.Logit {
						a.errors(label+" errors (glm's)", r.ParamNames, r.StdErrors, vals.Get(t, prefix+".se_glm"), tolEst)
					}
				}
			}
		}
	}
}

// namedData is a data set of a cross-check with its name in the script's
// output.
type namedData struct {
	name string
	d    *fit.Data
}

// fourCategorySets runs common.R and script on the four-category data
// sets, which it returns: R's esoph with the alcohol group as the outcome
// (predictors the agegp and tobgp scores and case status, weighted by the
// number of subjects), written by the script, and simFourCategories.
func fourCategorySets(t *testing.T, script string) (rscript.Values, []namedData) {
	t.Helper()
	dir := workDir(t)
	names, cols := simFourCategories()
	rscript.WriteCSV(t, filepath.Join(dir, "sim4.csv"), names, cols)
	vals := rscript.Run(t, dir, rfile("common.R"), rfile(script))
	es := rscript.ReadCSV(t, filepath.Join(dir, "esoph.csv"))
	sim := rscript.ReadCSV(t, filepath.Join(dir, "sim4.csv"))
	return vals, []namedData{
		{"esoph", dataFrom(t, es, "alcgp", 1, 4, []string{"agegp", "tobgp", "case"}, "w")},
		{"sim4", dataFrom(t, sim, "y", 1, 4, []string{"x1", "x2", "x3"}, "")},
	}
}

// testRMultinomial: the adjacent-category logit with every effect
// nonparallel is the multinomial logit reparameterized: same
// log-likelihood, and its baseline-category form (Result.Baseline) equals
// nnet::multinom's coefficients and standard errors, against the first and
// against the last category. multinom's BFGS optimizer is run to its
// rounding limit (multinom.R); its estimates and errors are compared within
// tolMultinom (1e-5 relative), the log-likelihood within 1e-8.
//
// Data: R's esoph (datasets package, ?esoph: Breslow & Day 1980) with the
// alcohol group as the outcome, as in testRStage; and simFourCategories.
func testRMultinomial(t *testing.T) {
	rscript.RequirePackages(t, "nnet")
	a := newAgreement(t)
	defer a.report()
	vals, sets := fourCategorySets(t, "multinom.R")
	for _, s := range sets {
		m := parallelModel(fit.Adjacent, false, fit.Logit, len(s.d.Predictors), fit.Nonparallel)
		label := s.name + " adjacent nonparallel logit (nnet::multinom)"
		r := mustFit(t, label, s.d, m, fit.Options{})
		for _, ref := range []struct {
			name string
			cat  int
		}{{"first", 0}, {"last", s.d.J - 1}} {
			prefix := s.name + "." + ref.name
			lab := label + " against the " + ref.name + " category"
			if c := vals.Scalar(t, prefix+".convergence"); c != 0 {
				t.Fatalf("%s: multinom stopped at its iteration limit (convergence %g)", lab, c)
			}
			a.logLik(lab, r.LogLik, vals.Scalar(t, prefix+".ll"))
			b, err := r.Baseline(ref.cat)
			if err != nil {
				t.Fatal(err)
			}
			se := vals.Get(t, prefix+".se")
			a.est(lab, b.Names, b.Estimates, vals.Get(t, prefix+".est"), se, tolMultinom)
			a.errors(lab+" errors", b.Names, b.StdErrors, se, tolMultinom)
		}
	}
}

// testRPatternSplit: the Pulkstenis-Robinson statistics of a two-category
// outcome, where they are grouped Pearson and deviance statistics of a
// binary glm in the manner of the Hosmer-Lemeshow statistic, from glm's
// fitted values (testdata/rcheck/patterns.R) against
// fit.PulkstenisRobinsonTest on the same seeded data (simPatterns).
func testRPatternSplit(t *testing.T) {
	a := newAgreement(t)
	defer a.report()
	dir := workDir(t)
	names, cols := simPatterns()
	rscript.WriteCSV(t, filepath.Join(dir, "sim_pr.csv"), names, cols)
	vals := rscript.Run(t, dir, rfile("common.R"), rfile("patterns.R"))
	n := len(cols[0])
	d := &fit.Data{J: 2, Predictors: []string{"a.2", "a.3", "b.2", "x"}}
	pattern := make([]int, n)
	for i := 0; i < n; i++ {
		av, bv := cols[1][i], cols[2][i]
		d.Y = append(d.Y, int(cols[0][i])-1)
		d.X = append(d.X, b2f(av == 2), b2f(av == 3), b2f(bv == 2), cols[3][i])
		pattern[i] = int(av-1)*2 + int(bv-1)
	}
	labels := []string{"a=1,b=1", "a=1,b=2", "a=2,b=1", "a=2,b=2", "a=3,b=1", "a=3,b=2"}
	r, err := fit.Fit(d, fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: make([]fit.Effect, 4)}, fit.Options{})
	if err != nil || !r.OK() {
		t.Fatal(err)
	}
	a.logLik("glm", r.LogLik, vals.Scalar(t, "pr_loglik"))
	ps, err := fit.PulkstenisRobinsonTest(d, r, pattern, labels, []string{"a.2", "a.3", "b.2"})
	if err != nil {
		t.Fatal(err)
	}
	if float64(ps.Groups) != vals.Scalar(t, "pr_groups") || ps.Groups != 12 {
		t.Errorf("groups %d, R %g", ps.Groups, vals.Scalar(t, "pr_groups"))
	}
	a.stat("Pearson statistic", ps.Pearson.Chi2, vals.Scalar(t, "pr_pearson"))
	a.stat("deviance statistic", ps.Deviance.Chi2, vals.Scalar(t, "pr_deviance"))
	// (2I - 1)(J - 1) - k - 1 with I = 6, J = 2, k = 3.
	if ps.Pearson.DF != 7 {
		t.Errorf("df %d, want 7", ps.Pearson.DF)
	}
	t.Logf("Pearson %.6f, deviance %.6f on %d df", ps.Pearson.Chi2, ps.Deviance.Chi2, ps.Pearson.DF)
}

func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// simPatterns is seeded data of our own: 500 rows, a uniform on {1,2,3},
// b on {1,2}, x ~ N(0,1); category 2 when 0.4 (a = 2) - 0.6 (a = 3) +
// 0.5 (b = 2) + 0.9 x + e > 0.2, e standard logistic.
func simPatterns() (names []string, cols [][]float64) {
	rng := rand.New(rand.NewPCG(20261202, 18))
	cols = make([][]float64, 4)
	for i := 0; i < 500; i++ {
		av, bv, x := float64(1+rng.IntN(3)), float64(1+rng.IntN(2)), rng.NormFloat64()
		p := rng.Float64()
		eta := 0.4*b2f(av == 2) - 0.6*b2f(av == 3) + 0.5*b2f(bv == 2) + 0.9*x + math.Log(p/(1-p))
		y := 1.0
		if eta > 0.2 {
			y = 2
		}
		for j, v := range []float64{y, av, bv, x} {
			cols[j] = append(cols[j], v)
		}
	}
	return []string{"y", "a", "b", "x"}, cols
}
