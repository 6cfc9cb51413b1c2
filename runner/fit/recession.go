package fit

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// A direction of recession is a change of the parameters along which no
// row's log-probability falls, whatever the starting point, and some
// row's rises: moving along it from any estimates raises the
// log-likelihood, so no finite point is its maximum (separation). A row
// of category c holds its probability when each linear predictor L_m the
// row's probability reads moves the right way: up (F(L_m) grows) for the
// equations whose F the probability carries, down for those whose
// 1 - F it carries. For the comparisons that is
//
//	cumulative   L_c up, L_{c-1} down (P = F(L_c) - F(L_{c-1}))
//	stage        L_c up, L_m down for m < c (forward); backward L_m up for
//	             m >= c, L_{c-1} down
//	adjacent     L_m up for m >= c, down for m < c (each ratio
//	             P(k)/P(c) falls); with the logit link the partial sums
//	             instead: sum_{m=c}^{k-1} dL_m >= 0 for k > c and
//	             sum_{m=k}^{c-1} dL_m <= 0 for k < c (P(c) is then the
//	             largest-growing share of a softmax)
//
// whatever the link, since F is increasing. These are linear
// inequalities M d >= 0 in the change d of the parameters that enter the
// linear predictors linearly. Whether some d has M d >= 0 and M d != 0
// is a linear programme: by Stiemke's alternative, exactly one of that
// and "some y > 0 has M'y = 0" holds. recessionLP solves it.
//
// The constrained effects b_mk = phi_m g_k are linear in g at fixed phi
// and in phi at fixed g, so the rays are tried both ways (every group at
// once); a group of one predictor is its unconstrained twin (any change
// of its J-1 slopes is a path of (g, phi) through the same effects), so
// its slopes move freely in both.

// The programme runs on every fit whose size R V^2 (R inequalities, V
// coordinates: its cost, about 2V pivots each pricing R V) is at most
// lpEveryFit, and on larger fits whose estimates or errors look diverging
// up to lpSuspect (and R V at most lpMemory, the matrix's size); beyond
// those the checks along rays alone decide.
const (
	lpEveryFit = 1e6
	lpSuspect  = 4e8
	lpMemory   = 4e6
)

// programmeDecides reports whether the programme's finding no direction
// proves that model m's log-likelihood has a finite maximum. For the
// cumulative and stage comparisons without constrained effects, whatever
// the link, each row's probability is at most F(L) or 1 - F(L) of every
// linear predictor L its inequalities name (cumulative: F(L_c) and
// 1 - F(L_{c-1}); stage: each factor of the product): with no direction
// satisfying them all, every direction moves some row's bound towards 0
// at a rate bounded away from 0 over the unit sphere, so the
// log-likelihood falls without bound far from any point, uniformly, and
// its maximum is attained. For the logit, probit, cloglog and loglog
// links the log-likelihood is also concave (log-concave densities, and
// F and 1 - F log-concave for each stage), so a stationary point is that
// maximum; with the Cauchy link it is not concave, and a stationary point
// may be a local maximum only (logConcave). For the adjacent comparison
// the inequalities are exactly the directions of recession with the
// logit link alone (a multinomial logit with linear constraints; with
// another link they are sufficient for a direction, not necessary), and
// for constrained effects phi_m g_k is not linear and only rays with phi
// or g held are tried.
func programmeDecides(m Model) bool {
	for _, e := range m.Effects {
		if e == Constrained {
			return false
		}
	}
	if m.Comparison == Adjacent {
		return m.Link == Logit
	}
	return true
}

// logConcave reports whether model m's log-likelihood is concave in the
// parameters that enter its linear predictors linearly, so that a
// stationary point is its maximum: every link but the Cauchy.
func logConcave(m Model) bool { return m.Link != Cauchy }

// maxRestarts is how many times finish carries the iterations on from a
// higher point the checks found (certify): a Cauchy fit with one row
// weighted 1e5 among rows of weight 1 climbed through four local maxima.
const maxRestarts = 20

// groupMove says how a constraint group's effects move along a ray (a
// group of one predictor moves its J-1 slopes freely either way).
type groupMove int

const (
	phiHeld groupMove = iota // g moves, phi held
	gHeld                    // phi moves, g held
)

// lpVariable is one coordinate of the programme's direction: a cutpoint
// (cut >= 0), or a change of the slopes b_mk by w[m*K+k] per unit.
type lpVariable struct {
	cut int
	w   []float64
}

// recessionVerdict is what the programme says of the data.
type recessionVerdict int

const (
	// recessionUnknown: the programme did not run (no rows at hand, too
	// many distinct rows for its size) or did not settle, or the
	// log-likelihood fell along the direction it found.
	recessionUnknown recessionVerdict = iota
	// recessionNone: the programme settled with no direction for every
	// way the constraint groups may move (a finite maximum, for the
	// models where programmeDecides).
	recessionNone
	// recessionFound: a direction of recession, along which the
	// log-likelihood was seen not to fall (separation).
	recessionFound
)

// recession is a direction of recession found by the programme and
// followed on the log-likelihood: step, the change of the parameters from
// the estimates to the farther point checked (the parameters' own units),
// and rows, the distinct rows the programme ran on.
type recession struct {
	step []float64
	rows []int
}

// programmeOff, set by tests alone, keeps the programme from running, as
// on a fit too large for it.
var programmeOff = false

// recessionDirection looks for a direction of recession of the model at
// the estimates theta: the programme over the data's distinct rows for
// each way the constraint groups may move, and the ray it finds checked
// on the log-likelihood (which must not fall along it). suspect says the
// estimates or errors look diverging (a larger programme is then worth
// its cost). It returns the verdict and, when one is found, the direction.
func (src *source) recessionDirection(r *Result, ly *layout, theta []float64, ll float64, suspect bool) (recessionVerdict, *recession) {
	d := src.rows
	if d == nil || len(ly.params) != len(theta) || d.J < 2 || programmeOff {
		return recessionUnknown, nil
	}
	V := float64(len(theta))
	perRow := float64(d.J - 1) // inequalities per row (at most)
	if r.Model.Comparison == Cumulative {
		perRow = math.Min(perRow, 2)
	}
	if !suspect && float64(d.N())*perRow*V*V > 50*lpEveryFit {
		return recessionUnknown, nil // not even the distinct rows are worth finding
	}
	// The most distinct rows the programme may take: beyond them, nothing
	// is worth finding (every row of a million with continuous predictors
	// is distinct).
	most := lpEveryFit / (perRow * V * V)
	if suspect {
		most = math.Max(most, math.Min(lpSuspect/(perRow*V*V), lpMemory/(perRow*V)))
	}
	rows := distinctRows(d, int(most))
	if rows == nil {
		return recessionUnknown, nil
	}
	moves := []groupMove{phiHeld}
	for _, ks := range ly.groups {
		if len(ks) > 1 {
			moves = append(moves, gHeld)
			break
		}
	}
	verdict := recessionNone
	for _, mv := range moves {
		vars := lpVariables(ly, theta, r.Model, mv)
		dir, settled := recessionSolve(recessionRows(d, rows, r.Model, ly, vars))
		if dir == nil {
			if !settled {
				verdict = recessionUnknown
			}
			continue
		}
		if step := src.followRecession(ly, theta, ll, vars, dir, mv); step != nil {
			return recessionFound, &recession{step: step, rows: rows}
		}
		verdict = recessionUnknown
	}
	return verdict, nil
}

// distinctRows returns one row index for each distinct pair of category
// and predictor values among the rows of positive weight, in row order, or
// nil as soon as there are more than most of them.
func distinctRows(d *Data, most int) []int {
	K := len(d.Predictors)
	seen := map[uint64][]int{}
	var out []int
	same := func(i, j int) bool {
		if d.Y[i] != d.Y[j] {
			return false
		}
		for k := 0; k < K; k++ {
			if math.Float64bits(d.at(i, k)) != math.Float64bits(d.at(j, k)) {
				return false
			}
		}
		return true
	}
	const offset, prime = 14695981039346656037, 1099511628211 // FNV-1a
	for i, y := range d.Y {
		if d.weight(i) <= 0 {
			continue
		}
		h := (offset ^ uint64(y)) * prime
		for k := 0; k < K; k++ {
			h = (h ^ math.Float64bits(d.at(i, k))) * prime
		}
		dup := false
		for _, j := range seen[h] {
			if same(i, j) {
				dup = true
				break
			}
		}
		if !dup {
			if len(out) == most {
				return nil
			}
			seen[h] = append(seen[h], i)
			out = append(out, i)
		}
	}
	return out
}

// lpVariables lists the coordinates of a direction of the model's slopes
// and cutpoints that keeps it in the model, its groups moving by mv (a
// group of one predictor always moves its slopes freely).
func lpVariables(ly *layout, theta []float64, m Model, mv groupMove) []lpVariable {
	q, K := ly.J-1, ly.K
	var vars []lpVariable
	for j := 0; j < q; j++ {
		vars = append(vars, lpVariable{cut: j})
	}
	slope := func(set func(w []float64)) {
		w := make([]float64, q*K)
		set(w)
		vars = append(vars, lpVariable{cut: -1, w: w})
	}
	for k, e := range m.Effects {
		switch e {
		case Parallel:
			slope(func(w []float64) {
				for j := 0; j < q; j++ {
					w[j*K+k] = 1
				}
			})
		case Nonparallel:
			for j := 0; j < q; j++ {
				slope(func(w []float64) { w[j*K+k] = 1 })
			}
		case Constrained:
			dg := ly.groupOf[k]
			switch {
			case len(ly.groups[dg]) == 1:
				for j := 0; j < q; j++ {
					slope(func(w []float64) { w[j*K+k] = 1 })
				}
			case mv == phiHeld:
				phi := ly.phi(theta, dg)
				slope(func(w []float64) {
					for j := 0; j < q; j++ {
						w[j*K+k] = phi[j]
					}
				})
			}
		}
	}
	if mv == gHeld {
		for _, ks := range ly.groups {
			if len(ks) == 1 {
				continue
			}
			for j := 1; j < q; j++ {
				slope(func(w []float64) {
					for _, k := range ks {
						w[j*K+k] = theta[ly.slope[k]]
					}
				})
			}
		}
	}
	return vars
}

// lpRows is the matrix M of the inequalities M d >= 0 of a direction of
// recession: R rows of V, row-major, each column scaled to largest
// absolute value 1 (scale holds the factors, to be undone on d).
type lpRows struct {
	R, V  int
	a     []float64
	scale []float64
}

// row is row i of M.
func (M *lpRows) row(i int) []float64 { return M.a[i*M.V : (i+1)*M.V] }

// recessionRows builds the inequalities of a direction of recession, one
// row of M per condition of each distinct data row.
func recessionRows(d *Data, rows []int, m Model, ly *layout, vars []lpVariable) *lpRows {
	q, K := ly.J-1, ly.K
	V := len(vars)
	M := &lpRows{V: V}
	x := make([]float64, K)
	dL := make([]float64, q*V) // dL[j*V+v]: change of L_j per unit of variable v
	add := func(sign float64, lo, hi int) {
		n := len(M.a)
		M.a = append(M.a, make([]float64, V)...)
		row := M.a[n:]
		for j := lo; j < hi; j++ {
			for v := range row {
				row[v] += sign * dL[j*V+v]
			}
		}
		M.R++
	}
	logitAdjacent := m.Comparison == Adjacent && m.Link == Logit
	for _, i := range rows {
		for k := range x {
			x[k] = d.at(i, k)
		}
		for j := 0; j < q; j++ {
			for v, lv := range vars {
				switch {
				case lv.cut == j:
					dL[j*V+v] = 1
				case lv.cut >= 0:
					dL[j*V+v] = 0
				default:
					s := 0.0
					for k, xk := range x {
						s += xk * lv.w[j*K+k]
					}
					dL[j*V+v] = -s
				}
			}
		}
		c := d.Y[i]
		switch {
		case logitAdjacent:
			for k := c + 1; k <= q; k++ {
				add(1, c, k)
			}
			for k := 0; k < c; k++ {
				add(-1, k, c)
			}
		default:
			lo, hi := recessionRange(m, c, q)
			for j := lo; j < hi; j++ {
				sign := 1.0
				if j < c {
					sign = -1
				}
				add(sign, j, j+1)
			}
		}
	}
	M.scale = make([]float64, V)
	for i := 0; i < M.R; i++ {
		for v, a := range M.row(i) {
			M.scale[v] = math.Max(M.scale[v], math.Abs(a))
		}
	}
	for v, sc := range M.scale {
		if !(sc > 0) {
			M.scale[v] = 1
		}
	}
	for i := 0; i < M.R; i++ {
		row := M.row(i)
		for v := range row {
			row[v] /= M.scale[v]
		}
	}
	return M
}

// recessionRange is the equations lo..hi-1 whose F or 1 - F the
// probability of category c carries: the cumulative difference reads two,
// the adjacent ratios all, stage and stacked models their kernel's
// tailRange.
func recessionRange(m Model, c, q int) (lo, hi int) {
	switch m.Comparison {
	case Cumulative:
		return max(c-1, 0), min(c+1, q)
	case Adjacent:
		return 0, q
	}
	k := kernel{cmp: m.Comparison, backward: m.Backward, nEq: q}
	return k.tailRange(c)
}

// recessionLP returns a direction d (in the variables' own units) with
// M d >= 0 and M d != 0, or nil when none exists (or the programme did
// not settle: recessionSolve tells the two apart).
func recessionLP(M *lpRows) []float64 {
	d, _ := recessionSolve(M)
	return d
}

// recessionSolve is recessionLP; settled is false when the programme
// could not decide (the iterations ran out, the basis became singular, or
// the direction read from it fails the inequalities), true when d is a
// direction or none exists. The rows of M are in the variables' scaled units; M.scale
// holds the scales (recessionRows).
//
// Written here rather than through gonum's optimize/convex/lp: its
// Simplex returns the primal optimum only, while the direction is the
// dual solution, and posing the dual there puts about R + V rows in a
// dense basis factorized at every pivot (R, the inequalities, runs to
// thousands); the revised simplex below keeps a V x V basis.
//
// It solves by the revised simplex method the programme
//
//	minimize 1'(a + b)  subject to  M'y - a + b = -M'1,  y, a, b >= 0,
//
// the distance of M'(1 + y), y >= 0, from zero in the 1-norm: zero when
// weights 1 + y > 0 balance the rows (Stiemke's alternative: no
// direction), positive otherwise. Its dual is: maximize 1'M d subject to
// M d >= 0 and |d_j| <= 1, whose solution d is read from the final basis
// (d = -lambda, the multipliers of the equality constraints).
func recessionSolve(M *lpRows) ([]float64, bool) {
	return recessionSolveOn(M, nil)
}

// recessionSolveOn is recessionSolve with the objective 1'M d summed over
// the rows i with on[i] only (all rows when on is nil): it finds a
// direction that raises one of those strictly while keeping every row's
// inequality, or says none does (its dual's right side is -M'w, w the
// indicator of on).
func recessionSolveOn(M *lpRows, on []bool) ([]float64, bool) {
	R, V := M.R, M.V
	if R == 0 || V == 0 {
		return nil, true
	}
	// Columns: y_0..y_{R-1}, a_0..a_{V-1}, b_0..b_{V-1}.
	N := R + 2*V
	col := func(k int, out []float64) {
		switch {
		case k < R:
			copy(out, M.row(k))
		case k < R+V:
			clear(out)
			out[k-R] = -1
		default:
			clear(out)
			out[k-R-V] = 1
		}
	}
	cost := func(k int) float64 {
		if k < R {
			return 0
		}
		return 1
	}
	rhs := make([]float64, V)
	for i := 0; i < R; i++ {
		if on != nil && !on[i] {
			continue
		}
		for v, a := range M.row(i) {
			rhs[v] -= a
		}
	}
	// Phase 1 is not needed: a or b per constraint is a feasible basis.
	basis := make([]int, V)
	xb := make([]float64, V)
	Binv := make([]float64, V*V)
	for v := 0; v < V; v++ {
		if rhs[v] >= 0 {
			basis[v], xb[v], Binv[v*V+v] = R+V+v, rhs[v], 1
		} else {
			basis[v], xb[v], Binv[v*V+v] = R+v, -rhs[v], -1
		}
	}
	const tol = 1e-9
	inBasis := make([]bool, N)
	for _, k := range basis {
		inBasis[k] = true
	}
	lambda := make([]float64, V)
	a := make([]float64, V)
	u := make([]float64, V)
	degenerate := 0
	for iter := 0; ; iter++ {
		if iter > 20*(V+10) {
			return nil, false
		}
		// Multipliers lambda' = c_B' B^-1.
		clear(lambda)
		for r, k := range basis {
			if c := cost(k); c != 0 {
				for v := 0; v < V; v++ {
					lambda[v] += c * Binv[r*V+v]
				}
			}
		}
		// Entering column: the most negative reduced cost (Dantzig), or
		// the first negative one after degenerate steps (Bland).
		enter, best := -1, -tol
		for k := 0; k < N; k++ {
			if inBasis[k] {
				continue
			}
			var rc float64
			switch {
			case k < R:
				s := 0.0
				for v, m := range M.row(k) {
					s += lambda[v] * m
				}
				rc = -s
			case k < R+V:
				rc = 1 + lambda[k-R]
			default:
				rc = 1 - lambda[k-R-V]
			}
			if rc < best {
				enter, best = k, rc
				if degenerate > 0 {
					break
				}
			}
		}
		if enter < 0 {
			break
		}
		col(enter, a)
		for r := 0; r < V; r++ {
			s := 0.0
			for v := 0; v < V; v++ {
				s += Binv[r*V+v] * a[v]
			}
			u[r] = s
		}
		leave, ratio := -1, math.Inf(1)
		for r := 0; r < V; r++ {
			if u[r] > tol {
				t := xb[r] / u[r]
				if t < ratio-tol || (t <= ratio+tol && leave >= 0 && basis[r] < basis[leave]) {
					leave, ratio = r, t
				}
			}
		}
		if leave < 0 {
			return nil, false // unbounded: cannot happen for a norm
		}
		if ratio <= tol {
			degenerate++
		} else {
			degenerate = 0
		}
		// Pivot.
		p := u[leave]
		for v := 0; v < V; v++ {
			Binv[leave*V+v] /= p
		}
		xb[leave] /= p
		for r := 0; r < V; r++ {
			if r == leave || u[r] == 0 {
				continue
			}
			f := u[r]
			for v := 0; v < V; v++ {
				Binv[r*V+v] -= f * Binv[leave*V+v]
			}
			xb[r] -= f * xb[leave]
		}
		inBasis[basis[leave]] = false
		basis[leave], inBasis[enter] = enter, true
		if iter%64 == 63 && !refactor(basis, col, Binv, xb, rhs) {
			return nil, false
		}
	}
	obj := 0.0
	for r, k := range basis {
		obj += cost(k) * xb[r]
	}
	if obj <= 1e-7 {
		return nil, true
	}
	// d = -lambda; it must meet the inequalities, some strictly.
	d := make([]float64, V)
	for v := range d {
		d[v] = -lambda[v]
	}
	most := 0.0
	for i := 0; i < R; i++ {
		s := 0.0
		for v, m := range M.row(i) {
			s += m * d[v]
		}
		if s < -1e-7 {
			return nil, false
		}
		if on == nil || on[i] {
			most = math.Max(most, s)
		}
	}
	if most < 1e-6 {
		return nil, false
	}
	for v := range d {
		d[v] /= M.scale[v]
	}
	return d, true
}

// refactor recomputes the basis inverse and the basic values from the
// columns (against the drift of the product updates); false when the
// basis has become singular.
func refactor(basis []int, col func(int, []float64), Binv, xb, rhs []float64) bool {
	V := len(basis)
	B := mat.NewDense(V, V, nil)
	a := make([]float64, V)
	for r, k := range basis {
		col(k, a)
		B.SetCol(r, a)
	}
	var inv mat.Dense
	if err := inv.Inverse(B); err != nil {
		return false
	}
	for r := 0; r < V; r++ {
		s := 0.0
		for v := 0; v < V; v++ {
			Binv[r*V+v] = inv.At(r, v)
			s += Binv[r*V+v] * rhs[v]
		}
		xb[r] = s
	}
	return true
}

// followRecession turns the programme's direction dir (of vars) into a
// path of the parameters and checks that the log-likelihood does not fall
// along it at two distances (the largest change of a linear predictor's
// piece 5 and 20 units): the guard against rounding in the programme. It
// returns the change of the parameters to the farther point, or nil.
func (src *source) followRecession(ly *layout, theta []float64, ll float64, vars []lpVariable, dir []float64, mv groupMove) []float64 {
	q, K := ly.J-1, ly.K
	dtau := make([]float64, q)
	dB := make([]float64, q*K)
	for v, lv := range vars {
		if lv.cut >= 0 {
			dtau[lv.cut] += dir[v]
			continue
		}
		for i, w := range lv.w {
			dB[i] += dir[v] * w
		}
	}
	// The unit of the path: the largest change of a piece of the linear
	// predictor (a cutpoint, or a slope times its predictor's SD).
	most := 0.0
	for j := 0; j < q; j++ {
		most = math.Max(most, math.Abs(dtau[j]))
		for k := 0; k < K; k++ {
			most = math.Max(most, math.Abs(dB[j*K+k])*src.sd[k])
		}
	}
	if !(most > 0) || math.IsInf(most, 0) {
		return nil
	}
	at := func(t float64) []float64 {
		x := slices.Clone(theta)
		for i, pa := range ly.params {
			switch pa.kind {
			case pCut:
				x[i] += t * dtau[pa.m]
			case pParallel:
				x[i] += t * dB[pa.k]
			case pFree:
				x[i] += t * dB[pa.m*K+pa.k]
			}
		}
		for dg, ks := range ly.groups {
			phi := ly.phi(theta, dg)
			switch {
			case len(ks) == 1:
				k := ks[0]
				g := theta[ly.slope[k]] + t*dB[k]
				if g == 0 {
					return nil
				}
				x[ly.slope[k]] = g
				for j := 1; j < q; j++ {
					x[ly.phiIndex[dg][j]] = (phi[j]*theta[ly.slope[k]] + t*dB[j*K+k]) / g
				}
			case mv == phiHeld:
				for _, k := range ks {
					x[ly.slope[k]] += t * dB[k]
				}
			default:
				// phi_m moves by dB[m][k] / g_k, the same for every k of
				// the group: read it at the group's largest g.
				kb := ks[0]
				for _, k := range ks {
					if math.Abs(theta[ly.slope[k]]) > math.Abs(theta[ly.slope[kb]]) {
						kb = k
					}
				}
				gb := theta[ly.slope[kb]]
				if gb == 0 {
					return nil
				}
				for j := 1; j < q; j++ {
					x[ly.phiIndex[dg][j]] += t * dB[j*K+kb] / gb
				}
			}
		}
		return x
	}
	tol := 1e-9 * math.Max(1, math.Abs(ll))
	var far []float64
	for _, units := range []float64{5, 20} {
		x := at(units / most)
		if x == nil {
			x = at(1.5 * units / most)
		}
		if x == nil {
			return nil
		}
		a := src.loglik(x, 0)
		if a.bad || a.ll < ll-tol {
			return nil
		}
		far = x
	}
	step := make([]float64, len(theta))
	for i := range step {
		step[i] = far[i] - theta[i]
	}
	return step
}

// wideErrors reports whether some cutpoint's or slope's standard error
// moves the linear predictor by more than 100 (a slope's times its
// predictor's SD), or some phi's exceeds 100 times its estimate's size
// (at least 1): errors a separation leaves behind.
func wideErrors(ly *layout, theta, cov, sd []float64) bool {
	P := len(theta)
	for i, pa := range ly.params {
		v := cov[i*P+i]
		if !(v > 0) {
			continue
		}
		unit := 1.0
		switch pa.kind {
		case pParallel, pFree, pGamma:
			unit = sd[pa.k]
		case pPhi:
			unit = 1 / math.Max(1, math.Abs(theta[i]))
		}
		if math.Sqrt(v)*unit > 100 {
			return true
		}
	}
	return false
}
