package runner

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/runner/fit"
)

// TestFitOneCheckedSampling: the checks of `ordplan fit` say, as those of
// a run do, that under sampling weights the likelihood-ratio statistic
// against the thresholds-only model is not a test; with frequency weights
// it is one.
func TestFitOneCheckedSampling(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(7, 11))
	var b strings.Builder
	b.WriteString("y,x,w\n")
	for range 120 {
		x := rng.NormFloat64()
		y := 1
		if rng.Float64() < 1/(1+math.Exp(-(0.9*x))) {
			y = 2
		}
		if rng.Float64() < 0.4 {
			y++
		}
		fmt.Fprintf(&b, "%d,%.4f,%d\n", y, x, 1+rng.IntN(3))
	}
	path := filepath.Join(dir, "d.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, w := range []struct {
		sampling bool
		cov      fit.Covariance
	}{{false, fit.Observed}, {true, fit.Sandwich}} { // sampling weights call for a sandwich
		sampling := w.sampling
		res, _, checks, _, err := FitOneChecked(SingleFit{DataFile: path, Outcome: "y", Predictors: []string{"x"}, Weights: "w", Sampling: sampling,
			Approach: fit.Cumulative, Link: fit.Logit, Covariance: w.cov, Workers: 1})
		if err != nil || !res.OK() || checks == nil {
			t.Fatalf("sampling %v: %v %v", sampling, err, res)
		}
		lr := checks.Overall.Overall.LR
		if sampling && (lr.OK || lr.Reason != likelihoodNote) || !sampling && !lr.OK {
			t.Errorf("sampling %v: likelihood-ratio test %+v", sampling, lr)
		}
	}
}
