package render

import "testing"

// A column's own missing-value code that data.missing_values lists too is
// shown once among the column's codes.
func TestMissingCodesOnce(t *testing.T) {
	if got, want := missingCodes([]string{"", "NA", "-99"}, []string{"-99", "-9"}), "(empty), `NA`, `-99`, `-9`"; got != want {
		t.Errorf("got %s, want %s", got, want)
	}
}
