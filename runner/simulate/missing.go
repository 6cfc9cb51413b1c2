package simulate

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// missingColumn is how one simulated column is made missing: value i is
// missing with probability expit(c + sum_g s_g (v_gi - mean_g) / sd_g)
// (plan.MissingAssumption), the given columns' means and SDs and the
// constant c set on the calibration sample, the rows the plan analyses.
type missingColumn struct {
	plan.MissingAssumption
	outcome, pred int // the column: an outcome's index, or a predictor's (the other -1)
	given         []givenColumn
	c             float64
	never         bool   // proportion 0
	marker        string // the text written for a missing value
}

// givenColumn is one column the missingness depends on.
type givenColumn struct {
	outcome, pred    int
	strength, mu, sd float64
}

// missingMarker is the cell text the plan's reader reads as missing in
// column col: the first of data.missing_values ("" under the reader's
// default markers, which include the empty cell), else the column's own
// first code. The plan check refuses a column with neither.
func missingMarker(p *plan.Plan, col string) string {
	if mv := p.Data.MissingValues; mv != nil {
		if len(mv) > 0 {
			return mv[0]
		}
		if e := p.EntryOf(col); e != nil && len(e.Missing) > 0 {
			return e.Missing[0]
		}
	}
	return ""
}

// prepareMissing sets up the stated missingness on the calibration sample
// (its rows drawn, the outcomes' models built).
func (s *Sim) prepareMissing(rows []row) error {
	p := s.Plan
	outcomeOf := func(col string) int {
		return slices.IndexFunc(s.Outcomes, func(o Outcome) bool { return o.Column == col })
	}
	predOf := func(col string) int {
		return slices.IndexFunc(s.Predictors, func(pr Predictor) bool { return pr.Column == col })
	}
	var probs [][]float64 // per outcome given: every calibration row's category probabilities
	probsOf := map[int][][]float64{}
	for _, ma := range p.Assumptions.Missing {
		mc := missingColumn{MissingAssumption: ma, outcome: outcomeOf(ma.Column), pred: predOf(ma.Column), marker: missingMarker(p, ma.Column)}
		if mc.outcome < 0 && mc.pred < 0 {
			return fmt.Errorf("%s: %s: column %q is not simulated", p.Path, ma.Key, ma.Column)
		}
		if mc.outcome >= 0 {
			mc.pred = -1
		}
		for _, g := range ma.Given {
			gc := givenColumn{outcome: outcomeOf(g.Column), pred: predOf(g.Column), strength: g.Strength}
			switch {
			case gc.outcome >= 0:
				gc.pred = -1
				o := &s.Outcomes[gc.outcome]
				mean, sq := 0.0, 0.0
				for j, q := range o.Proportions {
					mean += float64(j+1) * q
					sq += float64(j+1) * float64(j+1) * q
				}
				gc.mu, gc.sd = mean, math.Sqrt(math.Max(sq-mean*mean, 0))
				if probsOf[gc.outcome] == nil {
					probsOf[gc.outcome] = s.calibrationProbs(o, rows)
				}
			case gc.pred >= 0:
				mean, sq := 0.0, 0.0
				for i := range rows {
					mean += rows[i].x[gc.pred]
				}
				mean /= float64(len(rows))
				for i := range rows {
					d := rows[i].x[gc.pred] - mean
					sq += d * d
				}
				gc.mu, gc.sd = mean, math.Sqrt(sq/float64(len(rows)))
			default:
				return fmt.Errorf("%s: %s: column %q is not simulated", p.Path, g.Key, g.Column)
			}
			if !(gc.sd > 0) {
				return fmt.Errorf("%s: %s: %q takes one value only among the simulated rows the plan analyses, so the missingness cannot depend on it", p.Path, g.Key, g.Column)
			}
			mc.given = append(mc.given, gc)
		}
		switch {
		case ma.Proportion == 0:
			mc.never = true
		case len(mc.given) == 0:
			mc.c = math.Log(ma.Proportion / (1 - ma.Proportion))
		default:
			// The mean probability over the calibration rows (over an
			// outcome's categories by their probabilities) is increasing
			// in c: solve it for the proportion.
			lin := make([]float64, len(rows))
			var og *givenColumn
			for gi := range mc.given {
				g := &mc.given[gi]
				if g.outcome >= 0 {
					og = g
					probs = probsOf[g.outcome]
					continue
				}
				for i := range rows {
					lin[i] += g.strength * (rows[i].x[g.pred] - g.mu) / g.sd
				}
			}
			mean := func(c float64) float64 {
				t := 0.0
				for i, l := range lin {
					if og == nil {
						t += expit(c + l)
						continue
					}
					for j, q := range probs[i] {
						t += q * expit(c+l+og.strength*(float64(j+1)-og.mu)/og.sd)
					}
				}
				return t / float64(len(lin))
			}
			c0 := math.Log(ma.Proportion / (1 - ma.Proportion))
			mc.c = solve(func(c float64) float64 { return mean(c) - ma.Proportion }, c0-1, c0+1)
		}
		s.Missing = append(s.Missing, mc)
	}
	if len(s.Outcomes) > 0 {
		s.blankMarker = blankMarker(p, s.Outcomes[0].Column)
	}
	return nil
}

// blankMarker is the text written in the first cell (the first outcome's)
// of a row that misses every column written: a text other than the empty
// cell that the plan's reader reads as missing there (NA under the
// default markers, else the first non-empty one of data.missing_values or
// of the column's own codes), "" when the plan reads none. Written empty,
// such a row is a line of delimiters alone, which the reader skips as a
// blank line: the rows read were fewer than those drawn, and every
// column's missing values fewer than those counted and reported.
func blankMarker(p *plan.Plan, col string) string {
	marks := p.Data.MissingValues
	if marks == nil {
		marks = data.DefaultMissing
	}
	if e := p.EntryOf(col); e != nil {
		marks = append(slices.Clone(marks), e.Missing...)
	}
	for _, m := range marks {
		if strings.TrimSpace(m) != "" {
			return m
		}
	}
	return ""
}

// blankPossible reports whether a row can miss every column written: every
// outcome and predictor is made missing, and no weights, offset or
// cluster column (always written) is simulated.
func (s *Sim) blankPossible() bool {
	if s.Weights != "" || s.Offset != "" || s.Cluster != "" {
		return false
	}
	stated := func(outcome, pred int) bool {
		return slices.ContainsFunc(s.Missing, func(mc missingColumn) bool {
			return !mc.never && mc.outcome == outcome && (outcome >= 0 || mc.pred == pred)
		})
	}
	for oi := range s.Outcomes {
		if !stated(oi, -1) {
			return false
		}
	}
	for k := range s.Predictors {
		if !stated(-1, k) {
			return false
		}
	}
	return true
}

// calibrationProbs gives each calibration row's category probabilities
// under outcome o's generating model.
func (s *Sim) calibrationProbs(o *Outcome, rows []row) [][]float64 {
	q := len(o.Proportions) - 1
	raw, x := make([]float64, len(o.Sources)), make([]float64, len(o.Design.Columns))
	e, L := make([]float64, q), make([]float64, q)
	out := make([][]float64, len(rows))
	for i := range rows {
		o.raw(&rows[i], raw)
		p := make([]float64, q+1)
		if err := o.Design.Row(raw, x); err == nil {
			o.eta(x, e)
			for m := range L {
				L[m] = o.Cut[m] - e[m]
				if s.calibU != nil {
					L[m] -= s.calibU[i]
				}
			}
			fit.CategoryProbabilities(s.Comparison, s.Backward, s.Link, L, p)
		}
		out[i] = p
	}
	return out
}

func expit(z float64) float64 {
	if z >= 0 {
		return 1 / (1 + math.Exp(-z))
	}
	e := math.Exp(z)
	return e / (1 + e)
}

// missingProb is the probability that column mc is missing in a drawn
// row whose outcomes fell in categories ys (-1: none).
func (mc *missingColumn) prob(r *row, ys []int) float64 {
	if mc.never {
		return 0
	}
	z := mc.c
	for _, g := range mc.given {
		v := 0.0
		if g.outcome >= 0 {
			if ys[g.outcome] < 0 {
				continue
			}
			v = float64(ys[g.outcome] + 1)
		} else {
			v = r.x[g.pred]
		}
		z += g.strength * (v - g.mu) / g.sd
	}
	return expit(z)
}

// MissingRecord describes the stated missingness for a report: what was
// simulated in each column (counts filled in by the caller that wrote the
// data; nil for a power study).
func (s *Sim) MissingRecord(counts []int, of int) []runner.SimulatedMissing {
	var out []runner.SimulatedMissing
	for i, mc := range s.Missing {
		m := runner.SimulatedMissing{Column: mc.Column, Proportion: mc.Proportion, Mechanism: mc.Mechanism(), Marker: mc.marker}
		if mc.outcome == 0 && mc.marker == "" && s.blankPossible() {
			m.BlankRows = s.blankMarker
		}
		for _, g := range mc.Given {
			m.Given = append(m.Given, runner.MissingGiven{Column: g.Column, Strength: g.Strength})
		}
		if counts != nil {
			n := counts[i]
			m.Count, m.Of = &n, of
		}
		out = append(out, m)
	}
	return out
}
