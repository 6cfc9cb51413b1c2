package data

import (
	"strings"
	"testing"
)

// A weight above 1e15 or an offset beyond ±1e8 is refused at its line and
// column, whichever way the row is read (a short decimal takes the quick
// way); the largest ones read are kept (a weight of 1e15 beside others
// of 1e8, which it does not dwarf: TestWeightDwarfingTheOthers).
func TestWeightOffsetRange(t *testing.T) {
	for _, c := range []struct {
		cell, role, want string
	}{
		{"1e300", "w", `d.csv:3: column "v": weight "1e300" is larger than 1e15`},
		{"2000000000000000", "w", `d.csv:3: column "v": weight "2000000000000000" is larger than 1e15`},
		{"1e15", "w", ""},
		{"999999999", "o", `d.csv:3: column "v": offset "999999999" is beyond ±1e8`},
		{"-1e20", "o", `d.csv:3: column "v": offset "-1e20" is beyond ±1e8`},
		{"-100000000", "o", ""},
	} {
		var b strings.Builder
		b.WriteString("y,a,v\n")
		for i := 0; i < 40; i++ {
			v := "1"
			if c.cell == "1e15" {
				v = "1e8"
			}
			if i == 1 {
				v = c.cell
			}
			b.WriteString([]string{"1", "2", "3"}[i%3] + "," + []string{"0.5", "1.25", "2"}[i%4%3] + "," + v + "\n")
		}
		opt := Options{Outcome: "y", Predictors: []string{"a"}, MissingTokens: []string{""}}
		if c.role == "w" {
			opt.Weights = "v"
		} else {
			opt.Offset = "v"
		}
		_, err := readBytes([]byte(b.String()), "d.csv", opt)
		switch {
		case c.want == "" && err != nil:
			t.Errorf("%s %s: %v", c.role, c.cell, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("%s %s: %v, want %q", c.role, c.cell, err, c.want)
		}
	}
}

// A number written with a character that looks like the minus sign (U+2212
// MINUS SIGN, an en dash) is named with the character and the number to
// write, in a predictor, a weight or an offset; text that would not be a
// number with it replaced keeps the advice for text.
func TestLookalikeMinus(t *testing.T) {
	for _, c := range []struct{ cell, role, want string }{
		{"\u22121.5", "a", `value "` + "\u2212" + `1.5" is not a number; it holds the character U+2212 (MINUS SIGN) where a number has the ASCII hyphen-minus "-": write it -1.5`},
		{"\u20133e-2", "a", `it holds the character U+2013 (EN DASH) where a number has the ASCII hyphen-minus "-": write it -3e-2`},
		{"\u22120.5", "o", `it holds the character U+2212 (MINUS SIGN) where a number has the ASCII hyphen-minus "-": write it -0.5`},
		{"\u2212x", "a", `the column holds text`},
	} {
		raw := "y,a,o\n1,0.5,0\n2," + map[bool]string{true: c.cell + ",0", false: "0.2," + c.cell}[c.role == "a"] + "\n3,0.1,0\n"
		opt := Options{Outcome: "y", Predictors: []string{"a"}, MissingTokens: []string{""}}
		if c.role == "o" {
			opt.Offset = "o"
		}
		_, err := readBytes([]byte(raw), "d.csv", opt)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: %v, want %q", c.cell, err, c.want)
		}
	}
}
