package render

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"text/tabwriter"

	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// DataSummary describes the rows behind a fit.
type DataSummary struct {
	File string
	// Sheet: the worksheet of a workbook the rows come from (nil: not a
	// workbook).
	Sheet       *data.SheetRead
	Outcome     string
	RowsRead    int
	RowsUsed    int
	DropSummary string
	// Sampling: the weights are sampling weights, whose sum is no count
	// of observations.
	Sampling bool
	// Warnings are said after the table of estimates (too few clusters
	// for clustered errors).
	Warnings []string
}

// ParamLabel adds the category boundary to the names of boundary
// parameters: "tau[1] (SD/D)".
func ParamLabel(r *fit.Result, name string) string {
	for m := 1; m < len(r.Categories); m++ {
		if name == fit.TauName(m) {
			return name + " (" + fit.BoundaryLabel(r.Categories, m-1) + ")"
		}
	}
	return name
}

// FitTable writes the readable summary of one fit.
func FitTable(w io.Writer, r *fit.Result, ds DataSummary, level float64) error {
	if level <= 0 || level >= 1 {
		level = 0.95
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "Model\t%s\n", r.Name)
	fmt.Fprintf(tw, "Outcome\t%s: %s (%d categories)\n", ds.Outcome, strings.Join(r.Categories, " < "), r.J)
	if ds.File != "" {
		file, drop := ds.File, ds.DropSummary
		if ds.Sheet != nil {
			file += ", " + ds.Sheet.Where()
			if n := ds.Sheet.HiddenNote(); n != "" {
				drop += "; " + n
			}
		}
		fmt.Fprintf(tw, "Data\t%s: %d rows read, %d used; %s\n", file, ds.RowsRead, ds.RowsUsed, drop)
	}
	if ds.Sampling {
		fmt.Fprintf(tw, "Observations\t%d rows; sampling weights, rescaled to sum to the rows (AIC and BIC descriptive only)\n", r.NRows)
	} else {
		fmt.Fprintf(tw, "Observations\t%s\n", numfmt.Count(r.NObs))
	}
	fmt.Fprintf(tw, "Status\t%s\n", statusLine(r))
	if len(r.Centred) > 0 {
		fmt.Fprintf(tw, "Centred\t%s fitted less the mean inside the fit (far from zero for the spread): estimates, errors and max |score| are in the data's units; the information's condition number (JSON) is that of the centred parameters\n", strings.Join(r.Centred, ", "))
	}
	if r.OK() || r.Status == fit.StatusFlatMaximum {
		fmt.Fprintf(tw, "Log-likelihood\t%s\n", numfmt.Fixed(r.LogLik, 6))
		fmt.Fprintf(tw, "Parameters\t%d\n", r.NParams)
		fmt.Fprintf(tw, "AIC / BIC\t%s / %s\n", numfmt.Fixed(r.AIC, 3), numfmt.Fixed(r.BIC, 3))
	}
	if r.OK() {
		cov := r.CovType.Label()
		if r.Correction == fit.Jackknife {
			cov = fit.JackknifeLabel
		}
		if r.CovType == fit.Clustered {
			cov += fmt.Sprintf(", %d clusters", r.Clusters)
		}
		fmt.Fprintf(tw, "Standard errors\t%s\n", cov)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if !r.OK() {
		_, err := fmt.Fprintf(w, "\n%s\n", r.Message)
		return err
	}
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	stat := refStat(r)
	fmt.Fprintf(tw, "parameter\testimate\tstd. error\t%s\tp\t%g%% interval\t\n", stat, 100*level)
	for i, n := range r.ParamNames {
		inf := r.ParamInference(i, level)
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t[%s, %s]\t\n", ParamLabel(r, n), numfmt.Num(r.Estimates[i]), numfmt.Num(r.StdErrors[i]), numfmt.Fixed(inf.Stat, 2), numfmt.PValue(inf.P), numfmt.Num(inf.Low), numfmt.Num(inf.High))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if stat == "t" {
		fmt.Fprintf(w, "\n%s\n", tNote(r, "estimate"))
	}
	if n := notEstimableLine(r); n != "" {
		fmt.Fprintf(w, "\n%s\n", n)
	}
	fmt.Fprintf(w, "\nA positive slope moves the outcome towards higher categories. L_m = tau[m] - x'b_m.\n")
	if r.Status == fit.StatusNegativeProbs {
		fmt.Fprintf(w, "Warning: %s.\n", r.Message)
	}
	if n := r.CollinearNote(func(s string) string { return s }); n != "" {
		fmt.Fprintf(w, "Warning: %s.\n", n)
	}
	for _, n := range ds.Warnings {
		fmt.Fprintf(w, "Warning: %s.\n", n)
	}
	return nil
}

// notEstimableLine is the line ordplan fit prints below its table of
// estimates, and below its table of odds ratios when some interval there
// is n/a, saying which standard errors are not estimable under clustered
// errors and why ("" when every one is).
func notEstimableLine(r *fit.Result) string {
	n := r.NotEstimableNote(func(s string) string { return s })
	if n == "" {
		return ""
	}
	return "n/a: " + n + "."
}

func statusLine(r *fit.Result) string {
	switch r.Status {
	case fit.StatusOK, fit.StatusNegativeProbs:
		its := "iterations"
		if r.Iterations == 1 {
			its = "iteration"
		}
		return fmt.Sprintf("%s: converged in %d Newton %s, max |score| %.2g", r.Status, r.Iterations, its, r.MaxAbsScore)
	}
	return string(r.Status)
}

// BaselineTable writes the baseline-category form of an adjacent
// nonparallel logit.
func BaselineTable(w io.Writer, r *fit.Result, b *fit.Baseline) {
	fmt.Fprintf(w, "\nBaseline-category form: ln[P(y=j)/P(y=%s)] = alpha + x'c (plus sign)\n", r.Categories[b.Ref])
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "parameter\tcategory\testimate\tstd. error\t\n")
	nc := len(b.Categories)
	for i, n := range b.Names {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t\n", n, r.Categories[b.Categories[i%nc]], numfmt.Num(b.Estimates[i]), numfmt.Num(b.StdErrors[i]))
	}
	tw.Flush()
}

// StereotypeTable writes the category-score form of a stereotype fit.
func StereotypeTable(w io.Writer, r *fit.Result) error {
	s, err := r.StereotypeScores()
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "\nCategory-score form: %s\n", s.Normalization)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "category\talpha\tstd. error\tscore\tstd. error\t\n")
	for j, l := range s.Categories {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t\n", l, numfmt.Num(s.Alpha[j]), numfmt.Num(s.AlphaSE[j]), numfmt.Num(s.Score[j]), numfmt.Num(s.ScoreSE[j]))
	}
	fmt.Fprintf(tw, "predictor\tbeta\tstd. error\t\t\t\n")
	for k, p := range s.Predictors {
		fmt.Fprintf(tw, "%s\t%s\t%s\t\t\t\n", p, numfmt.Num(s.Beta[k]), numfmt.Num(s.BetaSE[k]))
	}
	return tw.Flush()
}

// FitChecksText writes, after the table of FitTable, the checks c of fit
// r (nil: none): the odds ratios (logit links, c.OddsRatios), the model
// against its thresholds-only model with the pseudo-R2 measures, the
// Lipsitz test and, with categorical predictors, the Pulkstenis-Robinson
// tests, one line each where it can.
func FitChecksText(w io.Writer, r *fit.Result, c *runner.SingleChecks) error {
	if c == nil {
		return nil
	}
	if c.OddsRatios != nil {
		if err := oddsRatioText(w, r, c.OddsRatios); err != nil {
			return err
		}
	}
	o := c.Overall
	fmt.Fprintf(w, "\nAgainst the thresholds-only model (log-likelihood %s): %s\n", numfmt.Fixed(o.NullLogLik, 6), testText("likelihood-ratio", o.LR))
	mz := ""
	if !math.IsNaN(o.McKelveyZavoina) {
		mz = ", McKelvey-Zavoina " + numfmt.Fixed(o.McKelveyZavoina, 4)
	}
	fmt.Fprintf(w, "Pseudo-R2: McFadden %s, Cox-Snell %s, Nagelkerke %s%s\n", numfmt.Fixed(o.McFadden, 4), numfmt.Fixed(o.CoxSnell, 4), numfmt.Fixed(o.Nagelkerke, 4), mz)
	if lz := c.Lipsitz; lz != nil {
		groups := ""
		if lz.Table != nil {
			groups = fmt.Sprintf(" (%d groups of predicted score)", lz.Table.Groups)
		}
		fmt.Fprintf(w, "Lipsitz test%s: %s\n", groups, testText("", lz.Test))
	}
	if ps := c.PatternSplit; ps != nil && len(ps.Predictors) > 0 {
		if ps.PatternSplit == nil {
			fmt.Fprintf(w, "Pulkstenis-Robinson tests: not computed, %s\n", ps.NotComputed)
			return nil
		}
		t := ps.PatternSplit
		both := fmt.Sprintf("Pearson %s; deviance %s", testText("", t.Pearson), testText("", t.Deviance))
		if !t.Pearson.OK && t.Pearson.Reason == t.Deviance.Reason {
			both = "Pearson and deviance " + testText("", t.Pearson)
		}
		fmt.Fprintf(w, "Pulkstenis-Robinson tests (%s: %d patterns, %d groups): %s\n", strings.Join(ps.Predictors, ", "), t.Patterns, t.Groups, both)
		if t.Caution != "" {
			fmt.Fprintf(w, "  caution: %s\n", t.Caution)
		}
	}
	return nil
}

// oddsRatioText writes exp(b) of each model column with a reading of its
// own (runner.OddsRatios, as the report decides them), what one unit of it
// is, where it holds, and its interval; it names the terms left out.
func oddsRatioText(w io.Writer, r *fit.Result, tab *runner.OddsRatiosRecord) error {
	if tab.NotComputed != "" {
		_, err := fmt.Fprintf(w, "\nOdds ratios not computed: %s\n", tab.NotComputed)
		return err
	}
	fmt.Fprintf(w, "\n%ss, exp(b) (above 1: towards higher categories):\n", capitalize(fit.OddsRatioKind(r.Model)))
	where := slices.ContainsFunc(tab.Rows, func(o runner.OddsRatioRow) bool { return o.HoldsAt != "" })
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	head := "predictor\tchange\t"
	if where {
		head += "holds at\t"
	}
	fmt.Fprintf(tw, "%sboundary\tratio\t%g%% interval\n", head, 100*tab.Level)
	for _, o := range tab.Rows {
		at := "all"
		if o.Boundary > 0 {
			at = fit.BoundaryLabel(r.Categories, o.Boundary-1)
		}
		row := o.Predictor + "\t" + o.Change + "\t"
		if where {
			row += o.HoldsAt + "\t"
		}
		v := numfmt.Ratios(o.Ratio, o.Low, o.High)
		fmt.Fprintf(tw, "%s%s\t%s\t[%s, %s]\n", row, at, v[0], v[1], v[2])
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if u := unshownOdds(tab.Rows); u != "" {
		if _, err := fmt.Fprintln(w, u); err != nil {
			return err
		}
	}
	// Intervals shown as n/a: the reason the table of estimates gives.
	if slices.ContainsFunc(tab.Rows, func(o runner.OddsRatioRow) bool { return math.IsNaN(o.Low) || math.IsNaN(o.High) }) {
		if n := notEstimableLine(r); n != "" {
			if _, err := fmt.Fprintln(w, n); err != nil {
				return err
			}
		}
	}
	if len(tab.Omitted) > 0 {
		_, err := fmt.Fprintf(w, "No odds ratio for the columns of %s: a column of a polynomial or spline basis (or a product with one), or of a term whose data column also makes another term, has no unit change of its own; their estimates are in the table above.\n", strings.Join(tab.Omitted, ", "))
		return err
	}
	return nil
}

// testText is a test in one phrase: "chi2(3) = 4.210, p = 0.2399", or why
// it is not a test.
func testText(label string, t fit.Test) string {
	if label != "" {
		label += " "
	}
	if !t.OK {
		return "not tested: " + t.Reason
	}
	return fmt.Sprintf("%schi2(%d) = %s, %s", label, t.DF, numfmt.Stat(t.Chi2), numfmt.PText(t.P))
}

// refStat is the heading of the column of an estimate over its standard
// error made from r's covariance: "t" when its p-values and intervals
// refer to t (on G-1 degrees of freedom under a cluster-robust covariance
// of one data set, clusterRef; on the Barnard-Rubin degrees of freedom of
// a fit pooled over imputed sets), "z" when they refer to the normal. One
// label for every table of estimates, marginal effects and level pairs,
// in the report, the CSV files and ordplan fit.
func refStat(r *fit.Result) string {
	if clusterRef(r) || r != nil && r.DF != nil {
		return "t"
	}
	return "z"
}

// clusterRef reports whether r's inference refers to t on G-1 = r.RefDF
// degrees of freedom: a cluster-robust covariance of one data set (not
// pooled over imputed sets; the df is stated beside the table).
func clusterRef(r *fit.Result) bool {
	return r != nil && r.RefDF > 0 && r.DF == nil
}

// tNote says what the column t of a table of what (an estimate, an
// effect) from r's covariance holds and its degrees of freedom, where
// clusterRef: one wording, in the report and ordplan fit. (On imputed
// data the tables' own paragraphs on the pooling say it, with
// pooledClusterDF.)
func tNote(r *fit.Result, what string) string {
	return fmt.Sprintf("t is the %s over its standard error; p-values and intervals refer to t on G-1 = %s degrees of freedom (a cluster-robust covariance from G = %d clusters), not to the normal.", what, numfmt.Num(r.RefDF), r.Clusters)
}

// pooledClusterDF says, for a fit pooled over imputed sets whose
// covariance is cluster-robust, which complete-data degrees of freedom
// the Barnard-Rubin degrees of freedom adjust (" ..."), or "".
func pooledClusterDF(r *fit.Result) string {
	if r == nil || r.DF == nil || r.RefDF <= 0 {
		return ""
	}
	cov := "cluster-robust covariance"
	if r.Correction == fit.Jackknife {
		cov = "delete-one-cluster jackknife covariance"
	}
	return fmt.Sprintf(" for complete-data degrees of freedom G-1 = %s (the %s from G = %d clusters of each imputed set)", numfmt.Num(r.RefDF), cov, r.Clusters)
}
