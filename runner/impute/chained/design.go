package chained

import (
	"math"
	"strconv"
)

// predictors is the design of one column's imputation model: every other
// column, numeric ones standardized over all rows, categorical and
// ordered ones as 0/1 indicators of their levels other than the first;
// columns constant or collinear among the rows where the target is
// observed are left out.
type predictors struct {
	names      []string
	obs, mis   []int     // rows where the target is observed / missing
	xObs, xMis []float64 // row-major, len(names) columns
	dropped    []string
}

// collinearTol is the share of a column's spread (among the fitting rows)
// that must remain after projecting it on the columns kept before it.
const collinearTol = 1e-7

// designFor builds the imputation model's predictors for column c from
// the current values of the table.
func designFor(cols []Column, cur [][]float64, c int) *predictors {
	p := &predictors{}
	for i, v := range cols[c].Values {
		if math.IsNaN(v) {
			p.mis = append(p.mis, i)
		} else {
			p.obs = append(p.obs, i)
		}
	}
	var names []string
	var vals [][]float64
	for j, col := range cols {
		if j == c {
			continue
		}
		if col.Kind == Numeric {
			names = append(names, col.Name)
			vals = append(vals, standardized(cur[j]))
			continue
		}
		for l := 1; l < col.Levels; l++ {
			ind := make([]float64, len(cur[j]))
			for i, v := range cur[j] {
				if int(v) == l {
					ind[i] = 1
				}
			}
			names = append(names, col.Name+"="+strconv.Itoa(l+1))
			vals = append(vals, ind)
		}
	}
	keep := screen(vals, p.obs)
	for k, ok := range keep {
		if ok {
			p.names = append(p.names, names[k])
		} else {
			p.dropped = append(p.dropped, names[k])
		}
	}
	fill := func(rows []int) []float64 {
		out := make([]float64, 0, len(rows)*len(p.names))
		for _, i := range rows {
			for k, ok := range keep {
				if ok {
					out = append(out, vals[k][i])
				}
			}
		}
		return out
	}
	p.xObs, p.xMis = fill(p.obs), fill(p.mis)
	return p
}

// standardized centres a column on its mean and divides it by its SD
// (constant columns are only centred).
func standardized(v []float64) []float64 {
	n := float64(len(v))
	mean := 0.0
	for _, x := range v {
		mean += x
	}
	mean /= n
	ss := 0.0
	for _, x := range v {
		ss += (x - mean) * (x - mean)
	}
	sd := math.Sqrt(ss / n)
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = x - mean
		if sd > 0 {
			out[i] /= sd
		}
	}
	return out
}

// screen keeps, in order, the columns that are not constant and not a
// linear combination of the columns kept before them (with the
// intercept), over the given rows: modified Gram-Schmidt on the centred
// columns.
func screen(vals [][]float64, rows []int) []bool {
	keep := make([]bool, len(vals))
	var basis [][]float64
	for k, col := range vals {
		u := make([]float64, len(rows))
		mean := 0.0
		for r, i := range rows {
			u[r] = col[i]
			mean += col[i]
		}
		mean /= float64(len(rows))
		norm0 := 0.0
		for r := range u {
			u[r] -= mean
			norm0 += u[r] * u[r]
		}
		if norm0 <= 1e-24*float64(len(rows)) {
			continue
		}
		for _, b := range basis {
			d := 0.0
			for r := range u {
				d += u[r] * b[r]
			}
			for r := range u {
				u[r] -= d * b[r]
			}
		}
		norm := 0.0
		for _, x := range u {
			norm += x * x
		}
		if norm <= collinearTol*norm0 {
			continue
		}
		s := 1 / math.Sqrt(norm)
		for r := range u {
			u[r] *= s
		}
		basis = append(basis, u)
		keep[k] = true
	}
	return keep
}
