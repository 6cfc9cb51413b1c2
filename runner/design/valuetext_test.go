package design

import "testing"

// TestValueText: a negative shift is written as a subtraction, never as
// "+ -10"; a whole shift has no decimals.
func TestValueText(t *testing.T) {
	for _, c := range []struct {
		tr   Transform
		want string
	}{
		{Transform{}, "bmi"},
		{Transform{Log: true}, "log(bmi)"},
		{Transform{Log: true, Shift: 1}, "log(bmi + 1)"},
		{Transform{Log: true, Shift: -10}, "log(bmi - 10)"},
		{Transform{Log: true, Shift: 0.25}, "log(bmi + 0.25)"},
		{Transform{Sqrt: true, Centre: "mean"}, "sqrt(bmi)"},
	} {
		if got := c.tr.ValueText("bmi"); got != c.want {
			t.Errorf("%+v: %q, want %q", c.tr, got, c.want)
		}
	}
}
