package render

import (
	"fmt"
	"math"
	"strings"

	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// descriptive is the summary of one predictor in each outcome category
// and over all rows: mean and standard deviation, or, for a 0/1
// predictor, the count and share of rows with 1.
type descriptive struct {
	Predictor string
	Binary    bool
	N         []float64 // per category, then all: observations (sum of weights)
	Mean      []float64 // per category, then all (the share of 1s for a 0/1 predictor)
	SD        []float64 // per category, then all (divisor: observations - 1)
	Ones      []float64 // 0/1 predictor: observations with 1
}

// describe summarizes every predictor of d by outcome category, weighted
// by the frequency weights.
func describe(d *fit.Data) []descriptive {
	K, J, n := len(d.Predictors), d.J, d.N()
	var out []descriptive
	for k := 0; k < K; k++ {
		ds := descriptive{Predictor: d.Predictors[k], Binary: true, N: make([]float64, J+1), Mean: make([]float64, J+1),
			SD: make([]float64, J+1), Ones: make([]float64, J+1)}
		m2 := make([]float64, J+1)
		for i := 0; i < n; i++ {
			w := 1.0
			if d.Weights != nil {
				w = d.Weights[i]
			}
			if w == 0 {
				continue
			}
			x := d.X[i*K+k]
			if x != 0 && x != 1 {
				ds.Binary = false
			}
			for _, c := range []int{d.Y[i], J} {
				// Weighted running mean and sum of squares (West's update).
				ds.N[c] += w
				delta := x - ds.Mean[c]
				ds.Mean[c] += w / ds.N[c] * delta
				m2[c] += w * delta * (x - ds.Mean[c])
				if x == 1 {
					ds.Ones[c] += w
				}
			}
		}
		for c := range m2 {
			ds.SD[c] = math.NaN()
			if ds.N[c] > 1 {
				ds.SD[c] = math.Sqrt(m2[c] / (ds.N[c] - 1))
			}
		}
		out = append(out, ds)
	}
	return out
}

// writeDescriptives writes the predictors by outcome category and the
// missing-value pattern of the used columns.
func writeDescriptives(d *doc, or *runner.OutcomeResult) {
	ds := describe(or.FitData)
	if len(ds) > 0 {
		lv := or.Data.Levels
		weighted := ""
		if or.FitData.Weights != nil {
			weighted = " Counts, means and SDs are weighted by the frequency weights."
		}
		d.p("Each predictor in each outcome category: mean (SD) for a numeric predictor; for a 0/1 predictor, the number of observations with 1 and their share of the category.%s", weighted)
		head := []string{"Predictor"}
		for _, l := range lv {
			head = append(head, l)
		}
		head = append(head, "All")
		var rows [][]string
		for _, s := range ds {
			row := []string{s.Predictor}
			for c := range s.N {
				if s.Binary {
					row = append(row, fmt.Sprintf("%s (%s%%)", numfmt.Num(s.Ones[c]), numfmt.Fixed(100*s.Mean[c], 1)))
				} else {
					row = append(row, fmt.Sprintf("%s (%s)", numfmt.Fixed(s.Mean[c], 3), numfmt.Fixed(s.SD[c], 3)))
				}
			}
			rows = append(rows, row)
		}
		d.captioned("Predictors by outcome category").table(head, rows)
	}
	mt := or.Data.Missing
	if mt == nil {
		return
	}
	if len(mt.Patterns) == 0 {
		d.p("No used column (%s) has a missing value.", strings.Join(mt.Columns, ", "))
		return
	}
	d.p("Missing values in the columns the analysis uses. The first row counts the rows missing each column; the others give each combination of missing columns (x) and how many rows have it. Those rows were dropped before any fit.")
	head := append([]string{"Rows"}, mt.Columns...)
	row := []string{"missing per column"}
	for _, c := range mt.ByColumn {
		row = append(row, fmt.Sprint(c))
	}
	rows := [][]string{row}
	for _, p := range mt.Patterns {
		r := []string{fmt.Sprint(p.Rows)}
		for _, m := range p.Missing {
			if m {
				r = append(r, "x")
			} else {
				r = append(r, "")
			}
		}
		rows = append(rows, r)
	}
	rows = append(rows, append([]string{fmt.Sprint(or.Data.N)}, make([]string, len(mt.Columns))...))
	d.captioned("Missing-value pattern of the used columns").table(head, rows)
	d.p("The last row is the complete rows (nothing missing) that the analysis uses.")
}
