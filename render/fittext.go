package render

import (
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"

	"gonum.org/v1/gonum/stat/distuv"

	"ordplan/render/numfmt"
	"ordplan/runner/fit"
)

// DataSummary describes the rows behind a fit.
type DataSummary struct {
	File        string
	Outcome     string
	RowsRead    int
	RowsUsed    int
	DropSummary string
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
		fmt.Fprintf(tw, "Data\t%s: %d rows read, %d used; %s\n", ds.File, ds.RowsRead, ds.RowsUsed, ds.DropSummary)
	}
	fmt.Fprintf(tw, "Observations\t%s\n", numfmt.Num(r.NObs))
	fmt.Fprintf(tw, "Status\t%s\n", statusLine(r))
	if r.OK() {
		fmt.Fprintf(tw, "Log-likelihood\t%s\n", numfmt.Fixed(r.LogLik, 6))
		fmt.Fprintf(tw, "Parameters\t%d\n", r.NParams)
		fmt.Fprintf(tw, "AIC / BIC\t%s / %s\n", numfmt.Fixed(r.AIC, 3), numfmt.Fixed(r.BIC, 3))
		fmt.Fprintf(tw, "Standard errors\t%s\n", covName(r.CovType))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if !r.OK() {
		_, err := fmt.Fprintf(w, "\n%s\n", r.Message)
		return err
	}
	z := distuv.UnitNormal.Quantile(0.5 + level/2)
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "parameter\testimate\tstd. error\tz\tp\t%g%% interval\t\n", 100*level)
	for i, n := range r.ParamNames {
		est, se := r.Estimates[i], r.StdErrors[i]
		zz := est / se
		p := 2 * distuv.UnitNormal.Survival(math.Abs(zz))
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t[%s, %s]\t\n", ParamLabel(r, n), numfmt.Num(est), numfmt.Num(se), numfmt.Fixed(zz, 2), numfmt.PValue(p), numfmt.Num(est-z*se), numfmt.Num(est+z*se))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintf(w, "\nA positive slope moves the outcome towards higher categories. L_m = tau[m] - x'b_m.\n")
	if r.Status == fit.StatusNegativeProbs {
		fmt.Fprintf(w, "Warning: %s.\n", r.Message)
	}
	return nil
}

func statusLine(r *fit.Result) string {
	switch r.Status {
	case fit.StatusOK, fit.StatusNegativeProbs:
		return fmt.Sprintf("%s: converged in %d Newton iterations, max |score| %.2g", r.Status, r.Iterations, r.MaxAbsScore)
	}
	return string(r.Status)
}

func covName(c fit.Covariance) string {
	switch c {
	case fit.Expected:
		return "expected information"
	case fit.Observed:
		return "observed information"
	case fit.Sandwich:
		return "sandwich (HC1: times N/(N-P))"
	case fit.SandwichPlain:
		return "sandwich (HC0: no small-sample factor)"
	case fit.Clustered:
		return "cluster-robust sandwich (CR1: times G/(G-1) (N-1)/(N-P))"
	}
	return c.String()
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
