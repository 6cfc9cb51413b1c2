package render

import "testing"

// The Methods sentence counts its analyses in the right number.
func TestSensitivityCount(t *testing.T) {
	if got := sensitivityCount(1); got != "1 sensitivity analysis" {
		t.Errorf("one: %q", got)
	}
	if got := sensitivityCount(3); got != "3 sensitivity analyses" {
		t.Errorf("three: %q", got)
	}
}
