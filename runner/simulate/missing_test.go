package simulate

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// missingPlan states missingness of three kinds: v at random given x and
// the outcome, w completely at random, and x never.
var missingPlan = testsurvey.Plan{
	Seed:       4242,
	Categories: `[a, b, c]`,
	Sections:   "predictors: [x, v, w]\n",
	Assumptions: `  predictors:
    x: {mean: 1, sd: 2}
    v: {mean: 0, sd: 1}
    w: {mean: 0, sd: 1}
  outcomes:
    y:
      proportions: [0.3, 0.45, 0.25]
      effects: {x: 0.4, v: 0.3}
  missing:
    v: {proportion: 0.25, given: {x: 1.2, y: -0.8}}
    w: {proportion: 0.15}
`,
}.YAML()

// A large simulated set has the stated shares of missing values, and a
// logistic regression of v's missingness on the standardized x and y
// recovers the stated strengths: fitted here as the two-category
// cumulative logit, which is the binary logistic regression with
// P(missing) = F(b'z - tau). The values that stay are those drawn without
// missingness (the missing values come from a stream of their own).
func TestMissingnessRecovered(t *testing.T) {
	p := parsePlan(t, missingPlan)
	sim, err := New(p)
	if err != nil {
		t.Fatal(err)
	}
	const n = 200_000
	var buf bytes.Buffer
	written, err := sim.WriteCounted(&buf, n, 5)
	counts := written.Missing
	if err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(bytes.NewReader(buf.Bytes())).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	head, rows := recs[0], recs[1:]
	col := func(name string) int { return slices.Index(head, name) }
	iy, ix, iv, iw := col("y"), col("x"), col("v"), col("w")
	var nv, nw int
	for _, r := range rows {
		if r[iy] == "" || r[ix] == "" {
			t.Fatalf("y or x missing in %v: they were stated never missing", r)
		}
		if r[iv] == "" {
			nv++
		}
		if r[iw] == "" {
			nw++
		}
	}
	if counts[0] != nv || counts[1] != nw {
		t.Errorf("counts %v, the file has %d and %d missing", counts, nv, nw)
	}
	// Shares: the sample's binomial sd (<= 0.001) and the calibration
	// sample's error in the constant (of 100000 rows, <= 0.0014): 0.006
	// is over 3.5 combined sds.
	for _, c := range []struct {
		name       string
		got, share float64
	}{{"v", float64(nv) / n, 0.25}, {"w", float64(nw) / n, 0.15}} {
		if math.Abs(c.got-c.share) > 0.006 {
			t.Errorf("share of %s missing: %.4f, stated %.4f", c.name, c.got, c.share)
		}
	}
	// The complete values: the same data set drawn without missingness.
	q := parsePlan(t, strings.Replace(missingPlan, "  missing:\n    v: {proportion: 0.25, given: {x: 1.2, y: -0.8}}\n    w: {proportion: 0.15}\n", "", 1))
	full := simulated(t, q, n, 5)
	frecs, _ := csv.NewReader(bytes.NewReader(full)).ReadAll()
	for i, r := range rows {
		for k, c := range r {
			if c != "" && c != frecs[i+1][k] {
				t.Fatalf("row %d column %s: %q, without missingness %q", i+1, head[k], c, frecs[i+1][k])
			}
		}
	}
	// Logistic regression of v's missingness on z(x) and z(y).
	cat := map[string]float64{"a": 1, "b": 2, "c": 3}
	xs, ys := make([]float64, n), make([]float64, n)
	for i, r := range rows {
		xs[i], _ = strconv.ParseFloat(r[ix], 64)
		ys[i] = cat[r[iy]]
	}
	zx, zy := standardize(xs), standardize(ys)
	var b strings.Builder
	b.WriteString("m,zx,zy\n")
	for i, r := range rows {
		m := 0
		if r[iv] == "" {
			m = 1
		}
		fmt.Fprintf(&b, "%d,%s,%s\n", m, strconv.FormatFloat(zx[i], 'g', -1, 64), strconv.FormatFloat(zy[i], 'g', -1, 64))
	}
	path := filepath.Join(t.TempDir(), "m.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	res, _, err := runner.FitOne(runner.SingleFit{DataFile: path, Outcome: "m", Categories: []string{"0", "1"},
		Predictors: []string{"zx", "zy"}, Approach: fit.Cumulative, Link: fit.Logit, Covariance: fit.Observed})
	if err != nil || !res.OK() {
		t.Fatalf("fit: %v", err)
	}
	rec := runner.Record(res)
	for name, want := range map[string]float64{"zx": 1.2, "zy": -0.8} {
		est, se := rec.Estimates[name], rec.StdErrors[name]
		// 4 standard errors of the fit, and the standardization's own
		// error (the calibration sample's mean and SD against this
		// sample's: under 1% of the strength).
		if math.Abs(est-want) > 4*se+0.01*math.Abs(want) {
			t.Errorf("strength of %s: %.4f (se %.4f), stated %g", name, est, se, want)
		}
		t.Logf("strength of %s: %.4f (se %.4f), stated %g", name, est, se, want)
	}
}

func standardize(xs []float64) []float64 {
	mean, sq := 0.0, 0.0
	for _, x := range xs {
		mean += x
	}
	mean /= float64(len(xs))
	for _, x := range xs {
		sq += (x - mean) * (x - mean)
	}
	sd := math.Sqrt(sq / float64(len(xs)))
	out := make([]float64, len(xs))
	for i, x := range xs {
		out[i] = (x - mean) / sd
	}
	return out
}
