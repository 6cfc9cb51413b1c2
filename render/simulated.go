package render

import (
	"fmt"
	"strconv"
	"strings"

	"ordplan/plan/lock"
	"ordplan/render/numfmt"
	"ordplan/runner"
)

// SimulatedMark opens the title and the first line of every page made
// from simulated data.
const SimulatedMark = "SIMULATED DATA"

// writeSimulated says, first, that the data were simulated; how they were
// drawn follows the plan's registration (writeSimulatedHow), so that
// UNREGISTERED CHANGES stays in the first lines, as in the power report.
func writeSimulated(d *doc, r *runner.Result) {
	s := r.Simulated
	if s == nil {
		return
	}
	model := s.Model
	if model == "" {
		model = "cumulative " + s.Link
	}
	d.p("**%s.** No real observation was used: `ordplan %s` drew %d rows (seed %d, %s) from the plan's `assumptions` and data dictionary, with a %s model generating each outcome, and ran the whole plan on them. This report shows what %s will print; its numbers say nothing about the real data.",
		SimulatedMark, s.Command, s.N, s.Seed, mdCode(s.File), model, rehearsedAnalysis(r.Registration))
}

// rehearsedAnalysis names the analysis a rehearsal shows: the registered
// one only when the plan matches its lock.
func rehearsedAnalysis(st *lock.Status) string {
	switch {
	case st != nil && st.State == lock.StateMatches:
		return "the registered analysis"
	case st != nil && (st.State == lock.StateDeviations || st.State == lock.StateUnexplained):
		return "the analysis of this plan, as changed since it was registered (see Deviations from the registered plan),"
	case st != nil && st.State == lock.StateNone:
		return "the analysis of this plan (not registered: it has no lock)"
	}
	return "the analysis of this plan"
}

// writeSimulatedHow says what the subset kept of the simulated rows and
// how their missing values, weights, truncated columns and clusters were
// drawn.
func writeSimulatedHow(d *doc, r *runner.Result) {
	s := r.Simulated
	if s == nil {
		return
	}
	if s.Kept != nil {
		d.p("The plan's subset (%s) kept %d of the %d simulated rows. The stated category proportions describe the rows the subset keeps, the population the plan analyses: the cutpoints were solved, and the design's constants set, on simulated rows that meet the subset.", mdText(strings.Join(s.Subset, "; ")), *s.Kept, s.N)
	}
	if len(s.Missing) > 0 {
		d.p("%s The run handled them as `data.missing` says, as it will handle the real data's missing values.", simulatedMissingText(s.Missing))
	}
	writeSimulatedDraws(d, s.Weights, s.Truncated, s.Clusters)
}

// writeSimulatedDraws says how the simulated weights, truncated normal
// columns and clusters were drawn: one wording for the rehearsal's report
// and the power report.
func writeSimulatedDraws(d *doc, w *runner.SimulatedWeights, ts []runner.SimulatedTruncation, c *runner.SimulatedClusters) {
	if w != nil {
		d.p("%s", simulatedWeightsText(w))
	}
	if len(ts) > 0 {
		d.p("%s", simulatedTruncationText(ts))
	}
	if c != nil {
		d.p("%s", simulatedClustersText(c))
	}
}

// simulatedTruncationText says which numeric columns were drawn from
// their stated normal distribution truncated to the dictionary's range,
// how much of it the range leaves out, how many draws were drawn again
// (a rehearsal's counts), and the mean and sd of the truncated normal
// and, in a rehearsal, of the values drawn.
func simulatedTruncationText(ts []runner.SimulatedTruncation) string {
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', 4, 64) }
	share := func(x float64) string { return strconv.FormatFloat(100*x, 'g', 3, 64) + "%" }
	var cols []string
	for _, t := range ts {
		c := fmt.Sprintf("%s (mean %s, sd %s, range [%s, %s]): %s of the normal lies outside the range", mdCode(t.Column),
			strconv.FormatFloat(t.StatedMean, 'g', -1, 64), strconv.FormatFloat(t.StatedSD, 'g', -1, 64),
			strconv.FormatFloat(t.Range[0], 'g', -1, 64), strconv.FormatFloat(t.Range[1], 'g', -1, 64), share(t.Outside))
		switch {
		case t.Copula:
			c += "; drawn within the range by the truncated normal's quantile function, as its correlations are stated, so none was drawn again"
		case t.Redrawn != nil && t.Drawn > 0:
			c += fmt.Sprintf("; %d of the %d draws (%s) fell outside and were drawn again", *t.Redrawn, t.Drawn, share(float64(*t.Redrawn)/float64(t.Drawn)))
		}
		c += fmt.Sprintf("; the truncated normal has mean %s and sd %s", g(t.Mean), g(t.SD))
		if t.ValuesMean != nil && t.ValuesSD != nil {
			c += fmt.Sprintf(", and the %d values drawn here have mean %s and sd %s", t.Values, g(*t.ValuesMean), g(*t.ValuesSD))
		}
		cols = append(cols, c)
	}
	return "Numeric columns with a range in the dictionary were drawn from the stated normal distribution truncated to that range: a draw outside the range was drawn again, from the same seeded stream, so no simulated value lies outside it, and the column is drawn from the truncated normal, whose mean and sd are not quite those stated (a range that leaves out more than half of the normal is refused); the values drawn differ from the truncated normal's mean and sd by chance. " + strings.Join(cols, ". ") + "."
}

// simulatedClustersText says how the plan's cluster column was simulated:
// the clusters' number or size, stated (assumptions.clusters) or the
// default, their effect (a random intercept, with its latent intraclass
// correlation) and what that means for the numbers. A rehearsal's record
// adds the clusters of its rows and the intercepts drawn.
func simulatedClustersText(c *runner.SimulatedClusters) string {
	name := mdCode(c.Column)
	var how string
	switch {
	case c.Number > 0:
		how = fmt.Sprintf("%d clusters at every sample size (`assumptions.clusters.number`), each a run of consecutive rows, their sizes differing by at most one", c.Number)
	case c.Stated:
		how = fmt.Sprintf("runs of %d consecutive rows (`assumptions.clusters.rows_each`), so the clusters grow with the sample size", c.RowsEach)
	default:
		how = fmt.Sprintf("runs of %d consecutive rows, the default (the assumptions state no `clusters`), so the clusters grow with the sample size", c.RowsEach)
	}
	if c.Clusters > 0 {
		rows := fmt.Sprintf("%d rows each", c.RowsMax)
		if c.RowsMin != c.RowsMax {
			rows = fmt.Sprintf("%d to %d rows each", c.RowsMin, c.RowsMax)
		}
		how += fmt.Sprintf(": here %d clusters of %s", c.Clusters, rows)
	}
	t := fmt.Sprintf("The cluster column %s was simulated as %s.", name, how)
	if len(c.PerCluster) > 0 {
		cols := make([]string, len(c.PerCluster))
		for i, col := range c.PerCluster {
			cols[i] = mdCode(col)
		}
		what := "The column " + cols[0] + " was"
		if len(cols) > 1 {
			what = "The columns " + strings.Join(cols[:len(cols)-1], ", ") + " and " + cols[len(cols)-1] + " were"
		}
		t += " " + what + " drawn once per cluster (`assumptions.clusters.per_cluster`), the same in every row of a cluster; the other predictors row by row."
	}
	if c.InterceptSD == 0 {
		t += " The clusters have no effect (an intercept SD of 0"
		if c.Stated {
			t += ", as stated"
		}
		return t + "): given the predictors the rows of a cluster are independent, so the clusters change only the cluster-robust errors computed from them, and the numbers show no design effect of clustering. State a cluster effect (`assumptions.clusters.intercept_sd` or `latent_icc`) to simulate one."
	}
	t += fmt.Sprintf(" Each cluster adds a normal random intercept of standard deviation %s to its rows' linear predictors (every outcome of a row the same)", numfmt.Fixed(c.InterceptSD, 4))
	icc := ""
	if c.LatentICC != nil {
		icc = fmt.Sprintf("sd^2 / (sd^2 + %s) = %s, %s the variance of the generating link's distribution", numfmt.Fixed(*c.LinkVariance, 3), strconv.FormatFloat(*c.LatentICC, 'g', 4, 64), numfmt.Fixed(*c.LinkVariance, 3))
	}
	switch {
	case c.Effect == "latent_icc":
		t += ", from the stated intraclass correlation on the latent scale (`assumptions.clusters.latent_icc`): " + icc + "."
	case icc != "":
		t += " (`assumptions.clusters.intercept_sd`): an intraclass correlation on the latent scale of " + icc + "."
	default:
		t += " (`assumptions.clusters.intercept_sd`)."
	}
	if c.DrawnSD != nil {
		t += fmt.Sprintf(" The %d intercepts drawn here have a standard deviation of %s.", c.Clusters, numfmt.Fixed(*c.DrawnSD, 4))
	}
	return t + " The stated effects hold within a cluster; the plan's models have no cluster intercept, so they estimate population-averaged effects, smaller in size than the stated ones, and only cluster-robust errors count the rows' correlation within a cluster. The cutpoints were solved over rows with their intercepts drawn, so the stated category proportions are those of the whole population." + perClusterLimit(c)
}

// perClusterLimit says what the predictors drawn row by row leave out,
// or that the columns drawn once per cluster bring their design effect.
func perClusterLimit(c *runner.SimulatedClusters) string {
	if len(c.PerCluster) > 0 {
		return " A column drawn once per cluster varies only between clusters, so the numbers count its design effect: its effect is estimated from the clusters' outcomes, which share their intercepts."
	}
	return " Every predictor is drawn row by row, independently within a cluster: a predictor constant within clusters (a treatment assigned by cluster) has a far larger design effect than these data show (name such columns in `assumptions.clusters.per_cluster`)."
}

// simulatedWeightsText says how the plan's weights column was simulated
// and what that means for the numbers: drawn from the dictionary, each
// row independently of every other column, or 1 in every row.
func simulatedWeightsText(w *runner.SimulatedWeights) string {
	name := mdCode(w.Column)
	key := mdCode("dictionary." + w.Column)
	if !w.Drawn {
		t := fmt.Sprintf("The weights column %s (%s weights) was 1 in every simulated row: the dictionary (%s) states neither values nor a range for it, so the simulated data are unweighted.", name, w.Kind, key)
		if w.Kind == "sampling" {
			return t + " Unequal sampling weights lower the precision (a design effect), so the real data's power is below these numbers; give the weights' values or range in the dictionary to simulate them."
		}
		return t + " Frequency weights above 1 make the units analysed outnumber the rows; give the weights' values or range in the dictionary to simulate them."
	}
	var from string
	var mean, variance float64
	if w.Range != nil {
		a, b := w.Range[0], w.Range[1]
		from = fmt.Sprintf("uniformly over the dictionary's range [%s, %s]", strconv.FormatFloat(a, 'g', -1, 64), strconv.FormatFloat(b, 'g', -1, 64))
		mean, variance = (a+b)/2, (b-a)*(b-a)/12
		if w.Whole {
			from = fmt.Sprintf("uniformly over the whole numbers %s to %s of the dictionary's range (frequency weights are counts)", strconv.FormatFloat(a, 'g', -1, 64), strconv.FormatFloat(b, 'g', -1, 64))
			variance = ((b-a+1)*(b-a+1) - 1) / 12
		}
	} else {
		shares := make([]string, len(w.Values))
		for i, v := range w.Values {
			x, _ := strconv.ParseFloat(v, 64)
			mean += w.Proportions[i] * x
			variance += w.Proportions[i] * x * x
			shares[i] = fmt.Sprintf("%s (%s)", v, strconv.FormatFloat(w.Proportions[i], 'g', 4, 64))
		}
		variance -= mean * mean
		from = "from the dictionary's values, in the shares " + strings.Join(shares, ", ")
	}
	t := fmt.Sprintf("The weights column %s (%s weights) was drawn for each row %s, independently of the predictors and the outcomes (from a stream of its own).", name, w.Kind, from)
	if w.Kind == "sampling" {
		deff := "undefined (mean weight 0)"
		if mean > 0 {
			deff = "about " + strconv.FormatFloat(1+variance/(mean*mean), 'f', 2, 64)
		}
		return t + fmt.Sprintf(" The fits maximize the weighted pseudo-likelihood with sandwich errors, so the numbers count the precision unequal weights take away (a design effect of 1 + CV^2 of the weights, %s); they do not count strata or clusters of the sampling design, nor weights related to the outcome.", deff)
	}
	return t + fmt.Sprintf(" A frequency weight counts identical units: a row of weight w stands for w units with the same values and outcome, so the units analysed number the sum of the weights, about %s times the rows.", strconv.FormatFloat(mean, 'f', 2, 64))
}

// simulatedMissingText says which missing values the simulation put into
// the data (assumptions.missing), column by column: the stated share, the
// mechanism, and in a rehearsal how many values were missing.
func simulatedMissingText(ms []runner.SimulatedMissing) string {
	parts := make([]string, len(ms))
	marker := map[string]bool{}
	blank := ""
	for i, m := range ms {
		if m.BlankRows != "" {
			blank = fmt.Sprintf(", but for the first cell of a row missing every column, written %s (a line of empty cells alone is a blank line, no row)", mdCode(m.BlankRows))
		}
		t := fmt.Sprintf("%s %s%% %s", mdCode(m.Column), strconv.FormatFloat(100*m.Proportion, 'g', 4, 64), m.Mechanism)
		if m.Count != nil {
			t += fmt.Sprintf(" (%d of the %d rows analysed)", *m.Count, m.Of)
		}
		parts[i] = t
		marker[m.Marker] = true
	}
	written := "an empty cell"
	if len(marker) > 1 || !marker[""] {
		written = "a missing-value marker of the plan (data.missing_values, or the column's own code)"
	}
	if written != "an empty cell" {
		blank = ""
	}
	return fmt.Sprintf("Missing values were drawn into the simulated data as the assumptions state (`assumptions.missing`; under \"at random given\", the log-odds of a value being missing change by the stated strength per standard deviation of the named column, the constant set so that the stated share holds among the rows the plan analyses): %s. Each was written as %s%s.", strings.Join(parts, "; "), written, blank)
}

// writeGenerating shows the model the simulated outcomes were drawn from,
// so that the estimates of the report can be held against it.
func writeGenerating(d *doc, r *runner.Result) {
	s := r.Simulated
	if s == nil || len(s.Truth) == 0 {
		return
	}
	model := s.Model
	if model == "" {
		model = "cumulative " + s.Link
	}
	d.h(2, "The generating model (simulated data)")
	if c := s.Clusters; c != nil && c.InterceptSD > 0 {
		d.p("Each outcome was drawn from a %s model with L_m = tau_m - x'b_m - u_g over the design columns x the plan's terms make (their constants set on a large sample of the simulated predictors), u_g the intercept of the row's cluster of %s, normal with standard deviation %s; the stated effects became these coefficients, within a cluster, and the cutpoints were solved so that the stated category proportions hold over the clusters. A fit of the same model without the intercepts estimates smaller, population-averaged effects; other candidates estimate other quantities.", model, mdCode(c.Column), numfmt.Fixed(c.InterceptSD, 4))
	} else {
		d.p("Each outcome was drawn from a %s model with L_m = tau_m - x'b_m over the design columns x the plan's terms make (their constants set on a large sample of the simulated predictors); the stated effects became these coefficients, and the cutpoints were solved so that the stated category proportions hold. A fit of the same model on these data estimates them; other candidates estimate other quantities.", model)
	}
	for _, t := range s.Truth {
		head := []string{"Parameter"}
		for _, b := range t.Boundaries {
			head = append(head, b)
		}
		rows := [][]string{}
		tau := []string{"tau (cutpoint)"}
		for _, c := range t.Cutpoints {
			tau = append(tau, numfmt.Est(c))
		}
		rows = append(rows, tau)
		for k, col := range t.Columns {
			row := []string{md(mdCode(col))}
			for _, b := range t.Coefficients[k] {
				row = append(row, numfmt.Est(b))
			}
			rows = append(rows, row)
		}
		d.captioned("Generating model of "+mdCode(t.Outcome)+": cutpoints and coefficients at each boundary").table(head, rows)
	}
}
