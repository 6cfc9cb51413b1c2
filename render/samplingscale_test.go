package render

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
)

// samplingScaleData writes 150 seeded rows (y in 1..3 from a logistic
// latent variable in x and z, site in a/b/c) with sampling weights w
// between 0.5 and 3, scaled by factor, to name.
func samplingScaleData(t *testing.T, path string, factor float64) (x, w []float64) {
	t.Helper()
	rng := rand.New(rand.NewPCG(20261203, 8))
	var b strings.Builder
	b.WriteString("y,x,z,site,w\n")
	for i := 0; i < 150; i++ {
		xi := math.Round(1000*(5+2*rng.NormFloat64())) / 1000
		zi := math.Round(1000*(1+9*rng.Float64())) / 1000
		wi := 0.5 + 2.5*rng.Float64()
		u := rng.Float64()
		s := 0.4*xi - 0.2*zi + math.Log(u/(1-u))
		y := 1 + btoi(s > 0) + btoi(s > 1.5)
		fmt.Fprintf(&b, "%d,%g,%g,%s,%.17g\n", y, xi, zi, []string{"a", "b", "c"}[i%3], wi*factor)
		x, w = append(x, xi), append(w, wi)
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return x, w
}

func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}

// TestSamplingWeightsHaveNoScale: the same plan under sampling weights w
// and w/sum(w) gives the same estimates, standard errors, design constants
// (centring, SD scaling, quantile knots) and descriptive tables. The
// expected values come from outside the code under test: the run with the
// unnormalized weights, and, with constant weights 1/n, the ordinary
// sample SD and the quantiles by linear interpolation between order
// statistics at p (n - 1) computed here by hand.
func TestSamplingWeightsHaveNoScale(t *testing.T) {
	const plan = `version: 1
data: {file: %s, weights: w, weight_kind: sampling}
outcomes: [{column: y, categories: ["1", "2", "3"]}]
categorical:
  site: {levels: [a, b, c]}
predictors:
  - {name: xs, column: x, centre: mean, scale: sd}
  - {name: zs, column: z, spline: {quantiles: [0.1, 0.5, 0.9]}}
  - site
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: [wald]}
rules:
  - choose: {by: tic}
report: {timestamp: false}
`
	run := func(factor float64) (map[string][]byte, []float64, []float64) {
		dir := t.TempDir()
		x, w := samplingScaleData(t, filepath.Join(dir, "d.csv"), factor)
		return renderSource(t, dir, fmt.Sprintf(plan, "d.csv"), 1), x, w
	}
	base, x, w := run(1)
	sum := 0.0
	for _, wi := range w {
		sum += wi
	}
	norm, _, _ := run(1 / sum)
	for _, f := range []string{"table-estimates-y.csv", "table-descriptives-y.csv", "table-odds-ratios-y.csv"} {
		if string(base[f]) != string(norm[f]) {
			t.Errorf("%s differs between weights w and w/sum(w):\n%s\nvs\n%s", f, base[f], norm[f])
		}
	}
	terms := func(md string) string {
		i := strings.Index(md, "| xs |")
		j := strings.Index(md[i:], "\n\n")
		return md[i : i+j]
	}
	if a, b := terms(string(base["report.md"])), terms(string(norm["report.md"])); a != b {
		t.Errorf("predictor terms differ between weights w and w/sum(w):\n%s\nvs\n%s", a, b)
	}
	if strings.Contains(string(norm["report.md"]), "n/a") && !strings.Contains(string(base["report.md"]), "n/a") {
		t.Errorf("normalized weights give n/a where the unnormalized do not")
	}

	// Constant weights 1/n: the rows count alike, so the constants are the
	// unweighted ones: SD with divisor n - 1, and the quantiles of R's
	// default definition (position p (n - 1) between order statistics).
	dir := t.TempDir()
	xs, _ := samplingScaleData(t, filepath.Join(dir, "d.csv"), 1)
	src, _ := os.ReadFile(filepath.Join(dir, "d.csv"))
	lines := strings.Split(strings.TrimRight(string(src), "\n"), "\n")
	var zs []float64
	for i := 1; i < len(lines); i++ {
		f := strings.Split(lines[i], ",")
		f[4] = strconv.FormatFloat(1.0/150, 'g', -1, 64)
		lines[i] = strings.Join(f, ",")
		z, _ := strconv.ParseFloat(f[2], 64)
		zs = append(zs, z)
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(strings.Join(lines, "\n")+"\n"), 0o644)
	files := renderSource(t, dir, fmt.Sprintf(plan, "d.csv"), 1)
	m := 0.0
	for _, v := range xs {
		m += v / 150
	}
	ss := 0.0
	for _, v := range xs {
		ss += (v - m) * (v - m)
	}
	sd := math.Sqrt(ss / 149)
	slices.Sort(zs)
	q := func(p float64) float64 {
		h := p * 149
		lo := math.Floor(h)
		return zs[int(lo)] + (h-lo)*(zs[int(lo)+1]-zs[int(lo)])
	}
	md := string(files["report.md"])
	hasAll(t, "report.md (constant weights 1/n)", md,
		fmt.Sprintf("knots at sample quantiles %s, %s, %s", fmt.Sprintf("%.6g", q(0.1)), fmt.Sprintf("%.6g", q(0.5)), fmt.Sprintf("%.6g", q(0.9))),
		fmt.Sprintf("(%s)", fmt.Sprintf("%.3f", sd)))
	_ = x
}

// TestSharedColumnTermHasNoOddsRatio: a term whose data column also makes
// another term (log(z) beside a polynomial in z) cannot change with that
// term held fixed, so it gets no "per unit" odds ratio: it is left out and
// named, like basis columns.
func TestSharedColumnTermHasNoOddsRatio(t *testing.T) {
	dir := t.TempDir()
	samplingScaleData(t, filepath.Join(dir, "d.csv"), 1)
	md := string(renderSource(t, dir, `version: 1
data: {file: d.csv}
outcomes: [{column: y}]
predictors:
  - x
  - {name: zl, column: z, log: {shift: 0}}
  - {name: zp, column: z, polynomial: {degree: 2}}
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: [wald]}
rules:
  - choose: {by: aic}
report: {timestamp: false}
`, 1)["report.md"])
	hasAll(t, "report.md", md, "Not shown: the columns of zl, zp.", "neither has a term whose data column also makes another term")
	if strings.Contains(md, "per unit of log(z)") {
		t.Errorf("report.md reads zl per unit of log(z), which cannot change with zp held fixed")
	}
}
