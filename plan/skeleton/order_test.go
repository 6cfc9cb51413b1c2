package skeleton

import (
	"slices"
	"testing"
)

// The order is checked against lists written by hand.
func TestNaturalOrder(t *testing.T) {
	for _, c := range []struct{ in, want []string }{
		{[]string{"c02", "c12", "c05", "c1", "c10", "c3"}, []string{"c1", "c02", "c3", "c05", "c10", "c12"}},
		{[]string{"q2b", "q10", "q2a", "q2"}, []string{"q2", "q2a", "q2b", "q10"}},
		{[]string{"10 or more", "1-2", "3-9", "none"}, []string{"1-2", "3-9", "10 or more", "none"}},
		{[]string{"01", "1", "001"}, []string{"1", "01", "001"}},
		{[]string{"high", "low", "medium"}, []string{"high", "low", "medium"}},
	} {
		if got := naturalOrder(c.in); !slices.Equal(got, c.want) {
			t.Errorf("naturalOrder(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}
