package render

import (
	"bytes"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"ordplan/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// md accumulates Markdown text.
type md struct{ b bytes.Buffer }

func (m *md) p(format string, a ...any) { fmt.Fprintf(&m.b, format+"\n\n", a...) }
func (m *md) h(level int, title string) {
	fmt.Fprintf(&m.b, "%s %s\n\n", strings.Repeat("#", level), title)
}

// table writes a Markdown table; cells are escaped for pipes.
func (m *md) table(head []string, rows [][]string) {
	esc := func(s string) string { return strings.ReplaceAll(s, "|", `\|`) }
	for i, h := range head {
		head[i] = esc(h)
	}
	fmt.Fprintf(&m.b, "| %s |\n|%s\n", strings.Join(head, " | "), strings.Repeat("---|", len(head)))
	for _, r := range rows {
		for i := range r {
			r[i] = esc(r[i])
		}
		fmt.Fprintf(&m.b, "| %s |\n", strings.Join(r, " | "))
	}
	m.b.WriteString("\n")
}

// Markdown renders report.md.
func Markdown(r *runner.Result, dec *runner.Decisions, changes []string) []byte {
	m := &md{}
	p := r.Plan
	title := p.Report.Title
	if title == "" {
		title = p.Title
	}
	if title == "" {
		title = "ordplan report"
	}
	m.h(1, title)
	m.p("This report was written by ordplan %s from the plan `%s` (sha256 `%s`) and the data file `%s` (sha256 `%s`). The plan fixed the candidate models and the decision rules before the models were fitted; the same plan and data give this report byte for byte.",
		r.Version, dec.Plan.File, p.Hash, p.Data.File, r.DataHash)
	if len(changes) > 0 {
		m.h(2, "Changes since the previous run")
		for _, c := range changes {
			fmt.Fprintf(&m.b, "- %s\n", c)
		}
		m.b.WriteString("\n")
	}
	writePlan(m, r)
	for _, or := range r.Outcomes {
		writeOutcome(m, r, or)
	}
	writeLimits(m, r)
	return m.b.Bytes()
}

func writePlan(m *md, r *runner.Result) {
	p := r.Plan
	m.h(2, "The plan")
	rows := [][]string{
		{"Predictors", strings.Join(p.Predictors, ", ")},
		{"Approaches", strings.Join(p.Models.Approaches, ", ") + stageDirection(r)},
		{"Levels", strings.Join(p.Models.Levels, ", ")},
		{"Links", strings.Join(p.Models.Links, ", ")},
		{"Parallel-lines tests", strings.Join(p.Tests.ParallelLines, ", ") + fmt.Sprintf(" (alpha %g)", p.Tests.Alpha)},
		{"Standard errors", p.Covariance},
		{"Missing values", p.Data.Missing},
	}
	if p.Models.Partial.Select != nil {
		s := p.Models.Partial.Select
		rows = append(rows, []string{"Partial set", fmt.Sprintf("selected by %s (%s tests, alpha %g)", s.Method, s.Test, s.Alpha)})
	} else if len(p.Models.Partial.Free) > 0 {
		rows = append(rows, []string{"Partial set", strings.Join(p.Models.Partial.Free, ", ")})
	}
	if p.Data.Weights != "" {
		rows = append(rows, []string{"Weights", p.Data.Weights + " (" + p.Data.WeightKind + ")"})
	}
	m.table([]string{"Setting", "Value"}, rows)
	m.p("Decision rules, applied in this order:")
	for i, rule := range p.Rules {
		fmt.Fprintf(&m.b, "%d. `%s` (plan line %d)\n", i+1, rule.Kind, rule.Line)
	}
	m.b.WriteString("\n")
	for _, n := range r.Notes {
		m.p("%s", n)
	}
}

func stageDirection(r *runner.Result) string {
	if r.Plan.Models.HasApproach("stage") {
		return " (stage direction: " + r.Plan.Models.Direction + ")"
	}
	return ""
}

func writeOutcome(m *md, r *runner.Result, or *runner.OutcomeResult) {
	ds := or.Data
	m.h(2, "Outcome: "+or.Outcome.Label)
	m.h(3, "Data")
	m.p("Outcome column `%s`, %d categories in this order: %s. %d rows read, %d used; %s. Observations (sum of weights): %s.",
		or.Outcome.Column, len(ds.Levels), strings.Join(ds.Levels, " < "), ds.RowsRead, ds.N, ds.DropSummary(), numfmt.Num(ds.NObs()))
	var rows [][]string
	for j, l := range ds.Levels {
		rows = append(rows, []string{l, numfmt.Num(ds.Counts[j]), numfmt.Fixed(100*ds.Counts[j]/ds.NObs(), 1) + "%"})
	}
	m.table([]string{"Category", "Count", "Share"}, rows)

	writeFreeSets(m, or)
	writeModelTable(m, or)
	writeTests(m, or)
	writeDecisionLog(m, or)
	if or.Chosen != nil {
		writeChosen(m, r, or)
	}
}

func writeFreeSets(m *md, or *runner.OutcomeResult) {
	m.h(3, "Partial sets")
	var rows [][]string
	for _, fs := range or.FreeSets {
		set := strings.Join(fs.Predictors, ", ")
		if set == "" {
			set = "(none)"
		}
		rows = append(rows, []string{fs.Approach, set, fs.Source})
	}
	m.table([]string{"Approach", "Predictors allowed to vary", "Source"}, rows)
	for _, s := range or.Stepwise {
		m.p("**Stepwise selection, %s %s** (start: every predictor nonparallel; at each step the free predictor with the largest p-value at or above %g is made parallel):", s.Approach, s.Link, s.Result.Alpha)
		if !s.Result.OK {
			m.p("Not computed: %s.", s.Result.Reason)
			continue
		}
		var rows [][]string
		for _, st := range s.Result.Steps {
			var parts []string
			for _, t := range st.Tests {
				parts = append(parts, fmt.Sprintf("%s chi2(%d)=%s p=%s", t.Name, t.DF, numfmt.Fixed(t.Chi2, 2), numfmt.PValue(t.P)))
			}
			imposed := st.Imposed
			if imposed == "" {
				imposed = "(stop)"
			}
			rows = append(rows, []string{fmt.Sprint(st.Step), numfmt.Fixed(st.LogLik, 3), strings.Join(parts, "; "), imposed})
		}
		m.table([]string{"Step", "Log-likelihood", "Tests of equal slopes", "Made parallel"}, rows)
		if t := s.Result.FinalTest; t.OK {
			m.p("Joint test that every predictor made parallel has equal slopes: chi2(%d) = %s, p = %s.", t.DF, numfmt.Fixed(t.Chi2, 2), numfmt.PValue(t.P))
		}
	}
}

func writeModelTable(m *md, or *runner.OutcomeResult) {
	m.h(3, "The models")
	var rows [][]string
	for _, f := range or.Fits {
		if f.Auxiliary {
			continue
		}
		rows = append(rows, modelRow(f))
	}
	m.table([]string{"Model", "Status", "Log-likelihood", "Parameters", "AIC", "BIC", "Rows with P<0", "Verdict"}, rows)
	for _, n := range or.Notes {
		m.p("%s.", n)
	}
}

func modelRow(f *runner.FitEntry) []string {
	id := f.ID
	if f.Verdict == "chosen" {
		id = "**" + id + "** (chosen)"
	}
	if f.Result == nil {
		return []string{id, "not fitted: " + f.Err, "", "", "", "", "", f.Verdict}
	}
	res := f.Result
	if !res.OK() {
		return []string{id, string(res.Status), "no finite value", fmt.Sprint(res.NParams), "", "", "", f.Verdict}
	}
	return []string{id, string(res.Status), numfmt.Fixed(res.LogLik, 3), fmt.Sprint(res.NParams), numfmt.Fixed(res.AIC, 2), numfmt.Fixed(res.BIC, 2), fmt.Sprint(res.NegativeRows), f.Verdict}
}

func testRow(label string, t fit.Test) []string {
	if !t.OK {
		return []string{label, "", "", "not computed: " + t.Reason}
	}
	return []string{label, numfmt.Fixed(t.Chi2, 3), fmt.Sprint(t.DF), numfmt.PValue(t.P)}
}

func writeTests(m *md, or *runner.OutcomeResult) {
	m.h(3, "Tests of the parallel-lines assumption")
	m.p("Each test compares the model with one slope per predictor against the model with a slope per category boundary. Small p-values speak against parallel lines; in large samples they reject even differences too small to matter.")
	for _, tb := range or.Tests {
		m.h(4, tb.Approach+", "+tb.Link)
		var rows [][]string
		for _, t := range tb.Global {
			rows = append(rows, testRow(testLabel(t.Name)+" (all predictors)", t))
		}
		for _, vt := range tb.PerVariable {
			for _, t := range vt.Tests {
				rows = append(rows, testRow(testLabel(t.Name)+": "+vt.Predictor, t))
			}
		}
		if len(rows) > 0 {
			m.table([]string{"Test", "Chi-square", "df", "p"}, rows)
		}
		rows = nil
		for _, nt := range tb.Nested {
			rows = append(rows, testRow(nt.Restricted+" within "+nt.Full, nt.Test))
		}
		if len(rows) > 0 {
			m.p("Nested likelihood-ratio tests:")
			m.table([]string{"Restricted within full", "Chi-square", "df", "p"}, rows)
		}
	}
}

func testLabel(n string) string {
	switch n {
	case "lr":
		return "Likelihood ratio"
	case "wald":
		return "Wald"
	case "score":
		return "Score"
	case "brant":
		return "Brant"
	case "wolfe_gould":
		return "Wolfe-Gould"
	}
	return n
}

func writeDecisionLog(m *md, or *runner.OutcomeResult) {
	m.h(3, "Decision log")
	for _, f := range or.Fits {
		if !f.Auxiliary && f.Err != "" {
			m.p("- %s could not be fitted: %s", f.ID, f.Err)
		}
	}
	for i, ro := range or.Rules {
		m.p("**Rule %d, `%s`** (plan line %d). %s", i+1, ro.Rule.Kind, ro.Rule.Line, ro.Description)
		var rows [][]string
		for _, v := range ro.Verdicts {
			verdict := "kept"
			if !v.Kept {
				verdict = "rejected"
				if ro.Rule.Kind == "choose" || ro.Rule.Kind == "prefer_simpler" {
					verdict = "not chosen"
				}
			} else if ro.Rule.Kind == "choose" || ro.Rule.Kind == "prefer_simpler" {
				verdict = "chosen"
			}
			rows = append(rows, []string{v.Model, verdict, v.Reason})
		}
		if len(rows) == 0 {
			m.p("No model was left for this rule.")
			continue
		}
		m.table([]string{"Model", "Verdict", "Why"}, rows)
	}
	m.p("**Result:** %s.", or.Choice)
}

func writeChosen(m *md, r *runner.Result, or *runner.OutcomeResult) {
	res := or.Chosen.Result
	level := r.Plan.Report.ConfidenceLevel
	if level <= 0 || level >= 1 {
		level = 0.95
	}
	z := distuv.UnitNormal.Quantile(0.5 + level/2)
	m.h(3, "The chosen model: "+or.Chosen.ID)
	m.p("Log-likelihood %s, %d parameters, AIC %s, BIC %s, %d observations. Linear predictor of boundary m: L_m = cut_m - x'b_m; a positive slope moves the outcome towards higher categories.",
		numfmt.Fixed(res.LogLik, 4), res.NParams, numfmt.Fixed(res.AIC, 3), numfmt.Fixed(res.BIC, 3), int(res.NObs))
	var rows [][]string
	for i, n := range res.ParamNames {
		est, se := res.Estimates[i], res.StdErrors[i]
		zz := est / se
		rows = append(rows, []string{ParamLabel(res, n), numfmt.Num(est), numfmt.Num(se), numfmt.Fixed(zz, 2),
			numfmt.PValue(2 * distuv.UnitNormal.Survival(math.Abs(zz))), numfmt.Num(est - z*se), numfmt.Num(est + z*se)})
	}
	m.table([]string{"Parameter", "Estimate", "Std. error", "z", "p", fmt.Sprintf("%g%% low", 100*level), fmt.Sprintf("%g%% high", 100*level)}, rows)
}

func writeLimits(m *md, r *runner.Result) {
	m.h(2, "Assumptions and limits")
	for _, s := range []string{
		"The models describe how the outcome is associated with the predictors in these data. They do not show that a predictor causes a change in the outcome.",
		"Each model assumes that observations are independent given the predictors, that the link function is right, and that the predictors enter linearly as listed in the plan.",
		"Tests of the parallel-lines assumption reject easily in large samples: a small p-value can reflect a difference between boundaries too small to matter in practice. Look at the effects across boundaries before giving up a simpler model.",
		"Cumulative partial and nonparallel models can predict negative category probabilities for some covariate values (their cumulative probabilities cross). The number of rows of the data where this happens is shown for every model; predictions outside the observed covariate range are more exposed.",
		"Constrained (common-factor) models can have several local maxima; ordplan fits them from several starting points and keeps the best.",
		"Information criteria and tests compare models on the same rows; rows with a missing value were dropped before any model was fitted.",
	} {
		fmt.Fprintf(&m.b, "- %s\n", s)
	}
	m.b.WriteString("\n")
}
