package fit

// Chain rule from the per-equation linear predictors L_m to the parameters:
// dL_m/dtheta_p = c_p(m) * u_col(p), with u the parameter's column.

type coefEntry struct {
	m int
	v float64
}

type pderiv struct {
	parallel bool // column is a parallel-type column (c = -1 for every m)
	col      int
	c        []coefEntry
}

func (p *problem) derivs(theta []float64) []pderiv {
	ly, q := p.ly, p.q
	zcol := func(d int) int { return len(p.freeCols) - len(ly.groups) + d }
	out := make([]pderiv, len(ly.params))
	var phis [][]float64
	for d := range ly.groups {
		phis = append(phis, ly.phi(theta, d))
	}
	for i, pr := range ly.params {
		switch pr.kind {
		case pCut:
			out[i] = pderiv{col: 0, c: []coefEntry{{pr.m, 1}}}
		case pParallel:
			out[i] = pderiv{parallel: true, col: p.parOf[pr.k]}
		case pFree:
			out[i] = pderiv{col: p.freeOf[pr.k], c: []coefEntry{{pr.m, -1}}}
		case pGamma:
			c := make([]coefEntry, q)
			for m := 0; m < q; m++ {
				c[m] = coefEntry{m, -phis[pr.group][m]}
			}
			out[i] = pderiv{col: p.freeOf[pr.k], c: c}
		case pPhi:
			out[i] = pderiv{col: zcol(pr.group), c: []coefEntry{{pr.m, -1}}}
		}
	}
	return out
}

// gradient returns the score in theta.
func (p *problem) gradient(theta []float64, a *acc) []float64 {
	kf := len(p.freeCols)
	dv := p.derivs(theta)
	g := make([]float64, len(dv))
	for i, d := range dv {
		if d.parallel {
			g[i] = -a.Vp[d.col]
			continue
		}
		for _, e := range d.c {
			g[i] += e.v * a.V[e.m*kf+d.col]
		}
	}
	return g
}

// hessian returns the P x P matrix of second derivatives of the
// log-likelihood (observed), or minus the expected information when the
// accumulator was built with expected=true (then curvature=false).
func (p *problem) hessian(theta []float64, a *acc, curvature bool) []float64 {
	kf, kp, q := len(p.freeCols), len(p.parCols), p.q
	dv := p.derivs(theta)
	P := len(dv)
	H := make([]float64, P*P)
	pairIdx := make([]int, q*q)
	for i := range pairIdx {
		pairIdx[i] = -1
	}
	for i, pr := range p.pairs {
		pairIdx[pr[0]*q+pr[1]] = i
	}
	sml := func(m, l, a1, b1 int) float64 {
		if m <= l {
			if k := pairIdx[m*q+l]; k >= 0 {
				return a.S[k][a1*kf+b1]
			}
			return 0
		}
		if k := pairIdx[l*q+m]; k >= 0 {
			return a.S[k][b1*kf+a1]
		}
		return 0
	}
	for i := 0; i < P; i++ {
		di := dv[i]
		for j := i; j < P; j++ {
			dj := dv[j]
			v := 0.0
			switch {
			case di.parallel && dj.parallel:
				v = a.T[di.col*kp+dj.col]
			case di.parallel:
				for _, e := range dj.c {
					v -= e.v * a.R[di.col*q*kf+e.m*kf+dj.col]
				}
			case dj.parallel:
				for _, e := range di.c {
					v -= e.v * a.R[dj.col*q*kf+e.m*kf+di.col]
				}
			default:
				for _, ei := range di.c {
					for _, ej := range dj.c {
						v += ei.v * ej.v * sml(ei.m, ej.m, di.col, dj.col)
					}
				}
			}
			H[i*P+j] = v
			H[j*P+i] = v
		}
	}
	if curvature {
		// d2 L_m / d gamma_k d phi_m = -x_k: adds sum_i w g_m (-x_k).
		ly := p.ly
		for _, k := range constrainedPredictors(p.model) {
			gi := ly.slope[k]
			d := ly.groupOf[k]
			for m := 1; m < q; m++ {
				pj := ly.phiIndex[d][m]
				v := -a.V[m*kf+p.freeOf[k]]
				H[gi*P+pj] += v
				H[pj*P+gi] += v
			}
		}
	}
	return H
}

func constrainedPredictors(m Model) []int {
	var out []int
	for k, e := range m.Effects {
		if e == Constrained {
			out = append(out, k)
		}
	}
	return out
}
