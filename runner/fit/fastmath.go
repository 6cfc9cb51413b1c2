package fit

import (
	"math"
	"math/big"
)

// The row kernels' exponentials and logarithms: table-driven versions of
// exp, log and log1p with short polynomials, accurate to about half an ulp
// over their fast ranges (fastmath_test.go measures the largest error
// against high-precision values) and deferring to package math outside
// them (special values, subnormal results, arguments near overflow).
// Package math's exp on amd64 (which also overflows early, from about
// 709.44 on) evaluates a long chain of dependent
// multiplications and four squarings, and its log and log1p a division and
// a long polynomial: in a kernel evaluated at every row and equation these
// latencies, not the arithmetic, are the cost.
//
// exp: x = (k N + j) ln2/N + r with |r| <= ln2/(2N), N = 128; e^x =
// 2^k 2^(j/N) e^r, 2^(j/N) from a table as a double and its relative
// remainder, e^r - 1 by its Taylor polynomial to r^5 (the next term is
// below 2^-60 relative).
//
// log: x = 2^k z with z in [0.6875, 1.375), split into 128 intervals of
// centres c; log x = k ln2 + log c + log1p(r), r = (z - c)/c formed with
// z - c exact and 1/c as a double and its remainder, log c as a double and
// its remainder, log1p(r) by its Taylor polynomial to r^7 (|r| < 2^-8).
// Within 2^-7 of 1 the result is log1p(x - 1) by its Taylor polynomial to
// the eighth power, x - 1 being exact there, so the relative accuracy holds
// as the result nears 0.
//
// log1p: u = 1 + x rounded and d = 1 + x - u exactly; log1p(x) = log(u) +
// d/u to well below an ulp; within 2^-7 of 0 the Taylor polynomial of x
// itself. Negative x down to -1/2 take the same path (the row kernels'
// log P = log1p(-u) of probabilities near 1).

const (
	expTableBits = 7
	expN         = 1 << expTableBits
	// expShift rounds to an integer by addition: the integer then sits in
	// the low bits of the sum's representation.
	expShift = 0x1.8p52
	// log 2 split so that k ln2Hi (and k ln2Hi/N) is exact for |k| < 2^21
	// (ln2Hi has 32 significant bits), ln2Lo the remainder.
	ln2Hi = 6.93147180369123816490e-01 // 0x3fe62e42fee00000
	ln2Lo = 1.90821492927058770002e-10 // 0x3dea39ef35793c76
	// expFast: above it the table's power of 2 is taken one lower and the
	// result doubled (2^1024 is not a double); expOver: from it on e^x
	// overflows (log of the largest double is 709.78...), left to
	// math.Exp, as are subnormal results below -expFast. (Package math's
	// amd64 exp overflows from about 709.44 on, early.)
	expFast  = 708.0
	expOver  = 710.0
	expSmall = 700.0

	logTableBits = 7
	logN         = 1 << logTableBits
	// logOff is the representation of 0.6875, the lower end of the
	// reduced argument z.
	logOff = 0x3fe6000000000000
	// logNear: within it of 1 log x is log1p(x - 1) by its polynomial.
	logNear = 0x1p-7
)

// expTable holds 2^(j/N) for j = 0..N-1: the double nearest (hi) and the
// remainder relative to it (tail).
var expTable [expN]struct{ hi, tail float64 }

// logTable holds for each interval of z its centre c, 1/c (inv and its
// remainder invLo) and log c (logc and its remainder logcLo).
var logTable [logN]struct{ c, inv, invLo, logc, logcLo float64 }

func init() {
	const prec = 128
	two := new(big.Float).SetPrec(prec).SetInt64(2)
	// 2^(1/N) by repeated square roots, then its powers.
	root := new(big.Float).SetPrec(prec).Set(two)
	for i := 0; i < expTableBits; i++ {
		root.Sqrt(root)
	}
	pow := new(big.Float).SetPrec(prec).SetInt64(1)
	for j := range expTable {
		hi, _ := pow.Float64()
		expTable[j].hi = hi
		expTable[j].tail = relativeRemainder(pow, hi)
		pow.Mul(pow, root)
	}
	for i := range logTable {
		lo := math.Float64frombits(logOff + uint64(i)<<(52-logTableBits))
		hi := math.Float64frombits(logOff + uint64(i+1)<<(52-logTableBits))
		c := 0.5 * (lo + hi) // exact: both share the exponent or hi is a power of 2
		t := &logTable[i]
		t.c = c
		exact := new(big.Float).SetPrec(prec).SetInt64(1)
		exact.Quo(exact, new(big.Float).SetPrec(prec).SetFloat64(c))
		t.inv, _ = exact.Float64()
		t.invLo = remainder(exact, t.inv)
		lc := bigLogAtanh(new(big.Float).SetPrec(prec).SetFloat64(c), prec)
		t.logc, _ = lc.Float64()
		t.logcLo = remainder(lc, t.logc)
	}
}

// remainder is v - hi rounded to a double.
func remainder(v *big.Float, hi float64) float64 {
	d := new(big.Float).SetPrec(v.Prec()).SetFloat64(hi)
	d.Sub(v, d)
	f, _ := d.Float64()
	return f
}

// relativeRemainder is (v - hi)/hi rounded to a double.
func relativeRemainder(v *big.Float, hi float64) float64 {
	d := new(big.Float).SetPrec(v.Prec()).SetFloat64(hi)
	d.Sub(v, d)
	d.Quo(d, new(big.Float).SetPrec(v.Prec()).SetFloat64(hi))
	f, _ := d.Float64()
	return f
}

// bigLog is log v (v > 0) at prec bits: v = 2^e m with m in [1/2, 1),
// log v = e log 2 + log m, each logarithm 2 atanh(s) with s = (m - 1)/(m +
// 1) summed until its terms no longer count (|s| <= 1/3).
func bigLog(v *big.Float, prec uint) *big.Float {
	m := new(big.Float).SetPrec(prec)
	e := v.MantExp(m)
	r := bigLogAtanh(m, prec)
	if e != 0 {
		ln2 := bigLogAtanh(new(big.Float).SetPrec(prec).SetInt64(2), prec)
		r.Add(r, ln2.Mul(ln2, new(big.Float).SetPrec(prec).SetInt64(int64(e))))
	}
	return r
}

// bigLogAtanh is log m = 2 atanh((m - 1)/(m + 1)) for m in [1/2, 2].
func bigLogAtanh(m *big.Float, prec uint) *big.Float {
	one := new(big.Float).SetPrec(prec).SetInt64(1)
	s := new(big.Float).SetPrec(prec).Sub(m, one)
	s.Quo(s, new(big.Float).SetPrec(prec).Add(m, one))
	s2 := new(big.Float).SetPrec(prec).Mul(s, s)
	sum := new(big.Float).SetPrec(prec).Set(s)
	term := new(big.Float).SetPrec(prec).Set(s)
	t := new(big.Float).SetPrec(prec)
	for k := int64(3); ; k += 2 {
		term.Mul(term, s2)
		if term.Sign() == 0 || term.MantExp(nil)-sum.MantExp(nil) < -int(prec)-4 {
			break
		}
		t.Quo(term, new(big.Float).SetPrec(prec).SetInt64(k))
		sum.Add(sum, t)
	}
	return sum.Mul(sum, new(big.Float).SetPrec(prec).SetInt64(2))
}

// fastExp is e^x within 0.51 ulp (math.Exp below -708, from 710 on, for
// NaN and infinities).
func fastExp(x float64) float64 {
	if !(x >= -expFast && x < expOver) {
		return math.Exp(x)
	}
	z := x * (expN / math.Ln2)
	kd := z + expShift
	ki := math.Float64bits(kd)
	kd -= expShift
	r := x - kd*(ln2Hi/expN) - kd*(ln2Lo/expN)
	t := &expTable[ki&(expN-1)]
	// 2^k 2^(j/N): k added to the exponent of the table's double (k is
	// ki >> 7 as a signed integer; the offset of expShift is a multiple of
	// 2^64 after the shift by 45).
	// Near either end the power of 2 is moved into range and the result
	// scaled back at the end (exactly, the result being normal, or the
	// overflow to +Inf): 2^1024 is not a double, and below 2^-1012 the
	// product scale*p would be subnormal and lose digits.
	k := ki >> expTableBits
	f := 0.0
	switch {
	case x > expFast:
		k, f = k-1, 2
	case x < -expSmall:
		k, f = k+64, 0x1p-64
	}
	scale := math.Float64frombits(math.Float64bits(t.hi) + k<<52)
	r2 := r * r
	p := t.tail + r + r2*(1.0/2+r*(1.0/6)) + r2*r2*(1.0/24+r*(1.0/120))
	v := scale + scale*p
	if f != 0 {
		v *= f
	}
	return v
}

// expm1Exp returns e^x - 1 and e^x (each within 0.97 ulp of math/big in
// fastmath_test.go) from one evaluation of fastExp's table: e^x = S (1 +
// p) with S = 2^k 2^(j/N) and p = e^r - 1 (the table's remainder
// included), so e^x - 1 = (S - 1) + S p, S - 1 exact where S lies in
// [1/2, 2] (Sterbenz) and e^x - 1 at least 1/2 below, S p added to it
// with one rounding (FMA). Near 0 e^x - 1 is about r itself, so what
// fastExp leaves at 2^-60 of 1 counts here: r's reduction is kept as its
// exact part and the remainder (rh, rl), the remainder's product with r
// kept, and p takes one term more (r^6/720; the next, r^6/5040 of r, is
// below 2^-60). e^x may differ from fastExp's in its last bit. Package
// math's expm1 (and fastExp) outside [-700, 708] and for NaN. Package
// math's expm1 branches on its argument's size and divides: the row
// kernels' middle categories and cloglog tails took it at every row.
func expm1Exp(x float64) (m, e float64) {
	if !(x >= -expSmall && x <= expFast) {
		return math.Expm1(x), fastExp(x)
	}
	kd := x*(expN/math.Ln2) + expShift
	ki := math.Float64bits(kd)
	kd -= expShift
	rh := x - kd*(ln2Hi/expN) // exact
	rl := -kd * (ln2Lo / expN)
	r := rh + rl
	t := &expTable[ki&(expN-1)]
	scale := math.Float64frombits(math.Float64bits(t.hi) + (ki>>expTableBits)<<52)
	r2 := r * r
	p := rh + (rl + t.tail*(1+r) + r2*(1.0/2+r*(1.0/6)) + r2*r2*(1.0/24+r*(1.0/120)+r2*(1.0/720)))
	return math.FMA(scale, p, scale-1), math.FMA(scale, p, scale)
}

// expNegAbsTo sets dst[i] = fastExp(-|src[i]|), bit for bit (expTo): the
// logit kernels' e^-|z| of a block's rows. dst has at least len(src)
// values.
func expNegAbsTo(dst, src []float64) { expTo(dst, src, true) }

// expTo sets dst[i] = fastExp(x) for x = src[i] (negAbs: x = -|src[i]|,
// its sign bit set), bit for bit, with fastExp's body in the loop (no call
// per value, so that the values' latencies overlap and nothing is saved
// around calls): the logit kernels' exponentials of a block's rows. dst
// has at least len(src) values.
func expTo(dst, src []float64, negAbs bool) {
	dst = dst[:len(src)]
	var sign uint64
	if negAbs {
		sign = 1 << 63
	}
	for i, x := range src {
		x = math.Float64frombits(math.Float64bits(x) | sign)
		if !(x >= -expSmall && x <= expFast) {
			// below -700 or above 708 (the scaled paths), NaN: fastExp itself
			dst[i] = fastExp(x)
			continue
		}
		kd := x*(expN/math.Ln2) + expShift
		ki := math.Float64bits(kd)
		kd -= expShift
		r := x - kd*(ln2Hi/expN) - kd*(ln2Lo/expN)
		t := &expTable[ki&(expN-1)]
		scale := math.Float64frombits(math.Float64bits(t.hi) + (ki>>expTableBits)<<52)
		r2 := r * r
		p := t.tail + r + r2*(1.0/2+r*(1.0/6)) + r2*r2*(1.0/24+r*(1.0/120))
		dst[i] = scale + scale*p
	}
}

// fastLog is log x within 0.71 ulp (math.Log for x <= 0, subnormal x,
// infinities and NaN).
func fastLog(x float64) float64 {
	ix := math.Float64bits(x)
	if ix-0x0010000000000000 >= 0x7ff0000000000000-0x0010000000000000 {
		return math.Log(x)
	}
	if math.Abs(x-1) < logNear {
		return log1pSmall(x - 1)
	}
	return logTable64(ix, 0)
}

// fastLog1p is log(1 + x) within 0.85 ulp for x >= -1/2 (math.Log1p
// below, for x of 2^1000 or more, infinities and NaN).
func fastLog1p(x float64) float64 {
	if !(x >= -0.5 && x < 0x1p1000) {
		return math.Log1p(x)
	}
	if x < logNear && x > -logNear {
		return log1pSmall(x)
	}
	u := 1 + x
	// 1 + x = u + d exactly (the larger of 1 and |x| first; from -1/2 on
	// 1 + x is at least 2^-7 away from 1 and at least 1/2).
	d := min(x, 1) - (u - max(x, 1))
	return logTable64(math.Float64bits(u), d/u)
}

// logTable64 is log u + corr, u (representation iu) positive and normal
// and at least 2^-7 away from 1, corr below an ulp of the result.
func logTable64(iu uint64, corr float64) float64 {
	tmp := iu - logOff
	t := &logTable[(tmp>>(52-logTableBits))&(logN-1)]
	k := float64(int64(tmp) >> 52)
	z := math.Float64frombits(iu - tmp&(0xfff<<52))
	zc := z - t.c // exact: z and c are within a factor 2
	r := zc*t.inv + zc*t.invLo
	// w = k ln2Hi + log c and w + r with their rounding errors (each sum
	// has its larger term first: |k ln2| >= ln2 > |log c| when k is not 0,
	// and |w| > |r| away from 1).
	kh := k * ln2Hi
	w := kh + t.logc
	we := t.logc - (w - kh)
	hi := w + r
	lo := w - hi + r + (we + k*ln2Lo + t.logcLo + corr)
	r2 := r * r
	p := r2*(-1.0/2+r*(1.0/3)) + r2*r2*(-1.0/4+r*(1.0/5)+r2*(-1.0/6+r*(1.0/7)))
	return hi + (lo + p)
}

// log1pSmall is log(1 + r) for |r| < 2^-7 by its Taylor polynomial to r^8
// (the next term is below 2^-56 relative).
func log1pSmall(r float64) float64 {
	r2 := r * r
	r4 := r2 * r2
	p := (-1.0/2 + r*(1.0/3)) + r2*(-1.0/4+r*(1.0/5)) + r4*((-1.0/6+r*(1.0/7))+r2*(-1.0/8))
	return r + r2*p
}
