package fit

import (
	"math"
	"math/big"
)

// The probit link's tails in the row kernels: log Phi(z) and its
// derivative lam = phi(z)/Phi(z) by short Taylor polynomials about the
// centres c = k/32, |z| <= probitFast. Package math's erfc branches five
// ways on its argument and divides, and the tail then took a logarithm,
// an exponential and a division more: at every row and equation of a
// kernel that was about half of a stage probit kernel's time. Here a
// tail is two polynomials (of degree 8 and 7 up to z = 2, 11 and 10
// above) with no branch on z's sign, no division, no exponential or
// logarithm.
//
// The coefficients: lam solves lam' = -lam (z + lam), so with z = c + u
// and lam = sum l_k u^k, (k+1) l_(k+1) = -(c l_k + l_(k-1) + sum_(i<=k)
// l_i l_(k-i)); log Phi = b_0 + sum_(k>=1) l_(k-1) u^k / k. b_0 = log
// Phi(c) and l_0 = lam(c) come from package math's erfc and exp
// (normTailAt; as log1p of -erfc(c/sqrt2)/2 from c > 0 on, log Phi then
// near 0). The equation is
// stable forward (a perturbation of lam decays as e^(-int (z + 2 lam)),
// z + 2 lam > 0) and |u| <= 1/64, so an error in l_0 stays within a
// factor e^(8.5/64) along the interval. log Phi's singularities nearest
// the real axis (erfc's complex zeros) are 2.8 away from it, so the
// coefficients shrink at least as 2.8^-k and the first term left out,
// the ninth power, is below (64 2.8)^-9, 1e-20, of the scale below 0.
// normtail_test.go (TestProbitTableULP) measures log Phi and phi/Phi
// against math/big (within 3.2 and 3.9 ulp when written);
// linkfast_test.go (TestLinkFastAgreesWithMath, TestTailTablesDense)
// compares the tails with package math's erfc.

const (
	probitPerUnit = 32
	probitFast    = 8.5 // |z| served by the tables
	probitMid     = int(probitFast * probitPerUnit)
	probitDeg     = 8
	// Above 0 log Phi is -Q, Q = 1 - Phi, and lam about phi: relative to
	// them the terms fall only as (c u)^k / k!. lam's polynomial, of
	// degree 7 (8 from log Phi), leaves (c/64)^8 / 8! of it, 2e-17 at c =
	// 2; from there on the centres keep terms to the 11th power
	// (probitHigh): (8.5/64)^11 / 11! is 6e-18.
	probitSplit   = 2 * probitPerUnit
	probitHighDeg = 11
)

// probitLow holds, for each centre c = (k - 272)/32 <= 2, the Taylor
// coefficients b_0..b_8 of log Phi about c and, for the derivative, k b_k
// (k = 1..8); probitHigh the same to the 11th power for the centres c =
// (k + 64)/32 above 2 to 8.5 (Phi above 0.977: tails that far out are
// few, and the branch to them seldom taken).
var (
	probitLow [probitMid + probitSplit + 1]struct {
		b  [probitDeg + 1]float64
		db [probitDeg]float64
	}
	probitHigh [probitMid - probitSplit + 1]struct {
		b  [probitHighDeg + 1]float64
		db [probitHighDeg]float64
	}
)

func init() {
	for k := range probitLow {
		t := &probitLow[k]
		probitTaylor(float64(k-probitMid)/probitPerUnit, t.b[:], t.db[:])
	}
	for k := range probitHigh {
		t := &probitHigh[k]
		probitTaylor(float64(k+probitSplit)/probitPerUnit, t.b[:], t.db[:])
	}
}

// probitTaylor sets b to the Taylor coefficients of log Phi about c and
// db[k-1] to k b_k, the derivative's (len(db) = len(b) - 1).
func probitTaylor(c float64, b, db []float64) {
	var v, lam float64
	if c > 0 {
		Q := normTailAt(c)
		v, lam = math.Log1p(-Q), math.Exp(-0.5*c*c)/math.Sqrt(2*math.Pi)/(1-Q)
	} else {
		P := normTailAt(-c)
		v, lam = math.Log(P), math.Exp(-0.5*c*c)/math.Sqrt(2*math.Pi)/P
	}
	l := db // lam's coefficients l_0..: l_(k-1) = k b_k
	l[0] = lam
	for j := 0; j+1 < len(l); j++ {
		s := c * l[j]
		if j > 0 {
			s += l[j-1]
		}
		for i := 0; i <= j; i++ {
			s += l[i] * l[j-i]
		}
		l[j+1] = -s / float64(j+1)
	}
	b[0] = v
	for j := 1; j < len(b); j++ {
		b[j] = l[j-1] / float64(j)
	}
}

// invSqrt2Lo is 1/sqrt2 less the double nearest it (math.Sqrt2/2).
var invSqrt2Lo = func() float64 {
	r := new(big.Float).SetPrec(128).SetInt64(2)
	r.Sqrt(r)
	r.Quo(new(big.Float).SetPrec(128).SetInt64(1), r)
	r.Sub(r, new(big.Float).SetPrec(128).SetFloat64(math.Sqrt2/2))
	f, _ := r.Float64()
	return f
}()

// normTailAt is 1 - Phi(a) = erfc(a/sqrt2)/2 for a centre a >= 0: erfc
// of a/sqrt2 rounded, corrected to first order by the rounding's error e
// (erfc(x + e) = erfc(x) - 2/sqrt(pi) e^(-x^2) e), which would otherwise
// reach the tail relative to it times 2 x^2, 60 ulp at 8.5 (the centres
// are exact, so Phi there is as good as package math's erfc and exp).
func normTailAt(a float64) float64 {
	const hi = math.Sqrt2 / 2
	x := a * hi
	e := math.FMA(a, hi, -x) + a*invSqrt2Lo
	return 0.5 * (math.Erfc(x) - 2/math.Sqrt(math.Pi)*math.Exp(-x*x)*e)
}

// probitNear returns log Phi(z) and lam = phi(z)/Phi(z) for |z| <=
// probitFast (the caller checks); with value only, lam is not formed.
func probitNear(z float64, value bool) (v, lam float64) {
	k := int(z*probitPerUnit + (float64(probitMid) + 0.5))
	u := z - float64(k-probitMid)*(1.0/probitPerUnit) // exact
	if k > probitMid+probitSplit {
		return probitFar(k-probitMid-probitSplit, u, value)
	}
	t := &probitLow[k]
	u2 := u * u
	u4 := u2 * u2
	// Estrin's scheme: pairs of terms, then pairs of pairs, side by side.
	b := &t.b
	v = (b[0] + b[1]*u + u2*(b[2]+b[3]*u)) + u4*((b[4]+b[5]*u)+u2*(b[6]+b[7]*u)+u4*b[8])
	if value {
		return v, 0
	}
	d := &t.db
	lam = (d[0] + d[1]*u + u2*(d[2]+d[3]*u)) + u4*((d[4]+d[5]*u)+u2*(d[6]+d[7]*u))
	return v, lam
}

// probitFar is probitNear from probitHigh's centre k on.
func probitFar(k int, u float64, value bool) (v, lam float64) {
	t := &probitHigh[k]
	for j := probitHighDeg; j >= 0; j-- {
		v = v*u + t.b[j]
	}
	if !value {
		for j := probitHighDeg - 1; j >= 0; j-- {
			lam = lam*u + t.db[j]
		}
	}
	return v, lam
}

// The cauchy link's tails likewise: log F(z) and lam = f(z)/F(z) by
// Taylor polynomials about centres k/32, |z| <= cauchyFast, instead of
// package math's atan (which branches three ways and divides), a
// logarithm and two divisions. f = 1/(pi (1 + z^2)) about c has
// coefficients a f_0 = 1/pi, a f_1 + 2 c f_0 = 0, a f_k + 2 c f_(k-1) +
// f_(k-2) = 0 (a = 1 + c^2; the recurrence's roots have one modulus,
// 1/sqrt a, so neither solution swamps the other), F's are F(c) and
// f_(k-1)/k, lam = f/F's lam_k = (f_k - sum_(i=1..k) F_i lam_(k-i)) /
// F(c), and log F's log F(c) and lam_(k-1)/k. F(c) from package math's
// atan (log F(c) as log1p of -atan(1/c)/pi from c > 0 on). log F's
// singularities are +-i (atan's branch points; F has no complex zero),
// at least 1 from any real centre: with |u| <= 1/64 the first term left
// out, the 11th power, is below 64^-11, 1e-20, of the coefficients'
// scale; above 0 log F is about -(1 - F) = -1/(pi z), and the terms
// relative to it fall as (u/z)^k. lam's second derivative, the tail's
// curvature, is the derivative of lam's polynomial (no cancellation).
// normtail_test.go (TestCauchyTableULP) measures log F, lam and lam'
// against math/big (within 2.9, 3.2 and 4.4 ulp when written, lam' in
// ulps of the larger of its terms f'/F and lam^2).

const (
	cauchyFast = 8.0
	cauchyMid  = int(cauchyFast * probitPerUnit)
	cauchyDeg  = 10
)

// cauchyTable holds, for each centre c = (k - 256)/32, the Taylor
// coefficients of log F about c (b), of lam (l) and of lam's derivative
// (dl).
var cauchyTable [2*cauchyMid + 1]struct {
	b  [cauchyDeg + 1]float64
	l  [cauchyDeg]float64
	dl [cauchyDeg - 1]float64
}

func init() {
	for k := range cauchyTable {
		c := float64(k-cauchyMid) / probitPerUnit
		t := &cauchyTable[k]
		var F, v float64
		if c > 0 {
			Fc := math.Atan(1/c) / math.Pi
			F, v = 1-Fc, math.Log1p(-Fc)
		} else {
			F = math.Atan(-1/c) / math.Pi
			if c == 0 {
				F = 0.5
			}
			v = math.Log(F)
		}
		a := 1 + c*c
		var f, Fk [cauchyDeg]float64
		for j := range f {
			s := 0.0
			if j == 0 {
				s = 1 / math.Pi
			}
			if j >= 1 {
				s -= 2 * c * f[j-1]
			}
			if j >= 2 {
				s -= f[j-2]
			}
			f[j] = s / a
			if j >= 1 {
				Fk[j] = f[j-1] / float64(j)
			}
		}
		for j := range t.l {
			s := f[j]
			for i := 1; i <= j; i++ {
				s -= Fk[i] * t.l[j-i]
			}
			t.l[j] = s / F
		}
		t.b[0] = v
		for j := 1; j <= cauchyDeg; j++ {
			t.b[j] = t.l[j-1] / float64(j)
		}
		for j := range t.dl {
			t.dl[j] = float64(j+1) * t.l[j+1]
		}
	}
}

// cauchyPsiTable holds, for each centre c = (k - 256)/32, the Taylor
// coefficients about c of the adjacent comparison's psi = log F(z) -
// log F(-z) (v), of psi' = lam(z) + lam(-z) (d1) and of psi” = lam'(z) -
// lam'(-z) (d2), from cauchyTable's at c and at -c (the centre of index
// 2 cauchyMid - k; about it -z = -c - u, so its coefficient of u^j
// counts with the sign (-1)^j): one polynomial each where the two tails
// took two (Link.ratio).
var cauchyPsiTable [2*cauchyMid + 1]struct {
	v  [cauchyDeg + 1]float64
	d1 [cauchyDeg]float64
	d2 [cauchyDeg - 1]float64
}

func init() {
	for k := range cauchyPsiTable {
		t, lo, up := &cauchyPsiTable[k], &cauchyTable[k], &cauchyTable[2*cauchyMid-k]
		sign := 1.0
		for j := range t.v {
			t.v[j] = lo.b[j] - sign*up.b[j]
			if j < len(t.d1) {
				t.d1[j] = lo.l[j] + sign*up.l[j]
			}
			if j < len(t.d2) {
				t.d2[j] = lo.dl[j] - sign*up.dl[j]
			}
			sign = -sign
		}
	}
}

// cauchyPsi returns psi = log F(z) - log F(-z) under the cauchy link and
// its first two derivatives for |z| <= cauchyFast (the caller checks),
// from cauchyPsiTable as cauchyNear evaluates its polynomials.
func cauchyPsi(z float64) (v, d1, d2 float64) {
	k := int(z*probitPerUnit + (float64(cauchyMid) + 0.5))
	u := z - float64(k-cauchyMid)*(1.0/probitPerUnit) // exact
	t := &cauchyPsiTable[k]
	u2 := u * u
	u4 := u2 * u2
	u8 := u4 * u4
	b := &t.v
	v = (b[0] + b[1]*u + u2*(b[2]+b[3]*u)) + u4*((b[4]+b[5]*u)+u2*(b[6]+b[7]*u)) + u8*(b[8]+b[9]*u+u2*b[10])
	l := &t.d1
	d1 = (l[0] + l[1]*u + u2*(l[2]+l[3]*u)) + u4*((l[4]+l[5]*u)+u2*(l[6]+l[7]*u)) + u8*(l[8]+l[9]*u)
	d := &t.d2
	d2 = (d[0] + d[1]*u + u2*(d[2]+d[3]*u)) + u4*((d[4]+d[5]*u)+u2*(d[6]+d[7]*u)) + u8*d[8]
	return v, d1, d2
}

// cauchyNear returns log F(z), lam = f(z)/F(z) and lam's derivative
// under the cauchy link for |z| <= cauchyFast (the caller checks), to
// derivatives of order at most order (the others 0).
func cauchyNear(z float64, order int) (v, lam, dlam float64) {
	k := int(z*probitPerUnit + (float64(cauchyMid) + 0.5))
	u := z - float64(k-cauchyMid)*(1.0/probitPerUnit) // exact
	t := &cauchyTable[k]
	u2 := u * u
	u4 := u2 * u2
	u8 := u4 * u4
	b := &t.b
	v = (b[0] + b[1]*u + u2*(b[2]+b[3]*u)) + u4*((b[4]+b[5]*u)+u2*(b[6]+b[7]*u)) + u8*(b[8]+b[9]*u+u2*b[10])
	if order == 0 {
		return v, 0, 0
	}
	l := &t.l
	lam = (l[0] + l[1]*u + u2*(l[2]+l[3]*u)) + u4*((l[4]+l[5]*u)+u2*(l[6]+l[7]*u)) + u8*(l[8]+l[9]*u)
	if order == 1 {
		return v, lam, 0
	}
	d := &t.dl
	dlam = (d[0] + d[1]*u + u2*(d[2]+d[3]*u)) + u4*((d[4]+d[5]*u)+u2*(d[6]+d[7]*u)) + u8*d[8]
	return v, lam, dlam
}

// tableBetween is kernel.between with derivatives for the probit and
// cauchy links when both boundaries lie within the link's table (done
// false otherwise): log P as logDiffCDF forms it, bit for bit, and the
// ratios from the tails' own f/F instead of the densities' exponentials.
// Below the median (0) P = F(b) (1 - E), E = e^(t_a - t_b), t = log F,
// so f(b)/P = lam_b / D and f(a)/P = lam_a E / D with D = 1 - E (D and E
// from one expm1Exp, as log1mexp takes them); above it, the mirror image:
// the links are symmetric, P(a, b) = F(-a) - F(-b), so the same with
// (-b, -a), the ratios and second derivatives swapped.
func tableBetween(l Link, a, b float64) (m middle, ok, done bool) {
	lim := probitFast
	if l == Cauchy {
		lim = cauchyFast
	}
	if !(math.Abs(a) <= lim && math.Abs(b) <= lim) {
		return m, false, false
	}
	up := 0.5*(a+b) > 0
	if up {
		a, b = -b, -a
	}
	var ta, la, tb, lb float64
	if l == Probit {
		ta, la = probitNear(a, false)
		tb, lb = probitNear(b, false)
	} else {
		ta, la, _ = cauchyNear(a, 1)
		tb, lb, _ = cauchyNear(b, 1)
	}
	x := ta - tb
	mx, E := expm1Exp(x)
	D := -mx
	m.lp = tb + log1mexpOf(x, mx, E)
	if math.IsInf(m.lp, -1) || math.IsNaN(m.lp) {
		return m, false, true
	}
	inv := 1 / D
	m.rb, m.ra = lb*inv, la*E*inv
	// f'/f as logDensity forms it, without the log-density itself
	qa, qb := -a, -b
	if l == Cauchy {
		qa, qb = -2*a/(1+a*a), -2*b/(1+b*b)
	}
	m.setSecond(qa, qb)
	if up {
		m.ra, m.rb = m.rb, m.ra
		m.haa, m.hbb = m.hbb, m.haa
	}
	return m, true, true
}
