package fit

import (
	"math"
	"testing"
)

// TestPredictorFarFromZero: the published gsswarm data (Long 1997, ch. 5;
// their fits are checked against the published values in
// reference_test.go) with age and ed moved by 1e6, which leaves their
// spread (about 17 and 3) unchanged. The linear predictor's identity
// tau_m - x'b_m = (tau_m + 1e6 (b_m,age + b_m,ed)) - (x + 1e6)'b_m gives the
// fit of the moved data from the fit of the data as published: the same
// log-likelihood and slopes, cutpoints moved by 1e6 (b_age + b_ed) in each
// equation, and the covariance G V G' with G the Jacobian of that map
// (for a constrained predictor b_m = phi_m g). Fitted as they are, the
// moved columns and the constant were so nearly collinear that these fits
// reported no finite maximum (information condition above 1e10).
// Each model is fitted alone, from a start given in the moved data's
// units, and in a grid.
func TestPredictorFarFromZero(t *testing.T) {
	d := gssData(t)
	const c = 1e6
	shift := map[string]bool{"age": true, "ed": true}
	far := *d
	far.X = append([]float64(nil), d.X...)
	K := len(d.Predictors)
	for i := range far.X {
		if shift[d.Predictors[i%K]] {
			far.X[i] += c
		}
	}
	models := append([]Model{
		{Comparison: Stage, Backward: true, Link: Cloglog, Effects: []Effect{Parallel, Parallel, Parallel, Nonparallel, Nonparallel, Parallel}},
		{Comparison: Adjacent, Link: Logit, Effects: allEffects(K, Constrained)}, // stereotype
	}, metaModels...)
	grid := make([]*Result, len(models))
	FitGrid(&far, models, Options{}, 2, func(i int, res *Result, err error) {
		if err != nil {
			t.Error(err)
		}
		grid[i] = res
	})
	for mi, m := range models {
		want := fitOK(t, d, m)
		ly, err := newLayout(m, d.J, d.Predictors)
		if err != nil {
			t.Fatal(err)
		}
		// the published data's fit in the moved data's units
		P := len(ly.params)
		est := append([]float64(nil), want.Estimates...)
		G := make([]float64, P*P)
		for i := 0; i < P; i++ {
			G[i*P+i] = 1
		}
		for j := 0; j < d.J-1; j++ {
			for k, name := range d.Predictors {
				if shift[name] {
					est[ly.cut[j]] += c * want.Effects[j][k]
				}
			}
		}
		for j := 0; j < d.J-1; j++ {
			for p := 0; p < P; p++ {
				if p == ly.cut[j] {
					continue
				}
				// derivative of tau_m by parameter p, by central differences
				// of the exact map (b_m is at most bilinear in the parameters)
				h := 1e-4 * math.Max(1, math.Abs(want.Estimates[p]))
				up := append([]float64(nil), want.Estimates...)
				dn := append([]float64(nil), want.Estimates...)
				up[p] += h
				dn[p] -= h
				Bu, Bd := ly.effects(up, m.Effects), ly.effects(dn, m.Effects)
				for k, name := range d.Predictors {
					if shift[name] {
						G[ly.cut[j]*P+p] += c * (Bu[j*K+k] - Bd[j*K+k]) / (2 * h)
					}
				}
			}
		}
		se := make([]float64, P)
		for i := 0; i < P; i++ {
			v := 0.0
			for a := 0; a < P; a++ {
				for b := 0; b < P; b++ {
					v += G[i*P+a] * want.Cov[a*P+b] * G[i*P+b]
				}
			}
			se[i] = math.Sqrt(v)
		}
		alone, err := Fit(&far, m, Options{Start: est})
		if err != nil {
			t.Fatal(err)
		}
		for _, got := range []*Result{alone, grid[mi]} {
			if !got.OK() {
				t.Fatalf("%s on the moved data: %s: %s", m.Name(), got.Status, got.Message)
			}
			if math.Abs(got.LogLik-want.LogLik) > 1e-9*math.Abs(want.LogLik) {
				t.Errorf("%s: log-likelihood %.12f, want %.12f", m.Name(), got.LogLik, want.LogLik)
			}
			for i, name := range got.ParamNames {
				if math.Abs(got.Estimates[i]-est[i]) > 1e-6*math.Max(se[i], math.Abs(est[i])*1e-3) {
					t.Errorf("%s %s: %.12g, want %.12g", m.Name(), name, got.Estimates[i], est[i])
				}
				if math.Abs(got.StdErrors[i]-se[i]) > 1e-6*se[i] {
					t.Errorf("%s %s: error %.12g, want %.12g", m.Name(), name, got.StdErrors[i], se[i])
				}
			}
		}
	}
}

// TestCentredScoreInDataUnits: restore gives the score of the parameters
// as reported, by the chain rule: g = D' g' with D the derivative of the
// centred parameters theta' (tau'_m = tau_m - c'b_m) by the reported ones,
// here by central differences of the map (centring.start), for every
// effect structure (a constrained group's phi and gamma enter c'b_m as a
// product); the largest absolute value is MaxAbsScore, the condition
// number is left as the centred coordinates' and Centred names the
// shifted predictors.
func TestCentredScoreInDataUnits(t *testing.T) {
	preds := []string{"a", "far", "b"}
	c := &centring{shift: []float64{0, 1e6, -2.5e4}}
	for _, m := range []Model{
		{Comparison: Cumulative, Link: Logit, Effects: []Effect{Parallel, Parallel, Nonparallel}},
		{Comparison: Adjacent, Link: Probit, Effects: []Effect{Constrained, Constrained, Parallel}},
	} {
		const J = 4
		ly, err := newLayout(m, J, preds)
		if err != nil {
			t.Fatal(err)
		}
		P := len(ly.params)
		theta, gc := make([]float64, P), make([]float64, P)
		for i := range theta {
			theta[i] = 0.3 + 0.1*float64(i)
			gc[i] = math.Pow(-1, float64(i)) * 1e-9 * float64(i+1)
		}
		// theta is in the data's units; the fit's estimates are centred.
		centred := c.start(m, J, preds, theta)
		r := &Result{Model: m, J: J, Predictors: preds, Estimates: centred, NParams: P, score: gc, Condition: 123}
		for _, g := range gc {
			r.MaxAbsScore = math.Max(r.MaxAbsScore, math.Abs(g))
		}
		c.restore(r)
		for i := range theta {
			if !near(r.Estimates[i], theta[i], 1e-12, 1e-9) {
				t.Fatalf("%v: estimate %d %g, want %g", m, i, r.Estimates[i], theta[i])
			}
		}
		want, most := make([]float64, P), 0.0
		for a := 0; a < P; a++ {
			h := 1e-3
			up, dn := append([]float64(nil), theta...), append([]float64(nil), theta...)
			up[a] += h
			dn[a] -= h
			tu, td := c.start(m, J, preds, up), c.start(m, J, preds, dn)
			for b := 0; b < P; b++ {
				want[a] += gc[b] * (tu[b] - td[b]) / (2 * h)
			}
			most = math.Max(most, math.Abs(want[a]))
		}
		for a := range want {
			if !near(r.score[a], want[a], 1e-7, 1e-20) {
				t.Errorf("%v: score %s %g, chain rule by differences %g", m, ly.params[a].name, r.score[a], want[a])
			}
		}
		if !near(r.MaxAbsScore, most, 1e-7, 0) || r.Condition != 123 {
			t.Errorf("%v: max |score| %g, want %g; condition %g", m, r.MaxAbsScore, most, r.Condition)
		}
		if len(r.Centred) != 2 || r.Centred[0] != "far" || r.Centred[1] != "b" {
			t.Errorf("centred %v", r.Centred)
		}
	}
}
