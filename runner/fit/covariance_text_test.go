package fit

import "testing"

// TestCovarianceTexts: every covariance word has its three descriptions,
// and no two kinds share a label.
func TestCovarianceTexts(t *testing.T) {
	seen := map[string]Covariance{}
	for _, c := range CovarianceWords.All() {
		if c.Describe() == "" || c.Label() == "" || c.Phrase() == "" {
			t.Errorf("%s: a description is missing", c)
		}
		if o, ok := seen[c.Label()]; ok {
			t.Errorf("%s and %s share the label %q", c, o, c.Label())
		}
		seen[c.Label()] = c
	}
	if len(covarianceText) != len(CovarianceWords.All()) {
		t.Errorf("%d descriptions for %d covariance words", len(covarianceText), len(CovarianceWords.All()))
	}
}
