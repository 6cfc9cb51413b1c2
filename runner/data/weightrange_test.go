package data

import (
	"strings"
	"testing"
)

// A weight above 1e15 or an offset beyond ±1e8 is refused at its line and
// column, whichever way the row is read (a short decimal takes the quick
// way); the largest ones read are kept.
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
