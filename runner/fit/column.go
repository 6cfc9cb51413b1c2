package fit

// columnKind is what a per-equation column of the design holds.
type columnKind uint8

const (
	constantColumn  columnKind = iota // 1 in every row (the cutpoints)
	predictorColumn                   // a predictor's values
	groupColumn                       // z = x'g of a constraint group (its phi)
)

// column is one per-equation column of the design: index is the predictor
// (predictorColumn) or the constraint group (groupColumn).
type column struct {
	kind  columnKind
	index int
}

// value is the column's value in a row with predictor values xi, where
// gam holds the slopes g of each constraint group, whose predictors are
// groups.
func (col column) value(xi []float64, groups [][]int, gam [][]float64) float64 {
	switch col.kind {
	case constantColumn:
		return 1
	case predictorColumn:
		return xi[col.index]
	}
	z := 0.0
	for t, k := range groups[col.index] {
		z += xi[k] * gam[col.index][t]
	}
	return z
}
