package design

import "math"

// TermRecord is one term in decisions.json: its columns and every
// constant frozen from the data, so that new rows are transformed the
// same way. It is also the frozen form of a term a queue job carries
// (Frozen, thaw): every constant Build takes from the sample is written
// here and only here.
type TermRecord struct {
	Term      string    `json:"term"`
	Kind      string    `json:"kind"`
	Plan      string    `json:"plan_key,omitempty"`
	Reads     []string  `json:"reads"`
	Columns   []string  `json:"columns"`
	Coding    string    `json:"coding,omitempty"`
	Reference string    `json:"reference,omitempty"`
	Levels    []string  `json:"levels,omitempty"`
	Dropped   []string  `json:"levels_dropped,omitempty"`
	Log       bool      `json:"log,omitempty"`
	Shift     float64   `json:"shift,omitempty"`
	Sqrt      bool      `json:"sqrt,omitempty"`
	CentreAt  *float64  `json:"centred_at,omitempty"`
	CentreBy  string    `json:"centred_by,omitempty"` // "sample mean" or "stated value"
	ScaledBy  *float64  `json:"scaled_by_sd,omitempty"`
	Poly      int       `json:"polynomial_degree,omitempty"`
	PolyBasis string    `json:"polynomial_basis,omitempty"`
	Alpha     []float64 `json:"orthogonal_alpha,omitempty"`
	Norm2     []float64 `json:"orthogonal_norm2,omitempty"`
	Knots     []float64 `json:"spline_knots,omitempty"`
	KnotsAt   []float64 `json:"spline_knot_quantiles,omitempty"`
}

// Records describes every term of the design.
func (d *Design) Records() []TermRecord {
	var out []TermRecord
	for k, t := range d.Terms {
		r := TermRecord{Term: t.Name, Kind: t.Kind, Plan: t.Key, Reads: d.TermSources(k), Columns: t.Columns}
		switch t.Kind {
		case KindCategorical:
			c := d.Sources[t.Source].Cat
			r.Coding = c.Coding
			if r.Coding == "" {
				r.Coding = Treatment
			}
			_, r.Reference = d.Coded(t.Source)
			r.Levels, r.Dropped = t.Kept, t.Dropped
		case KindNumeric:
			tr := t.Transform
			r.Log, r.Shift, r.Sqrt = tr.Log, tr.Shift, tr.Sqrt
			switch tr.Centre {
			case "mean":
				m := t.Mean
				r.CentreAt, r.CentreBy = &m, "sample mean"
			case "value":
				m := tr.CentreAt
				r.CentreAt, r.CentreBy = &m, "stated value"
			}
			if tr.Scale && !math.IsNaN(t.SD) {
				s := t.SD
				r.ScaledBy = &s
			}
			if tr.Poly > 0 {
				r.Poly, r.PolyBasis = tr.Poly, "orthogonal"
				if tr.PolyRaw {
					r.PolyBasis = "raw"
				}
				r.Alpha, r.Norm2 = t.Alpha, t.Norm2
			}
			r.Knots, r.KnotsAt = t.Knots, tr.Quantiles
		}
		out = append(out, r)
	}
	return out
}
