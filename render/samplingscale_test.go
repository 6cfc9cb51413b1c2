package render

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"maps"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/rscript"
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

// samplingTerms are the outcome and terms of the sampling-weight plans:
// terms whose constants (centring, SD scaling, knots) the weights set.
const samplingTerms = `outcomes: [{column: y, categories: ["1", "2", "3"]}]
categorical:
  site: {levels: [a, b, c]}
predictors:
  - {name: xs, column: x, centre: mean, scale: sd}
  - {name: zs, column: z, spline: {quantiles: [0.1, 0.5, 0.9]}}
  - site
`

// TestSamplingWeightsHaveNoScale: the same plan under sampling weights w
// and w/sum(w) gives the same estimates, standard errors, design constants
// (centring, SD scaling, quantile knots), descriptive tables,
// log-likelihoods and criteria (the weights are read rescaled to sum to
// the rows), and calibration table. The
// expected values come from outside the code under test: the run with the
// unnormalized weights, and, with constant weights 1/n, the ordinary
// sample SD and the quantiles by linear interpolation between order
// statistics at p (n - 1) computed here by hand.
func TestSamplingWeightsHaveNoScale(t *testing.T) {
	const plan = `version: 1
data: {file: %s, weights: w, weight_kind: sampling}
` + samplingTerms + `models: {approaches: [cumulative], effects: [parallel]}
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
	for _, f := range []string{"table-estimates-y.csv", "table-descriptives-y.csv", "table-odds-ratios-y.csv", "table-models-y.csv", "table-calibration-y.csv"} {
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
		fmt.Sprintf("knots at %.6g, %.6g and %.6g, the 0.1, 0.5 and 0.9 quantiles of z over the rows used, weighted by w", q(0.1), q(0.5), q(0.9)),
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

// exactWeightsData writes 150 seeded rows as samplingScaleData does, with
// sampling weights k/4 (k whole, 1 to 8, summing to 512) times factor,
// and a two-category outcome y2 (y above 1), to path: with factor 1,
// 1/128 (weights summing to 1) and 1000 every weight, product and sum of
// the rescaling is exact, so the weights read are the same bits.
func exactWeightsData(t *testing.T, path string, factor float64) (y2 []int, x, z, k []float64) {
	t.Helper()
	rng := rand.New(rand.NewPCG(20261203, 10))
	ks := make([]int, 150)
	sum := 0
	for i := range ks {
		ks[i] = 2 + rng.IntN(4)
		sum += ks[i]
	}
	for i := 0; sum != 512; i = (i + 1) % len(ks) {
		switch {
		case sum < 512 && ks[i] < 8:
			ks[i]++
			sum++
		case sum > 512 && ks[i] > 1:
			ks[i]--
			sum--
		}
	}
	var b strings.Builder
	b.WriteString("y,y2,x,z,site,w\n")
	for i := 0; i < 150; i++ {
		xi := math.Round(1000*(5+2*rng.NormFloat64())) / 1000
		zi := math.Round(1000*(1+9*rng.Float64())) / 1000
		u := rng.Float64()
		s := 0.4*xi - 0.2*zi + math.Log(u/(1-u))
		y := 1 + btoi(s > 0) + btoi(s > 1.5)
		fmt.Fprintf(&b, "%d,%d,%g,%g,%s,%s\n", y, btoi(y > 1), xi, zi, []string{"a", "b", "c"}[i%3],
			strconv.FormatFloat(float64(ks[i])/4*factor, 'g', -1, 64))
		y2, x, z, k = append(y2, btoi(y > 1)), append(x, xi), append(z, zi), append(k, float64(ks[i]))
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return y2, x, z, k
}

// withoutData is a run's outputs with what names the data file taken
// out: its SHA-256 in the texts, and decisions.json's data record.
func withoutData(t *testing.T, files map[string][]byte, dataPath string) map[string]string {
	t.Helper()
	raw, err := os.ReadFile(dataPath)
	if err != nil {
		t.Fatal(err)
	}
	h := sha256.Sum256(raw)
	hash := hex.EncodeToString(h[:])
	out := map[string]string{}
	for name, b := range files {
		if name == "decisions.json" {
			var d map[string]any
			if err := json.Unmarshal(b, &d); err != nil {
				t.Fatal(err)
			}
			delete(d, "data")
			b, _ = json.MarshalIndent(d, "", "  ")
		}
		out[name] = strings.ReplaceAll(string(b), hash, "DATA-SHA256")
	}
	return out
}

// TestSamplingWeightsSameBytes: sampling weights w, w/sum(w) and 1000 w
// (weights chosen so that the rescaling is exact) give the same report,
// tables and decisions.json byte for byte, but for the data file's hash;
// so do the w-weighted data held as two parts (data.parts), read as one
// data set. Before, the log-likelihoods, AIC, BIC, the calibration table
// and the observations scaled with the weights.
func TestSamplingWeightsSameBytes(t *testing.T) {
	const plan = `version: 1
data: {%s, weights: w, weight_kind: sampling}
` + samplingTerms + `models: {approaches: [cumulative, stage], effects: [parallel, nonparallel]}
tests: {parallel_lines: [wald]}
rules:
  - reject_if_sparse: {per_parameter: 5, smallest_category: 10}
  - choose: {by: tic}
inference: {marginal_effects: [average, means]}
report: {timestamp: false}
`
	run := func(factor float64) map[string]string {
		dir := t.TempDir()
		path := filepath.Join(dir, "d.csv")
		exactWeightsData(t, path, factor)
		return withoutData(t, renderSource(t, dir, fmt.Sprintf(plan, "file: d.csv"), 1), path)
	}
	base := run(1)
	for _, c := range []struct {
		name   string
		factor float64
	}{{"w/sum(w)", 1.0 / 128}, {"1000 w", 1000}} {
		other := run(c.factor)
		for _, name := range slices.Sorted(maps.Keys(base)) {
			if name == "run.json" {
				continue
			}
			if base[name] != other[name] {
				t.Errorf("%s differs between weights w and %s", name, c.name)
			}
		}
	}
	hasAll(t, "report.md", base["report.md"], "The sampling weights were rescaled to sum to the 150 rows used",
		"averaged over the 150 rows used (weighted by the sampling weights)", samplingAverageNote, samplingMeansNote,
		"means weighted by the sampling weights")
	if strings.Contains(base["report.md"], "frequency weights") {
		t.Errorf("report.md speaks of frequency weights under sampling weights")
	}

	// The same rows as two parts, read as one data set.
	dir := t.TempDir()
	whole := filepath.Join(dir, "d.csv")
	exactWeightsData(t, whole, 1)
	src, _ := os.ReadFile(whole)
	lines := strings.SplitAfter(strings.TrimSpace(string(src)), "\n")
	os.WriteFile(filepath.Join(dir, "a.csv"), []byte(strings.Join(lines[:70], "")), 0o644)
	os.WriteFile(filepath.Join(dir, "b.csv"), []byte(lines[0]+strings.Join(lines[70:], "")+"\n"), 0o644)
	parts := renderSource(t, dir, fmt.Sprintf(plan, "parts: [a.csv, b.csv]"), 1)
	outcome := func(md string) string { return md[strings.Index(md, "## Outcome"):strings.Index(md, "## Methods")] }
	if a, b := outcome(base["report.md"]), outcome(string(parts["report.md"])); a != b {
		t.Errorf("the outcome's section differs between the data in one file and in two parts")
	}
	for name, b := range parts {
		if strings.HasPrefix(name, "table-") && base[name] != string(b) {
			t.Errorf("%s differs between the data in one file and in two parts", name)
		}
	}
}

// TestSamplingLogLikAgainstR: with sampling weights the log-likelihood
// reported is that of the weights rescaled to sum to the rows, the same
// for w and 1000 w: checked against R's glm (binomial, logit) fitted with
// the weights rescaled to sum to n, its log-likelihood sum_i w_i log p_i
// computed from glm's fitted probabilities (glm's own logLik rounds
// non-integer binomial weights).
func TestSamplingLogLikAgainstR(t *testing.T) {
	rscript.Require(t)
	const plan = `version: 1
data: {file: d.csv, weights: w, weight_kind: sampling}
outcomes: [{column: y2, categories: ["0", "1"]}]
predictors: [x, z]
models: {approaches: [cumulative], effects: [parallel]}
rules:
  - choose: {by: tic}
report: {timestamp: false}
`
	loglik := func(factor float64) (float64, float64) {
		dir := t.TempDir()
		exactWeightsData(t, filepath.Join(dir, "d.csv"), factor)
		var d struct {
			Outcomes []struct {
				Fits []struct {
					LogLik float64 `json:"loglik"`
					NObs   float64 `json:"nobs"`
				} `json:"fits"`
			} `json:"outcomes"`
		}
		if err := json.Unmarshal(renderSource(t, dir, plan, 1)["decisions.json"], &d); err != nil {
			t.Fatal(err)
		}
		f := d.Outcomes[0].Fits[0]
		return f.LogLik, f.NObs
	}
	dir := t.TempDir()
	exactWeightsData(t, filepath.Join(dir, "d.csv"), 1000)
	os.WriteFile(filepath.Join(dir, "ll.R"), []byte(`d <- read.csv("d.csv")
wr <- d$w * nrow(d) / sum(d$w)
g <- suppressWarnings(glm(y2 ~ x + z, family = binomial, data = d, weights = wr))
p <- fitted(g)
cat(sprintf("ll %.17g\n", sum(wr * ifelse(d$y2 == 1, log(p), log(1 - p)))))
`), 0o644)
	want := rscript.Run(t, dir, filepath.Join(dir, "ll.R")).Scalar(t, "ll")
	for _, factor := range []float64{1, 1000} {
		got, nobs := loglik(factor)
		if math.Abs(got-want) > 1e-6 || nobs != 150 {
			t.Errorf("weights times %g: log-likelihood %.10g on %g observations, R's glm with the weights rescaled to sum to 150: %.10g", factor, got, nobs, want)
		}
	}
}
