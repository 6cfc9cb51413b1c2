package render

import (
	"ordplan/plan"
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

// profile is where predictions are made: the focus column varies, every
// other column the predictors read stays at its mean over the rows used
// (weighted by the frequency weights) or, if categorical, at a level;
// the raw rows go through the outcome's design.
type profile struct {
	*runner.Profile
	focus  string
	binary bool   // draw bars: a 0/1 or categorical focus
	axis   string // the x axis's title: the focus and its unit (axisTitle)
}

// newProfile describes the data of the outcome around predictor focus,
// categorical columns in fixed held at the given levels.
func newProfile(or *runner.OutcomeResult, focus string, fixed map[string]string) (*profile, error) {
	p, err := or.NewProfile(focus, fixed)
	if err != nil {
		return nil, err
	}
	return &profile{Profile: p, focus: p.Focus, binary: p.Binary || p.Categorical, axis: p.Focus}, nil
}

// axisTitle is the title of an axis over column col: its name, and its
// unit in brackets when the plan's dictionary gives one (age (years)).
func axisTitle(p *plan.Plan, col string) string { return plan.WithUnit(col, p.UnitOf(col)) }

// grid returns the focus values.
func (pf *profile) grid(points int) []float64 { return pf.Grid(points) }

// predict returns the predicted probabilities at the focus values.
func (pf *profile) predict(res *fit.Result, xs []float64) (*fit.Prediction, error) {
	X, off, err := pf.Rows(xs)
	if err != nil {
		return nil, err
	}
	return res.Predict(X, off)
}

// heldAt says where the other predictors are held.
func (pf *profile) heldAt() string { return pf.HeldAt() }
