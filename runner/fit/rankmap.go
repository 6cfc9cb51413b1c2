package fit

// rankMap writes the constrained parameters as the partial model's
// parameters: the slopes of a constrained predictor k in group g become the
// free slopes b_mk = phi_m g_k. Ref gives, per group, the equation (0-based)
// whose phi is fixed at 1; the constrained model's own normalization is
// ref = 0. With ref[g] = r > 0 the vector keeps the constrained layout and
// the slot of phi_r holds phi_1.
type rankMap struct {
	c, np *layout
	eff   []Effect
	ref   []int
}

func newRankMap(c, np *layout, eff []Effect, ref []int) rankMap {
	if ref == nil {
		ref = make([]int, len(c.groups))
	}
	return rankMap{c: c, np: np, eff: eff, ref: ref}
}

// slot is the index of phi_m of group g in the parameter vector (-1 when
// phi_m is the fixed 1).
func (r rankMap) slot(g, m int) int {
	switch {
	case m == r.ref[g]:
		return -1
	case m == 0:
		return r.c.phiIndex[g][r.ref[g]]
	}
	return r.c.phiIndex[g][m]
}

func (r rankMap) phi(th []float64, g int) []float64 {
	out := make([]float64, r.c.J-1)
	for m := range out {
		out[m] = 1
		if s := r.slot(g, m); s >= 0 {
			out[m] = th[s]
		}
	}
	return out
}

// h maps the parameters to the partial model's parameters.
func (r rankMap) h(th []float64) []float64 {
	q := r.c.J - 1
	out := make([]float64, len(r.np.params))
	for j := 0; j < q; j++ {
		out[r.np.cut[j]] = th[r.c.cut[j]]
	}
	phis := make([][]float64, len(r.c.groups))
	for g := range phis {
		phis[g] = r.phi(th, g)
	}
	for k, e := range r.eff {
		cs, ns := r.c.slope[k], r.np.slope[k]
		switch e {
		case Parallel:
			out[ns] = th[cs]
		case Nonparallel:
			copy(out[ns:ns+q], th[cs:cs+q])
		case Constrained:
			ph := phis[r.c.groupOf[k]]
			for j := 0; j < q; j++ {
				out[ns+j] = ph[j] * th[cs]
			}
		}
	}
	return out
}

// jac is dh/dtheta, Pnp x P row-major.
func (r rankMap) jac(th []float64) []float64 {
	q := r.c.J - 1
	P, Pn := len(r.c.params), len(r.np.params)
	J := make([]float64, Pn*P)
	for j := 0; j < q; j++ {
		J[r.np.cut[j]*P+r.c.cut[j]] = 1
	}
	for k, e := range r.eff {
		cs, ns := r.c.slope[k], r.np.slope[k]
		switch e {
		case Parallel:
			J[ns*P+cs] = 1
		case Nonparallel:
			for j := 0; j < q; j++ {
				J[(ns+j)*P+cs+j] = 1
			}
		case Constrained:
			g := r.c.groupOf[k]
			ph := r.phi(th, g)
			for j := 0; j < q; j++ {
				J[(ns+j)*P+cs] = ph[j]
				if s := r.slot(g, j); s >= 0 {
					J[(ns+j)*P+s] = th[cs]
				}
			}
		}
	}
	return J
}

// chain returns J'v and J'MJ + sum_i v_i d2h_i, the gradient and Hessian of
// f(h(theta)) from the gradient v and Hessian M of f in the partial
// parameters (the only second derivatives of h are d2 b_mk / dg_k dphi_m = 1).
func (r rankMap) chain(th, v, M []float64) ([]float64, []float64) {
	P, Pn := len(r.c.params), len(r.np.params)
	J := r.jac(th)
	g := make([]float64, P)
	for a := 0; a < P; a++ {
		for i := 0; i < Pn; i++ {
			g[a] += J[i*P+a] * v[i]
		}
	}
	H := atMA(J, Pn, P, M)
	q := r.c.J - 1
	for k, e := range r.eff {
		if e != Constrained {
			continue
		}
		cs, ns, g := r.c.slope[k], r.np.slope[k], r.c.groupOf[k]
		for j := 0; j < q; j++ {
			if s := r.slot(g, j); s >= 0 {
				H[cs*P+s] += v[ns+j]
				H[s*P+cs] += v[ns+j]
			}
		}
	}
	return g, H
}

// fromStandard rewrites a vector of the normalization phi_1 = 1 in this
// map's normalization (phi' = phi / phi_ref, gamma' = phi_ref gamma).
func (r rankMap) fromStandard(th []float64) []float64 {
	out := append([]float64(nil), th...)
	for g, ks := range r.c.groups {
		ph := r.c.phi(th, g)
		pr := ph[r.ref[g]]
		for m := range ph {
			if s := r.slot(g, m); s >= 0 {
				out[s] = ph[m] / pr
			}
		}
		for _, k := range ks {
			out[r.c.slope[k]] = pr * th[r.c.slope[k]]
		}
	}
	return out
}

// toStandard is the inverse of fromStandard (phi_1 must not be 0).
func (r rankMap) toStandard(th []float64) []float64 {
	out := append([]float64(nil), th...)
	for g, ks := range r.c.groups {
		ph := r.phi(th, g)
		p1 := ph[0]
		for m := 1; m < len(ph); m++ {
			out[r.c.phiIndex[g][m]] = ph[m] / p1
		}
		for _, k := range ks {
			out[r.c.slope[k]] = p1 * th[r.c.slope[k]]
		}
	}
	return out
}
