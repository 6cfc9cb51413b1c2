package runner

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// closeGridData writes an invented data set (seed 11): x standard
// normal, site one of north and east (42.5% each) or south (15%), y in 1..3 from a
// cumulative logit model whose effect of site = south differs strongly
// between the two boundaries (+1 at the first, -1 at the second: south
// widens the middle category), and whose other effects are parallel.
// Compared at site's reference level (north) a parallel and a nonparallel
// model predict within 0.1 of each other (0.086 at most over the grid of
// the test); at south they do not (0.31).
func closeGridData(t *testing.T, dir string) {
	t.Helper()
	rng := rand.New(rand.NewPCG(11, 0))
	var b strings.Builder
	b.WriteString("y,x,site\n")
	sites := []string{"north", "east", "south"}
	for i := 0; i < 1500; i++ {
		x := rng.NormFloat64()
		s := min(int(rng.Float64()/0.425), 2) // south 15% of rows
		tau := []float64{-0.5, 1}
		eta := []float64{0.8 * x, 0.8 * x}
		if s == 1 {
			eta[0] += 0.3
			eta[1] += 0.3
		}
		if s == 2 {
			eta[0] += 1
			eta[1] += -1
		}
		u := rng.Float64()
		y := 3
		for m := 0; m < 2; m++ {
			if u < 1/(1+math.Exp(-(tau[m]-eta[m]))) {
				y = m + 1
				break
			}
		}
		fmt.Fprintf(&b, "%d,%.6f,%s\n", y, x, sites[s])
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

func closeGridPlan(grid string) string {
	return `version: 1
data: {file: d.csv}
outcomes: [{column: y}]
categorical:
  site: {levels: [north, east, south]}
predictors: [x, site]
models:
  approaches: [cumulative]
  effects: [parallel, nonparallel]
  links: [logit]
rules:
  - reject_if_simpler_is_close: {max_difference: 0.1, grid: ` + grid + `}
  - choose: {by: aic}
`
}

// cumulativeLogitProbs computes the category probabilities of a
// cumulative logit fit at x and site from its own parameter names and
// estimates, independently of the program's prediction path: treatment
// coding against north, L_m = tau_m - x'b_m (docs/models.md), P(y <= m) =
// 1/(1 + exp(-L_m)), the slopes named COLUMN (parallel) or COLUMN[m]
// (one per boundary).
func cumulativeLogitProbs(t *testing.T, names []string, est []float64, x float64, site string) []float64 {
	t.Helper()
	val := map[string]float64{}
	for i, n := range names {
		val[n] = est[i]
	}
	slope := func(col string, m int) float64 {
		if v, ok := val[fmt.Sprintf("%s[%d]", col, m)]; ok {
			return v
		}
		v, ok := val[col]
		if !ok {
			t.Fatalf("no parameter %s or %s[%d] in %v", col, col, m, names)
		}
		return v
	}
	var cum []float64
	for m := 1; m <= 2; m++ {
		xb := slope("x", m) * x
		if site == "east" {
			xb += slope("site.east", m)
		}
		if site == "south" {
			xb += slope("site.south", m)
		}
		cum = append(cum, 1/(1+math.Exp(-(val[fmt.Sprintf("tau[%d]", m)]-xb))))
	}
	return []float64{cum[0], cum[1] - cum[0], 1 - cum[1]}
}

// TestCloseRuleGridLevels: a grid naming a categorical column compares
// the models at every combination of its levels and the numeric values.
// The largest difference the rule reports is the one computed by hand
// from the two fits' own estimates (cumulativeLogitProbs) over the same
// points, at the point it names; and the decision follows the invented
// truth: at the reference level alone the nonparallel model is within
// max_difference 0.1 of the parallel one (rejected), at every level it is
// not (kept), furthest apart at site = south.
func TestCloseRuleGridLevels(t *testing.T) {
	dir := t.TempDir()
	closeGridData(t, dir)
	xs := []float64{-1, 0, 1.5}
	cases := []struct {
		grid  string
		sites []string
		kept  bool
		at    string
	}{
		{"{x: [-1, 0, 1.5]}", []string{"north"}, false, ""},
		{"{x: [-1, 0, 1.5], site: all}", []string{"north", "east", "south"}, true, "site = south"},
		{"{site: [east, south], x: [-1, 0, 1.5]}", []string{"east", "south"}, true, "site = south"},
	}
	for _, c := range cases {
		p := planIn(t, dir, closeGridPlan(c.grid))
		res := runPlan(t, p, 0)
		or := res.Outcomes[0]
		v := verdictOf(or.Rules[0], "cumulative/nonparallel/logit")
		if v == nil {
			t.Fatalf("%s: no verdict", c.grid)
		}
		par, non := or.Find("cumulative/parallel/logit").Result, or.Find("cumulative/nonparallel/logit").Result
		best, bestAt := -1.0, ""
		for _, s := range c.sites {
			for _, x := range xs {
				pp := cumulativeLogitProbs(t, par.ParamNames, par.Estimates, x, s)
				pn := cumulativeLogitProbs(t, non.ParamNames, non.Estimates, x, s)
				for j := range pp {
					if d := math.Abs(pp[j] - pn[j]); d > best {
						best, bestAt = d, fmt.Sprintf("x = %s, site = %s", strconv.FormatFloat(x, 'g', -1, 64), s)
					}
				}
			}
		}
		got := v.Numbers["largest_difference_from_cumulative_parallel_logit"]
		if math.Abs(got-best) > 1e-12 {
			t.Errorf("%s: largest difference %.15g, by hand %.15g", c.grid, got, best)
		}
		if v.Kept != c.kept {
			t.Errorf("%s: kept %v, want %v: %s", c.grid, v.Kept, c.kept, v.Reason)
		}
		n := len(xs) * len(c.sites)
		if !strings.Contains(v.Reason, fmt.Sprintf("over the %d grid points", n)) {
			t.Errorf("%s: %s", c.grid, v.Reason)
		}
		if c.at != "" {
			m := regexp.MustCompile(`\(category \S+ at ([^)]*)\)`).FindStringSubmatch(v.Reason)
			if m == nil || !strings.Contains(m[1], c.at) || !sameLabels(m[1], bestAt) {
				t.Errorf("%s: furthest point %q, by hand %q: %s", c.grid, m, bestAt, v.Reason)
			}
		}
		t.Logf("%s: %s (by hand %.6g at %s)", c.grid, v.Reason, best, bestAt)
	}
}

// sameLabels reports whether two "a = 1, b = c" labels name the same
// values in any order.
func sameLabels(a, b string) bool {
	pa, pb := strings.Split(a, ", "), strings.Split(b, ", ")
	if len(pa) != len(pb) {
		return false
	}
	for _, x := range pa {
		if !strings.Contains(", "+b+", ", ", "+x+", ") {
			return false
		}
	}
	return true
}

// A grid level that no row used has (its column dropped: unobserved:
// drop) stops a run before any fit, on one data set and on imputed sets
// alike, at the grid's key; with all the grid takes the levels the rows
// have.
func TestCloseRuleGridLevelNoRowHas(t *testing.T) {
	dir := t.TempDir()
	closeGridData(t, dir)
	src := strings.Replace(closeGridPlan("{x: [0], site: [south, west]}"), "levels: [north, east, south]}", "levels: [north, east, south, west], unobserved: drop}", 1)
	b, _ := os.ReadFile(filepath.Join(dir, "d.csv"))
	lines := strings.Split(string(b), "\n")
	for i := 1; i < len(lines); i += 50 { // some x missing, for the imputed run
		if f := strings.Split(lines[i], ","); len(f) == 3 {
			lines[i] = f[0] + ",," + f[2]
		}
	}
	os.WriteFile(filepath.Join(dir, "m.csv"), []byte(strings.Join(lines, "\n")), 0o644)
	want := `p.yaml:12:70: rules[0].reject_if_simpler_is_close.grid.site: level "west" of site occurs in no row used`
	for _, imputed := range []bool{false, true} {
		s := src
		if imputed {
			s = strings.Replace(s, "data: {file: d.csv}", "data: {file: m.csv, missing: impute, imputation: {sets: 2, iterations: 2}}", 1)
		}
		p := planIn(t, dir, s)
		if _, err := Run(p, Options{}); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("imputed %v: %v", imputed, err)
		}
	}
	p := planIn(t, dir, strings.Replace(src, "site: [south, west]", "site: all", 1))
	res := runPlan(t, p, 0)
	if v := verdictOf(res.Outcomes[0].Rules[0], "cumulative/nonparallel/logit"); v == nil || !strings.Contains(v.Reason, "over the 3 grid points") {
		t.Errorf("all: %+v", v)
	}
}
