package render

import (
	"fmt"
	"math"
	"strings"

	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// focusName returns the predictor on the x axis of the predictions: the
// plan's focus predictor, else the first predictor.
func focusName(r *runner.Result) string {
	if f := r.Plan.Report.FocusPredictor; f != "" {
		return f
	}
	if len(r.Plan.Predictors) > 0 {
		return r.Plan.Predictors[0]
	}
	return ""
}

// profile is where predictions are made: the focus predictor varies, every
// other predictor (and the offset, if any) stays at its mean over the
// rows used, weighted by the frequency weights.
type profile struct {
	focus    string
	k        int // column of the focus predictor
	binary   bool
	min, max float64
	means    []float64
	offset   float64
	hasOff   bool
}

// newProfile describes the data of the fit around predictor focus.
func newProfile(d *fit.Data, focus string) (*profile, error) {
	k := -1
	for i, p := range d.Predictors {
		if p == focus {
			k = i
		}
	}
	if k < 0 {
		return nil, fmt.Errorf("the focus predictor %q is not a predictor of the model", focus)
	}
	K, n := len(d.Predictors), d.N()
	pf := &profile{focus: focus, k: k, binary: true, min: math.Inf(1), max: math.Inf(-1), means: make([]float64, K), hasOff: d.Offset != nil}
	tot := 0.0
	for i := 0; i < n; i++ {
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
		}
		tot += w
		for j := 0; j < K; j++ {
			pf.means[j] += w * d.X[i*K+j]
		}
		if pf.hasOff {
			pf.offset += w * d.Offset[i]
		}
		v := d.X[i*K+k]
		pf.min, pf.max = math.Min(pf.min, v), math.Max(pf.max, v)
		if v != 0 && v != 1 {
			pf.binary = false
		}
	}
	if n == 0 || tot <= 0 {
		return nil, fmt.Errorf("no observations to average over")
	}
	for j := range pf.means {
		pf.means[j] /= tot
	}
	pf.offset /= tot
	return pf, nil
}

// grid returns the focus values: 0 and 1 for a 0/1 predictor, else
// evenly spaced values (as many as points) from the smallest to the
// largest in the data.
func (pf *profile) grid(points int) []float64 {
	switch {
	case pf.binary:
		return []float64{0, 1}
	case pf.min == pf.max || points < 2:
		return []float64{pf.min}
	}
	out := make([]float64, points)
	for i := range out {
		out[i] = pf.min + (pf.max-pf.min)*float64(i)/float64(points-1)
	}
	out[points-1] = pf.max
	return out
}

// predict returns the predicted probabilities at the focus values.
func (pf *profile) predict(res *fit.Result, xs []float64) (*fit.Prediction, error) {
	K := len(pf.means)
	X := make([]float64, 0, len(xs)*K)
	var off []float64
	for _, x := range xs {
		row := append([]float64(nil), pf.means...)
		row[pf.k] = x
		X = append(X, row...)
		if pf.hasOff {
			off = append(off, pf.offset)
		}
	}
	return res.Predict(X, off)
}

// heldAt says where the other predictors are held.
func (pf *profile) heldAt(d *fit.Data) string {
	var parts []string
	for j, p := range d.Predictors {
		if j != pf.k {
			parts = append(parts, fmt.Sprintf("%s %s", p, numfmt.Num(pf.means[j])))
		}
	}
	s := "no other predictor"
	if len(parts) > 0 {
		s = "the other predictors at their means over the rows used (" + strings.Join(parts, ", ") + ")"
	}
	if pf.hasOff {
		s += fmt.Sprintf(" and the offset at its mean (%s)", numfmt.Num(pf.offset))
	}
	if d.Weights != nil {
		s += ", means weighted by the frequency weights"
	}
	return s
}
