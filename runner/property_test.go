package runner

// Property tests: random valid plans on random data sets (fixed seeds)
// either run or stop with one of the errors listed in docs/bad-inputs.md,
// and what they decide does not depend on the order of the rows or on the
// units of a predictor.

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/fit"
)

// documentedErrors are the messages, from docs/bad-inputs.md, that a
// valid plan on a valid but unlucky data set may stop with (the run), or
// that a single model of its grid may be refused with (FitEntry.Err).
var documentedErrors = []string{
	"only one category",
	"is declared but never observed",
	"rows were dropped for missing values",
	"is constant (every row has",
	"is constant (every row used has",
	"in every row used",
	"is perfectly collinear with",
	"is collinear with",
	"parameters but only",
}

func documented(msg string) bool {
	for _, d := range documentedErrors {
		if strings.Contains(msg, d) {
			return true
		}
	}
	return false
}

// propCase is one random data set and plan.
type propCase struct {
	n, J, K    int
	binary     []bool      // predictor k is 0/1
	x          [][]float64 // n x K; NaN = missing cell
	y          []int       // -1 = missing
	w          []int       // nil: no weights column
	labels     bool        // outcome written as labels c1..cJ, categories declared
	declare    bool        // integer codes with categories declared
	extraCat   bool        // one more category declared than the data have
	planSource string
}

// newPropCase draws a data set and a plan. About one case in three has a
// quirk that a valid plan may meet: very few rows, a constant predictor,
// two collinear predictors, or a declared category that never occurs.
func newPropCase(rng *rand.Rand, id int) *propCase {
	c := &propCase{n: 40 + rng.IntN(260), J: 2 + rng.IntN(4), K: 1 + rng.IntN(3)}
	quirk := rng.IntN(12)
	if quirk == 0 {
		c.n = 8 + rng.IntN(8)
	}
	c.binary = make([]bool, c.K)
	beta := make([]float64, c.K)
	scale := make([]float64, c.K)
	for k := range beta {
		c.binary[k] = rng.IntN(3) == 0
		beta[k] = 2 * rng.NormFloat64()
		scale[k] = math.Pow(10, -1+2*rng.Float64())
	}
	c.x = make([][]float64, c.n)
	z := make([]float64, c.n)
	for i := range c.x {
		c.x[i] = make([]float64, c.K)
		u := rng.Float64()
		z[i] = math.Log(u / (1 - u))
		for k := range c.x[i] {
			if c.binary[k] {
				c.x[i][k] = float64(rng.IntN(2))
				z[i] += beta[k] * c.x[i][k]
				continue
			}
			c.x[i][k] = math.Round(scale[k]*(1+rng.NormFloat64())*1e4) / 1e4
			z[i] += beta[k] * c.x[i][k] / scale[k]
		}
	}
	// Cut z at random shares of at least 8% per category.
	sorted := slices.Clone(z)
	slices.Sort(sorted)
	shares := make([]float64, c.J)
	tot := 0.0
	for j := range shares {
		shares[j] = 0.08*float64(c.J) + rng.Float64()
		tot += shares[j]
	}
	cuts := make([]float64, c.J-1)
	acc := 0.0
	for j := range cuts {
		acc += shares[j] / tot
		cuts[j] = sorted[int(acc*float64(c.n-1))]
	}
	c.y = make([]int, c.n)
	for i := range c.y {
		for _, ct := range cuts {
			if z[i] > ct {
				c.y[i]++
			}
		}
	}
	switch {
	case quirk == 1:
		k := rng.IntN(c.K)
		c.binary[k] = false
		for i := range c.x {
			c.x[i][k] = 5
		}
	case quirk == 2 && c.K > 1:
		c.binary[1] = c.binary[0]
		for i := range c.x {
			c.x[i][1] = 2*c.x[i][0] - 1
		}
	case quirk == 3:
		c.extraCat = true
	}
	// Missing cells.
	pmiss := []float64{0, 0.01, 0.04}[rng.IntN(3)]
	for i := range c.x {
		for k := range c.x[i] {
			if rng.Float64() < pmiss {
				c.x[i][k] = math.NaN()
			}
		}
		if rng.Float64() < pmiss/2 {
			c.y[i] = -1
		}
	}
	if rng.IntN(3) == 0 {
		c.w = make([]int, c.n)
		for i := range c.w {
			c.w[i] = 1 + rng.IntN(3)
			if rng.Float64() < 0.03 {
				c.w[i] = 0
			}
		}
	}
	c.labels = rng.IntN(3) == 0
	c.declare = c.extraCat || !c.labels && rng.IntN(3) == 0
	c.planSource = c.randomPlan(rng, id)
	return c
}

func pick(rng *rand.Rand, from []string, atLeast int) []string {
	for {
		var out []string
		for _, s := range from {
			if rng.IntN(2) == 0 {
				out = append(out, s)
			}
		}
		if len(out) >= atLeast {
			return out
		}
	}
}

func yamlList(xs []string) string { return "[" + strings.Join(xs, ", ") + "]" }

func (c *propCase) predictors() []string {
	var out []string
	for k := 0; k < c.K; k++ {
		out = append(out, fmt.Sprintf("x%d", k+1))
	}
	return out
}

func (c *propCase) categories() []string {
	var out []string
	J := c.J
	if c.extraCat {
		J++
	}
	for j := 0; j < J; j++ {
		if c.labels {
			out = append(out, fmt.Sprintf("c%d", j+1))
		} else {
			out = append(out, strconv.Itoa(j+1))
		}
	}
	return out
}

func (c *propCase) randomPlan(rng *rand.Rand, id int) string {
	var b strings.Builder
	preds := c.predictors()
	fmt.Fprintf(&b, "version: 1\ntitle: random case %d\nseed: %d\ndata:\n  file: d.csv\n", id, id+1)
	if c.w != nil {
		b.WriteString("  weights: w\n")
	}
	b.WriteString("outcomes:\n  - column: y\n")
	if c.labels || c.declare {
		q := make([]string, len(c.categories()))
		for j, s := range c.categories() {
			q[j] = strconv.Quote(s)
		}
		fmt.Fprintf(&b, "    categories: [%s]\n", strings.Join(q, ", "))
	}
	fmt.Fprintf(&b, "predictors: %s\n", yamlList(preds))
	approaches := pick(rng, []string{"cumulative", "stage", "adjacent"}, 1)
	effects := pick(rng, []string{"parallel", "partial", "constrained", "nonparallel", "stereotype"}, 1)
	if slices.Contains(effects, "stereotype") && !slices.Contains(approaches, "adjacent") {
		approaches = append(approaches, "adjacent")
	}
	links := []string{"logit"}
	if rng.IntN(3) == 0 {
		links = pick(rng, []string{"logit", "probit", "cloglog", "loglog", "cauchy"}, 1)[:1]
	}
	fmt.Fprintf(&b, "models:\n  approaches: %s\n  effects: %s\n  links: %s\n", yamlList(approaches), yamlList(effects), yamlList(links))
	if slices.Contains(approaches, "stage") && rng.IntN(3) == 0 {
		b.WriteString("  direction: backward\n")
	}
	if slices.Contains(effects, "partial") || slices.Contains(effects, "constrained") {
		if rng.IntN(4) == 0 {
			b.WriteString("  partial:\n    select: {method: stepwise, alpha: 0.05, test: wald}\n")
		} else {
			fmt.Fprintf(&b, "  partial:\n    free: %s\n", yamlList(pick(rng, preds, 1)))
		}
	}
	fmt.Fprintf(&b, "tests:\n  parallel_lines: %s\n", yamlList(pick(rng, []string{"brant", "lr", "score", "wald", "wolfe_gould"}, 0)))
	b.WriteString("rules:\n")
	if rng.IntN(2) == 0 {
		b.WriteString("  - reject_unconverged: true\n")
	}
	if slices.Contains(approaches, "cumulative") && rng.IntN(2) == 0 {
		b.WriteString("  - reject_negative_probabilities: true\n")
	}
	if len(effects) > 1 && rng.IntN(2) == 0 {
		test := []string{"lr", "wald", "score"}[rng.IntN(3)]
		// Wald and score tests compare models linear in the parameters
		// only; the plan check refuses them otherwise.
		if slices.Contains(effects, "constrained") || slices.Contains(effects, "stereotype") {
			test = "lr"
		}
		if nested(effects) {
			fmt.Fprintf(&b, "  - reject_if_test_rejects: {test: %s, alpha: 0.05, against: each_less_constrained}\n", test)
		}
	}
	if rng.IntN(2) == 0 {
		b.WriteString("  - choose: {by: aic}\n")
	} else {
		b.WriteString("  - prefer_simpler: {by: bic, margin: 2}\n")
	}
	return b.String()
}

// csv writes the data with the rows in the given order and predictor k0
// multiplied by s.
func (c *propCase) csv(order []int, k0 int, s float64) string {
	var b strings.Builder
	b.WriteString("y," + strings.Join(c.predictors(), ","))
	if c.w != nil {
		b.WriteString(",w")
	}
	b.WriteString("\n")
	cats := c.categories()
	for _, i := range order {
		if c.y[i] >= 0 {
			b.WriteString(cats[c.y[i]])
		}
		for k, v := range c.x[i] {
			b.WriteString(",")
			if math.IsNaN(v) {
				if i%2 == 0 {
					b.WriteString("NA")
				}
				continue
			}
			if k == k0 {
				v *= s
			}
			b.WriteString(strconv.FormatFloat(v, 'g', -1, 64))
		}
		if c.w != nil {
			b.WriteString("," + strconv.Itoa(c.w[i]))
		}
		b.WriteString("\n")
	}
	return b.String()
}

// run writes the plan and data into a new directory and runs it.
func (c *propCase) run(t *testing.T, data string) (*Result, error) {
	t.Helper()
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(data), 0o644); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "plan.yaml")
	if err := os.WriteFile(path, []byte(c.planSource), 0o644); err != nil {
		t.Fatal(err)
	}
	p, err := plan.Load(path)
	if err != nil {
		t.Fatalf("random plan rejected: %v\n%s", err, c.planSource)
	}
	return Run(p, Options{Workers: 4})
}

// checkRun: an error must be documented; otherwise every candidate has a
// verdict, every fit that could not be attempted says why in documented
// words, a usable fit has a finite, negative log-likelihood and a fit
// that is not usable has none. It returns the usable fits whose
// log-likelihood is 0 (every observation predicted with probability 1):
// that happens only as parameters diverge, so such a fit should have
// been reported as having no finite maximum.
func checkRun(t *testing.T, r *Result, err error) (separated []string) {
	t.Helper()
	if err != nil {
		if !documented(err.Error()) || strings.Contains(err.Error(), "\n") {
			t.Fatalf("undocumented or multi-line error: %v", err)
		}
		return nil
	}
	for _, or := range r.Outcomes {
		for _, f := range or.Fits {
			if f.Err != "" && !documented(f.Err) {
				t.Errorf("%s: undocumented fit error: %s", f.ID, f.Err)
			}
			if !f.Auxiliary && f.Verdict == "" {
				t.Errorf("%s has no verdict", f.ID)
			}
			if f.OK() && (math.IsNaN(f.Result.LogLik) || math.IsInf(f.Result.LogLik, 0) || f.Result.LogLik > 0) {
				t.Errorf("%s: log-likelihood %v", f.ID, f.Result.LogLik)
			}
			if f.OK() && f.Result.LogLik > -1e-6 {
				separated = append(separated, fmt.Sprintf("%s (status %s, log-likelihood %.3g, verdict %s)", f.ID, f.Result.Status, f.Result.LogLik, f.Verdict))
			}
			if f.Result != nil && !f.OK() && !math.IsNaN(f.Result.LogLik) {
				t.Errorf("%s: status %s with a log-likelihood %v", f.ID, f.Result.Status, f.Result.LogLik)
			}
		}
		if or.Chosen == nil && or.Choice == "" {
			t.Errorf("%s: no model chosen and no reason given", or.Outcome.Column)
		}
	}
	return separated
}

// sameDecisions compares two runs of the same plan on data that differ
// only in row order or in the units of a predictor: the same fits with
// the same status, log-likelihoods within 1e-8 relative, the same
// partial sets, verdicts, rule outcomes and chosen model. It returns the
// differences, and separately a note when the only difference is which
// of two equivalent models (same log-likelihood, same number of
// parameters) the final rule chose, and whether a fit changed status where
// one of the two statuses is not a clean "ok" (crossing probabilities, no
// finite maximum, not converged).
func sameDecisions(what string, a, b *Result, errA, errB error) (diffs []string, tie string, unclean bool) {
	add := func(format string, args ...any) { diffs = append(diffs, what+": "+fmt.Sprintf(format, args...)) }
	if (errA == nil) != (errB == nil) {
		add("errors differ: %v / %v", errA, errB)
		return diffs, "", false
	}
	if errA != nil {
		return nil, "", false
	}
	for o, oa := range a.Outcomes {
		ob := b.Outcomes[o]
		if fmt.Sprint(oa.FreeSets) != fmt.Sprint(ob.FreeSets) {
			add("partial sets %v / %v", oa.FreeSets, ob.FreeSets)
		}
		// Two equivalent models tied for the choice.
		var tiedA, tiedB string
		if oa.Chosen != nil && ob.Chosen != nil && oa.Chosen.ID != ob.Chosen.ID {
			x, y := oa.Chosen.Result, oa.Find(ob.Chosen.ID).Result
			if y != nil && y.OK() && x.NParams == y.NParams && math.Abs(x.LogLik-y.LogLik) <= 1e-8*math.Abs(x.LogLik) {
				tiedA, tiedB = oa.Chosen.ID, ob.Chosen.ID
				tie = fmt.Sprintf("%s: the final rule chose %s, then %s: equivalent models (log-likelihood %.10g, %d parameters) whose criteria differ only by rounding",
					what, tiedA, tiedB, x.LogLik, x.NParams)
			}
		}
		isTied := func(id string) bool { return tie != "" && (id == tiedA || id == tiedB) }
		for i, fa := range oa.Fits {
			fb := ob.Fits[i]
			if fa.Result != nil && fb.Result != nil && fa.Result.Status != fb.Result.Status {
				unclean = unclean || fa.Result.Status != fit.StatusOK || fb.Result.Status != fit.StatusOK
			}
			if fa.ID != fb.ID || (fa.Verdict != fb.Verdict && !isTied(fa.ID)) || (fa.Err == "") != (fb.Err == "") || (fa.Result == nil) != (fb.Result == nil) {
				add("%s: verdict %q / %q, error %q / %q", fa.ID, fa.Verdict, fb.Verdict, fa.Err, fb.Err)
				continue
			}
			if fa.Result == nil {
				continue
			}
			ra, rb := fa.Result, fb.Result
			if ra.Status != rb.Status {
				add("%s: status %s (%s) / %s (%s)", fa.ID, ra.Status, ra.Message, rb.Status, rb.Message)
				continue
			}
			if ra.OK() && math.Abs(ra.LogLik-rb.LogLik) > 1e-8*math.Abs(ra.LogLik) {
				add("%s: log-likelihood %.15g / %.15g", fa.ID, ra.LogLik, rb.LogLik)
			}
		}
		for i, ra := range oa.Rules {
			rb := ob.Rules[i]
			if len(ra.Verdicts) != len(rb.Verdicts) {
				add("rule %s judged %d / %d models", ra.Rule.Kind, len(ra.Verdicts), len(rb.Verdicts))
				continue
			}
			for j, v := range ra.Verdicts {
				w := rb.Verdicts[j]
				if v.Model != w.Model || (v.Kept != w.Kept && !isTied(v.Model)) {
					add("rule %s: %s kept %v (%s) / %s kept %v (%s)", ra.Rule.Kind, v.Model, v.Kept, v.Reason, w.Model, w.Kept, w.Reason)
				}
			}
		}
		if ca, cb := chosenID(oa), chosenID(ob); ca != cb && !isTied(ca) {
			add("chosen %s / %s", ca, cb)
		}
	}
	return diffs, tie, unclean
}

func chosenID(or *OutcomeResult) string {
	if or.Chosen == nil {
		return "(none)"
	}
	return or.Chosen.ID
}

func TestPropertyRandomPlans(t *testing.T) {
	const cases = 30
	seeds := rand.New(rand.NewPCG(20261202, 30))
	for id := 0; id < cases; id++ {
		rng := rand.New(rand.NewPCG(seeds.Uint64(), seeds.Uint64()))
		c := newPropCase(rng, id)
		t.Run(fmt.Sprintf("case%02d_n%d_J%d_K%d", id, c.n, c.J, c.K), func(t *testing.T) {
			t.Parallel()
			order := make([]int, c.n)
			for i := range order {
				order[i] = i
			}
			base, errBase := c.run(t, c.csv(order, -1, 1))
			separated := checkRun(t, base, errBase)
			if errBase != nil {
				t.Logf("stopped: %v", errBase)
			} else {
				t.Logf("ran: %d fits, %s", len(base.Outcomes[0].Fits), base.Outcomes[0].Choice)
			}

			shuffled := slices.Clone(order)
			rng.Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
			perm, errPerm := c.run(t, c.csv(shuffled, -1, 1))
			diffs, tie, _ := sameDecisions("rows shuffled", base, perm, errBase, errPerm)

			k0 := rng.IntN(c.K)
			for k := range c.binary {
				if !c.binary[k] {
					k0 = k
				}
			}
			s := []float64{1e3, 1e-3}[rng.IntN(2)]
			scaled, errScaled := c.run(t, c.csv(order, k0, s))
			d2, tie2, unclean := sameDecisions(fmt.Sprintf("x%d times %g", k0+1, s), base, scaled, errBase, errScaled)
			var known []string
			if unclean {
				// A fit on an awkward surface ended elsewhere once the
				// predictor's units changed: the Newton step depends on
				// the units (see runner/fit/robustness_test.go).
				known, d2 = d2, nil
			}
			for _, d := range append(diffs, d2...) {
				t.Error(d)
			}
			if tie == "" {
				tie = tie2
			}
			switch {
			case t.Failed():
			case len(separated) > 0:
				t.Errorf("regression of a fixed problem: usable fits with a log-likelihood of 0, i.e. complete separation "+
					"taken for a maximum (see runner/fit/robustness_test.go): %s", strings.Join(separated, "; "))
			case len(known) > 0:
				t.Errorf("regression of a fixed problem: a fit changed status when a predictor's units changed (%s); the Newton "+
					"step is solved on the unscaled information, so its path, and where an awkward fit ends, "+
					"depends on the units", strings.Join(known, "; "))
			case tie != "":
				t.Errorf("regression of a fixed problem: %s. The choosing rule orders models by criterion with an exact "+
					"comparison, so between models that are the same model (e.g. with two categories, or a "+
					"constrained group of one predictor) rounding decides", tie)
			}
			if t.Failed() {
				t.Logf("plan:\n%s", c.planSource)
			}
		})
	}
}

// nested reports whether some model of the effects is nested in another.
func nested(effects []string) bool {
	has := func(l string) bool { return slices.Contains(effects, l) }
	return has("parallel") && len(effects) > 1 || has("constrained") && (has("partial") || has("nonparallel")) ||
		has("partial") && has("nonparallel") || has("stereotype") && has("nonparallel")
}
