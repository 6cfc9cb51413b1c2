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
