package render

import (
	"fmt"
	"ordplan/plan"
	"slices"
	"strconv"
	"strings"

	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"

	"ordplan/plan/lock"
	"ordplan/runner"
	"ordplan/runner/fit"
	"ordplan/runner/simulate"
)

// PowerFiles are the files of a power study (PowerOutputs), named before
// it computes.
var PowerFiles = []string{powerHTML, powerJSON, powerMarkdown}

const (
	powerHTML     = "power.html"
	powerJSON     = "power.json"
	powerMarkdown = "power.md"
)

// PowerOutputs renders a power study: power.md, power.html (with the
// chart of power against n) and power.json (PowerFiles); reg is the plan
// compared with its lock (nil: not compared).
func PowerOutputs(pr *simulate.PowerResult, reg *lock.Status) (map[string][]byte, error) {
	js, err := runner.MarshalStable(pr)
	if err != nil {
		return nil, err
	}
	d := &doc{mark: SimulatedMark}
	title := SimulatedMark + ": power and model choice"
	if pr.Title != "" {
		title += ": " + pr.Title
	}
	d.h(1, mdText(title))
	sizes := make([]string, len(pr.Sizes))
	for i, n := range pr.Sizes {
		sizes[i] = fmt.Sprint(n)
	}
	d.p("**%s.** No real observation was used: `ordplan power` drew %d data sets at each sample size (%s) from the plan's `assumptions` and data dictionary (seed %d, %s model generating each outcome) and ran the plan's whole decision procedure on each: the grid of fits, the tests, the rules in order and the plan's hypotheses in the chosen model (Wald tests at alpha %g).%s Written by ordplan %s from the plan %s (sha256 `%s`).",
		SimulatedMark, pr.Replicates, strings.Join(sizes, ", "), pr.Seed, pr.Generator, pr.Alpha, powerTests(pr), pr.Version, mdCode(pr.PlanFile), pr.PlanSHA256)
	writeLockStatus(d, reg, pr.Version, powerLockWords, nil, nil)
	if len(pr.SensitivityNotRun) > 0 {
		names := make([]string, len(pr.SensitivityNotRun))
		for i, n := range pr.SensitivityNotRun {
			names[i] = mdCode(n)
		}
		d.p("The plan's sensitivity analyses (%s) are not run in the replicates: every rate below is that of the primary analysis; `ordplan rehearse` runs them once on simulated data.", strings.Join(names, ", "))
	}
	if pr.StabilityNotRun && pr.StabilityDraw == plan.StabilityChosenModel {
		d.p("The plan's `selection_stability` (draw: chosen_model: outcomes simulated from the chosen model at the rows used, to see how often the rules recover it) is not run in the replicates: a power study already repeats the whole procedure on data simulated from the assumptions, and how often each candidate model is chosen is in its table below; `ordplan run` (and `ordplan rehearse`) run it.")
	} else if pr.StabilityNotRun {
		d.p("The plan's `selection_stability` (bootstrap resamples of the data, to see how stable the model choice is) is not run in the replicates: a power study already repeats the whole procedure on new data sets, and how often each candidate model is chosen is in its table below; `ordplan run` (and `ordplan rehearse`) run it.")
	}
	if len(pr.Missing) > 0 {
		d.p("%s In every replicate the plan's `data.missing` handled them as it will handle the real data's, so the rates below count the information the missing values take away.", simulatedMissingText(pr.Missing))
	}
	writeSimulatedDraws(d, pr.Weights, pr.Truncated, pr.Clusters)
	if pr.Clusters != nil {
		writeFewClusters(d, pr)
	}
	writePowerSizes(d, pr)
	d.p("Every rate is a share of the %d replicates of a size, with its Monte Carlo standard error sqrt(p(1-p)/R) in brackets; where no replicate or every one counts, that error is 0 and the bracket gives instead the count and the exact one-sided 95%% confidence bound of the rate (Clopper-Pearson: below 1 - 0.05^(1/R), or above 0.05^(1/R)).", pr.Replicates)
	for _, op := range pr.Outcomes {
		d.h(2, "Outcome "+mdCode(op.Outcome))
		writePowerHypotheses(d, op)
		writePowerModels(d, op, pr.Generator)
		writePowerNone(d, op)
		writePowerProblems(d, op)
		writePowerClusters(d, op)
	}
	d.h(2, "Assumptions and limits")
	corr := "predictors that are correlated (they are drawn independently here)"
	if len(pr.Correlations) > 0 {
		corr = "other correlations between predictors (stated: " + strings.Join(pr.Correlations, "; ") + ", as correlations of normal scores; the other columns are drawn independently)"
	}
	d.list([]string{
		"Power is computed under the stated assumptions only: other category proportions or effects, " + corr + ", " + missingLimit(pr) + " or " + clusterLimit(pr) + " give other numbers.",
		"A hypothesis counts as rejected only in the model the rules chose; a replicate whose chosen model does not have the hypothesis's parameters, or where no model was chosen, counts as not rejected (the column \"not testable\").",
		"The share of replicates choosing each model shows whether the rules find the structure that generated the data: a " + pr.Generator + " model with the effects the plan's assumptions state, parallel or, where stated, nonparallel (each outcome's structure is named above its table of models).",
	})
	page, err := d.html(title)
	if err != nil {
		return nil, err
	}
	return map[string][]byte{powerMarkdown: d.markdown(), powerHTML: page, powerJSON: js}, nil
}

// powerTests says when a replicate counts a hypothesis as rejected: its
// Wald test's p-value, adjusted for multiplicity as the plan's run adjusts
// it, below alpha ("" after the opening's "Wald tests at alpha" when the
// plan adjusts nothing).
func powerTests(pr *simulate.PowerResult) string {
	if pr.Multiplicity == "" {
		return ""
	}
	return fmt.Sprintf(" As in the plan's run (inference.multiplicity: %s), a hypothesis counts as rejected when its p-value adjusted by %s over every hypothesis of every outcome, each in its chosen model, is below alpha.", pr.Multiplicity, runner.MultiplicityName(pr.Multiplicity))
}

// fmtRate writes a rate in a table of the report (simulate.Rate.Text).
func fmtRate(r simulate.Rate) string { return r.Text("") }

func writePowerHypotheses(d *doc, op simulate.OutcomePower) {
	if len(op.Sizes) == 0 || len(op.Sizes[0].Hypotheses) == 0 {
		d.p("The plan states no hypotheses (`inference.hypotheses`), so no power is computed; the model choice is below.")
		return
	}
	d.h(3, "Power of the plan's hypotheses")
	at := slices.IndexFunc(op.Sizes[0].Hypotheses, func(h simulate.HypothesisPower) bool { return h.HoldsAt != "" })
	where := at >= 0
	if where {
		d.p("%s", holdsAtSentence(op.Sizes[0].Hypotheses[at].Hypothesis, op.Sizes[0].Hypotheses[at].HoldsAt))
	}
	head := sizeHead("Hypothesis (plan line)", op.Sizes)
	if where {
		head = slices.Insert(head, 1, "Holds at")
	}
	head = append(head, "not testable")
	var rows [][]string
	for hi, h := range op.Sizes[0].Hypotheses {
		row := []string{md(fmt.Sprintf("%s (%d)", mdCode(h.Hypothesis), h.Line))}
		if where {
			row = append(row, md(h.HoldsAt))
		}
		var un []string
		for _, s := range op.Sizes {
			row = append(row, fmtRate(s.Hypotheses[hi].Power))
			un = append(un, fmt.Sprint(s.Hypotheses[hi].Untested))
		}
		rows = append(rows, append(row, strings.Join(un, " / ")))
	}
	d.table(head, rows)
	if notes := mostlyUntested(op); len(notes) > 0 {
		d.p("**Not testable in most replicates.** The chosen model lacked the parameters of these hypotheses (or no model was chosen) in more than half the replicates of a size, so their power above says mostly how often the rules choose a model that can test them, not how often a test of them rejects:")
		d.list(notes)
	}
	// Power against n, one line per hypothesis.
	l := charts.NewLine()
	xs := make([]float64, len(op.Sizes))
	for i, s := range op.Sizes {
		xs[i] = float64(s.N)
	}
	var legend []string
	for _, h := range op.Sizes[0].Hypotheses {
		legend = append(legend, h.Hypothesis)
	}
	// The axis spans the sizes; a single size is put in the middle of an
	// axis from half of it to one and a half times it, not at its edge.
	lo, hi := xs[0], xs[len(xs)-1]
	if lo == hi {
		lo, hi = lo/2, lo*3/2
	}
	// The bottom margin holds the legend some 18 pixels below the axis's
	// labels (the axis's name, n, stands at its end).
	fr := d.frame(chartFrame{title: "Power against sample size", subtitle: op.Outcome + ", simulated", height: 344,
		grid: opts.Grid{Left: "8%", Right: "6%", Bottom: "32"}, legend: legend})
	l.SetGlobalOptions(append(fr.opts(),
		charts.WithXAxisOpts(opts.XAxis{Name: "n", Type: "value", Min: val(lo), Max: val(hi)}),
		charts.WithYAxisOpts(opts.YAxis{Name: "power", Type: "value", Min: 0, Max: 1}))...)
	for hi, h := range op.Sizes[0].Hypotheses {
		ys := make([]float64, len(op.Sizes))
		for i, s := range op.Sizes {
			ys[i] = s.Hypotheses[hi].Power.Rate
		}
		l.AddSeries(h.Hypothesis, xyData(xs, ys), lineStyle(categoryColor(hi, max(2, len(op.Sizes[0].Hypotheses))), 2, false, true)...)
	}
	d.charts("Chart in power.html: power of each hypothesis against n.", newChart(fr, "Power of each plan hypothesis (share of replicates whose chosen model rejects it) against the sample size.", l))
}

// mostlyUntested lists the hypotheses of op untested (HypothesisPower.
// Untested) in more than half the replicates of some size, each with those
// sizes: "`H` (plan line L): 500 of 500 at n = 300".
func mostlyUntested(op simulate.OutcomePower) []string {
	var out []string
	for hi, h := range op.Sizes[0].Hypotheses {
		var at []string
		for _, s := range op.Sizes {
			hp := s.Hypotheses[hi]
			if of := hp.Power.Of; of > 0 && 2*hp.Untested > of {
				at = append(at, fmt.Sprintf("%d of %d at n = %d", hp.Untested, of, s.N))
			}
		}
		if len(at) > 0 {
			out = append(out, fmt.Sprintf("%s (plan line %d): %s", mdCode(h.Hypothesis), h.Line, strings.Join(at, "; ")))
		}
	}
	return out
}

func writePowerModels(d *doc, op simulate.OutcomePower, generator string) {
	d.h(3, "How often each candidate model is chosen")
	structure := "every term parallel"
	if len(op.Nonparallel) > 0 {
		structure = "nonparallel: " + strings.Join(op.Nonparallel, ", ") + "; the other terms parallel"
	}
	if op.Generating != "" {
		d.p("The data were generated by a %s model with %s: the candidate with that structure is `%s` (marked below).", generator, structure, op.Generating)
	} else {
		d.p("The data were generated by a %s model with %s; no candidate of the plan has exactly that structure.", generator, structure)
	}
	rows := sharesBySize(op.Sizes, func(s simulate.SizeResult) []namedRate {
		out := make([]namedRate, len(s.Chosen))
		for i, c := range s.Chosen {
			out[i] = namedRate{c.Model, c.Share}
		}
		return out
	}, func(m string) string {
		name := md(mdCode(m))
		if m == op.Generating {
			name += " (generating structure)"
		}
		return name
	})
	d.table(sizeHead("Model", op.Sizes), rows)
}

// namedRate is a share of replicates with what it counts.
type namedRate struct {
	name string
	rate simulate.Rate
}

// sharesBySize gives the rows of a table of shares with a column per
// size: a row per name, in order of first appearance over the sizes
// (label makes its first cell), "0" where a size has no share of it.
func sharesBySize(sizes []simulate.SizeResult, shares func(simulate.SizeResult) []namedRate, label func(string) string) [][]string {
	var names []string
	for _, s := range sizes {
		for _, r := range shares(s) {
			if !contains(names, r.name) {
				names = append(names, r.name)
			}
		}
	}
	rows := make([][]string, len(names))
	for i, name := range names {
		rows[i] = []string{label(name)}
		for _, s := range sizes {
			cell := "0"
			for _, r := range shares(s) {
				if r.name == name {
					cell = fmtRate(r.rate)
				}
			}
			rows[i] = append(rows[i], cell)
		}
	}
	return rows
}

// sizeHead is the head of a table with a column per size.
func sizeHead(first string, sizes []simulate.SizeResult) []string {
	head := []string{first}
	for _, s := range sizes {
		head = append(head, fmt.Sprintf("n = %d", s.N))
	}
	return head
}

func writePowerProblems(d *doc, op simulate.OutcomePower) {
	d.h(3, "Separation, non-convergence and failed runs")
	head := sizeHead("Replicates with", op.Sizes)
	rowOf := func(name string, f func(simulate.SizeResult) simulate.Rate) []string {
		row := []string{name}
		for _, s := range op.Sizes {
			row = append(row, fmtRate(f(s)))
		}
		return row
	}
	d.table(head, [][]string{
		rowOf("a candidate fit without a finite maximum (separation)", func(s simulate.SizeResult) simulate.Rate { return s.Separation }),
		rowOf("a candidate fit that did not converge", func(s simulate.SizeResult) simulate.Rate { return s.NotConverged }),
		rowOf("a plan that could not be run", func(s simulate.SizeResult) simulate.Rate { return s.Failed }),
	})
	for _, s := range op.Sizes {
		if s.FirstFailure != "" {
			d.p("At n = %d the first failed replicate said: %s", s.N, mdText(strings.ReplaceAll(s.FirstFailure, "\n", "; ")))
		}
		if s.InternalErrors > 0 && s.FirstInternal != s.FirstFailure {
			d.p("At n = %d the first replicate that met an internal error said: %s", s.N, mdText(strings.ReplaceAll(s.FirstInternal, "\n", "; ")))
		}
	}
	for _, s := range op.Sizes {
		if s.InternalErrors > 0 {
			d.p("**Internal error of ordplan: at n = %d, %d of %d replicates failed on a defect of the program, not of the plan** (counted above as a plan that could not be run). Please report it with the command line that caused it. Those replicates count as rejecting no hypothesis and choosing no model, so the power above is understated by up to their share.", s.N, s.InternalErrors, s.Failed.Of)
		}
	}
}

// writePowerSizes says what a sample size n is: the rows drawn, and with
// a subset how many of them it kept (mean, smallest and largest over the
// replicates), in the rehearsal's words.
func writePowerSizes(d *doc, pr *simulate.PowerResult) {
	if len(pr.Subset) == 0 {
		d.p("A sample size n is the number of rows drawn from the assumptions; the plan has no subset, so every row is analysed (less any incomplete rows `data.missing` drops).")
		return
	}
	var kept []string
	for _, k := range pr.SubsetKept {
		if k.Replicates == 0 {
			kept = append(kept, fmt.Sprintf("n = %d: none of the replicates could be read", k.N))
			continue
		}
		kept = append(kept, fmt.Sprintf("n = %d: %s (%d to %d)", k.N, strconv.FormatFloat(k.Mean, 'f', 1, 64), k.Min, k.Max))
	}
	d.p("A sample size n is the number of rows drawn from the assumptions, before the plan's subset (%s); the plan analyses only the rows the subset keeps. The subset kept, per replicate, on average (smallest to largest): %s. The stated category proportions describe the rows the subset keeps, the population the plan analyses: the cutpoints were solved, and the design's constants set, on simulated rows that meet the subset.",
		strings.Join(pr.Subset, "; "), strings.Join(kept, "; "))
}

// writePowerNone says how often no model was chosen, and why, from each
// replicate's decision log.
func writePowerNone(d *doc, op simulate.OutcomePower) {
	none := false
	for _, s := range op.Sizes {
		none = none || s.NoModel.Count > 0
	}
	if !none {
		d.p("Every replicate of every size chose a model.")
		return
	}
	d.p("Replicates where no model was chosen (`(none)` above), by what left the grid empty in each replicate's decision log: the rule that rejected the last candidates left after the rules before it (its place among the rules and its line in the plan), or another cause. A hypothesis counts as not rejected in them.")
	total := []string{"any cause"}
	for _, s := range op.Sizes {
		total = append(total, fmtRate(s.NoModel))
	}
	rows := append([][]string{total}, sharesBySize(op.Sizes, func(s simulate.SizeResult) []namedRate {
		out := make([]namedRate, len(s.EmptiedBy))
		for i, e := range s.EmptiedBy {
			out[i] = namedRate{e.Cause, e.Share}
		}
		return out
	}, func(c string) string { return c })...)
	d.captioned("Replicates where no model was chosen, by cause").table(sizeHead("No model chosen because", op.Sizes), rows)
}

func contains(xs []string, s string) bool {
	for _, x := range xs {
		if x == s {
			return true
		}
	}
	return false
}

// clusterLimit names the clustering the power study did not assume.
func clusterLimit(pr *simulate.PowerResult) string {
	if pr.Clusters == nil {
		return "clustering"
	}
	if len(pr.Clusters.PerCluster) > 0 {
		return "other numbers, sizes or effects of clusters, or other predictors constant within clusters"
	}
	return "other numbers, sizes or effects of clusters, or predictors constant within clusters (drawn row by row here)"
}

// writeFewClusters names, at the top, the sizes where some run warned of
// too few clusters (each outcome's Clusters section gives the warning).
func writeFewClusters(d *doc, pr *simulate.PowerResult) {
	var sizes []string
	for i, n := range pr.Sizes {
		for _, op := range pr.Outcomes {
			if i < len(op.Sizes) && op.Sizes[i].Clusters != nil && op.Sizes[i].Clusters.FewWarned.Count > 0 {
				sizes = append(sizes, fmt.Sprint(n))
				break
			}
		}
	}
	if len(sizes) == 0 {
		return
	}
	d.p("**Warning: at n = %s the plan's clustered errors rest on fewer than %d clusters** in some or all replicates, so the power there is overstated; see Clusters under each outcome.", strings.Join(sizes, ", "), fit.FewClusters)
}

// writePowerClusters gives the clusters simulated at each size and the
// rows the runs used, and warns, size by size, where the runs' clustered
// errors rest on too few clusters (the runs' own warning).
func writePowerClusters(d *doc, op simulate.OutcomePower) {
	if len(op.Sizes) == 0 || op.Sizes[0].Clusters == nil {
		return
	}
	d.h(3, "Clusters")
	head := sizeHead("Clusters", op.Sizes)
	sim, used := []string{"simulated"}, []string{"in the rows used (fewest to most)"}
	for _, s := range op.Sizes {
		c := s.Clusters
		sim = append(sim, fmt.Sprint(c.Simulated))
		if c.UsedMin == c.UsedMax {
			used = append(used, fmt.Sprint(c.UsedMin))
		} else {
			used = append(used, fmt.Sprintf("%d to %d", c.UsedMin, c.UsedMax))
		}
	}
	d.table(head, [][]string{sim, used})
	for _, s := range op.Sizes {
		if c := s.Clusters; c.FewWarned.Count > 0 {
			d.p("**Warning: at n = %d the runs' clustered errors rest on fewer than %d clusters** (%d of %d replicates), so the rates there overstate the power: cluster-robust errors from few clusters are too small and their tests reject too often. The first run said: %s", s.N, c.FewBelow, c.FewWarned.Count, c.FewWarned.Of, mdText(c.Warning))
		}
	}
}

// missingLimit names the missing values the power study did not assume.
func missingLimit(pr *simulate.PowerResult) string {
	if len(pr.Missing) == 0 {
		return "missing values (none were simulated; assumptions.missing states them)"
	}
	return "other shares or mechanisms of missing values (values missing not at random above all, which neither dropping incomplete rows nor imputation corrects)"
}
