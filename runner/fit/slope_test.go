package fit

import (
	"fmt"
	"math"
	"testing"
)

// centralJacobian returns the Jacobian (len(f) x len(theta), row-major) of
// f at theta by central differences with steps 1e-6 max(1, |theta_a|): the
// tests' numerical reference for analytic derivatives on data of unit
// scale (the program itself differentiates nothing numerically).
func centralJacobian(f func([]float64) []float64, theta []float64) []float64 {
	P := len(theta)
	var jac []float64
	for a := 0; a < P; a++ {
		h := 1e-6 * math.Max(1, math.Abs(theta[a]))
		tp := append([]float64(nil), theta...)
		tm := append([]float64(nil), theta...)
		tp[a] += h
		tm[a] -= h
		fp, fm := f(tp), f(tm)
		if jac == nil {
			jac = make([]float64, len(fp)*P)
		}
		for j := range fp {
			jac[j*P+a] = (fp[j] - fm[j]) / (2 * h)
		}
	}
	return jac
}

// richardsonJacobian is centralJacobian refined by Richardson's
// extrapolation over the steps h and h/2 (error of order h^4), with
// h = 1e-3 max(1, |theta_a|).
func richardsonJacobian(f func([]float64) []float64, theta []float64) []float64 {
	P := len(theta)
	var jac []float64
	diff := func(a int, h float64) []float64 {
		tp := append([]float64(nil), theta...)
		tm := append([]float64(nil), theta...)
		tp[a] += h
		tm[a] -= h
		fp, fm := f(tp), f(tm)
		for j := range fp {
			fp[j] = (fp[j] - fm[j]) / (2 * h)
		}
		return fp
	}
	for a := 0; a < P; a++ {
		h := 1e-3 * math.Max(1, math.Abs(theta[a]))
		d1, d2 := diff(a, h), diff(a, h/2)
		if jac == nil {
			jac = make([]float64, len(d1)*P)
		}
		for j := range d1 {
			jac[j*P+a] = d2[j] + (d2[j]-d1[j])/3
		}
	}
	return jac
}

// TestSlopeJacobianFiniteDifferences checks the analytic Jacobian in the
// parameters of the average derivative effect (averageSlope) against
// Richardson-extrapolated central differences of the effect itself, for
// every comparison, link and effect structure (the constrained ones and
// the stereotype model among them), with weights and offsets, at a point
// away from the optimum, along a direction that moves several columns at
// once (as an interaction or a polynomial does).
func TestSlopeJacobianFiniteDifferences(t *testing.T) {
	d := synthData(1, 60, 3, 4, true, true)
	K := len(d.Predictors)
	dX := make([]float64, len(d.X))
	for i := 0; i < d.N(); i++ {
		dX[i*K] = 1
		dX[i*K+1] = 2 * d.X[i*K]
		dX[i*K+2] = d.X[i*K+1] - 0.5
	}
	for _, cc := range allComparisons {
		for _, l := range allLinks {
			for _, sc := range structCases {
				m := Model{Comparison: cc.cmp, Backward: cc.backward, Link: l, Effects: sc.eff}
				t.Run(fmt.Sprintf("%s/%s/%s", m.ComparisonName(), sc.name, l), func(t *testing.T) {
					ly, err := newLayout(m, d.J, d.Predictors)
					if err != nil {
						t.Fatal(err)
					}
					pr := newProblem(d.design(), m, ly, 1)
					th := testPoint(d, m, ly, 3)
					if pr.evaluate(th, 0, false).bad {
						t.Skip("test point invalid")
					}
					_, jac := pr.averageSlope(th, d.N(), rowsOf2(d.X, dX, len(d.Predictors)), d.Offset, d.Weights, true)
					fd := richardsonJacobian(func(x []float64) []float64 {
						e, _ := pr.averageSlope(x, d.N(), rowsOf2(d.X, dX, len(d.Predictors)), d.Offset, d.Weights, false)
						return e
					}, th)
					P := len(th)
					for i := range jac {
						if !near(jac[i], fd[i], 1e-6, 1e-9) {
							t.Errorf("d e[%d]/d %s = %.10g, finite difference %.10g", i/P, ly.params[i%P].name, jac[i], fd[i])
						}
					}
				})
			}
		}
	}
}
