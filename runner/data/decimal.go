package data

import (
	"encoding/binary"
	"math"
	"math/bits"
	"strconv"
	"strings"
	"unsafe"
)

// pow10 are the powers of ten a float64 holds exactly.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// signs says of each byte whether it is a sign (bit 0) and a minus (bit
// 1), so that the signs of numbers, which vary at random, take no branch.
var signs = [256]uint8{'+': 1, '-': 3}

// pow10u are the powers of ten up to 10^8 as integers.
var pow10u = [...]uint64{1, 10, 100, 1000, 10000, 100000, 1000000, 10000000, 100000000}

// decimal reads s as a plain decimal number: an optional sign, digits with
// at most one decimal mark (mark, '.' or ','), and an optional exponent (e
// or E, an optional sign, digits). It reports false for anything else
// (text, infinities, hexadecimal, underscores, a second mark, no digit)
// and for a number beyond float64's range or below it (1e-400, which would read
// as 0; a subnormal number is read): the caller then takes the
// general path (Dialect.number), which words the message.
//
// The value is bit for bit the one strconv.ParseFloat gives for s (with a
// decimal comma read as a point): when the digits (at most 19) make an
// integer of at most 2^53 and the power of ten is at most 22 in size, both
// operands are exact and one multiplication or division rounds once,
// correctly (Clinger's fast path); otherwise, for at most 19 digits, the
// Eisel-Lemire method (eiselLemire) rounds the product of the digits and
// the power's first 128 bits when that decides; otherwise
// strconv.ParseFloat reads s.
// Nothing is allocated but for a number of more than 64 bytes with a
// decimal comma.
func decimal(s string, mark byte) (float64, bool) {
	v, end, ok := scanDecimal(s, 0, len(s), mark)
	return v, ok && end == len(s)
}

// scanDecimal reads the plain decimal number that starts at s[i] (see
// decimal) and ends at hi at the latest, stopping at the first byte that
// cannot continue it, and returns its value and where it ends; false when
// there is no number there, or it is beyond float64's range. The byte at
// hi, if any, must not be a digit (a line end): runs of digits are read
// eight bytes at a time (digitRun), and may look past hi. Every piece of
// state is a local variable, so that it stays in registers (this is the
// reader's innermost loop), and the signs and zeros of numbers, which
// vary at random in data, take no branch.
func scanDecimal(s string, i, hi int, mark byte) (v float64, end int, ok bool) {
	start := i
	var sign uint64 // the sign bit of a negative number
	if i < hi {
		c := s[i]
		sign = uint64(signs[c]>>1) << 63
		i += int(signs[c] & 1)
	}
	var mant uint64
	var sig int
	// The run of digits before the mark: in one word when it is shorter
	// than eight digits and eight bytes remain (the usual case).
	if w, nd := word(s, i); nd != 0 {
		n := bits.TrailingZeros64(nd) >> 3
		mant, sig, i = eightDigits(w<<(64-8*n)), n, i+n
	} else {
		mant, sig, i = digitRun(s, i, hi, 0)
	}
	exp := 0
	if i < hi && s[i] == mark {
		i++
		var n int
		if w, nd := word(s, i); nd != 0 {
			n = bits.TrailingZeros64(nd) >> 3
			mant, i = mant*pow10u[n]+eightDigits(w<<(64-8*n)), i+n
		} else {
			mant, n, i = digitRun(s, i, hi, mant)
		}
		sig += n
		exp = -n
	}
	if sig == 0 {
		return 0, i, false
	}
	if i < hi && s[i]|0x20 == 'e' {
		i++
		eneg := false
		if i < hi && (s[i] == '+' || s[i] == '-') {
			eneg = s[i] == '-'
			i++
		}
		e0, e := i, 0
		for ; i < hi && s[i]-'0' <= 9; i++ {
			if e < 1e6 {
				e = e*10 + int(s[i]-'0')
			}
		}
		if i == e0 {
			return 0, i, false
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	if sig <= 19 && mant <= 1<<53 && exp >= -22 && exp <= 22 {
		v = float64(mant)
		if exp < 0 {
			v /= pow10[-exp]
		} else if exp > 0 {
			v *= pow10[exp]
		}
		return math.Float64frombits(math.Float64bits(v) | sign), i, true
	}
	if sig <= 19 {
		if v, ok = eiselLemire(mant, exp, sign); ok {
			return v, i, true
		}
	}
	v, ok = slowDecimal(s[start:i], mark)
	return v, i, ok
}

// eiselLemire is mant * 10^exp rounded correctly to a float64 (its sign
// bit: sign), for mant of at most 19 digits, by the Eisel-Lemire method:
// the product with the power's first 128 bits tells the rounding except
// when it is too close to a tie, which, like a power beyond the table or
// a result that overflows or is subnormal, reports false (the caller then
// asks strconv.ParseFloat). It is what ParseFloat does after reading the
// digits, so the value is the same, without reading them again.
func eiselLemire(mant uint64, exp int, sign uint64) (float64, bool) {
	if mant == 0 {
		return math.Float64frombits(sign), true
	}
	if exp < pow10Min || exp > pow10Max {
		return 0, false
	}
	pm := &pow10Mantissas[exp-pow10Min]
	clz := bits.LeadingZeros64(mant)
	mant <<= uint(clz)
	// 217706 / 2^16 is log2(10) to the precision that matters here.
	exp2 := uint64(217706*exp>>16+64+1023) - uint64(clz)
	hi, lo := bits.Mul64(mant, pm[1])
	if hi&0x1FF == 0x1FF && lo+mant < mant {
		// The low bits are all ones: the next 64 bits of the power decide.
		yHi, yLo := bits.Mul64(mant, pm[0])
		mHi, mLo := hi, lo+yHi
		if mLo < lo {
			mHi++
		}
		if mHi&0x1FF == 0x1FF && mLo+1 == 0 && yLo+mant < mant {
			return 0, false
		}
		hi, lo = mHi, mLo
	}
	msb := hi >> 63
	m := hi >> (msb + 9)
	exp2 -= 1 ^ msb
	if lo == 0 && hi&0x1FF == 0 && m&3 == 1 {
		return 0, false // halfway between two floats: not decided here
	}
	m += m & 1
	m >>= 1
	if m>>53 > 0 {
		m >>= 1
		exp2++
	}
	if exp2-1 >= 0x7FF-1 {
		return 0, false // subnormal, zero, infinite
	}
	return math.Float64frombits(exp2<<52 | m&(1<<52-1) | sign), true
}

// load8 is the eight bytes of s from i, the first in the lowest byte; the
// caller makes sure that they are in s (it is not checked).
func load8(s string, i int) uint64 {
	return binary.LittleEndian.Uint64(unsafe.Slice(unsafe.StringData(s[i:]), 8))
}

// nonDigits is a mask of the bytes of w that are not decimal digits: a
// byte of 0x80 for each (a byte is a digit when its high half is 3 and
// adding 6 keeps it so).
func nonDigits(w uint64) uint64 {
	return (w&0xF0F0F0F0F0F0F0F0 ^ 0x3030303030303030) | ((w+0x0606060606060606)&0xF0F0F0F0F0F0F0F0 ^ 0x3030303030303030)
}

// word is the eight bytes of s from i, the first in the lowest byte, and
// a mask of those that are not digits (a byte of 0x80 for each, so that
// the run of digits is the mask's trailing zeros over eight); a mask of
// zero when fewer than eight bytes remain, as when all eight are digits.
func word(s string, i int) (w, nd uint64) {
	if i+8 > len(s) {
		return 0, 0
	}
	w = load8(s, i)
	return w, nonDigits(w)
}

// digitRun reads the run of decimal digits at s[i:] onto mant (mant*10 +
// digit for each; it wraps beyond 19 digits, which the caller does not
// use) and returns the new mant, the run's length and where it ends. It
// reads eight bytes at a time while eight remain in s (finding the end of
// the run and the value of its digits with word operations, so that the
// varying lengths of numbers take no branch), then byte by byte up to hi.
func digitRun(s string, i, hi int, mant uint64) (uint64, int, int) {
	start := i
	for i+8 <= len(s) {
		w, nd := word(s, i)
		if nd == 0 {
			mant = mant*1e8 + eightDigits(w)
			i += 8
			continue
		}
		n := bits.TrailingZeros64(nd) >> 3
		// The n digits moved to the top bytes; the bytes below read as zeros.
		mant = mant*pow10u[n] + eightDigits(w<<(64-8*n))
		return mant, i + n - start, i + n
	}
	for ; i < hi; i++ {
		c := s[i] - '0'
		if c > 9 {
			break
		}
		mant = mant*10 + uint64(c)
	}
	return mant, i - start, i
}

// eightDigits is the value of the eight digit characters of w, the first
// in its lowest byte (bytes of zero read as the digit 0).
func eightDigits(w uint64) uint64 {
	w = (w & 0x0F0F0F0F0F0F0F0F) * (10<<8 + 1) >> 8
	w = (w & 0x00FF00FF00FF00FF) * (100<<16 + 1) >> 16
	return (w & 0x0000FFFF0000FFFF) * (10000<<32 + 1) >> 32
}

// slowDecimal is strconv.ParseFloat of a plain decimal number (with a
// decimal comma read as a point); false beyond float64's range, and for a
// nonzero number that would read as 0 (1e-400), which parseNumber refuses.
func slowDecimal(text string, mark byte) (float64, bool) {
	if mark != '.' {
		var buf [64]byte
		if len(text) <= len(buf) {
			n := copy(buf[:], text)
			if j := strings.IndexByte(text, mark); j >= 0 {
				buf[j] = '.'
			}
			text = unsafe.String(&buf[0], n)
		} else {
			text = strings.Replace(text, string(mark), ".", 1)
		}
	}
	v, err := strconv.ParseFloat(text, 64)
	if err != nil || math.IsInf(v, 0) || Underflows(text, v) {
		return 0, false // beyond the range, or under it: parseNumber words it
	}
	return v, true
}

// integer reads s as an integer category code of at most 18 digits with an
// optional sign, as strconv.ParseInt does; false for anything else.
func integer(s string) (int64, bool) {
	i := 0
	neg := false
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		neg = s[i] == '-'
		i++
	}
	if i == len(s) || len(s)-i > 18 {
		return 0, false
	}
	var v int64
	for ; i < len(s); i++ {
		c := s[i]
		if c < '0' || c > '9' {
			return 0, false
		}
		v = v*10 + int64(c-'0')
	}
	if neg {
		v = -v
	}
	return v, true
}

// isSpaceByte reports whether an ASCII byte is white space (as
// unicode.IsSpace says of it).
func isSpaceByte(c byte) bool {
	return c == ' ' || c == '\t' || c == '\n' || c == '\v' || c == '\f' || c == '\r'
}

// trimASCII removes ASCII white space from both ends of s.
func trimASCII(s string) string {
	for len(s) > 0 && isSpaceByte(s[0]) {
		s = s[1:]
	}
	for len(s) > 0 && isSpaceByte(s[len(s)-1]) {
		s = s[:len(s)-1]
	}
	return s
}
