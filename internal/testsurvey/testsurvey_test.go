package testsurvey

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"ordplan/plan"
)

// logistic is the logistic distribution function.
func logistic(z float64) float64 { return 1 / (1 + math.Exp(-z)) }

// Category draws the cumulative logit's categories with their
// probabilities: P(y <= j) = F(c_j - eta), F the logistic distribution
// function (the definition of the model), checked on 200000 uniform draws
// within 4 binomial standard errors.
func TestCategoryFollowsTheLogit(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	cuts := []float64{-0.4, 0.9}
	const n = 200000
	for _, eta := range []float64{-1, 0, 0.7} {
		count := make([]float64, 3)
		for i := 0; i < n; i++ {
			count[Category(rng.Float64(), eta, cuts)-1]++
		}
		cum := 0.0
		for j, c := range cuts {
			cum += count[j] / n
			p := logistic(c - eta)
			if se := math.Sqrt(p * (1 - p) / n); math.Abs(cum-p) > 4*se {
				t.Errorf("eta %g: P(y <= %d) = %.4f, want %.4f (se %.4f)", eta, j+1, cum, p, se)
			}
		}
	}
	if Category(0, 0, cuts) != 1 || Category(1, 0, cuts) != 3 {
		t.Error("the extreme draws are not the extreme categories")
	}
}

// Numeric rows have the stated joint distribution: x1 standard normal,
// x2 with mean 0.5 x1 (regression slope 0.5) and residual variance 1;
// Imputed keeps the observed rows in every set, leaves about the stated
// share of x2 empty, and gives identical sets when asked.
func TestNumericSurvey(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	const n = 100000
	var sx, sxx, sxy, sy, syy float64
	for i := 0; i < n; i++ {
		y, x1, x2 := Report.Row(rng)
		if y < 1 || y > 3 {
			t.Fatalf("category %d", y)
		}
		sx, sxx, sxy, sy, syy = sx+x1, sxx+x1*x1, sxy+x1*x2, sy+x2, syy+x2*x2
	}
	slope := (sxy - sx*sy/n) / (sxx - sx*sx/n)
	resid := (syy - sy*sy/n - slope*(sxy-sx*sy/n)) / (n - 2)
	if math.Abs(slope-0.5) > 0.015 || math.Abs(resid-1) > 0.02 || math.Abs(sxx/n-1) > 0.02 {
		t.Errorf("x2 on x1: slope %.4f (want 0.5), residual variance %.4f (want 1), var x1 %.4f", slope, resid, sxx/n)
	}
	o := ImputedOptions{Rows: 400, Sets: 3, Missing: 0.25, Digits: 4, Original: true}
	sv := Pooling.Imputed(rand.New(rand.NewPCG(5, 6)), o)
	orig := strings.Split(strings.TrimSpace(sv.Orig), "\n")[1:]
	comp := strings.Split(strings.TrimSpace(sv.Complete), "\n")[1:]
	stack := strings.Split(strings.TrimSpace(sv.Stacked), "\n")[1:]
	if len(orig) != o.Rows || len(comp) != o.Rows || len(stack) != (o.Sets+1)*o.Rows {
		t.Fatalf("%d, %d, %d lines", len(orig), len(comp), len(stack))
	}
	missing := 0
	for i, l := range orig {
		if strings.HasSuffix(l, ",") {
			missing++
			continue
		}
		for k := 1; k <= o.Sets; k++ {
			if got := stack[k*o.Rows+i]; got != string(rune('0'+k))+","+l {
				t.Fatalf("set %d row %d: %q, observed %q", k, i+1, got, l)
			}
		}
		if comp[i] != l {
			t.Fatalf("row %d: complete %q, observed %q", i+1, comp[i], l)
		}
	}
	if missing < 70 || missing > 130 {
		t.Errorf("%d of 400 rows miss x2, want about 100", missing)
	}
	o.Same, o.Original = true, false
	same := Pooling.Imputed(rand.New(rand.NewPCG(5, 6)), o)
	lines := strings.Split(strings.TrimSpace(same.Stacked), "\n")[1:]
	for i, l := range comp {
		for k := 1; k <= o.Sets; k++ {
			if got := lines[(k-1)*o.Rows+i]; got != string(rune('0'+k))+","+l {
				t.Fatalf("identical sets: set %d row %d: %q, complete %q", k, i+1, got, l)
			}
		}
	}
}

// A Plan with only its required parts is a valid plan, with the defaults
// it states.
func TestPlanParses(t *testing.T) {
	src := Plan{Seed: 3, Categories: "[a, b, c]", Sections: "predictors: [x]\n",
		Assumptions: "  predictors:\n    x: {mean: 0, sd: 1}\n  outcomes:\n    y: {proportions: [0.3, 0.4, 0.3], effects: {x: 0.5}}\n"}.YAML()
	p, err := plan.Parse([]byte(src), "p.yaml")
	if err != nil {
		t.Fatalf("%v\n%s", err, src)
	}
	if p.Seed != 3 || p.Data.File != "sim.csv" || len(p.Outcomes) != 1 || p.Outcomes[0].Column != "y" {
		t.Errorf("plan %+v", p)
	}
}
