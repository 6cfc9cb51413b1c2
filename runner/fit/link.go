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
		v, F, Fc := logitTail(z)
		return tail{v, Fc, -F * Fc}
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
		v, Fc, F := logitTail(-z)
		return tail{v, -F, -F * Fc}
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
		F, _ := logistic(z)
		return F
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
		F, Fc := logistic(z)
		return -softplus(-z) - softplus(z), Fc - F
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

// logitTail returns log F(z), F(z) and 1-F(z) for the logistic F with one
// exponential and one logarithm.
func logitTail(z float64) (float64, float64, float64) {
	if z >= 0 {
		e := math.Exp(-z)
		return -math.Log1p(e), 1 / (1 + e), e / (1 + e)
	}
	e := math.Exp(z)
	return z - math.Log1p(e), e / (1 + e), 1 / (1 + e)
}

// logitPoint holds the logistic quantities of one z from one exponential
// and one logarithm: e = exp(-|z|), l = log1p(e). Its methods return, bit
// for bit, what Link.lower, Link.upper, logistic and Link.logDensity
// return for the logit link at z.
type logitPoint struct{ z, e, l float64 }

func newLogitPoint(z float64) logitPoint {
	e := math.Exp(-math.Abs(z))
	return logitPoint{z, e, math.Log1p(e)}
}

// logF is log F(z).
func (p logitPoint) logF() float64 {
	if p.z >= 0 {
		return -p.l
	}
	return p.z - p.l
}

// logFc is log(1 - F(z)).
func (p logitPoint) logFc() float64 {
	if -p.z >= 0 {
		return -p.l
	}
	return -p.z - p.l
}

// probs returns F(z) and 1 - F(z).
func (p logitPoint) probs() (float64, float64) {
	if p.z >= 0 {
		return 1 / (1 + p.e), p.e / (1 + p.e)
	}
	return p.e / (1 + p.e), 1 / (1 + p.e)
}

// logDensity returns log f(z) and f'(z)/f(z).
func (p logitPoint) logDensity() (float64, float64) {
	F, Fc := p.probs()
	if p.z > 0 {
		return -p.l - (p.z + p.l), Fc - F
	}
	if p.z == 0 {
		return -p.l - p.l, Fc - F
	}
	return -(-p.z + p.l) - p.l, Fc - F
}

// logitDiff is log(F(b) - F(a)) for b > a under the logit link, from
// whichever tail keeps the digits: logDiffCDF from the two points' shared
// exponentials.
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
	if z >= 0 {
		e := math.Exp(-z)
		return 1 / (1 + e), e / (1 + e)
	}
	e := math.Exp(z)
	return e / (1 + e), 1 / (1 + e)
}

// softplus is log(1+e^x) without overflow.
func softplus(x float64) float64 {
	if x > 0 {
		return x + math.Log1p(math.Exp(-x))
	}
	return math.Log1p(math.Exp(x))
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
