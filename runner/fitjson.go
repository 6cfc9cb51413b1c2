package runner

import (
	"math"

	"ordplan/runner/fit"
)

// FitRecord is the JSON view of one fit. Numbers that do not exist (the
// log-likelihood of a model with no finite maximum) are null, never a
// made-up value.
type FitRecord struct {
	Model        string               `json:"model"`
	Approach     string               `json:"approach"`
	Effects      fit.Structure        `json:"effects"`
	Link         fit.Link             `json:"link"`
	Status       string               `json:"status"`
	Message      string               `json:"message,omitempty"`
	Converged    bool                 `json:"converged"`
	Iterations   int                  `json:"iterations"`
	MaxAbsScore  *float64             `json:"max_abs_score"`
	LogLik       *float64             `json:"loglik"`
	NParams      int                  `json:"n_params"`
	NObs         float64              `json:"nobs"`
	AIC          *float64             `json:"aic"`
	BIC          *float64             `json:"bic"`
	Tau          []float64            `json:"tau"`        // tau[1]..tau[J-1]
	Boundaries   []string             `json:"boundaries"` // label of boundary m: lower/upper category
	Slopes       map[string][]float64 `json:"slopes"`     // per predictor, one slope per boundary
	Estimates    map[string]float64   `json:"estimates"`
	StdErrors    map[string]float64   `json:"std_errors"`
	Covariance   *CovarianceJSON      `json:"covariance,omitempty"`
	Phi          map[string][]float64 `json:"phi,omitempty"`
	NegativeRows int                  `json:"rows_with_negative_probabilities"`
	// Condition: of the information scaled to unit diagonal; of the
	// centred parameters when Centred names predictors.
	Condition *float64 `json:"information_condition"`
	// Centred: the predictors fitted less their mean inside the fit (far
	// from zero for their spread); the estimates, errors and max |score|
	// are in the data's units.
	Centred    []string        `json:"centred_predictors,omitempty"`
	SupLogLik  *float64        `json:"loglik_supremum,omitempty"`
	Separation *fit.Separation `json:"separation,omitempty"`
	// Flat: the parameters along which a finite maximum is nearly flat
	// (status flat_maximum).
	Flat        *fit.Flatness `json:"flat_maximum,omitempty"`
	Starts      []StartJSON   `json:"starts,omitempty"`
	StartsAgree int           `json:"starts_reaching_best,omitempty"`
	PhiNotes    []string      `json:"phi_notes,omitempty"`
	// NearZeroScale: the constraint groups whose g is near zero, where phi
	// is near non-identification (fit.Result.CheckScale).
	NearZeroScale []fit.NearZeroScale `json:"phi_near_non_identification,omitempty"`
	// Collinear: the terms whose slopes' variance inflation reaches
	// fit.InflationLimit (near-collinearity).
	Collinear []fit.Inflation `json:"collinear,omitempty"`
	// NotEstimable: the parameters whose cluster-robust standard errors
	// cannot be estimated (null in std_errors), with the reason.
	NotEstimable *fit.NotEstimable `json:"not_estimable_clustered,omitempty"`
}

// CovarianceJSON is the covariance matrix of a fit's estimates, with the
// parameters' names in the order of its rows and columns.
type CovarianceJSON struct {
	Kind       fit.Covariance `json:"kind"`
	Parameters []string       `json:"parameters"`
	Matrix     [][]*float64   `json:"matrix"` // null where not defined
	// Clusters: the number of clusters of a cluster-robust covariance.
	Clusters int `json:"clusters,omitempty"`
	// Correction: the few-cluster correction (jackknife: the
	// delete-one-cluster jackknife), and ReferenceDF the degrees of freedom
	// of its t and F references (G-1); absent without one.
	Correction  fit.ClusterCorrection `json:"correction,omitempty"`
	ReferenceDF float64               `json:"reference_df,omitempty"`
}

// StartJSON is one start of a constrained fit's search.
type StartJSON struct {
	Label       string   `json:"label"`
	LogLik      *float64 `json:"loglik"`
	ReachedBest bool     `json:"reached_best"`
	// Refitted: reached the best through a refit in another normalization
	// of phi from where it stopped (fit.StartRecord.Refitted).
	Refitted   bool   `json:"reached_by_refit,omitempty"`
	Iterations int    `json:"iterations"`
	Reason     string `json:"reason,omitempty"`
}

func num(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

// Record builds the JSON view of a fit.
func Record(r *fit.Result) FitRecord {
	rec := FitRecord{
		Model: r.Name, Approach: r.Model.ComparisonName(), Effects: r.Model.Structure(), Link: r.Model.Link,
		Status: string(r.Status), Message: r.Message, Converged: r.Converged, Iterations: r.Iterations,
		MaxAbsScore: num(r.MaxAbsScore), NParams: r.NParams, NObs: r.NObs,
		NegativeRows: r.NegativeRows, Condition: num(r.Condition), Separation: r.Separation, Flat: r.Flat,
		StartsAgree: r.StartsAgreeing, PhiNotes: r.PhiNotes, NearZeroScale: r.NearZeroScale, Collinear: r.Collinear, NotEstimable: r.NotEstimable, Centred: r.Centred,
	}
	for _, s := range r.Starts {
		rec.Starts = append(rec.Starts, StartJSON{Label: s.Label, LogLik: num(s.LogLik), ReachedBest: s.ReachedBest, Refitted: s.Refitted, Iterations: s.Iterations, Reason: s.Reason})
	}
	if r.MaximumKnown() {
		// The maximum is finite (though phi may not be identified, or
		// some parameters not determined by a flat maximum).
		rec.LogLik, rec.AIC, rec.BIC = num(r.LogLik), num(r.AIC), num(r.BIC)
	}
	if !r.OK() {
		if r.Status == fit.StatusNoFiniteMaximum {
			rec.SupLogLik = num(r.SupLogLik)
		}
		return rec
	}
	rec.LogLik, rec.AIC, rec.BIC = num(r.LogLik), num(r.AIC), num(r.BIC)
	rec.Tau = r.Cutpoints
	rec.Boundaries = []string{}
	for m := range r.Cutpoints {
		rec.Boundaries = append(rec.Boundaries, fit.BoundaryLabel(r.Categories, m))
	}
	rec.Slopes = map[string][]float64{}
	for k, p := range r.Predictors {
		col := make([]float64, len(r.Effects))
		for m := range r.Effects {
			col[m] = r.Effects[m][k]
		}
		rec.Slopes[p] = col
	}
	rec.Estimates = map[string]float64{}
	rec.StdErrors = map[string]float64{}
	for i, n := range r.ParamNames {
		rec.Estimates[n] = r.Estimates[i]
		rec.StdErrors[n] = r.StdErrors[i]
	}
	P := len(r.ParamNames)
	cov := &CovarianceJSON{Kind: r.CovType, Parameters: r.ParamNames, Matrix: make([][]*float64, P), Clusters: r.Clusters, ReferenceDF: r.RefDF}
	cov.Correction = r.Correction
	for i := range cov.Matrix {
		cov.Matrix[i] = make([]*float64, P)
		for j := range cov.Matrix[i] {
			cov.Matrix[i][j] = num(r.Cov[i*P+j])
		}
	}
	rec.Covariance = cov
	if len(r.Phi) > 0 {
		rec.Phi = map[string][]float64{}
		for g, ph := range r.Phi {
			name := r.PhiGroups[g]
			if name == "" {
				name = "phi"
			}
			rec.Phi[name] = ph
		}
	}
	return rec
}
