package simulate

import (
	"bytes"
	"math"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
	"ordplan/plan"
	"ordplan/runner/fit"
)

// clusterPlan is a binary outcome with one 0/1 predictor x and a cluster
// column k, its assumptions' clusters section replaced by each case
// (link and clusters lines, indented under assumptions).
func clusterPlan(t *testing.T, link, clusters string, effect float64) *plan.Plan {
	t.Helper()
	return parsePlan(t, testsurvey.Plan{
		Seed:       2718,
		Data:       "none.csv, cluster: k",
		Categories: `["no", "yes"]`,
		Sections: `predictors: [x]
dictionary:
  x: {values: [0, 1]}
  k: {}
`,
		Test: "wald",
		Rules: `  - reject_unconverged: true
  - choose: {by: aic}
`,
		Inference: `  hypotheses: ["x = 0"]
`,
		Assumptions: "  link: " + link + "\n" + clusters + `  predictors:
    x: {proportions: [0.5, 0.5]}
  outcomes:
    y:
      proportions: [0.5, 0.5]
      effects: {x: ` + strconv.FormatFloat(effect, 'g', -1, 64) + `}
`,
	}.YAML()+"covariance: clustered\n")
}

// columns gives the simulated rows' outcome and cluster cells.
func columns(t *testing.T, p *plan.Plan, n int, rep uint64) (ys, ks []string) {
	t.Helper()
	lines := strings.Split(strings.TrimSpace(string(simulated(t, p, n, rep))), "\n")
	if lines[0] != "y,x,k" {
		t.Fatalf("header %q", lines[0])
	}
	for _, l := range lines[1:] {
		c := strings.Split(l, ",")
		ys, ks = append(ys, c[0]), append(ks, c[2])
	}
	return ys, ks
}

// The latent intraclass correlation is recovered from the outcomes of a
// large simulated sample. Under the probit link the latent value of a row
// is its cluster's intercept plus a standard normal error, so two rows of
// a cluster have latent values correlated by icc = sd^2 / (sd^2 + 1), the
// stated value. With no effect and a binary outcome split at the median
// (proportions 0.5, 0.5), the chance that the two rows of a pair fall on
// the same side is 1/2 + asin(icc)/pi (Sheppard's formula for the
// quadrant probability of a bivariate normal: P(Z1 > 0, Z2 > 0) = 1/4 +
// asin(rho)/(2 pi); cited from memory), so icc = sin(pi (C - 1/2)) with C
// the share of concordant pairs. Clusters of two rows make 100000 pairs:
// the estimate is within 4 standard errors (from the binomial error of C)
// of the stated 0.3, and the stated proportions hold over the rows, the
// cutpoint having been solved over rows with their intercepts.
//
// On this data set (plan seed 2718, replicate 5) the estimate is 0.2891,
// 2.3 standard errors below 0.3. That is the data set's own error, not a
// bias of the estimator or of the simulation: over 200 data sets
// (TestLatentICCStudy, ORDPLAN_ICC_STUDY=200) the mean estimate is
// 0.30032 with a Monte Carlo error of 0.00034 under this link (0.30021,
// se 0.00033, under logit; 0.30006, se 0.00031, under cloglog), and the
// estimates spread by 0.0049 from one data set to the next, as the 0.0047
// of the binomial error used here says. The cutpoint solved at seed 2718
// is -0.00057, which moves the concordance by less than 1e-6; the same
// replicate without a cluster effect, from the same uniform draws, is 1.4
// standard errors below 0 as well.
func TestLatentICCRecovered(t *testing.T) {
	const n, icc = 200_000, 0.3
	p := clusterPlan(t, "probit", "  clusters: {rows_each: 2, latent_icc: 0.3}\n", 0)
	ys, ks := columns(t, p, n, 5)
	same, no := 0, 0
	for i := 0; i < n; i += 2 {
		if ks[i] != ks[i+1] || ks[i] != "c"+strconv.Itoa(i/2+1) {
			t.Fatalf("rows %d and %d: clusters %s and %s", i+1, i+2, ks[i], ks[i+1])
		}
		if ys[i] == ys[i+1] {
			same++
		}
	}
	for _, y := range ys {
		if y == "no" {
			no++
		}
	}
	proportionsHold(t, []float64{float64(no) / n, 1 - float64(no)/n}, []float64{0.5, 0.5}, n/2)
	pairs := float64(n / 2)
	C := float64(same) / pairs
	got := math.Sin(math.Pi * (C - 0.5))
	se := math.Pi * math.Cos(math.Pi*(C-0.5)) * math.Sqrt(C*(1-C)/pairs)
	near(t, "latent icc from concordant pairs", got, se, icc)
	// Without a cluster effect the pairs are independent: C near 1/2.
	q := clusterPlan(t, "probit", "  clusters: {rows_each: 2}\n", 0)
	ys, _ = columns(t, q, n, 5)
	same = 0
	for i := 0; i < n; i += 2 {
		if ys[i] == ys[i+1] {
			same++
		}
	}
	C = float64(same) / pairs
	near(t, "latent icc without a cluster effect", math.Sin(math.Pi*(C-0.5)), math.Pi*math.Sqrt(0.25/pairs), 0)
}

// A latent intraclass correlation is the intercepts' standard deviation
// sqrt(icc / (1 - icc) v), v the variance of the link's distribution:
// pi^2/3 for the logistic distribution, pi^2/6 for the extreme-value
// distributions of cloglog and loglog, 1 for the normal (textbook
// variances; cited from memory). Stated either way, the same data.
func TestLatentICCAsInterceptSD(t *testing.T) {
	for _, c := range []struct {
		link string
		v    float64
	}{{"logit", math.Pi * math.Pi / 3}, {"probit", 1}, {"cloglog", math.Pi * math.Pi / 6}, {"loglog", math.Pi * math.Pi / 6}} {
		sd := math.Sqrt(0.2 / 0.8 * c.v)
		a := clusterPlan(t, c.link, "  clusters: {number: 40, latent_icc: 0.2}\n", 0.4)
		b := clusterPlan(t, c.link, "  clusters: {number: 40, intercept_sd: "+strconv.FormatFloat(sd, 'g', -1, 64)+"}\n", 0.4)
		if got := a.Assumptions.Clusters.InterceptSD(mustLink(t, c.link)); math.Abs(got-sd) > 1e-15*sd {
			t.Errorf("%s: intercept sd %v, want %v", c.link, got, sd)
		}
		if !bytes.Equal(simulated(t, a, 500, 2), simulated(t, b, 500, 2)) {
			t.Errorf("%s: latent_icc 0.2 and intercept_sd %v simulate other data", c.link, sd)
		}
		sa, _ := New(a)
		rec := sa.ClustersRecord(500)
		if rec.LatentICC == nil || *rec.LatentICC != 0.2 || rec.Effect != "latent_icc" || math.Abs(rec.InterceptSD-sd) > 1e-15 || rec.Clusters != 40 || rec.RowsMin != 12 || rec.RowsMax != 13 {
			t.Errorf("%s: record %+v", c.link, rec)
		}
	}
}

// The default clusters are runs of ten rows without an effect, the data
// of a plan stating them the same bytes; a stated number of clusters cuts
// the rows into that many runs of consecutive rows whose sizes differ by
// at most one.
func TestClusterSizes(t *testing.T) {
	dflt := clusterPlan(t, "logit", "", 0.4)
	stated := clusterPlan(t, "logit", "  clusters: {rows_each: 10, intercept_sd: 0}\n", 0.4)
	if !bytes.Equal(simulated(t, dflt, 95, 1), simulated(t, stated, 95, 1)) {
		t.Error("the stated default simulates other data than the default")
	}
	_, ks := columns(t, dflt, 95, 1)
	for i, k := range ks {
		if k != "c"+strconv.Itoa(i/10+1) {
			t.Fatalf("default: row %d in cluster %s", i+1, k)
		}
	}
	if rec := mustSim(t, dflt).ClustersRecord(95); rec.Stated || rec.RowsEach != 10 || rec.Clusters != 10 || rec.RowsMin != 5 || rec.RowsMax != 10 || rec.InterceptSD != 0 || rec.Effect != "none" || rec.DrawnSD != nil {
		t.Errorf("default record %+v", rec)
	}
	seven := clusterPlan(t, "logit", "  clusters: {number: 7, intercept_sd: 1}\n", 0.4)
	_, ks = columns(t, seven, 50, 1)
	size := map[string]int{}
	prev := 1
	for i, k := range ks {
		g, _ := strconv.Atoi(strings.TrimPrefix(k, "c"))
		if g != prev && g != prev+1 {
			t.Fatalf("row %d: cluster %s after c%d", i+1, k, prev)
		}
		prev = g
		size[k]++
	}
	if len(size) != 7 {
		t.Errorf("%d clusters, want 7", len(size))
	}
	for k, m := range size {
		if m != 7 && m != 8 {
			t.Errorf("cluster %s has %d rows, want 7 or 8", k, m)
		}
	}
	sim := mustSim(t, seven)
	if _, err := sim.Clusters(6); err == nil || !strings.Contains(err.Error(), "assumptions.clusters.number: 7 clusters cannot be made of the 6 rows simulated") {
		t.Errorf("7 clusters of 6 rows: %v", err)
	}
	var buf bytes.Buffer
	if err := sim.Write(&buf, 6, 0); err == nil {
		t.Error("wrote 7 clusters into 6 rows")
	}
	one := mustSim(t, clusterPlan(t, "logit", "  clusters: {rows_each: 30}\n", 0.4))
	if _, err := one.Clusters(30); err == nil || !strings.Contains(err.Error(), "assumptions.clusters.rows_each: clusters of 30 rows make one cluster of the 30 rows simulated") {
		t.Errorf("one cluster: %v", err)
	}
	if g, err := one.Clusters(31); g != 2 || err != nil {
		t.Errorf("31 rows in clusters of 30: %d clusters, %v", g, err)
	}
}

// A cluster effect lowers the power of a slope that is the same in every
// cluster: the plan's model, without the intercepts, estimates the
// population-averaged slope, smaller than the stated within-cluster one
// (for a normal intercept of variance s^2 under the logit link, by about
// 1/sqrt(1 + 0.346 s^2); cited from memory), here with a latent
// intraclass correlation of 0.5 about 0.68 times it. Seeded: at n = 400
// (40 clusters of 10 rows) the power falls by more than three Monte Carlo
// standard errors of the difference. At n = 100 (10 clusters) every run
// warns of too few clusters, as the plan's run does, and power says so
// for that size alone.
func TestClusterEffectLowersPower(t *testing.T) {
	if testing.Short() {
		t.Skip("800 replicates")
	}
	const R = 200
	study := func(clusters string) *PowerResult {
		res, err := Power(clusterPlan(t, "logit", clusters, 0.5), PowerOptions{Sizes: []int{100, 400}, Replicates: R})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	none, icc := study(""), study("  clusters: {latent_icc: 0.5}\n")
	for _, res := range []*PowerResult{none, icc} {
		for i, want := range []int{10, 40} {
			c := res.Outcomes[0].Sizes[i].Clusters
			few := 0
			if want < 40 {
				few = R
			}
			if c == nil || c.Simulated != want || c.UsedMin != want || c.UsedMax != want || c.FewWarned.Count != few || c.FewBelow != 40 || (few > 0) != strings.Contains(c.Warning, `data.cluster: column "k" holds 10 clusters in the 100 rows used, fewer than 40`) {
				t.Errorf("clusters at n = %d: %+v", res.Sizes[i], c)
			}
		}
	}
	if none.Clusters == nil || none.Clusters.Stated || icc.Clusters == nil || !icc.Clusters.Stated || *icc.Clusters.LatentICC != 0.5 {
		t.Errorf("records %+v, %+v", none.Clusters, icc.Clusters)
	}
	a, b := none.Outcomes[0].Sizes[1].Hypotheses[0].Power, icc.Outcomes[0].Sizes[1].Hypotheses[0].Power
	t.Logf("power at n = 400: %.3f without a cluster effect, %.3f with a latent icc of 0.5", a.Rate, b.Rate)
	if a.Rate-b.Rate < 3*math.Hypot(a.SE, b.SE) {
		t.Errorf("power at n = 400: %.3f (%.3f) without a cluster effect, %.3f (%.3f) with one", a.Rate, a.SE, b.Rate, b.SE)
	}
}

func mustSim(t *testing.T, p *plan.Plan) *Sim {
	t.Helper()
	s, err := New(p)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func mustLink(t *testing.T, s string) fit.Link {
	t.Helper()
	l, err := fit.ParseLink(s)
	if err != nil {
		t.Fatal(err)
	}
	return l
}

// A predictor drawn once per cluster (assumptions.clusters.per_cluster)
// is the same in every row of a cluster, its clusters split as its
// proportions say; with a cluster effect the power of its slope falls far
// below that of the same predictor drawn row by row: its effect is then
// estimated from 80 clusters' outcomes, which share their intercepts (the
// design effect of a cluster-randomized comparison), not from 800 rows.
// Seeded; more than three Monte Carlo standard errors of the difference.
func TestPerClusterPredictorDesignEffect(t *testing.T) {
	per := clusterPlan(t, "logit", "  clusters: {latent_icc: 0.3, per_cluster: [x]}\n", 0.5)
	sim := mustSim(t, per)
	if rec := sim.ClustersRecord(800); len(rec.PerCluster) != 1 || rec.PerCluster[0] != "x" {
		t.Errorf("record %+v", rec)
	}
	lines := strings.Split(strings.TrimSpace(string(simulated(t, per, 20000, 3))), "\n")[1:]
	xOf := map[string]string{}
	ones := 0
	for i, l := range lines {
		c := strings.Split(l, ",")
		if x, seen := xOf[c[2]]; seen && x != c[1] {
			t.Fatalf("row %d: x = %s in cluster %s, which has x = %s", i+1, c[1], c[2], x)
		} else if !seen {
			xOf[c[2]] = c[1]
			if c[1] == "1" {
				ones++
			}
		}
	}
	if G := len(xOf); G != 2000 || math.Abs(float64(ones)/float64(G)-0.5) > 4*math.Sqrt(0.25/float64(G)) {
		t.Errorf("%d clusters, %d with x = 1", G, ones)
	}
	if testing.Short() {
		t.Skip("400 replicates")
	}
	const R = 200
	study := func(p *plan.Plan) Rate {
		res, err := Power(p, PowerOptions{Sizes: []int{800}, Replicates: R})
		if err != nil {
			t.Fatal(err)
		}
		s := res.Outcomes[0].Sizes[0]
		if s.Failed.Count > 0 || s.Clusters.Simulated != 80 || s.Clusters.FewWarned.Count > 0 {
			t.Fatalf("failed %d (%s), clusters %+v", s.Failed.Count, s.FirstFailure, s.Clusters)
		}
		return s.Hypotheses[0].Power
	}
	a, b := study(clusterPlan(t, "logit", "  clusters: {latent_icc: 0.3}\n", 0.5)), study(per)
	t.Logf("power at n = 800 (80 clusters): %.3f with x drawn row by row, %.3f with x drawn once per cluster", a.Rate, b.Rate)
	if a.Rate-b.Rate < 3*math.Hypot(a.SE, b.SE) {
		t.Errorf("power %.3f (%.3f) row by row, %.3f (%.3f) per cluster", a.Rate, a.SE, b.Rate, b.SE)
	}
}
