package render

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"ordplan/internal/testsurvey"
)

// runImputed runs an invented survey (seeded) on four stacked imputed
// sets: y in three ordered categories from a cumulative logit in x1 and
// x2, x2 missing in about a quarter of the rows and drawn anew in every
// set. It returns the rendered files.
func runImputed(t *testing.T) map[string][]byte {
	t.Helper()
	dir := t.TempDir()
	sv := testsurvey.Report.Imputed(rand.New(rand.NewPCG(31, 4)), testsurvey.ImputedOptions{Rows: 240, Sets: 4, Missing: 0.25, Digits: 5})
	os.WriteFile(filepath.Join(dir, "orig.csv"), []byte(sv.Orig), 0o644)
	os.WriteFile(filepath.Join(dir, "stacked.csv"), []byte(sv.Stacked), 0o644)
	os.WriteFile(filepath.Join(dir, "new.csv"), []byte("id,x1,x2\nA,0,0\nB,1,-1\n"), 0o644)
	src := `version: 1
title: imputed survey
data: {file: orig.csv, imputed: {file: stacked.csv, column: imp}}
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [lr, wald, score, brant]}
rules:
  - choose: {by: bic}
inference:
  hypotheses: ["x1 = 0", "x1 = 0; x2 = 0"]
  marginal_effects: [average, means]
  predict: new.csv
`
	return renderSource(t, dir, src, 2)
}

// TestImputedTestsShowF: a test pooled over imputed sets is an F test on
// two degrees of freedom, and every table of tests shows it so, "F(k, v)
// = F" under the column Statistic (not its k F under a Chi-square
// header), as do the CSV tables (f, df, df2). Each displayed F, k and v
// give back the displayed p-value through gonum's F distribution (to the
// rounding of the display), and each CSV row to 1e-6 (gonum's F tail
// with a denominator of millions of degrees of freedom is good to
// about 1e-8).
func TestImputedTestsShowF(t *testing.T) {
	files := runImputed(t)
	md := string(files["report.md"])
	for _, bad := range []string{"Chi-square |", "| LR chi-square |", "the column shows k F", "as k F with"} {
		if strings.Contains(md, bad) {
			t.Errorf("report.md on imputed data still shows %q", bad)
		}
	}
	hasAll(t, "report.md", md, "| Test | Statistic | p |", "| Restricted within full | Statistic | p |",
		"| Model | LL₀ | LR test | p | McFadden |", "| 95% high | Statistic | p |")
	row := regexp.MustCompile(`\| F\((\d+), ([0-9.]+|inf)\) = ([0-9.]+) \| (<?[0-9.]+) \|`)
	rows := row.FindAllStringSubmatch(md, -1)
	if len(rows) < 10 {
		t.Fatalf("%d table cells F(k, v) = F with their p-value, want the parallel-lines, nested, overall and hypothesis tests", len(rows))
	}
	for _, m := range rows {
		k, _ := strconv.Atoi(m[1])
		v := math.Inf(1)
		if m[2] != "inf" {
			v, _ = strconv.ParseFloat(m[2], 64)
		}
		f, _ := strconv.ParseFloat(m[3], 64)
		if strings.HasPrefix(m[4], "<") {
			continue
		}
		p, _ := strconv.ParseFloat(m[4], 64)
		// p from the displayed F on F(k, v); the display rounds F to 3
		// decimals and v to 1, so the p-values agree to about 1e-3.
		if got := fTail(f, k, v); math.Abs(got-p) > 2e-3 {
			t.Errorf("%s: p of the displayed F is %.4f", m[0], got)
		}
	}
	for _, name := range []string{"table-tests-y.csv", "table-models-y.csv", "table-term-tests-y.csv"} {
		lines := strings.Split(strings.TrimSpace(string(files[name])), "\n")
		head := strings.Split(lines[0], ",")
		fi, di := slices.Index(head, "f"), slices.Index(head, "df")
		if name == "table-models-y.csv" {
			fi, di = slices.Index(head, "lr_f"), slices.Index(head, "lr_df")
		}
		if fi < 0 || head[di+1] != head[di]+"2" || slices.Contains(head, "chi2") || slices.Contains(head, "lr_chi2") {
			t.Errorf("%s header on imputed data: %s", name, lines[0])
			continue
		}
		pi := slices.IndexFunc(head, func(h string) bool { return h == "p" || h == "lr_p" })
		checked := 0
		for _, l := range lines[1:] {
			c := strings.Split(l, ",")
			if len(c) != len(head) || c[fi] == "" {
				continue
			}
			f, _ := strconv.ParseFloat(c[fi], 64)
			k, _ := strconv.Atoi(c[di])
			v := math.Inf(1)
			if c[di+1] != "" {
				v, _ = strconv.ParseFloat(c[di+1], 64)
			}
			p, _ := strconv.ParseFloat(c[pi], 64)
			if got := fTail(f, k, v); math.Abs(got-p) > 1e-6*math.Max(p, 1e-3) {
				t.Errorf("%s: p %g, F(%d, %g) = %g gives %g: %s", name, p, k, v, f, got, l)
			}
			checked++
		}
		if checked == 0 {
			t.Errorf("%s: no pooled test checked", name)
		}
	}
}

// fTail is P(F > f) on F(k, v) from gonum (v infinite: chi-square(k) of
// k f).
func fTail(f float64, k int, v float64) float64 {
	if math.IsInf(v, 1) {
		return distuv.ChiSquared{K: float64(k)}.Survival(f * float64(k))
	}
	return distuv.F{D1: float64(k), D2: v}.Survival(f)
}

// TestImputedReport: on imputed data the report shows the pooled marginal
// effects (with df and FMI) and the pooled predictions, and their CSV files
// carry the degrees of freedom.
func TestImputedReport(t *testing.T) {
	files := runImputed(t)
	md := string(files["report.md"])
	hasAll(t, "report.md", md,
		"### Average marginal effects",
		"### Marginal effects at the means",
		"computed on each of the 4 imputed sets (with that set's fit, and for averages that set's rows) and pooled by Rubin's rules",
		"| Predictor | Change | Category | Effect | Std. error | t | p | 95% low | 95% high | df | FMI |",
		"The point is the same in every set: each numeric predictor the plan's profile does not set is at its mean over the rows of all imputed sets.",
		"### Predictions for new rows",
		"each number was predicted on each of the 4 imputed sets by that set's fit and pooled by Rubin's rules",
		"marginal effects and its predictions for new rows are computed on each imputed set",
		"### Overall fit",
		"The likelihood-ratio test is pooled by D3 (Meng and Rubin 1992",
		"| cumulative/parallel/logit (pooled, D3) |",
		"| Brant (all predictors) (pooled, D1) |",
		"| Score (all predictors) (pooled, D2) |",
		"On imputed data the curves and the table below are at the pooled estimates",
		// The Summary says what the choice rests on: BIC averaged over
		// the sets (the plan's one rule, choose by bic).
		"This choice rests on the 4 imputed sets taken together: the rules compared BIC averaged over the sets (the mean of each set's value), so that no one set's fit made it (see Multiple imputation).",
		"every model was fitted on each complete imputed set",
		// The limits name the assumption pooling rests on and the
		// uncertainty of the selection the pooled tests leave out.
		"Pooled standard errors and tests assume that the values are missing at random given the columns of the imputation models",
		"they leave out the uncertainty of that selection, so intervals tend to be too narrow and p-values too small",
		// The methods paragraph counts the rows of one set, not of the
		// stacked file (960 rows, of which one set's 240 are read at a time).
		"Each of the 4 imputed data sets held 240 rows, all used.",
		// Goodness of fit: each set's Lipsitz test pooled by D2, said to
		// be approximate, with its source.
		"On imputed data (4 sets): each imputed set's rows are grouped by that set's own fitted scores",
		// Here the four sets' statistics disagree more than D2 allows: D2
		// is set to 0 and the test has no p-value (the 1 of F = 0 would
		// read as a perfect fit), said in the report and the Methods draft
		// (which names the Lipsitz test, since its statistic was computed).
		"(approximate): F(9, ",
		") = 0.000 (pooled, D2), no p-value: the D2 statistic came out negative and is shown as 0; the 4 imputed sets' statistics (from ",
		"vary more than their size allows, so the pooled test is not informative (the p = 1 of F = 0 would not mean that the model fits).",
		"The fit of the chosen model was checked with the Lipsitz test [",
		"combined by the D2 rule [",
		"For the Lipsitz test the D2 statistic came out negative and was set to 0, as is usual, and no p-value is reported: a negative D2 says that the imputed sets' statistics disagree more than D2 allows, so the pooled test is not informative about the fit (the p-value of 1 that F = 0 would give does not mean that the model fits).",
		"Li, K.H., Meng, X.L., Raghunathan, T.E. & Rubin, D.B. (1991). Significance levels from repeated p-values with multiply-imputed data.",
		// The missing values are those of the original data file, named
		// as such (it named the stacked file of the imputed sets).
		"Missing values in the columns the analysis uses, in the original data `orig.csv`.",
		// Pooled estimates refer to t on their Barnard-Rubin df.
		"each p-value and interval refers to t on the estimate's Barnard-Rubin degrees of freedom",
		"| Parameter | Estimate | Std. error | t | p | 95% low | 95% high |",
	)
	// No p-value is shown for that test: not 1.0000 in the report, an
	// empty p with the reason in table-tests (its F of 0 and df kept).
	if strings.Contains(md, "(pooled, D2), p = 1.0000") || strings.Contains(md, "Caution: the D2 statistic") {
		t.Error("report.md shows p = 1 for a D2 statistic set to 0")
	}
	lipsitz := false
	for _, r := range csvByHeader(t, "table-tests-y.csv", files["table-tests-y.csv"]) {
		if r["test"] == "lipsitz" {
			lipsitz = true
			if r["f"] != "0" || r["df"] != "9" || r["df2"] == "" || r["p"] != "" || !strings.Contains(r["note"], "pooled over imputed sets (D2); no p-value: the D2 statistic came out negative and is shown as 0; ") {
				t.Errorf("table-tests-y.csv, the Lipsitz test: %v", r)
			}
		}
	}
	if !lipsitz {
		t.Error("table-tests-y.csv has no Lipsitz test")
	}
	// The observed counts of the goodness-of-fit table are means over the
	// sets: each is written with one decimal, as the expected counts are.
	gof := md[strings.Index(md, "Observed and expected counts by group of predicted score"):]
	gof = gof[strings.Index(gof, "| 1 |"):]
	gof = gof[:strings.Index(gof, "\n\n")]
	for _, line := range strings.Split(gof, "\n") {
		cells := strings.Split(strings.Trim(line, "| "), " | ")
		for c := 3; c < len(cells); c += 2 {
			if !regexp.MustCompile(`^[0-9]+\.[0-9]$`).MatchString(cells[c]) {
				t.Errorf("observed count %q of the goodness-of-fit table is not written with one decimal: %s", cells[c], line)
			}
		}
	}
	// The Methods draft counts the incomplete rows of the original data,
	// in all and by column, in the words and numbers of the Data section,
	// and states the missing-at-random assumption and that the sets were
	// imputed outside ordplan, in the words of the section on imputation.
	methods := md[strings.Index(md, "## Methods (draft)"):]
	body := md[:strings.Index(md, "## Methods (draft)")]
	m := regexp.MustCompile("Of 240 rows, ([0-9]+) \\(([0-9.]+)%\\) miss at least one used column in the original data `orig.csv`: `x2` ([0-9]+) \\(([0-9.]+)%\\)\\. Each of the 4 imputed data sets held 240 rows, all used\\.").FindStringSubmatch(methods)
	if m == nil {
		t.Fatalf("the Methods draft does not count the incomplete rows:\n%s", methods[:2000])
	}
	hasAll(t, "report.md (body)", body,
		"Of 240 rows, "+m[1]+" ("+m[2]+"%) miss at least one used column; the analysis uses the 4 imputed data sets instead",
		"| `x2` | "+m[3]+" | "+m[4]+"% |")
	for _, w := range []string{marWords, outsideImputationWords} {
		if strings.Count(methods, w) != 1 || strings.Count(body, w) != 1 {
			t.Errorf("%q: %d times in the Methods draft, %d in the body; want once each", w, strings.Count(methods, w), strings.Count(body, w))
		}
	}
	if strings.Contains(md, "not computed on imputed data") {
		t.Error("report.md still says goodness-of-fit tests are not computed on imputed data")
	}
	if strings.Contains(md, "were dropped for missing values") {
		t.Error("the methods paragraph counts the other imputed sets' rows as dropped")
	}
	if strings.Contains(md, "marginal effects and predictions are not computed on imputed data") {
		t.Error("report.md still says marginal effects are not computed on imputed data")
	}
	predLines := strings.Split(string(files["predictions-y.csv"]), "\n")
	pred := predLines[0]
	if !strings.HasPrefix(pred, "line,id,x1,x2,prob_c1,se_prob_c1,df_prob_c1,low_95_prob_c1,high_95_prob_c1,") || !strings.Contains(pred, ",expected,se_expected,df_expected,low_95_expected,high_95_expected,most_likely,") {
		t.Errorf("predictions header: %s", pred)
	}
	// The interval of a pooled probability: on its log-odds scale, the
	// t quantile on its Barnard-Rubin degrees of freedom (Rubin 1987; the
	// quantile from gonum's Student t) times its standard error over
	// p(1 - p), transformed back (docs/models.md, "Predictions and
	// marginal effects"; written out by hand here).
	for _, line := range predLines[1:] {
		cells := strings.Split(line, ",")
		if len(cells) < 9 {
			continue
		}
		v, _ := strconv.ParseFloat(cells[4], 64)
		se, _ := strconv.ParseFloat(cells[5], 64)
		q := 1.959963984540054
		if cells[6] != "" {
			df, _ := strconv.ParseFloat(cells[6], 64)
			q = distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(0.975)
		}
		lo, _ := strconv.ParseFloat(cells[7], 64)
		hi, _ := strconv.ParseFloat(cells[8], 64)
		eta, h := math.Log(v/(1-v)), q*se/(v*(1-v))
		wlo, whi := 1/(1+math.Exp(-(eta-h))), 1/(1+math.Exp(-(eta+h)))
		if math.Abs(lo-wlo) > 1e-9 || math.Abs(hi-whi) > 1e-9 {
			t.Errorf("pooled prediction interval [%g, %g], want [%g, %g] (p %g, quantile %g, se %g): %s", lo, hi, wlo, whi, v, q, se, line)
		}
	}
	me := strings.Split(strings.TrimSpace(string(files["table-marginal-effects-y.csv"])), "\n")
	if !strings.HasSuffix(me[0], ",df,fmi,at,at_outside") {
		t.Errorf("marginal effects header: %s", me[0])
	}
	// at_outside: empty for averages (no point), false at the means
	// (inside by construction; the profile's rows are checked by W23).
	for _, l := range me[1:] {
		if strings.HasPrefix(l, "average,") && !strings.HasSuffix(l, ",,") || strings.HasPrefix(l, "means,") && !strings.HasSuffix(l, ",false") {
			t.Errorf("marginal effects row, column at_outside: %s", l)
		}
	}
}

// csvByHeader reads a CSV output (encoding/csv) into one map per row, by
// the names of its header line.
func csvByHeader(t *testing.T, name string, b []byte) []map[string]string {
	t.Helper()
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil || len(recs) < 2 {
		t.Fatalf("%s: %v (%d lines)", name, err, len(recs))
	}
	var out []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, h := range recs[0] {
			m[h] = r[i]
		}
		out = append(out, m)
	}
	return out
}

// TestImputedOddsRatiosDF: on imputed data the odds ratios of the chosen
// model carry the degrees of freedom of their t (column df, in the report
// and in table-odds-ratios), and each interval is exp(b -+ t_df se) with b,
// se and df of the slope's row of the pooled estimates (table-estimates):
// Rubin's rules' t on the Barnard-Rubin degrees of freedom (docs/models.md,
// "Multiply imputed data"; the quantile from gonum's Student t, written out
// here). The report no longer says in a sentence of its own which df the
// intervals refer to.
func TestImputedOddsRatiosDF(t *testing.T) {
	files := runImputed(t)
	md := string(files["report.md"])
	hasAll(t, "report.md", md,
		"| Predictor | Change | Boundary | Cumulative odds ratio | 95% low | 95% high | df |",
		"with 95% intervals exp(b ∓ t·se), t the quantile of t on the degrees of freedom in column df")
	if strings.Contains(md, "Pooled over the imputed sets, z is the quantile of t") {
		t.Error("report.md still has the sentence on the odds ratios' degrees of freedom")
	}
	est := map[string]map[string]string{}
	chosen := ""
	for _, r := range csvByHeader(t, "table-estimates-y.csv", files["table-estimates-y.csv"]) {
		if r["verdict"] == "chosen" {
			est[r["parameter"]], chosen = r, r["model"]
		}
	}
	num := func(s string) float64 {
		t.Helper()
		x, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("%q: %v", s, err)
		}
		return x
	}
	ors := csvByHeader(t, "table-odds-ratios-y.csv", files["table-odds-ratios-y.csv"])
	if len(ors) != 2 {
		t.Fatalf("%d odds ratios, want those of x1 and x2", len(ors))
	}
	for _, o := range ors {
		e := est[o["predictor"]]
		if o["model"] != chosen || e == nil || o["boundary"] != "0" {
			t.Fatalf("odds ratio %v of no slope of the chosen model %s", o, chosen)
		}
		if o["df"] == "" || o["df"] != e["df"] || o["log_estimate"] != e["estimate"] || o["log_se"] != e["std_error"] {
			t.Errorf("%s: odds ratio's log %s (se %s, df %s), the estimate %s (se %s, df %s)", o["predictor"], o["log_estimate"], o["log_se"], o["df"], e["estimate"], e["std_error"], e["df"])
		}
		b, se, df := num(e["estimate"]), num(e["std_error"]), num(e["df"])
		q := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(0.975)
		for _, c := range []struct {
			col  string
			want float64
		}{{"low_95", math.Exp(b - q*se)}, {"high_95", math.Exp(b + q*se)}, {"ratio", math.Exp(b)}} {
			if got := num(o[c.col]); math.Abs(got-c.want) > 1e-9*c.want {
				t.Errorf("%s %s: %.12g, want exp(b -+ t_df se) = %.12g", o["predictor"], c.col, got, c.want)
			}
		}
		// The interval of the estimate itself is b -+ t_df se too: the two
		// tables refer to one t.
		if lo := num(e["low_95"]); math.Abs(math.Exp(lo)-num(o["low_95"])) > 1e-9 {
			t.Errorf("%s: exp of the estimate's low %g, the odds ratio's %s", o["predictor"], math.Exp(lo), o["low_95"])
		}
		cell := "| " + o["predictor"] + " | per unit of " + o["predictor"] + " | every boundary | "
		i := strings.Index(md, cell)
		if i < 0 {
			t.Fatalf("no row %q in the report's odds ratios", cell)
		}
		row, _, _ := strings.Cut(md[i:], "\n")
		if !strings.HasSuffix(row, " | "+dfCell(df)+" |") {
			t.Errorf("report row %s: want df %s", row, dfCell(df))
		}
	}
}

// TestClusteredOddsRatiosDF: on one data set under a cluster-robust
// covariance table-odds-ratios carries df = G-1, as table-estimates does,
// and each interval is exp(b -+ t_{G-1} se) of the slope's estimate (the
// quantile from gonum's Student t). Invented data: 200 rows in 20 sites.
func TestClusteredOddsRatiosDF(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(8, 3))
	var b strings.Builder
	b.WriteString("y,x1,x2,site\n")
	for i := range 200 {
		y, x1, x2 := testsurvey.Report.Row(rng)
		fmt.Fprintf(&b, "%d,%.5f,%.5f,s%d\n", y, x1, x2, i%20)
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	src := `version: 1
title: clustered
data: {file: d.csv, cluster: site}
covariance: clustered
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
`
	files := renderSource(t, dir, src, 2)
	est := map[string]map[string]string{}
	for _, r := range csvByHeader(t, "table-estimates-y.csv", files["table-estimates-y.csv"]) {
		est[r["parameter"]] = r
	}
	ors := csvByHeader(t, "table-odds-ratios-y.csv", files["table-odds-ratios-y.csv"])
	q := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: 19}.Quantile(0.975)
	for _, o := range ors {
		e := est[o["predictor"]]
		if e == nil || o["df"] != "19" || e["df"] != "19" {
			t.Fatalf("odds ratio %v, estimate %v: want df 19 in both", o, e)
		}
		bv, _ := strconv.ParseFloat(e["estimate"], 64)
		se, _ := strconv.ParseFloat(e["std_error"], 64)
		lo, _ := strconv.ParseFloat(o["low_95"], 64)
		hi, _ := strconv.ParseFloat(o["high_95"], 64)
		if wlo, whi := math.Exp(bv-q*se), math.Exp(bv+q*se); math.Abs(lo-wlo) > 1e-9*wlo || math.Abs(hi-whi) > 1e-9*whi {
			t.Errorf("%s: interval [%g, %g], want [%g, %g]", o["predictor"], lo, hi, wlo, whi)
		}
	}
	if len(ors) != 2 {
		t.Errorf("%d odds ratios, want 2", len(ors))
	}
}

// TestDescriptivesNameTheirRows: on imputed data the predictors by outcome
// category describe the original file's observed values, each predictor
// over the rows where it is observed; where a predictor is missing in
// some rows the cell says which rows it counts ("k of n", ", n rows"),
// so that its share's denominator is stated. Counts by hand from the
// invented file.
func TestDescriptivesNameTheirRows(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(5, 27))
	var orig, stacked strings.Builder
	orig.WriteString("y,s,x\n")
	stacked.WriteString("imp,y,s,x\n")
	type row struct {
		y, s   int
		x      float64
		ms, mx bool
	}
	rows := make([]row, 200)
	ones, of, xs := map[int]int{}, map[int]int{}, map[int]int{}
	for i := range rows {
		s, x := rng.IntN(2), rng.NormFloat64()
		y := min(2, max(0, int(1+0.8*x+0.6*float64(s)+rng.NormFloat64())))
		r := row{y, s, x, rng.Float64() < 0.2, rng.Float64() < 0.15}
		rows[i] = r
		ss, sx := strconv.Itoa(s), strconv.FormatFloat(x, 'f', 4, 64)
		if r.ms {
			ss = ""
		} else {
			of[y]++
			ones[y] += s
		}
		if r.mx {
			sx = ""
		} else {
			xs[y]++
		}
		orig.WriteString(strconv.Itoa(y) + "," + ss + "," + sx + "\n")
	}
	for k := 1; k <= 2; k++ {
		for _, r := range rows {
			s, x := r.s, r.x
			if r.ms {
				s = rng.IntN(2)
			}
			if r.mx {
				x = rng.NormFloat64()
			}
			stacked.WriteString(strconv.Itoa(k) + "," + strconv.Itoa(r.y) + "," + strconv.Itoa(s) + "," + strconv.FormatFloat(x, 'f', 4, 64) + "\n")
		}
	}
	os.WriteFile(filepath.Join(dir, "orig.csv"), []byte(orig.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "stacked.csv"), []byte(stacked.String()), 0o644)
	files := renderSource(t, dir, `version: 1
title: descriptives
data: {file: orig.csv, imputed: {file: stacked.csv, column: imp}}
outcomes: [{column: y}]
predictors: [s, x]
models: {approaches: [cumulative], effects: [parallel]}
rules:
  - choose: {by: bic}
`, 2)
	md := string(files["report.md"])
	hasAll(t, "report.md", md, `the cell names the rows it counts, "k of n (share)" for a count`)
	sRow := "| s |"
	xRow := "| x |"
	for c := 0; c < 3; c++ {
		sRow += " " + strconv.Itoa(ones[c]) + " of " + strconv.Itoa(of[c]) + " (" + strconv.FormatFloat(100*float64(ones[c])/float64(of[c]), 'f', 1, 64) + "%) |"
		xRow += ".*, " + strconv.Itoa(xs[c]) + " rows |"
	}
	if !strings.Contains(md, sRow) {
		t.Errorf("report.md lacks the row %q", sRow)
	}
	if !regexp.MustCompile(regexp.QuoteMeta("| x |") + strings.TrimPrefix(xRow, "| x |")).MatchString(md) {
		t.Errorf("report.md's row of x does not name its rows %v", xs)
	}
	if !strings.Contains(md, "|---|---:|---:|---:|---:|") {
		t.Error("the predictors by outcome category are no longer right-aligned")
	}
}

// TestPoolingTableLambda: the table of the pooling shows lambda = (1 +
// 1/m) B/T beside FMI, FMI = lambda (df + 1)/(df + 3) + 2/(df + 3) in each
// row (to the rounding of the display; the values themselves are checked
// against mitml by TestPooledClusteredAgainstMitml and against mice by
// TestAgainstMiceNhanes), and the guidance compares lambda, not FMI, with
// the share of incomplete rows.
func TestPoolingTableLambda(t *testing.T) {
	md := string(runImputed(t)["report.md"])
	hasAll(t, "report.md", md, "| Parameter | Estimate | Within SD | Between SD | SE | df | RIV | λ | FMI |",
		"A λ well above the share of incomplete rows", "so it is not compared with the share of missing values")
	if strings.Contains(md, "A fraction of missing information well above") {
		t.Error("the guidance still compares FMI with the share of incomplete rows")
	}
	tab := md[strings.Index(md, "| Parameter | Estimate | Within SD"):]
	tab = tab[:strings.Index(tab, "\n\n")]
	rows := 0
	for _, line := range strings.Split(tab, "\n")[2:] {
		c := strings.Split(strings.Trim(line, "| "), " | ")
		df, err := strconv.ParseFloat(c[5], 64)
		if err != nil {
			continue // inf
		}
		lambda, _ := strconv.ParseFloat(c[7], 64)
		fmi, _ := strconv.ParseFloat(c[8], 64)
		if want := lambda*(df+1)/(df+3) + 2/(df+3); math.Abs(fmi-want) > 2e-3 {
			t.Errorf("FMI %g, from lambda and df %g: %s", fmi, want, line)
		}
		rows++
	}
	if rows == 0 {
		t.Fatalf("no row of finite df in\n%s", tab)
	}
}

// TestInfiniteDFWrittenInf: on imputed sets that are all the same (an
// invented survey, seeded: testsurvey.Report with Same, so the sets hold
// the true x2 and nothing varies between them) the between-imputation
// part r of every pooled test is 0, and the D3 likelihood-ratio tests
// refer to F(k, infinity) (Meng and Rubin 1992: the denominator df grows
// without bound as r goes to 0). Every CSV column of degrees of freedom
// (df, df2, lr_df2, df_...) then holds a number or "inf" in each row that
// has a p-value, never an empty cell (kept for a value that does not
// exist), and the infinite ones read "inf". The per-parameter
// Barnard-Rubin df stay finite here (nu_obs with the complete-data df).
func TestInfiniteDFWrittenInf(t *testing.T) {
	dir := t.TempDir()
	sv := testsurvey.Report.Imputed(rand.New(rand.NewPCG(31, 4)), testsurvey.ImputedOptions{Rows: 240, Sets: 3, Missing: 0.25, Digits: 5, Same: true})
	os.WriteFile(filepath.Join(dir, "orig.csv"), []byte(sv.Orig), 0o644)
	os.WriteFile(filepath.Join(dir, "stacked.csv"), []byte(sv.Stacked), 0o644)
	os.WriteFile(filepath.Join(dir, "new.csv"), []byte("id,x1,x2\nA,0,0\nB,1,-1\n"), 0o644)
	files := renderSource(t, dir, `version: 1
title: identical imputed sets
data: {file: orig.csv, imputed: {file: stacked.csv, column: imp}}
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [lr, wald, brant]}
rules:
  - choose: {by: bic}
inference:
  hypotheses: ["x1 = 0; x2 = 0"]
  marginal_effects: [average]
  predict: new.csv
`, 2)
	checked, inf := map[string]int{}, map[string]int{}
	for name, b := range files {
		if !strings.HasSuffix(name, ".csv") || bytes.Count(b, []byte("\n")) < 2 {
			continue // not a table, or a header alone
		}
		for _, r := range csvByHeader(t, name, b) {
			p, ok := r["p"]
			if !ok {
				p = r["lr_p"]
			}
			if name == "table-tests-y.csv" && !strings.HasPrefix(r["note"], "pooled") {
				continue // not pooled: a chi-square, no df2
			}
			if !strings.HasPrefix(name, "predictions-") && p == "" {
				continue
			}
			for col, v := range r {
				if col != "df" && col != "df2" && col != "lr_df2" && !strings.HasPrefix(col, "df_") {
					continue
				}
				key := name + " " + col
				checked[key]++
				if v == "inf" {
					inf[key]++
				} else if x, err := strconv.ParseFloat(v, 64); err != nil || !(x > 0) || math.IsInf(x, 0) {
					t.Errorf("%s: column %s is %q, want a number or inf: %v", name, col, v, r)
				}
			}
		}
	}
	for _, want := range []string{"table-estimates-y.csv df", "table-tests-y.csv df2", "table-models-y.csv lr_df2", "table-term-tests-y.csv df2", "table-marginal-effects-y.csv df"} {
		if checked[want] == 0 {
			t.Errorf("no row of %s checked", want)
		}
	}
	// (The tests against the thresholds-only model keep an r of rounding
	// size, so their df2 is large but finite.)
	for _, want := range []string{"table-tests-y.csv df2", "table-term-tests-y.csv df2"} {
		if inf[want] == 0 {
			t.Errorf("no inf in %s (D3 on identical sets): %v", want, inf)
		}
	}
}

// The same with frequency weights: the n of a partly observed predictor is
// a sum of weights, observations, not rows (it read "1072 rows" of 543).
// Sums by hand from the invented file.
func TestDescriptivesWeightedCountObservations(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(8, 3))
	var orig, stacked strings.Builder
	orig.WriteString("y,x,w\n")
	stacked.WriteString("imp,y,x,w\n")
	obs := map[int]int{}
	type row struct {
		y, w int
		x    float64
		mx   bool
	}
	var rows []row
	for range 150 {
		x := rng.NormFloat64()
		r := row{min(2, max(0, int(1+0.8*x+rng.NormFloat64()))), 1 + rng.IntN(3), x, rng.Float64() < 0.2}
		rows = append(rows, r)
		sx := strconv.FormatFloat(x, 'f', 4, 64)
		if r.mx {
			sx = ""
		} else {
			obs[r.y] += r.w
		}
		fmt.Fprintf(&orig, "%d,%s,%d\n", r.y, sx, r.w)
	}
	for k := 1; k <= 2; k++ {
		for _, r := range rows {
			x := r.x
			if r.mx {
				x = rng.NormFloat64()
			}
			fmt.Fprintf(&stacked, "%d,%d,%.4f,%d\n", k, r.y, x, r.w)
		}
	}
	os.WriteFile(filepath.Join(dir, "orig.csv"), []byte(orig.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "stacked.csv"), []byte(stacked.String()), 0o644)
	md := string(renderSource(t, dir, `version: 1
title: descriptives
data: {file: orig.csv, weights: w, imputed: {file: stacked.csv, column: imp}}
outcomes: [{column: y}]
predictors: [x]
models: {approaches: [cumulative], effects: [parallel]}
rules:
  - choose: {by: bic}
`, 2)["report.md"])
	hasAll(t, "report.md", md, `the cell names the observations it counts, "k of n (share)" for a count (n the observations with the predictor observed, the share's denominator) and "mean (SD), n observations" for a mean`)
	for c := 0; c < 3; c++ {
		if want := ", " + strconv.Itoa(obs[c]) + " observations |"; !strings.Contains(md, want) {
			t.Errorf("report.md lacks %q for category %d", want, c)
		}
	}
	for _, l := range strings.Split(md, "\n") {
		if strings.HasPrefix(l, "| x |") && strings.Contains(l, " rows") {
			t.Errorf("the predictors by outcome category count weighted observations as rows: %s", l)
		}
	}
}
