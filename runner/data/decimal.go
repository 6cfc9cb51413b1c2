package data

import (
	"math"
	"strconv"
	"strings"
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
// Nothing is allocated but for a long number with a decimal comma.
func decimal(s string, mark byte) (float64, bool) {
	n, ok := scanDecimal(s, 0, mark)
	if !ok || n.end != len(s) {
		return 0, false
	}
	return n.value(s, mark)
}

// scanned is a plain decimal number found in a text by scanDecimal.
type scanned struct {
	mant uint64 // its digits as an integer, when there are at most 19
	sig  int    // its digits (leading zeros included)
	exp  int    // its power of ten
	neg  bool
	end  int // where it ends in the text
}

// scanDecimal reads the plain decimal number that starts at s[i] (see
// decimal), stopping at the first byte that cannot continue it; false
// when there is none there.
func scanDecimal(s string, i int, mark byte) (scanned, bool) {
	var n scanned
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		n.neg = s[i] == '-'
		i++
	}
	start := i
	for ; i < len(s) && s[i]-'0' <= 9; i++ {
		n.mant = n.mant*10 + uint64(s[i]-'0')
	}
	n.sig = i - start
	if i < len(s) && s[i] == mark {
		i++
		frac := i
		for ; i < len(s) && s[i]-'0' <= 9; i++ {
			n.mant = n.mant*10 + uint64(s[i]-'0')
		}
		n.exp = frac - i
		n.sig += i - frac
	}
	if n.sig == 0 {
		return n, false
	}
	if i < len(s) && s[i]|0x20 == 'e' {
		i++
		eneg := false
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			eneg = s[i] == '-'
			i++
		}
		start, e := i, 0
		for ; i < len(s) && s[i]-'0' <= 9; i++ {
			if e < 1e6 {
				e = e*10 + int(s[i]-'0')
			}
		}
		if i == start {
			return n, false
		}
		if eneg {
			e = -e
		}
		n.exp += e
	}
	n.end = i
	return n, true
}

// value is the number's float64, from its digits when that is exact, else
// by strconv.ParseFloat of its text (the whole of text); false when it is
// beyond float64's range.
func (n scanned) value(text string, mark byte) (float64, bool) {
	if n.mant == 0 && n.sig <= 19 {
		if n.neg {
			return math.Copysign(0, -1), true
		}
		return 0, true
	}
	if n.sig <= 19 && n.mant <= 1<<53 && n.exp >= -22 && n.exp <= 22 {
		v := float64(n.mant)
		if n.exp >= 0 {
			v *= pow10[n.exp]
		} else {
			v /= pow10[-n.exp]
		}
		if n.neg {
			v = -v
		}
		return v, true
	}
	if mark != '.' {
		text = strings.Replace(text, string(mark), ".", 1)
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
