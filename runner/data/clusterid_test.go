package data

import "testing"

// ClusterID counts a cluster id written as a decimal number under its
// shortest text, keeps every digit of a long one, and leaves other ids as
// they are.
func TestClusterID(t *testing.T) {
	for _, c := range []struct {
		cell  string
		comma bool
		want  string
	}{
		{"7", false, "7"}, {"7.0", false, "7"}, {"07", false, "7"}, {"+7", false, "7"}, {"7.", false, "7"},
		{"-0.0", false, "0"}, {"-3.50", false, "-3.5"}, {".5", false, "0.5"}, {"0", false, "0"}, {"000", false, "0"},
		{"7,0", true, "7"}, {"7,0", false, "7,0"}, {"7.0", true, "7.0"},
		{"9007199254740993", false, "9007199254740993"}, {"9007199254740992.0", false, "9007199254740992"},
		{"k7", false, "k7"}, {"7e0", false, "7e0"}, {"+-7", false, "+-7"}, {"-", false, "-"}, {".", false, "."}, {"1.2.3", false, "1.2.3"},
	} {
		if got := ClusterID(c.cell, Dialect{DecimalComma: c.comma}); got != c.want {
			t.Errorf("ClusterID(%q, comma %v) = %q, want %q", c.cell, c.comma, got, c.want)
		}
	}
}
