package simulate

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/fit"
)

var recoverPlan = testsurvey.Plan{
	Seed:       77,
	Categories: `[low, mid, high, top]`,
	Sections: `predictors: [x, g]
dictionary:
  x: {range: [-6, 6]}
  g: {values: [0, 1]}
`,
	Effects: `[parallel, nonparallel]`,
	Assumptions: `  predictors:
    x: {mean: 0.5, sd: 1}
    g: {proportions: [0.4, 0.6]}
  outcomes:
    y:
      proportions: [0.2, 0.3, 0.35, 0.15]
      effects: {x: 0.7}
      nonparallel: {g: [0.2, 0.5, 0.9]}
`,
}.YAML()

func parsePlan(t *testing.T, src string) *plan.Plan {
	t.Helper()
	p, err := plan.Parse([]byte(src), filepath.Join(t.TempDir(), "p.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// A very large simulated sample has the stated category proportions, and
// the cumulative logit fit with g nonparallel recovers the stated slopes.
func TestLargeSampleRecoversAssumptions(t *testing.T) {
	p := parsePlan(t, recoverPlan)
	sim, err := New(p)
	if err != nil {
		t.Fatal(err)
	}
	const n = 200_000
	var buf bytes.Buffer
	if err := sim.Write(&buf, n, 3); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(buf.String()), "\n")
	counts := map[string]int{}
	for _, l := range lines[1:] {
		counts[strings.SplitN(l, ",", 2)[0]]++
	}
	for j, c := range []string{"low", "mid", "high", "top"} {
		got, want := float64(counts[c])/n, p.Assumptions.Outcomes[0].Proportions[j]
		// Monte Carlo error of the sample (sd <= 0.0011) and of the
		// calibration sample (<= 0.0016): 0.006 is over 3 combined sds.
		if math.Abs(got-want) > 0.006 {
			t.Errorf("proportion of %s: %.4f, stated %.4f", c, got, want)
		}
	}
	path := filepath.Join(t.TempDir(), "sim.csv")
	os.WriteFile(path, buf.Bytes(), 0o644)
	res, _, err := runner.FitOne(runner.SingleFit{DataFile: path, Outcome: "y", Categories: []string{"low", "mid", "high", "top"},
		Predictors: []string{"x", "g"}, Approach: fit.Cumulative, Link: fit.Logit, Nonparallel: []string{"g"}, Covariance: fit.Observed})
	if err != nil || !res.OK() {
		t.Fatalf("fit: %v", err)
	}
	rec := runner.Record(res)
	check := func(name string, want float64) {
		got, se := rec.Estimates[name], rec.StdErrors[name]
		if se <= 0 || math.Abs(got-want) > 4*se {
			t.Errorf("%s: estimate %.4f (se %.4f), stated %.4f", name, got, se, want)
		}
	}
	check("x", 0.7)
	check("g[1]", 0.2)
	check("g[2]", 0.5)
	check("g[3]", 0.9)
}

// The same plan, size and replicate give the same bytes; another
// replicate gives other rows.
func TestSimulationIsSeeded(t *testing.T) {
	p := parsePlan(t, recoverPlan)
	write := func(rep uint64) string {
		sim, err := New(p)
		if err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		sim.Write(&b, 300, rep)
		return b.String()
	}
	if write(1) != write(1) {
		t.Fatal("two simulations of replicate 1 differ")
	}
	if write(1) == write(2) {
		t.Fatal("replicates 1 and 2 are the same")
	}
}

// Slopes that make cumulative probabilities cross are refused.
func TestCrossingSlopesRefused(t *testing.T) {
	src := strings.Replace(recoverPlan, "[0.2, 0.5, 0.9]", "[3, -3, 3]", 1)
	_, err := New(parsePlan(t, src))
	if err == nil || !strings.Contains(err.Error(), "assumptions.outcomes.y.nonparallel: the stated effects make P(y <= mid) fall below P(y <= low)") {
		t.Fatalf("got %v", err)
	}
}
