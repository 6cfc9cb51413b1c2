package design

import (
	"fmt"
	"slices"
)

// Frozen is a built design as plain data: the spec and every constant
// Build took from the sample, so that the design can be made again
// elsewhere (a queue worker) without the rows it was built on. The
// constants are the terms' records, those decisions.json stores (Records):
// a constant is written once, in TermRecord, and the design is made again
// from what the record says. It encodes as JSON (snake_case keys) and gob
// (no NaN: constants not used are nil).
type Frozen struct {
	Spec        Spec         `json:"spec"`
	Terms       []TermRecord `json:"terms"` // one per spec term, in order
	SourceScale []float64    `json:"source_scales"`
}

// Freeze returns the design's constants. spec must be the spec the design
// was built from.
func (d *Design) Freeze(spec Spec) *Frozen {
	return &Frozen{Spec: spec, Terms: d.Records(), SourceScale: slices.Clone(d.SourceScales())}
}

// Design makes the design again from its constants: the same columns,
// codings and notes as the design that was frozen.
func (fz *Frozen) Design() (*Design, error) {
	d, err := build(fz.Spec, nil, 0, nil, nil, fz)
	if err != nil {
		return nil, fmt.Errorf("frozen design: %v", err)
	}
	return d, nil
}

// thaw sets a numeric term's constants from its record: the sample mean
// it was centred at, the SD it was scaled by, the orthogonal polynomial's
// recurrence and the spline knots.
func (r *TermRecord) thaw(t *Term) {
	if r.CentreAt != nil && t.Transform.Centre == "mean" {
		t.Mean = *r.CentreAt
	}
	if r.ScaledBy != nil {
		t.SD = *r.ScaledBy
	}
	t.Knots, t.Alpha, t.Norm2 = slices.Clone(r.Knots), slices.Clone(r.Alpha), slices.Clone(r.Norm2)
}
