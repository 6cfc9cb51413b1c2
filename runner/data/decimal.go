package data

import (
	"math"
	"strconv"
	"strings"
	"unsafe"
)

// pow10 are the powers of ten a float64 holds exactly.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// decimal reads s as a plain decimal number: an optional sign, digits with
// at most one decimal mark (mark, '.' or ','), and an optional exponent (e
// or E, an optional sign, digits). It reports false for anything else
// (text, infinities, hexadecimal, underscores, a second mark, no digit)
// and for a number beyond float64's range: the caller then takes the
// general path (Dialect.number), which words the message.
//
// The value is bit for bit the one strconv.ParseFloat gives for s (with a
// decimal comma read as a point): when the digits (at most 19) make an
// integer of at most 2^53 and the power of ten is at most 22 in size, both
// operands are exact and one multiplication or division rounds once,
// correctly (Clinger's fast path); otherwise strconv.ParseFloat reads s.
// Nothing is allocated but for a number of more than 64 bytes with a
// decimal comma.
func decimal(s string, mark byte) (float64, bool) {
	v, end, ok := scanDecimal(s, 0, mark)
	return v, ok && end == len(s)
}

// scanDecimal reads the plain decimal number that starts at s[i] (see
// decimal), stopping at the first byte that cannot continue it, and
// returns its value and where it ends; false when there is no number
// there, or it is beyond float64's range. Every piece of state is a local
// variable, so that the loops over the digits stay in registers (this is
// the reader's innermost loop).
func scanDecimal(s string, i int, mark byte) (v float64, end int, ok bool) {
	start := i
	neg := false
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		neg = s[i] == '-'
		i++
	}
	d0 := i
	mant, i := digits(s, i, 0)
	sig, exp := i-d0, 0
	if i < len(s) && s[i] == mark {
		i++
		f0 := i
		mant, i = digits(s, i, mant)
		exp = f0 - i
		sig += i - f0
	}
	if sig == 0 {
		return 0, i, false
	}
	if i < len(s) && s[i]|0x20 == 'e' {
		i++
		eneg := false
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			eneg = s[i] == '-'
			i++
		}
		e0, e := i, 0
		for ; i < len(s) && s[i]-'0' <= 9; i++ {
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
	if sig <= 19 {
		if mant == 0 {
			if neg {
				return math.Copysign(0, -1), i, true
			}
			return 0, i, true
		}
		if mant <= 1<<53 && exp >= -22 && exp <= 22 {
			v = float64(mant)
			if exp >= 0 {
				v *= pow10[exp]
			} else {
				v /= pow10[-exp]
			}
			if neg {
				v = -v
			}
			return v, i, true
		}
	}
	v, ok = slowDecimal(s[start:i], mark)
	return v, i, ok
}

// digits reads the run of decimal digits at s[i:] onto mant (mant*10 +
// digit for each; it wraps beyond 19 digits, which the caller does not
// use) and returns the new mant and where the run ends. (Reading eight
// bytes at a time with word operations was tried: on the short numbers of
// data files it is slower than this loop, whose branches predict well.)
func digits(s string, i int, mant uint64) (uint64, int) {
	for ; i < len(s); i++ {
		c := s[i] - '0'
		if c > 9 {
			break
		}
		mant = mant*10 + uint64(c)
	}
	return mant, i
}

// slowDecimal is strconv.ParseFloat of a plain decimal number (with a
// decimal comma read as a point); false beyond float64's range.
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
	if err != nil || math.IsInf(v, 0) {
		return 0, false
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
