package simulate

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"ordplan/internal/testsurvey"
	"ordplan/runner"
)

var waldPlan = testsurvey.Plan{
	Seed:       4242,
	Data:       "none.csv",
	Categories: `["no", "yes"]`,
	Sections: `predictors: [x]
dictionary:
  x: {values: [0, 1]}
`,
	Test: "wald",
	Rules: `  - reject_unconverged: true
  - choose: {by: aic}
`,
	Inference: `  hypotheses: ["x = 0"]
`,
	Assumptions: `  predictors:
    x: {proportions: [0.5, 0.5]}
  outcomes:
    y:
      proportions: [0.6, 0.4]
      effects: {x: 0.5}
`,
}.YAML()

// With two categories and one 0/1 predictor the plan's model is a logistic
// regression, and the power of the Wald test of its slope (the log odds
// ratio) has the textbook normal approximation: the log odds ratio's
// variance is 1/(n0 p0 (1-p0)) + 1/(n1 p1 (1-p1)) (the large-sample
// variance of a log odds ratio; Agresti, Categorical Data Analysis, 3rd
// ed., sec. 3.1 -- cited from memory), and the power is
// Phi(|b|/se - z) + Phi(-|b|/se - z) with z the 1 - alpha/2 normal quantile.
// The simulated power agrees within 3 Monte Carlo standard errors.
func TestPowerMatchesWaldApproximation(t *testing.T) {
	if testing.Short() {
		t.Skip("1000 replicates")
	}
	p := parsePlan(t, waldPlan)
	const n, R, b, alpha = 300, 1000, 0.5, 0.05
	res, err := Power(p, PowerOptions{Sizes: []int{n}, Replicates: R, Alpha: alpha})
	if err != nil {
		t.Fatal(err)
	}
	s := res.Outcomes[0].Sizes[0]
	if s.Failed.Count > 0 || s.Separation.Count > 0 {
		t.Fatalf("failed %d, separation %d: %s", s.Failed.Count, s.Separation.Count, s.FirstFailure)
	}
	// The generating model: P(y = no | x) = F(c - b x), c solved so that
	// half the rows at x = 0 and half at x = 1 give P(no) = 0.6.
	F := func(z float64) float64 { return 1 / (1 + math.Exp(-z)) }
	lo, hi := -10.0, 10.0
	for i := 0; i < 200; i++ {
		c := (lo + hi) / 2
		if 0.5*F(c)+0.5*F(c-b) < 0.6 {
			lo = c
		} else {
			hi = c
		}
	}
	c := (lo + hi) / 2
	p0, p1 := 1-F(c), 1-F(c-b) // P(yes) at x = 0 and x = 1
	se := math.Sqrt(1/(n/2*p0*(1-p0)) + 1/(n/2*p1*(1-p1)))
	z := distuv.UnitNormal.Quantile(1 - alpha/2)
	want := distuv.UnitNormal.CDF(b/se-z) + distuv.UnitNormal.CDF(-b/se-z)
	got := s.Hypotheses[0].Power
	mcse := math.Sqrt(want * (1 - want) / R)
	if math.Abs(got.Rate-want) > 3*mcse {
		t.Errorf("simulated power %.4f (MC se %.4f), normal approximation %.4f", got.Rate, got.SE, want)
	}
	t.Logf("simulated power %.4f (MC se %.4f), normal approximation %.4f", got.Rate, got.SE, want)
	if s.Chosen[0].Model != "cumulative/parallel/logit" || s.Chosen[0].Share.Count != R {
		t.Errorf("chosen %+v", s.Chosen)
	}
}

// A plan that adjusts its hypotheses for multiplicity is powered on the
// adjusted p-values, as its run decides. The hypotheses "x = 0" and
// "2*x = 0" are one Wald statistic, so their p-values are equal and
// Holm's step-down correction of two equal p-values doubles both (by its
// definition: (m - j + 1) p_(j), then the running maximum): each is
// rejected when p < alpha/2. Their power is the textbook normal
// approximation of TestPowerMatchesWaldApproximation at level alpha/2,
// within 3 Monte Carlo standard errors, and below the power at alpha.
func TestPowerOnAdjustedPValues(t *testing.T) {
	if testing.Short() {
		t.Skip("1000 replicates")
	}
	src := strings.Replace(waldPlan, `hypotheses: ["x = 0"]`, `hypotheses: ["x = 0", "2*x = 0"]
  multiplicity: holm`, 1)
	if src == waldPlan {
		t.Fatal("plan not changed")
	}
	p := parsePlan(t, src)
	const n, R, b, alpha = 300, 1000, 0.5, 0.05
	res, err := Power(p, PowerOptions{Sizes: []int{n}, Replicates: R, Alpha: alpha})
	if err != nil {
		t.Fatal(err)
	}
	if res.Multiplicity != "holm" {
		t.Errorf("multiplicity %q, want holm", res.Multiplicity)
	}
	s := res.Outcomes[0].Sizes[0]
	F := func(z float64) float64 { return 1 / (1 + math.Exp(-z)) }
	lo, hi := -10.0, 10.0
	for i := 0; i < 200; i++ {
		c := (lo + hi) / 2
		if 0.5*F(c)+0.5*F(c-b) < 0.6 {
			lo = c
		} else {
			hi = c
		}
	}
	c := (lo + hi) / 2
	p0, p1 := 1-F(c), 1-F(c-b)
	se := math.Sqrt(1/(n/2*p0*(1-p0)) + 1/(n/2*p1*(1-p1)))
	z := distuv.UnitNormal.Quantile(1 - alpha/4)
	want := distuv.UnitNormal.CDF(b/se-z) + distuv.UnitNormal.CDF(-b/se-z)
	mcse := math.Sqrt(want * (1 - want) / R)
	for hi, h := range s.Hypotheses {
		if got := h.Power; math.Abs(got.Rate-want) > 3*mcse {
			t.Errorf("hypothesis %d: simulated power %.4f (MC se %.4f), normal approximation at alpha/2 %.4f", hi, got.Rate, got.SE, want)
		}
	}
	t.Logf("simulated power %.4f and %.4f, normal approximation at alpha/2 %.4f", s.Hypotheses[0].Power.Rate, s.Hypotheses[1].Power.Rate, want)
}

// The study does not depend on the number of workers: the same bytes.
func TestPowerIsReproducible(t *testing.T) {
	p := parsePlan(t, strings.Replace(waldPlan, "effects: {x: 0.5}", "effects: {x: 0.8}", 1))
	a, err := Power(p, PowerOptions{Sizes: []int{60, 120}, Replicates: 40, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	b, _ := Power(p, PowerOptions{Sizes: []int{60, 120}, Replicates: 40, Workers: 3})
	ja, _ := marshal(a)
	jb, _ := marshal(b)
	if ja != jb {
		t.Fatalf("results depend on the workers:\n%s\n%s", ja, jb)
	}
	if a.Outcomes[0].Sizes[1].Hypotheses[0].Power.Rate <= a.Outcomes[0].Sizes[0].Hypotheses[0].Power.Rate-0.2 {
		t.Errorf("power falls with n: %s", ja)
	}
}

func marshal(v any) (string, error) {
	b, err := runner.MarshalStable(v)
	return string(b), err
}

// The candidate with the generating structure follows the stated
// comparison, direction and link.
func TestGeneratingCandidate(t *testing.T) {
	for _, tc := range []struct{ models, assumed, want string }{
		{"{approaches: [cumulative, stage], effects: [parallel]}", "comparison: stage", "stage/parallel/logit"},
		{"{approaches: [stage], direction: backward, effects: [parallel]}", "comparison: stage", "stage_backward/parallel/logit"},
		{"{approaches: [stage], effects: [parallel]}", "{comparison: stage, direction: backward}", ""},
		{"{approaches: [adjacent], effects: [parallel], links: [probit]}", "{comparison: adjacent, link: probit}", "adjacent/parallel/probit"},
		{"{approaches: [cumulative], effects: [parallel]}", "comparison: adjacent", ""},
	} {
		src := strings.Replace(waldPlan, "models: {approaches: [cumulative], effects: [parallel]}", "models: "+tc.models, 1)
		if strings.HasPrefix(tc.assumed, "{") {
			src = strings.Replace(src, "assumptions:\n", "assumptions:\n  "+strings.Trim(strings.ReplaceAll(tc.assumed, ", ", "\n  "), "{}")+"\n", 1)
		} else {
			src = strings.Replace(src, "assumptions:\n", "assumptions:\n  "+tc.assumed+"\n", 1)
		}
		p := parsePlan(t, src)
		sim, err := New(p)
		if err != nil {
			t.Fatal(err)
		}
		if got := generating(p, p.Outcomes[0], sim).Generating; got != tc.want {
			t.Errorf("%s / %s: generating candidate %q, want %q", tc.models, tc.assumed, got, tc.want)
		}
	}
}
