package data

import (
	"fmt"
	"math"
	"math/big"
	"strconv"
	"strings"
	"time"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/format"
)

// columnText writes a non-null value of a Parquet column whose logical
// type changes what the stored value means, numbers with the decimal
// mark given.
type columnText func(v parquet.Value, mark byte) string

// logicalText is the text of the values of a column of type t (whose
// logical type, when t has none, is the one the file's metadata states),
// or nil
// when the stored value is what it means (cellText): a decimal is its
// unscaled integer with the point put back (exactly, as the file means
// it: 12345 at scale 2 is 123.45), an unsigned integer is read unsigned,
// a date, time or timestamp (and a legacy INT96 timestamp) is written as
// such, a text a number cannot be read from, so that such a column used
// as a number is refused with its value shown, as the same data written
// as CSV would be; a half-precision float (FLOAT16, two bytes) is written
// as the float64 it is exactly, as a FLOAT is (cellText), not as its two
// bytes.
func logicalText(t parquet.Type, stated *format.LogicalType) columnText {
	if t.Kind() == parquet.Int96 {
		return int96Text
	}
	lt := t.LogicalType()
	if lt == nil {
		// A logical type the file states that the schema as read
		// leaves out.
		lt = stated
	}
	if lt == nil {
		return nil
	}
	switch l := lt.Value.(type) {
	case *format.DecimalType:
		scale := int(l.Scale)
		return func(v parquet.Value, mark byte) string { return decimalText(unscaled(v), scale, mark) }
	case *format.IntType:
		if l.IsSigned {
			return nil
		}
		return func(v parquet.Value, _ byte) string {
			if v.Kind() == parquet.Int32 {
				return strconv.FormatUint(uint64(uint32(v.Int32())), 10)
			}
			return strconv.FormatUint(v.Uint64(), 10)
		}
	case *format.Float16Type:
		return func(v parquet.Value, mark byte) string { return fmtNum(halfFloat(v.ByteArray()), mark) }
	case *format.DateType:
		return func(v parquet.Value, _ byte) string {
			return time.Unix(int64(v.Int32())*86400, 0).UTC().Format("2006-01-02")
		}
	case *format.TimeType:
		unit := timeUnit(&l.Unit)
		return func(v parquet.Value, _ byte) string {
			return time.Unix(0, storedInt(v)*unit).UTC().Format("15:04:05.999999999")
		}
	case *format.TimestampType:
		unit, utc := timeUnit(&l.Unit), l.IsAdjustedToUTC
		return func(v parquet.Value, _ byte) string {
			n, per := storedInt(v), 1e9/unit
			sec, rest := n/per, n%per
			if rest < 0 {
				sec, rest = sec-1, rest+per
			}
			return timestampText(sec, rest*unit, utc)
		}
	}
	return nil
}

// halfFloat is the value of an IEEE 754 half-precision float stored as
// Parquet's FLOAT16 stores it, two bytes, little-endian: exactly, as
// every half-precision value is a float64 (NaN for a value that is not
// two bytes long).
func halfFloat(b []byte) float64 {
	if len(b) != 2 {
		return math.NaN()
	}
	h := uint16(b[0]) | uint16(b[1])<<8
	exp, frac := int(h>>10&0x1f), float64(h&0x3ff)
	var x float64
	switch exp {
	case 0: // zero and subnormals
		x = math.Ldexp(frac, -24)
	case 0x1f:
		if frac != 0 {
			return math.NaN()
		}
		x = math.Inf(1)
	default:
		x = math.Ldexp(1024+frac, exp-25)
	}
	if h&0x8000 != 0 {
		x = -x
	}
	return x
}

// storedInt is the value of an INT32 or INT64.
func storedInt(v parquet.Value) int64 {
	if v.Kind() == parquet.Int32 {
		return int64(v.Int32())
	}
	return v.Int64()
}

// timeUnit is the length of a time unit in nanoseconds.
func timeUnit(u *format.TimeUnit) int64 {
	if u.Value == nil {
		return 1
	}
	return int64(u.Value.Duration())
}

// timestampText writes a time as seconds and nanoseconds since 1970,
// with a Z when it is in UTC.
func timestampText(sec, nsec int64, utc bool) string {
	s := time.Unix(sec, nsec).UTC().Format("2006-01-02T15:04:05.999999999")
	if utc {
		s += "Z"
	}
	return s
}

// int96Text writes a legacy INT96 timestamp (nanoseconds of the day, then
// the Julian day number).
func int96Text(v parquet.Value, _ byte) string {
	w := v.Int96()
	nanos := int64(uint64(w[0]) | uint64(w[1])<<32)
	days := int64(w[2]) - 2440588 // the Julian day of 1970-01-01
	return timestampText(days*86400, nanos, true)
}

// unscaled is a decimal's stored integer: an INT32 or INT64, or a
// big-endian two's complement byte array.
func unscaled(v parquet.Value) *big.Int {
	switch v.Kind() {
	case parquet.Int32:
		return big.NewInt(int64(v.Int32()))
	case parquet.Int64:
		return big.NewInt(v.Int64())
	}
	b := v.ByteArray()
	n := new(big.Int).SetBytes(b)
	if len(b) > 0 && b[0]&0x80 != 0 {
		n.Sub(n, new(big.Int).Lsh(big.NewInt(1), uint(8*len(b))))
	}
	return n
}

// decimalText writes n / 10^scale exactly, with the decimal mark given.
func decimalText(n *big.Int, scale int, mark byte) string {
	digits := new(big.Int).Abs(n).String()
	sign := ""
	if n.Sign() < 0 {
		sign = "-"
	}
	if scale <= 0 {
		return sign + digits + strings.Repeat("0", -scale)
	}
	if len(digits) <= scale {
		digits = strings.Repeat("0", scale-len(digits)+1) + digits
	}
	cut := len(digits) - scale
	return sign + digits[:cut] + string(mark) + digits[cut:]
}

// timeHint says what a cell that is not a number is when it is a date, a
// time of day or both, as a Parquet DATE, TIME or TIMESTAMP column (or a
// CSV) writes them (2022-01-08, 13:45:00, 2022-01-08T13:45:00Z); "" for
// any other text.
func timeHint(cell string) string {
	is := func(layouts ...string) bool {
		for _, l := range layouts {
			if _, err := time.Parse(l, cell); err == nil {
				return true
			}
		}
		return false
	}
	const say = ": a predictor must be a number, so write it as one in a column of its own, such as %s, or declare the column categorical with its values as levels"
	switch {
	case is("2006-01-02"):
		return "; it is a date" + fmt.Sprintf(say, "the days or years since a start date")
	case is("2006-01-02T15:04:05.999999999", "2006-01-02T15:04:05.999999999Z07:00", "2006-01-02 15:04:05.999999999"):
		return "; it is a date and time" + fmt.Sprintf(say, "the days or years since a start date")
	case is("15:04:05.999999999", "15:04"):
		return "; it is a time of day" + fmt.Sprintf(say, "the hours since midnight")
	}
	return ""
}
