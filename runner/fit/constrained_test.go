package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// TestReferenceConstrained reproduces every constrained record (partial
// constrained cells of the three comparisons and the stereotype model):
// log-likelihood, effects, phi, every estimate and its observed-information
// standard error. Sources: see refSources.
func TestReferenceConstrained(t *testing.T) {
	for _, rec := range refRecords(t, true) {
		name, rs, rm := rec.name, rec.rs, rec.rm
		// Also with the subsample stage at any size: the partial and
		// parallel fits the starts are built from take it.
		for _, opt := range []Options{{}, {SubsampleAbove: 1}} {
			t.Run(fmt.Sprintf("%s/%s/subsample-above-%d", name, rm.ID, opt.SubsampleAbove), func(t *testing.T) {
				t.Logf("data: %s", refSources[name])
				m := rm.modelOf(t)
				res, err := Fit(rs.data(rm.Predictors), m, opt)
				if err != nil {
					t.Fatal(err)
				}
				if !res.OK() {
					t.Fatalf("status %s: %s", res.Status, res.Message)
				}
				if math.Abs(res.LogLik-*rm.LogLik) > tolLL {
					t.Errorf("loglik %.10f, reference %.10f", res.LogLik, *rm.LogLik)
				}
				if res.NParams != rm.NParams {
					t.Errorf("n_params %d want %d", res.NParams, rm.NParams)
				}
				for k, p := range rm.Predictors {
					for j, want := range rm.Effects[p] {
						if !near(res.Effects[j][k], want, 1e-5, 1e-7) {
							t.Errorf("effect %s eq %d = %.8g, want %.8g", p, j+1, res.Effects[j][k], want)
						}
					}
				}
				for j, want := range rm.Phi {
					if len(res.Phi) != 1 || !near(res.Phi[0][j], want, 1e-5, 1e-7) {
						t.Errorf("phi %v, want %v", res.Phi, rm.Phi)
						break
					}
				}
				for i, n := range res.ParamNames {
					want, ok := rm.Estimates[n]
					if !ok {
						t.Errorf("parameter %s not in the reference (%s)", n, keys(rm.Estimates))
						continue
					}
					if !near(res.Estimates[i], want, 1e-5, 1e-7) {
						t.Errorf("%s = %.10g, want %.10g", n, res.Estimates[i], want)
					}
					if se := rm.SEOIM[n]; !near(res.StdErrors[i], se, 1e-5, 1e-7) {
						t.Errorf("se_oim(%s) = %.10g, want %.10g", n, res.StdErrors[i], se)
					}
				}
				checkStarts(t, res)
			})
		}
	}
}

// checkStarts checks the bookkeeping of the multi-start search.
func checkStarts(t *testing.T, res *Result) {
	t.Helper()
	if len(res.Starts) < 2 {
		t.Fatalf("only %d starts", len(res.Starts))
	}
	n := 0
	for _, s := range res.Starts {
		reached := !math.IsNaN(s.LogLik) && math.Abs(s.LogLik-res.LogLik) <= 1e-6
		if s.ReachedBest != reached {
			t.Errorf("start %q: ReachedBest %v with loglik %.10f (best %.10f)", s.Label, s.ReachedBest, s.LogLik, res.LogLik)
		}
		if s.ReachedBest {
			n++
		}
		if s.LogLik > res.LogLik+1e-6 {
			t.Errorf("start %q reached %.10f, above the reported maximum %.10f", s.Label, s.LogLik, res.LogLik)
		}
	}
	if n != res.StartsAgreeing || n == 0 {
		t.Errorf("StartsAgreeing %d, counted %d", res.StartsAgreeing, n)
	}
}

// gssConstrained is the gsswarm cumulative logit with yr89 and male
// constrained (General Social Survey 1977/1989 extract, Long (1997)); its
// reference log-likelihood is -2842.68817689924.
func gssConstrained(t *testing.T) (*Data, Model) {
	return gssData(t), Model{Comparison: Cumulative, Link: Logit,
		Effects: []Effect{Constrained, Constrained, Parallel, Parallel, Parallel, Parallel}}
}

const gssConstrainedLL = -2842.68817689924

// TestPoorStartStillReachesOptimum starts the constrained fit from phi =
// (1, -3, 5) and small slopes of the wrong sign. The user's start is one of
// the starts; the search still ends at the reference optimum (data:
// General Social Survey 1977/1989 extract, Long (1997)).
func TestPoorStartStillReachesOptimum(t *testing.T) {
	d, m := gssConstrained(t)
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		t.Fatal(err)
	}
	start := make([]float64, len(ly.params))
	for i, p := range ly.params {
		switch p.kind {
		case pCut:
			start[i] = []float64{-1.5, 0, 1.5}[p.m]
		case pGamma:
			start[i] = map[string]float64{"yr89": -0.05, "male": 0.05}[d.Predictors[p.k]]
		case pPhi:
			start[i] = []float64{0, -3, 5}[p.m]
		}
	}
	for _, screenRows := range []int{0, -1} {
		res, err := Fit(d, m, Options{Start: start, ScreenAbove: screenRows})
		if err != nil {
			t.Fatal(err)
		}
		if !res.OK() {
			t.Fatalf("status %s: %s", res.Status, res.Message)
		}
		if math.Abs(res.LogLik-gssConstrainedLL) > tolLL {
			t.Errorf("screen rows %d: loglik %.10f, reference %.10f", screenRows, res.LogLik, gssConstrainedLL)
		}
		if res.Starts[0].Label != "user" || len(res.Starts) != 8 {
			t.Errorf("starts: %+v", res.Starts)
		}
		for _, s := range res.Starts {
			t.Logf("screen rows %d: %-36s ll %.8f reached %v %s it %d screened %v shared %q", screenRows, s.Label, s.LogLik, s.ReachedBest, s.Status, s.Iterations, s.Screened, s.SharedWith)
		}
		if screenRows < 0 && !res.Starts[len(res.Starts)-1].Screened {
			t.Errorf("random starts should be screened")
		}
		checkStarts(t, res)
	}
}

// TestRandomStartsOption: negative means none, a positive number that many.
func TestRandomStartsOption(t *testing.T) {
	d, m := gssConstrained(t)
	for _, c := range []struct{ opt, random int }{{-1, 0}, {2, 2}} {
		res, err := Fit(d, m, Options{RandomStarts: c.opt})
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		for _, s := range res.Starts {
			if strings.HasPrefix(s.Label, "random") {
				n++
			}
		}
		if n != c.random || len(res.Starts) != c.random+2 {
			t.Errorf("RandomStarts %d: %d random of %d starts", c.opt, n, len(res.Starts))
		}
		if math.Abs(res.LogLik-gssConstrainedLL) > tolLL {
			t.Errorf("loglik %.10f", res.LogLik)
		}
	}
}

// TestMultiStartDeterministic: the same call gives the same starts and
// numbers, bit for bit.
func TestMultiStartDeterministic(t *testing.T) {
	rs := loadRef(t, "pneumo") // Ashford (1959); McCullagh & Nelder (1989)
	d := rs.data([]string{"let"})
	m := Model{Comparison: Adjacent, Link: Logit, Effects: []Effect{Constrained}}
	a, err := Fit(d, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Fit(d, m, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if len(a.Starts) != len(b.Starts) {
		t.Fatalf("%d vs %d starts", len(a.Starts), len(b.Starts))
	}
	for i := range a.Starts {
		x, y := a.Starts[i], b.Starts[i]
		if x.Label != y.Label || x.Iterations != y.Iterations || !(x.LogLik == y.LogLik || math.IsNaN(x.LogLik) && math.IsNaN(y.LogLik)) {
			t.Errorf("start %d: %+v vs %+v", i, x, y)
		}
	}
	for i := range a.Estimates {
		if a.Estimates[i] != b.Estimates[i] {
			t.Errorf("%s: %v vs %v", a.ParamNames[i], a.Estimates[i], b.Estimates[i])
		}
	}
}

// TestScreenedStartsAgreeWithFullStarts: on a large simulated data set the
// starts screened on the quadratic approximation give the same maximum as
// running every start on the data.
func TestScreenedStartsAgreeWithFullStarts(t *testing.T) {
	d := benchData(3000)
	m, _ := benchModels()
	var res [2]*Result
	for i, rows := range []int{-1, 1 << 30} {
		r, err := Fit(d, m, Options{ScreenAbove: rows})
		if err != nil {
			t.Fatal(err)
		}
		if !r.OK() {
			t.Fatalf("%s: %s", r.Status, r.Message)
		}
		checkStarts(t, r)
		res[i] = r
	}
	sameFit(t, res[0], res[1], 1e-6)
	screened := 0
	for _, s := range res[0].Starts {
		if s.Screened {
			screened++
		}
	}
	if screened != len(res[0].Starts) {
		t.Errorf("%d of %d starts screened", screened, len(res[0].Starts))
	}
}

// nullEffectData simulates a cumulative logit outcome (J = 4) from two
// predictors w1, w2 and then adds z = +1 and z = -1 copies of every row, so
// that z has exactly no effect in the sample. Fixed seed.
func nullEffectData(n int) *Data {
	rng := rand.New(rand.NewPCG(31, 7))
	d := &Data{J: 4, Predictors: []string{"z", "w1", "w2"}}
	tau := []float64{-1, 0.2, 1.3}
	for i := 0; i < n; i++ {
		w1, w2 := rng.NormFloat64(), float64(rng.IntN(2))
		u := rng.Float64()
		c := 0
		for c < 3 && u > Logit.CDF(tau[c]-0.8*w1+0.5*w2) {
			c++
		}
		for _, z := range []float64{1, -1} {
			d.Y = append(d.Y, c)
			d.X = append(d.X, z, w1, w2)
		}
	}
	return d
}

// TestPhiNotIdentifiedWhenGammaIsZero: a constrained predictor with no
// effect at all leaves phi undetermined. The fit says so, keeps the (finite)
// log-likelihood, reports phi as NaN, and gives the other parameters the
// standard errors of the model without that predictor.
func TestPhiNotIdentifiedWhenGammaIsZero(t *testing.T) {
	d := nullEffectData(400)
	m := Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{Constrained, Parallel, Parallel}}
	res, err := Fit(d, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%s: %s", res.Status, res.Message)
	if res.Status != StatusNotIdentified {
		t.Fatalf("status %s, want %s", res.Status, StatusNotIdentified)
	}
	if !strings.Contains(res.Message, "not identified") || !strings.Contains(res.Message, "gamma is near zero") {
		t.Errorf("message: %s", res.Message)
	}
	// Without z: the same log-likelihood and the same other estimates.
	dw := &Data{J: d.J, Y: d.Y, Predictors: []string{"w1", "w2"}}
	for i := range d.Y {
		dw.X = append(dw.X, d.X[3*i+1], d.X[3*i+2])
	}
	ref := fitOK(t, dw, Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{Parallel, Parallel}})
	if math.Abs(res.LogLik-ref.LogLik) > 1e-8 {
		t.Errorf("loglik %.10f, model without z %.10f", res.LogLik, ref.LogLik)
	}
	for i, n := range res.ParamNames {
		v, se := res.Estimates[i], res.StdErrors[i]
		switch {
		case strings.HasPrefix(n, "phi"):
			if !math.IsNaN(v) || !math.IsNaN(se) {
				t.Errorf("%s = %v (se %v), want NaN", n, v, se)
			}
		case n == "z":
			if math.Abs(v) > 1e-8 || !math.IsNaN(se) {
				t.Errorf("gamma z = %v (se %v), want 0 (NaN)", v, se)
			}
		default:
			w, _ := ref.Estimate(n)
			j := nameIndex(ref.ParamNames, n)
			if !near(v, w, 1e-6, 1e-8) || !near(se, ref.StdErrors[j], 1e-6, 1e-8) {
				t.Errorf("%s = %v (se %v), model without z %v (%v)", n, v, se, w, ref.StdErrors[j])
			}
		}
	}
	for j := 1; j < d.J-1; j++ {
		if !math.IsNaN(res.Phi[0][j]) {
			t.Errorf("Phi %v should be NaN", res.Phi[0])
		}
	}
}

// nameIndex is the position of x in xs (-1 if absent).
func nameIndex(xs []string, x string) int {
	for i, v := range xs {
		if v == x {
			return i
		}
	}
	return -1
}

// TestPhiWhenEquationOneSlopesVanish: weighted tables where the first
// equation's effect of x is exactly zero in the sample and the second is
// not, so phi_2 = b_2 / b_1 is unbounded. With one constrained predictor
// the model is the unconstrained partial one reparameterized: the fit must
// reach its log-likelihood, say that phi is not identified in the
// normalization phi_1 = 1, and give phi normalized by equation 2 with the
// partial fit's numbers.
func TestPhiWhenEquationOneSlopesVanish(t *testing.T) {
	for _, c := range []struct {
		cmp Comparison
		w   []float64
	}{
		// cumulative: P(y <= 1) = .2 at x = 0 and at x = 1
		{Cumulative, []float64{20, 40, 40, 20, 20, 60}},
		// adjacent: P(y = 1 | y <= 2) = 1/3 at x = 0 and at x = 1
		{Adjacent, []float64{20, 40, 40, 10, 20, 70}},
	} {
		d := &Data{J: 3, Predictors: []string{"x"}, Y: []int{0, 1, 2, 0, 1, 2}, X: []float64{0, 0, 0, 1, 1, 1}, Weights: c.w}
		res, err := Fit(d, Model{Comparison: c.cmp, Link: Logit, Effects: []Effect{Constrained}}, Options{})
		if err != nil {
			t.Fatal(err)
		}
		part := fitOK(t, d, Model{Comparison: c.cmp, Link: Logit, Effects: []Effect{Nonparallel}})
		t.Logf("%s: %s: %s", c.cmp, res.Status, res.Message)
		if res.Status != StatusNotIdentified {
			t.Fatalf("status %s", res.Status)
		}
		if math.Abs(res.LogLik-part.LogLik) > 1e-9 {
			t.Errorf("loglik %.12f, partial %.12f", res.LogLik, part.LogLik)
		}
		for j := 0; j < 2; j++ {
			if !near(res.Effects[j][0], part.Effects[j][0], 1e-7, 1e-9) {
				t.Errorf("effect eq %d %v, partial %v", j+1, res.Effects[j][0], part.Effects[j][0])
			}
		}
		if len(res.PhiOther) != 1 || res.PhiOther[0].Ref != 2 {
			t.Fatalf("PhiOther %+v", res.PhiOther)
		}
		o := res.PhiOther[0]
		b1, _ := part.Estimate("x[1]")
		b2, _ := part.Estimate("x[2]")
		se1 := part.StdErrors[nameIndex(part.ParamNames, "x[1]")]
		se2 := part.StdErrors[nameIndex(part.ParamNames, "x[2]")]
		// phi_1 = b_1 / b_2 (delta method at b_1 = 0: se(b_1) / |b_2|),
		// gamma = b_2.
		if math.Abs(o.Phi[0]-b1/b2) > 1e-8 || !near(o.PhiSE[0], se1/math.Abs(b2), 1e-6, 1e-9) || o.Phi[1] != 1 {
			t.Errorf("phi %v (se %v), want %v (%v)", o.Phi, o.PhiSE, b1/b2, se1/math.Abs(b2))
		}
		if !near(o.Gamma[0], b2, 1e-7, 1e-9) || !near(o.GammaSE[0], se2, 1e-6, 1e-9) {
			t.Errorf("gamma %v (se %v), want %v (%v)", o.Gamma, o.GammaSE, b2, se2)
		}
		if !math.IsNaN(res.Phi[0][1]) {
			t.Errorf("phi in the normalization phi_1 = 1 should be NaN: %v", res.Phi)
		}
		// The message gives phi in that normalization itself: it named
		// PhiOther, a field no output shows.
		if want := fmt.Sprintf("normalized by equation 2 instead (phi_2 = 1), phi is (%s, 1)", strconv.FormatFloat(o.Phi[0], 'g', 4, 64)); !strings.Contains(res.Message, want) || strings.Contains(res.Message, "PhiOther") {
			t.Errorf("message %q, want %q", res.Message, want)
		}
		for i, n := range res.ParamNames {
			if strings.HasPrefix(n, "tau[") && !near(res.StdErrors[i], part.StdErrors[i], 1e-6, 1e-9) {
				t.Errorf("se(%s) %v, partial %v", n, res.StdErrors[i], part.StdErrors[i])
			}
		}
	}
}

// TestPhiNormalizedMatchesReversedFit: for the cumulative logit, reversing
// the categories turns equation m into equation J-m with every sign
// flipped, so the reversed fit is the original one normalized by its last
// equation. PhiNormalized (delta method) must give the same numbers and
// standard errors (data: General Social Survey 1977/1989, Long (1997)).
func TestPhiNormalizedMatchesReversedFit(t *testing.T) {
	d, m := gssConstrained(t)
	a := fitOK(t, d, m)
	r := &Data{J: d.J, Predictors: d.Predictors, X: d.X}
	for _, y := range d.Y {
		r.Y = append(r.Y, d.J-1-y)
	}
	b := fitOK(t, r, m)
	q := d.J - 1
	pn, err := a.PhiNormalized(0, q)
	if err != nil {
		t.Fatal(err)
	}
	for m := 0; m < q; m++ {
		want := b.Phi[0][q-1-m]
		if !near(pn.Phi[m], want, 1e-6, 1e-9) {
			t.Errorf("phi %d: %v, reversed fit %v", m+1, pn.Phi[m], want)
		}
		if m == q-1 {
			continue
		}
		wantSE := b.StdErrors[nameIndex(b.ParamNames, fmt.Sprintf("phi[%d]", q-m))]
		if !near(pn.PhiSE[m], wantSE, 1e-5, 1e-9) {
			t.Errorf("se phi %d: %v, reversed fit %v", m+1, pn.PhiSE[m], wantSE)
		}
	}
	for i, p := range pn.Predictors {
		j := nameIndex(b.ParamNames, p)
		if !near(pn.Gamma[i], -b.Estimates[j], 1e-6, 1e-9) || !near(pn.GammaSE[i], b.StdErrors[j], 1e-5, 1e-9) {
			t.Errorf("gamma %s: %v (%v), reversed fit %v (%v)", p, pn.Gamma[i], pn.GammaSE[i], -b.Estimates[j], b.StdErrors[j])
		}
	}
	// Normalizing by equation 1 changes nothing.
	p1, err := a.PhiNormalized(0, 1)
	if err != nil {
		t.Fatal(err)
	}
	for m := 1; m < q; m++ {
		i := nameIndex(a.ParamNames, fmt.Sprintf("phi[%d]", m+1))
		if p1.Phi[m] != a.Estimates[i] || !near(p1.PhiSE[m], a.StdErrors[i], 1e-12, 0) {
			t.Errorf("phi %d: %v (%v) vs %v (%v)", m+1, p1.Phi[m], p1.PhiSE[m], a.Estimates[i], a.StdErrors[i])
		}
	}
}

// TestStereotypeScores: the scores of the stereotype records give back the
// reference phi, gamma and cutpoints through ln[P(j)/P(1)] = alpha_j +
// score_j x'beta, the log-likelihood computed in that form matches the
// reference, and the delta-method standard errors match the observed
// information of that form (numerical second derivatives). Sources:
// General Social Survey 1977/1989, Long (1997); Anderson (1984) JRSS B
// 46:1-30 (back pain).
func TestStereotypeScores(t *testing.T) {
	for _, name := range []string{"gsswarm", "backpain"} {
		rs := loadRef(t, name)
		for _, rm := range rs.models {
			if rm.ID != "adjacent/stereotype/logit" {
				continue
			}
			t.Run(name, func(t *testing.T) {
				t.Logf("data: %s", refSources[name])
				d := rs.data(rm.Predictors)
				res := fitOK(t, d, rm.modelOf(t))
				sc, err := res.StereotypeScores()
				if err != nil {
					t.Fatal(err)
				}
				J, q := d.J, d.J-1
				if sc.Score[0] != 0 || sc.Score[J-1] != 1 || sc.Alpha[0] != 0 {
					t.Errorf("normalization: scores %v alpha %v", sc.Score, sc.Alpha)
				}
				// Back to the adjacent form: phi_m proportional to
				// score_{m+1} - score_m, phi_1 = 1, so S = 1/score_2.
				S := 1 / sc.Score[1]
				for m := 0; m < q; m++ {
					phi := (sc.Score[m+1] - sc.Score[m]) * S
					if !near(phi, rm.Phi[m], 1e-5, 1e-7) {
						t.Errorf("phi %d from scores %.8g, reference %.8g", m+1, phi, rm.Phi[m])
					}
					tau := sc.Alpha[m] - sc.Alpha[m+1]
					if !near(tau, rm.Cutpoints[m], 1e-5, 1e-7) {
						t.Errorf("tau[%d] from alpha %.8g, reference %.8g", m+1, tau, rm.Cutpoints[m])
					}
				}
				for k, p := range sc.Predictors {
					if g := sc.Beta[k] / S; !near(g, rm.Gamma[p], 1e-5, 1e-7) {
						t.Errorf("gamma %s from beta %.8g, reference %.8g", p, g, rm.Gamma[p])
					}
				}
				ll := func(par []float64) float64 { return scoreFormLogLik(d, par) }
				if got := ll(sc.Estimates); math.Abs(got-*rm.LogLik) > tolLL {
					t.Errorf("log-likelihood in score form %.10f, reference %.10f", got, *rm.LogLik)
				}
				// Observed information of the score form by central
				// differences of its log-likelihood.
				n := len(sc.Estimates)
				H := make([]float64, n*n)
				h := make([]float64, n)
				for i := range h {
					h[i] = 1e-4 * math.Max(1, math.Abs(sc.Estimates[i]))
				}
				at := func(i, j int, si, sj float64) float64 {
					p := append([]float64(nil), sc.Estimates...)
					p[i] += si * h[i]
					p[j] += sj * h[j]
					return ll(p)
				}
				for i := 0; i < n; i++ {
					for j := i; j < n; j++ {
						v := (at(i, j, 1, 1) - at(i, j, 1, -1) - at(i, j, -1, 1) + at(i, j, -1, -1)) / (4 * h[i] * h[j])
						H[i*n+j], H[j*n+i] = -v, -v
					}
				}
				cov, err := invertSym(H, n)
				if err != nil {
					t.Fatal(err)
				}
				for i, nm := range sc.Names {
					if se := math.Sqrt(cov[i*n+i]); !near(sc.StdErrors[i], se, 1e-3, 1e-9) {
						t.Errorf("se(%s) delta %.8g, numerical information %.8g", nm, sc.StdErrors[i], se)
					}
				}
			})
		}
	}
}

// scoreFormLogLik is the log-likelihood of ln[P(j)/P(1)] = alpha_j +
// score_j x'beta at par = (alpha_2..J, score_2..J-1, beta), computed
// directly as a baseline-category logit.
func scoreFormLogLik(d *Data, par []float64) float64 {
	J, K := d.J, len(d.Predictors)
	alpha := append([]float64{0}, par[:J-1]...)
	score := append(append([]float64{0}, par[J-1:2*J-3]...), 1)
	beta := par[2*J-3:]
	ll := 0.0
	eta := make([]float64, J)
	for i, y := range d.Y {
		xb := 0.0
		for k := 0; k < K; k++ {
			xb += d.X[i*K+k] * beta[k]
		}
		mx := math.Inf(-1)
		for j := range eta {
			eta[j] = alpha[j] + score[j]*xb
			mx = math.Max(mx, eta[j])
		}
		s := 0.0
		for _, e := range eta {
			s += math.Exp(e - mx)
		}
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
		}
		ll += w * (eta[y] - mx - math.Log(s))
	}
	return ll
}

// TestStereotypeScoresRefusesOtherModels: only the stereotype model has
// category scores.
func TestStereotypeScoresRefusesOtherModels(t *testing.T) {
	d, m := gssConstrained(t)
	res := fitOK(t, d, m)
	if _, err := res.StereotypeScores(); err == nil {
		t.Errorf("scores of %s should be refused", res.Name)
	}
}

// TestTwoConstraintGroups: a group with a single predictor is that
// predictor's nonparallel slopes reparameterized, so a model with groups
// {yr89, male} and {white} must reach the log-likelihood and effects of the
// model with {yr89, male} constrained and white nonparallel (data: General
// Social Survey 1977/1989, Long (1997)).
func TestTwoConstraintGroups(t *testing.T) {
	d := gssData(t)
	two := Model{Comparison: Stage, Link: Logit,
		Effects:    []Effect{Constrained, Constrained, Constrained, Parallel, Parallel, Parallel},
		Groups:     []int{0, 0, 1, 0, 0, 0},
		GroupNames: []string{"a", "b"}}
	one := Model{Comparison: Stage, Link: Logit,
		Effects:    []Effect{Constrained, Constrained, Nonparallel, Parallel, Parallel, Parallel},
		GroupNames: []string{"a"}}
	r2, r1 := fitOK(t, d, two), fitOK(t, d, one)
	if math.Abs(r2.LogLik-r1.LogLik) > 1e-8 {
		t.Errorf("loglik %.10f vs %.10f", r2.LogLik, r1.LogLik)
	}
	for j := range r1.Effects {
		for k := range d.Predictors {
			if !near(r2.Effects[j][k], r1.Effects[j][k], 1e-6, 1e-9) {
				t.Errorf("effect %s eq %d: %v vs %v", d.Predictors[k], j+1, r2.Effects[j][k], r1.Effects[j][k])
			}
		}
	}
	for _, n := range []string{"phi.a[2]", "phi.a[3]", "phi.b[2]", "phi.b[3]"} {
		if _, ok := r2.Estimate(n); !ok {
			t.Errorf("no parameter %s in %v", n, r2.ParamNames)
		}
	}
	for _, n := range []string{"phi.a[2]", "yr89", "male", "tau[1]", "age"} {
		i, j := nameIndex(r2.ParamNames, n), nameIndex(r1.ParamNames, n)
		if !near(r2.Estimates[i], r1.Estimates[j], 1e-6, 1e-9) || !near(r2.StdErrors[i], r1.StdErrors[j], 1e-5, 1e-9) {
			t.Errorf("%s: %v (%v) vs %v (%v)", n, r2.Estimates[i], r2.StdErrors[i], r1.Estimates[j], r1.StdErrors[j])
		}
	}
	checkStarts(t, r2)
}

// A data set (6000 rows, fixed seed) whose constrained stage maximum lies
// beyond b_1 = 0 from the rank-1 start: that start climbs the ridge
// g -> 0, |phi| -> inf, which the normalization phi_1 = 1 cannot cross.
// The search stops it and refits in another normalization, reaching the
// maximum that eight full Newton runs from random starts reach
// (-6834.3688899825).
func TestConstrainedMaximumBeyondTheRidge(t *testing.T) {
	d := synthData(1, 6000, 3, 5, false, false)
	m := Model{Comparison: Stage, Link: Logit, Effects: []Effect{Constrained, Constrained, Parallel}}
	r, err := Fit(d, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if !r.OK() || r.LogLik < -6834.3688899825-1e-6 {
		t.Fatalf("status %s, loglik %.10f: %s", r.Status, r.LogLik, r.Message)
	}
}
