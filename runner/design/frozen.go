package design

import (
	"fmt"
	"math"
	"slices"
)

// Frozen is a built design as plain data: the spec and every constant
// Build took from the sample, so that the design can be made again
// elsewhere (a queue worker) without the rows it was built on. It encodes
// as JSON and gob (no NaN: constants not used are nil).
type Frozen struct {
	Spec        Spec
	Terms       []FrozenTerm // one per spec term, in order
	SourceScale []float64
}

// FrozenTerm holds one term's constants.
type FrozenTerm struct {
	Mean  *float64 `json:",omitempty"`
	SD    *float64 `json:",omitempty"`
	Knots []float64
	Alpha []float64
	Norm2 []float64
	Kept  []string
}

// Freeze returns the design's constants. spec must be the spec the design
// was built from.
func (d *Design) Freeze(spec Spec) *Frozen {
	fz := &Frozen{Spec: spec, SourceScale: slices.Clone(d.SourceScale)}
	num := func(x float64) *float64 {
		if math.IsNaN(x) {
			return nil
		}
		return &x
	}
	for _, t := range d.Terms {
		fz.Terms = append(fz.Terms, FrozenTerm{Mean: num(t.Mean), SD: num(t.SD), Knots: slices.Clone(t.Knots),
			Alpha: slices.Clone(t.Alpha), Norm2: slices.Clone(t.Norm2), Kept: slices.Clone(t.Kept)})
	}
	return fz
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

// thaw sets a numeric term's constants.
func (ft *FrozenTerm) thaw(t *Term) {
	if ft.Mean != nil {
		t.Mean = *ft.Mean
	}
	if ft.SD != nil {
		t.SD = *ft.SD
	}
	t.Knots, t.Alpha, t.Norm2 = slices.Clone(ft.Knots), slices.Clone(ft.Alpha), slices.Clone(ft.Norm2)
}
