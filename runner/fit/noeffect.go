package fit

import (
	"fmt"
	"slices"
)

// NoEffect is the hypothesis that some predictor columns of a fit have no
// effect: every slope b_mk of those columns is 0 at every boundary. It is
// written as quantities q(theta) that are all 0 under the hypothesis, with
// their values at the estimates and their derivatives there (the rows of
// a Wald test by the delta method; for a linear hypothesis the rows pick
// parameters and Value = R theta).
//
//   - a parallel column: its slope b_k (one quantity);
//   - a nonparallel column: its slopes b_k[1] .. b_k[J-1];
//   - a constrained column (b_mk = phi_m g_k) whose constraint group keeps
//     other columns: g_k (the group's phi stay identified by the others);
//   - a constrained column that is the only column of its group (with
//     three or more categories): its effects b_mk = phi_m g_k at every
//     boundary, J-1 quantities; the model is then a reparameterization of
//     the column's nonparallel slopes (the same likelihood), whose Wald
//     test of b_k[1..J-1] = 0 this is (the inverse information transforms
//     with the parameters);
//   - several columns that make up a whole constraint group (with three
//     or more categories): their g_k. Without them the group's phi has
//     no meaning, so under the hypothesis phi is not identified and
//     neither statistic has a chi-square reference of its own; DF refers
//     both to that of the same columns made nonparallel (J-1 slopes
//     each), a model the constrained one is nested in with the same
//     restricted model, whose likelihood-ratio statistic is never the
//     smaller: p-values that are upper bounds (conservative). The Wald
//     statistic, with phi's uncertainty in its covariance, is at most
//     the statistic with phi held at its estimate, which in large samples
//     is the likelihood ratio at that phi; it is referred alike.
type NoEffect struct {
	Columns []string
	Names   []string    // the quantities, e.g. x, x[2], "x[2] = phi[2]*x"
	R       [][]float64 // d q / d theta at the estimates, one row per quantity
	Value   []float64   // q at the estimates
	Linear  bool        // every quantity is a parameter
	// Groups are the constraint groups of several columns that the
	// columns make up whole (three or more categories), each its columns.
	Groups [][]string
	// DF is the degrees of freedom of the tests' reference: len(R), plus
	// J-2 per column of a whole group (Groups).
	DF int
	// Dropped is how many parameters fewer the model without the columns
	// has: len(R), plus the J-2 phi of each whole group.
	Dropped int
}

// NoEffectOf writes the hypothesis that cols have no effect in fit r.
func (r *Result) NoEffectOf(cols []string) (*NoEffect, error) {
	ly, err := newLayout(r.Model, r.J, r.Predictors)
	if err != nil {
		return nil, err
	}
	P, q := len(ly.params), r.J-1
	if len(r.Estimates) != P {
		return nil, fmt.Errorf("%s has %d estimates for %d parameters", r.Name, len(r.Estimates), P)
	}
	ne := &NoEffect{Columns: cols, Linear: true}
	pick := func(i int) {
		row := make([]float64, P)
		row[i] = 1
		ne.Names = append(ne.Names, ly.params[i].name)
		ne.R = append(ne.R, row)
		ne.Value = append(ne.Value, r.Estimates[i])
	}
	for _, c := range cols {
		k := slices.Index(r.Predictors, c)
		if k < 0 {
			return nil, fmt.Errorf("%q is not a predictor of %s", c, r.Name)
		}
		s := ly.slope[k]
		switch r.Model.Effects[k] {
		case Parallel:
			pick(s)
		case Nonparallel:
			for m := 0; m < q; m++ {
				pick(s + m)
			}
		case Constrained:
			d := ly.groupOf[k]
			members := ly.groups[d]
			kept := slices.ContainsFunc(members, func(j int) bool { return !slices.Contains(cols, r.Predictors[j]) })
			if kept || q < 2 {
				pick(s)
				continue
			}
			if len(members) > 1 {
				pick(s)
				if members[0] == k { // the group once, at its first column
					var names []string
					for _, j := range members {
						names = append(names, r.Predictors[j])
					}
					ne.Groups = append(ne.Groups, names)
					ne.DF += len(members) * (q - 1)
					ne.Dropped += q - 1
				}
				continue
			}
			// The only column of its group: b_m = phi_m g at every
			// boundary, by the delta method (db/dg = phi_m, db/dphi_m = g).
			ne.Linear = false
			phi := ly.phi(r.Estimates, d)
			for m := 0; m < q; m++ {
				row := make([]float64, P)
				row[s] = phi[m]
				name := fmt.Sprintf("%s[%d] = %s", c, m+1, c)
				if m > 0 {
					row[ly.phiIndex[d][m]] = r.Estimates[s]
					name = fmt.Sprintf("%s[%d] = %s*%s", c, m+1, ly.params[ly.phiIndex[d][m]].name, c)
				}
				ne.Names = append(ne.Names, name)
				ne.R = append(ne.R, row)
				ne.Value = append(ne.Value, phi[m]*r.Estimates[s])
			}
		}
	}
	ne.DF += len(ne.R)
	ne.Dropped += len(ne.R)
	return ne, nil
}

// WaldNoEffect is the Wald test of ne in fit r with its covariance (by the
// delta method when ne is not linear), on ne.DF degrees of freedom (as
// many as ne has quantities, unless it empties a constraint group).
func WaldNoEffect(r *Result, ne *NoEffect) Test {
	if !r.OK() || r.Cov == nil {
		return failedTest(TestWald.String(), "%s has no usable estimates", r.Name)
	}
	x, err := r.waldStatDiff(ne.R, ne.Value)
	if err != nil {
		return failedTest(TestWald.String(), "%v", err)
	}
	return r.waldTest(x, ne.DF)
}

// Offsets are c0 of the linear restrictions R theta = c0 that the delta
// method puts in the place of ne at the estimates theta: R theta - q, so
// that R theta - c0 is q (all 0 for a linear ne). A pooled Wald test of ne
// takes R and these.
func (ne *NoEffect) Offsets(theta []float64) []float64 {
	out := make([]float64, len(ne.R))
	for i, row := range ne.R {
		out[i] = dot(row, theta) - ne.Value[i]
	}
	return out
}
