package runner

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

	"ordplan/internal/testsurvey"
	"ordplan/plan"
	"ordplan/runner/impute/chained"
)

// chainedFixture writes an invented survey (seeded): y in three ordered
// categories from a cumulative logit in x (numeric) and g (three levels),
// with x, g and y each missing in some rows (x more often in the top
// category: missing at random given y), and a plan that imputes them.
func chainedFixture(t *testing.T, imputation string) *plan.Plan {
	t.Helper()
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(3, 5))
	var b strings.Builder
	b.WriteString("y,x,g\n")
	for i := 0; i < 240; i++ {
		y, x, g := testsurvey.Grouped(rng)
		xs, gs, ys := fmt.Sprintf("%.4f", x), testsurvey.Levels[g], fmt.Sprint(y)
		if rng.Float64() < 0.1+0.15*float64(y-1) {
			xs = ""
		}
		if rng.Float64() < 0.08 {
			gs = "NA"
		}
		if rng.Float64() < 0.05 {
			ys = ""
		}
		fmt.Fprintf(&b, "%s,%s,%s\n", ys, xs, gs)
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	src := `version: 1
seed: 11
data:
  file: d.csv
  missing: impute
` + imputation + `
outcomes: [{column: y}]
categorical: {g: {levels: [a, b, c]}}
predictors: [x, g, {name: lx, column: x, log: {shift: 10}}]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [lr, wald]}
rules:
  - choose: {by: bic}
`
	p := planIn(t, dir, src)
	return p
}

// TestChainedRun: a plan with data.missing: impute imputes the outcome, a
// numeric and a categorical column, fits every candidate on every set and
// pools them; the derived term (a polynomial of x) is computed from the
// imputed x; the record says how; and the decisions do not depend on the
// number of workers.
func TestChainedRun(t *testing.T) {
	p := chainedFixture(t, "  imputation: {sets: 4, iterations: 3, column_models: {g: multinomial}}")
	r1 := runPlan(t, p, 1)
	or := r1.Outcomes[0]
	im := or.Imputed
	if im == nil || im.M != 4 || im.Source != "chained" || im.Chained == nil || im.Rows != 240 {
		t.Fatalf("imputed run %+v", im)
	}
	ch := im.Chained
	if ch.Seed != 11 || ch.Iterations != 3 || strings.Join(ch.Visits, " ") != "y g x" || len(ch.Trace) != 9 {
		t.Errorf("record: seed %d, iterations %d, visits %v, %d trace points", ch.Seed, ch.Iterations, ch.Visits, len(ch.Trace))
	}
	want := map[string]string{"y": "ordinal", "x": "mean_matching", "g": "multinomial"}
	for _, m := range ch.Models {
		if m.Method.String() != want[m.Column] {
			t.Errorf("%s imputed by %s, want %s", m.Column, m.Method, want[m.Column])
		}
	}
	for s, d := range im.Sets {
		if len(d.Y) != 240 {
			t.Fatalf("set %d has %d rows", s+1, len(d.Y))
		}
		// lx is the logarithm of the imputed x plus 10.
		K := len(d.Predictors)
		if d.Predictors[0] != "x" || d.Predictors[3] != "lx" {
			t.Fatalf("predictors %v", d.Predictors)
		}
		for i := 0; i < 240; i++ {
			if want := math.Log(d.X[i*K] + 10); math.Abs(d.X[i*K+3]-want) > 1e-12 {
				t.Fatalf("set %d row %d: lx = %g is not log(x + 10) = %g of the imputed x", s+1, i, d.X[i*K+3], want)
			}
		}
	}
	if mt := or.Data.Missing; mt == nil || mt.Rows != 240 || mt.ByColumn[1] == 0 || len(mt.ByCategory) != 3 {
		t.Errorf("the missing values of the original data are not described: %+v", mt)
	}
	f := or.Find("cumulative/parallel/logit")
	if !f.OK() || f.Pooled == nil {
		t.Fatalf("not pooled: %+v", f)
	}
	if fmi := f.Pooled.FMI[2]; !(fmi > 0 && fmi < 1) { // x
		t.Errorf("FMI of x %g", fmi)
	}
	r2 := runPlan(t, p, 3)
	a, _ := MarshalStable(BuildDecisions(r1))
	b, _ := MarshalStable(BuildDecisions(r2))
	if string(a) != string(b) {
		t.Error("1 and 3 workers give different decisions")
	}
	if !strings.Contains(string(a), `"visits": [`) {
		t.Error("decisions.json does not carry the imputation record")
	}
}

// TestChainedNothingMissing: with nothing missing the data are analysed as
// they are, with a note.
func TestChainedNothingMissing(t *testing.T) {
	p := chainedFixture(t, "")
	b, _ := os.ReadFile(p.Data.Path)
	var out []string
	for i, l := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		if i == 0 || !strings.Contains(","+l+",", ",,") && !strings.Contains(l, "NA") && !strings.HasPrefix(l, ",") {
			out = append(out, l)
		}
	}
	os.WriteFile(p.Data.Path, []byte(strings.Join(out, "\n")+"\n"), 0o644)
	or := runPlan(t, p, 0).Outcomes[0]
	if or.Imputed != nil || !strings.Contains(strings.Join(or.Notes, "\n"), "no value of the columns this outcome uses is missing: nothing was imputed") {
		t.Errorf("imputed %v, notes %q", or.Imputed, or.Notes)
	}
}

// TestChainedBadInput: a column missing in every row.
func TestChainedBadInput(t *testing.T) {
	p := chainedFixture(t, "")
	b, _ := os.ReadFile(p.Data.Path)
	var out []string
	for i, l := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		if i > 0 {
			f := strings.Split(l, ",")
			l = f[0] + ",," + f[2]
		}
		out = append(out, l)
	}
	os.WriteFile(p.Data.Path, []byte(strings.Join(out, "\n")+"\n"), 0o644)
	if _, err := Run(p, Options{}); err == nil || !strings.Contains(err.Error(), `data.missing: impute, outcome "y": column x is missing in all 240 rows: there is nothing to impute it from`) {
		t.Errorf("all missing: %v", err)
	}
}

// TestChainedFrequencyWeights: with frequency weights every row is
// expanded into as many rows as its weight before imputation, so a
// weighted file gives exactly the imputed sets and the pooled fits of the
// file with each row repeated (the data the weights count); a note says
// so.
func TestChainedFrequencyWeights(t *testing.T) {
	p := chainedFixture(t, "  imputation: {sets: 3, iterations: 2}")
	dir := filepath.Dir(p.Data.Path)
	b, _ := os.ReadFile(p.Data.Path)
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	weighted, expanded := []string{lines[0] + ",w"}, []string{lines[0]}
	incomplete := 0 // rows of the file with an empty or NA cell
	for i, l := range lines[1:] {
		if slices.ContainsFunc(strings.Split(l, ","), func(c string) bool { return c == "" || c == "NA" }) {
			incomplete++
		}
		w := 1 + i%3
		weighted = append(weighted, fmt.Sprintf("%s,%d", l, w))
		for range w {
			expanded = append(expanded, l)
		}
	}
	os.WriteFile(filepath.Join(dir, "weighted.csv"), []byte(strings.Join(weighted, "\n")+"\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "expanded.csv"), []byte(strings.Join(expanded, "\n")+"\n"), 0o644)
	src, _ := os.ReadFile(filepath.Join(dir, "p.yaml"))
	load := func(name, data string) *plan.Plan {
		path := filepath.Join(dir, name)
		os.WriteFile(path, []byte(strings.Replace(string(src), "  file: d.csv\n", data, 1)), 0o644)
		return loadPlanFile(t, path)
	}
	rw := runPlan(t, load("w.yaml", "  file: weighted.csv\n  weights: w\n"), 2).Outcomes[0]
	re := runPlan(t, load("e.yaml", "  file: expanded.csv\n"), 2).Outcomes[0]
	// The record counts the weighted file's incomplete rows as rows, and
	// the units they stand for apart: those are the expanded file's rows.
	cw, ce := rw.Imputed.Chained, re.Imputed.Chained
	if rw.Imputed.Rows != len(expanded)-1 || cw.UnitsIncomplete == nil || *cw.UnitsIncomplete != ce.RowsIncomplete || ce.UnitsIncomplete != nil {
		t.Fatalf("rows %d (want %d), incomplete units %v and rows %d", rw.Imputed.Rows, len(expanded)-1, cw.UnitsIncomplete, ce.RowsIncomplete)
	}
	if cw.RowsIncomplete != incomplete || cw.Rows != len(weighted)-1 {
		t.Fatalf("incomplete rows %d of %d, want %d of %d", cw.RowsIncomplete, cw.Rows, incomplete, len(weighted)-1)
	}
	for s := range rw.Imputed.Sets {
		a, b := rw.Imputed.Sets[s], re.Imputed.Sets[s]
		if !slices.Equal(a.X, b.X) || !slices.Equal(a.Y, b.Y) || a.Weights != nil {
			t.Fatalf("imputed set %d differs from the expanded file's", s+1)
		}
	}
	for i, f := range rw.Fits {
		g := re.Fits[i]
		if !f.OK() || !g.OK() || !slices.Equal(f.Result.Estimates, g.Result.Estimates) || !slices.Equal(f.Result.StdErrors, g.Result.StdErrors) {
			t.Errorf("%s: pooled fit differs from the expanded file's", f.ID)
		}
	}
	if !strings.Contains(strings.Join(rw.Notes, "\n"), "each of the 240 rows was expanded into as many rows as its weight, 480 rows in all") {
		t.Errorf("no note on the expansion: %q", rw.Notes)
	}
}

// TestChainedFrequencyWeightsRowsAsRead: the rows read, used and dropped
// that decisions.json and the report give are those of the data file,
// not of the rows the frequency weights were expanded into for
// imputation, and a row dropped because its weight is missing (imputation
// does not fill weights) is counted under the weight column, not under an
// imputed column it also misses.
func TestChainedFrequencyWeightsRowsAsRead(t *testing.T) {
	p := chainedFixture(t, "  imputation: {sets: 2, iterations: 1}")
	dir := filepath.Dir(p.Data.Path)
	b, _ := os.ReadFile(p.Data.Path)
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	weighted := []string{lines[0] + ",w"}
	units, missingOutcome := 0, 0
	for i, l := range lines[1:] {
		w := strconv.Itoa(1 + i%3)
		if i%20 == 0 {
			// No weight, and no outcome either: y is the first column.
			f := strings.Split(l, ",")
			f[0] = ""
			l, w = strings.Join(f, ","), ""
			missingOutcome++
		} else {
			units += 1 + i%3
		}
		weighted = append(weighted, l+","+w)
	}
	if !strings.HasPrefix(lines[0], "y,") {
		t.Fatalf("the fixture's first column is not y: %s", lines[0])
	}
	os.WriteFile(filepath.Join(dir, "weighted.csv"), []byte(strings.Join(weighted, "\n")+"\n"), 0o644)
	src, _ := os.ReadFile(filepath.Join(dir, "p.yaml"))
	path := filepath.Join(dir, "w.yaml")
	os.WriteFile(path, []byte(strings.Replace(string(src), "  file: d.csv\n", "  file: weighted.csv\n  weights: w\n", 1)), 0o644)
	res := runPlan(t, loadPlanFile(t, path), 2)
	od := BuildDecisions(res).Outcomes[0]
	read := len(lines) - 1
	if od.RowsRead != read || od.RowsUsed != read-missingOutcome || od.NObs != float64(units) {
		t.Errorf("rows read %d, used %d, observations %v; want %d, %d, %d", od.RowsRead, od.RowsUsed, od.NObs, read, read-missingOutcome, units)
	}
	if len(od.Dropped) != 1 || od.Dropped[0].Column != "w" || od.Dropped[0].Rows != missingOutcome {
		t.Errorf("dropped %+v, want %d rows under w", od.Dropped, missingOutcome)
	}
}

// TestUnlinkedLevels: a column missing in every row at a level of another
// column with levels (the outcome where g is c; x in outcome category
// hi) is named once per such pair, with the rows that miss it; a level at
// which the column is observed once, or that no row has, is not; numeric
// columns have no levels to name.
func TestUnlinkedLevels(t *testing.T) {
	nan := math.NaN()
	cols := []chained.Column{
		{Name: "y", Values: []float64{0, 1, nan, nan, 0, 1}},
		{Name: "g", Values: []float64{0, 1, 2, 2, 1, nan}},
		{Name: "x", Values: []float64{1.5, nan, 2, 3, 4, nan}},
	}
	labels := [][]string{{"lo", "hi"}, {"a", "b", "c", "d"}, nil}
	got := unlinkedLevels(cols, labels)
	want := []string{
		"y is missing in all 2 rows where g is c: nothing in the data links y to g = c, so its imputed values there, and every estimate that involves both (such as the effect of that level), come from the imputation models alone, not from the data",
		"x is missing in all 2 rows where y is hi: nothing in the data links x to y = hi, so its imputed values there, and every estimate that involves both, come from the imputation models alone, not from the data",
	}
	if !slices.Equal(got, want) {
		t.Errorf("got\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}
