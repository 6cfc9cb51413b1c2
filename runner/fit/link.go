package fit

import (
	"math"

	"ordplan/internal/words"
)

// Link is an inverse link function F applied to a linear predictor.
type Link int

// The supported links.
const (
	Logit Link = iota
	Probit
	Cloglog
	Loglog
	Cauchy
)

// LinkWords is the vocabulary of links, in the order of the constants:
// adding a link is adding a constant, its word here and its functions below.
var LinkWords = words.New[Link]("link", "logit", "probit", "cloglog", "loglog", "cauchy")

func (l Link) String() string { return LinkWords.Name(l) }

// MarshalText writes the link's word.
func (l Link) MarshalText() ([]byte, error) { return LinkWords.Text(l) }

// UnmarshalText reads a link's word.
func (l *Link) UnmarshalText(b []byte) (err error) {
	*l, err = LinkWords.Parse(string(b))
	return err
}

// ParseLink turns a link's word into a Link.
func ParseLink(s string) (Link, error) { return LinkWords.Parse(s) }

// tail holds log F(z) or log(1-F(z)) with its first two derivatives in z.
type tail struct{ v, d1, d2 float64 }

// lower returns log F(z) and its derivatives.
func (l Link) lower(z float64) tail {
	switch l {
	case Logit:
		// log F = -log(1+e^-z); d = 1-F; d2 = -F(1-F)
		p := newLogitPoint(z)
		return tail{p.logF(), p.Fc, -p.F * p.Fc}
	case Probit:
		v := logPhi(z)
		lam := millsInv(z) // phi(z)/Phi(z)
		return tail{v, lam, -lam * (z + lam)}
	case Cloglog:
		// F = 1-exp(-e^z). log F = log(-expm1(-u)), u = e^z.
		u := math.Exp(z)
		if u == 0 {
			// F ~ u: log F ~ z, derivatives 1 and 0
			return tail{z, 1, 0}
		}
		v := math.Log(-math.Expm1(-u))
		a := u / math.Expm1(u) // d log F / dz
		if math.IsInf(math.Expm1(u), 1) {
			a = 0
		}
		// d a/dz = a - u*a*e^u/(e^u-1) = a*(1 - u/(1-e^-u))
		d2 := a * (1 - u/(-math.Expm1(-u)))
		if a == 0 {
			d2 = 0
		}
		return tail{v, a, d2}
	case Loglog:
		t := Cloglog.upper(-z)
		return tail{t.v, -t.d1, t.d2}
	case Cauchy:
		F := cauchyCDF(z)
		f := 1 / (math.Pi * (1 + z*z))
		r := f / F
		fp := -2 * z / (1 + z*z) * f
		return tail{math.Log(F), r, fp/F - r*r}
	}
	panic("fit: unknown link")
}

// upper returns log(1-F(z)) and its derivatives.
func (l Link) upper(z float64) tail {
	switch l {
	case Logit:
		p := newLogitPoint(z)
		return tail{p.logFc(), -p.F, -p.F * p.Fc}
	case Probit, Cauchy:
		t := l.lower(-z)
		return tail{t.v, -t.d1, t.d2}
	case Cloglog:
		u := math.Exp(z)
		return tail{-u, -u, -u}
	case Loglog:
		t := Cloglog.lower(-z)
		return tail{t.v, -t.d1, t.d2}
	}
	panic("fit: unknown link")
}

// cdf returns F(z).
func (l Link) cdf(z float64) float64 {
	switch l {
	case Logit:
		return newLogitPoint(z).F
	case Probit:
		return 0.5 * math.Erfc(-z/math.Sqrt2)
	case Cloglog:
		return -math.Expm1(-math.Exp(z))
	case Loglog:
		return math.Exp(-math.Exp(-z))
	case Cauchy:
		return cauchyCDF(z)
	}
	panic("fit: unknown link")
}

// CDF is the inverse link F(z).
func (l Link) CDF(z float64) float64 { return l.cdf(z) }

// Quantile is the link function F^-1(p).
func (l Link) Quantile(p float64) float64 {
	switch l {
	case Logit:
		return math.Log(p) - math.Log1p(-p)
	case Probit:
		return -math.Sqrt2 * math.Erfcinv(2*p)
	case Cloglog:
		return math.Log(-math.Log1p(-p))
	case Loglog:
		return -math.Log(-math.Log(p))
	case Cauchy:
		return math.Tan(math.Pi * (p - 0.5))
	}
	panic("fit: unknown link")
}

// logDensity returns log f(z) and f'(z)/f(z), where f = F'.
func (l Link) logDensity(z float64) (float64, float64) {
	switch l {
	case Logit:
		return newLogitPoint(z).logDensity()
	case Probit:
		return -0.5*z*z - 0.5*math.Log(2*math.Pi), -z
	case Cloglog:
		u := math.Exp(z)
		return z - u, 1 - u
	case Loglog:
		u := math.Exp(-z)
		return -z - u, u - 1
	case Cauchy:
		return -math.Log(math.Pi) - math.Log1p(z*z), -2 * z / (1 + z*z)
	}
	panic("fit: unknown link")
}

// logitPoint holds the logistic quantities of one z from one exponential,
// e = exp(-|z|), and one division: F(z) and 1 - F(z), each without
// cancellation. Every logit quantity of the link (Link's lower, upper, cdf
// and logDensity) and of the row kernels is formed from it; the logarithms
// log F = -log1p(e^-z) and log(1 - F) = -log1p(e^z) take one log1p more
// (logitTails shares one among several points).
type logitPoint struct{ z, e, F, Fc float64 }

func newLogitPoint(z float64) logitPoint { return logitPointOf(z, fastExp(-math.Abs(z))) }

// logitPointOf is newLogitPoint with e = exp(-|z|) at hand.
func logitPointOf(z, e float64) logitPoint {
	p := logitPoint{z: z, e: e, F: 1 / (1 + e)}
	p.Fc = e * p.F
	if z < 0 {
		p.F, p.Fc = p.Fc, p.F
	}
	return p
}

// logF is log F(z) = -log(1 + e^-z) = -max(-z, 0) - log1p(e^-|z|).
func (p logitPoint) logF() float64 { return -fastLog1p(p.e) - max(-p.z, 0) }

// logFc is log(1 - F(z)) = -log(1 + e^z) = -max(z, 0) - log1p(e^-|z|).
func (p logitPoint) logFc() float64 { return -fastLog1p(p.e) - max(p.z, 0) }

// logDensity returns log f(z) = log F(z) + log(1 - F(z)) = -|z| -
// 2 log(1 + e^-|z|) and f'(z)/f(z) = 1 - 2 F(z).
func (p logitPoint) logDensity() (float64, float64) {
	return -math.Abs(p.z) - 2*fastLog1p(p.e), p.Fc - p.F
}

// logitTails sums the log-tails of several logit points, log F(z) for
// some and log(1 - F(z)) for others, with one log1p for all: each is
// -max(-z, 0) or -max(z, 0), minus log1p(e^-|z|), and the sum of the
// log1p terms is log1p(t) with 1 + t the product of the (1 + e^-|z|),
// t formed from positive terms only (t + e + t e), so without
// cancellation.
type logitTails struct{ shift, t float64 }

// add adds log(1 - F(z)) (upper) or log F(z) of point p.
func (s *logitTails) add(p logitPoint, upper bool) {
	if upper {
		s.shift += max(p.z, 0)
	} else {
		s.shift += max(-p.z, 0)
	}
	s.t += p.e + s.t*p.e
}

// sum is the sum of the log-tails added.
func (s *logitTails) sum() float64 { return -s.shift - fastLog1p(s.t) }

// logitBetween returns, for a < b under the logit link, log P with
// P = F(b) - F(a), and f(a)/P and f(b)/P (f = F'), from the two points'
// exponentials, one logarithm and no further exponential but for b - a
// below 1/2: P = F(b) (1 - F(a)) (1 - e^(a-b)), each factor without
// cancellation, f(a)/P = F(a) / (F(b) (1 - e^(a-b))) and
// f(b)/P = (1 - F(b)) / ((1 - F(a)) (1 - e^(a-b))). When P is near the
// smallest normal number (one point far in a tail), the log-space path
// takes over (ok false: the caller uses logitDiff and the densities).
func logitBetween(pa, pb logitPoint) (lp, ra, rb float64, ok bool) {
	var D float64 // 1 - e^(a-b)
	if d := pb.z - pa.z; d < 0.5 {
		D = -math.Expm1(-d)
	} else {
		var E float64
		switch {
		case pa.z >= 0: // e = e^-a, e^-b
			E = pb.e / pa.e
		case pb.z < 0: // e = e^a, e^b
			E = pa.e / pb.e
		default: // e^a, e^-b
			E = pa.e * pb.e
		}
		D = 1 - E
	}
	P := pb.F * pa.Fc * D
	if !(P >= 0x1p-1000) {
		return 0, 0, 0, false
	}
	return fastLog(P), pa.F / (pb.F * D), pb.Fc / (pa.Fc * D), true
}

// logitDiff is log(F(b) - F(a)) for b > a under the logit link, from
// whichever tail keeps the digits, in log space: logDiffCDF from the two
// points (the path of logitBetween's far tails).
func logitDiff(pa, pb logitPoint) float64 {
	mid := 0.5 * (pa.z + pb.z)
	if mid <= 0 || (mid < 1e-15 && Logit.cdf(mid) <= 0.5) { // F(mid) <= 1/2
		la, lb := pa.logF(), pb.logF()
		return lb + log1mexp(la-lb)
	}
	ua, ub := pa.logFc(), pb.logFc()
	return ua + log1mexp(ub-ua)
}

// logistic returns F(z) and 1-F(z) without cancellation.
func logistic(z float64) (float64, float64) {
	p := newLogitPoint(z)
	return p.F, p.Fc
}

func cauchyCDF(z float64) float64 {
	if z < 0 {
		return math.Atan(-1/z) / math.Pi
	}
	return 0.5 + math.Atan(z)/math.Pi
}

// logPhi is log Phi(z), accurate far into the lower tail.
func logPhi(z float64) float64 {
	if z > -30 {
		return math.Log(0.5 * math.Erfc(-z/math.Sqrt2))
	}
	// Phi(z) = phi(z) * R(-z), R the Mills ratio.
	return -0.5*z*z - 0.5*math.Log(2*math.Pi) + math.Log(millsRatio(-z))
}

// millsInv is phi(z)/Phi(z).
func millsInv(z float64) float64 {
	if z > -30 {
		return math.Exp(-0.5*z*z-0.5*math.Log(2*math.Pi)) / (0.5 * math.Erfc(-z/math.Sqrt2))
	}
	return 1 / millsRatio(-z)
}

// millsRatio is (1-Phi(t))/phi(t) for large t, by its continued fraction.
func millsRatio(t float64) float64 {
	// R(t) = 1/(t+1/(t+2/(t+3/(t+...)))), evaluated bottom-up.
	r := 0.0
	for k := 60; k >= 1; k-- {
		r = float64(k) / (t + r)
	}
	return 1 / (t + r)
}
