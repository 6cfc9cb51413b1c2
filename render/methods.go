package render

import (
	"fmt"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/plan/lock"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// A methods paragraph generated from the plan and the run, in the
// project's own words, citing the published methods it names; and the
// block that says exactly what produced the report.

// reference is one published source the methods paragraph may cite.
type reference struct{ key, text string }

var references = []reference{
	{"mccullagh", "McCullagh, P. (1980). Regression models for ordinal data. Journal of the Royal Statistical Society B 42:109-142."},
	{"fienberg", "Fienberg, S.E. (1980). The Analysis of Cross-Classified Categorical Data, 2nd ed. MIT Press."},
	{"mare", "Mare, R.D. (1980). Social background and school continuation decisions. Journal of the American Statistical Association 75:295-305."},
	{"agresti", "Agresti, A. (2010). Analysis of Ordinal Categorical Data, 2nd ed. Wiley."},
	{"peterson", "Peterson, B. & Harrell, F.E. (1990). Partial proportional odds models for ordinal response variables. Applied Statistics 39:205-217."},
	{"hauser", "Hauser, R.M. & Andrew, M. (2006). Another look at the stratification of educational transitions. Sociological Methodology 36:1-26."},
	{"anderson", "Anderson, J.A. (1984). Regression and ordered categorical variables. Journal of the Royal Statistical Society B 46:1-30."},
	{"brant", "Brant, R. (1990). Assessing proportionality in the proportional odds model for ordinal logistic regression. Biometrics 46:1171-1178."},
	{"wolfe", "Wolfe, R. & Gould, W. (1998). An approximate likelihood-ratio test for ordinal response models. Stata Technical Bulletin 42:24-27."},
	{"williams", "Williams, R. (2006). Generalized ordered logit/partial proportional odds models for ordinal dependent variables. The Stata Journal 6:58-82."},
	{"white", "White, H. (1980). A heteroskedasticity-consistent covariance matrix estimator and a direct test for heteroskedasticity. Econometrica 48:817-838."},
	{"liang", "Liang, K.-Y. & Zeger, S.L. (1986). Longitudinal data analysis using generalized linear models. Biometrika 73:13-22."},
	{"mnw", "MacKinnon, J.G., Nielsen, M.Ø. & Webb, M.D. (2023). Cluster-robust inference: A guide to empirical practice. Journal of Econometrics 232:272-299."},
	{"mcfadden", "McFadden, D. (1974). Conditional logit analysis of qualitative choice behavior. In P. Zarembka (ed.), Frontiers in Econometrics, 105-142. Academic Press."},
	{"nagelkerke", "Nagelkerke, N.J.D. (1991). A note on a general definition of the coefficient of determination. Biometrika 78:691-692."},
	{"mckelvey", "McKelvey, R.D. & Zavoina, W. (1975). A statistical model for the analysis of ordinal level dependent variables. Journal of Mathematical Sociology 4:103-120."},
	{"lipsitz", "Lipsitz, S.R., Fitzmaurice, G.M. & Molenberghs, G. (1996). Goodness-of-fit tests for ordinal response regression models. Applied Statistics 45:175-190."},
	{"pulkstenis", "Pulkstenis, E. & Robinson, T.J. (2004). Goodness-of-fit tests for ordinal response regression models. Statistics in Medicine 23:999-1014."},
	{"rubin", "Rubin, D.B. (1987). Multiple Imputation for Nonresponse in Surveys. Wiley."},
	{"d2", "Li, K.H., Meng, X.L., Raghunathan, T.E. & Rubin, D.B. (1991). Significance levels from repeated p-values with multiply-imputed data. Statistica Sinica 1:65-92."},
	{"d1", "Li, K.H., Raghunathan, T.E. & Rubin, D.B. (1991). Large-sample significance levels from multiply imputed data using moment-based statistics and an F reference distribution. Journal of the American Statistical Association 86:1065-1073."},
	{"d3", "Meng, X.L. & Rubin, D.B. (1992). Performing likelihood ratio tests with multiply-imputed data sets. Biometrika 79:103-111."},
	{"vanbuuren", "van Buuren, S. (2018). Flexible Imputation of Missing Data, 2nd ed. CRC Press."},
	{"little", "Little, R.J.A. (1988). Missing-data adjustments in large surveys. Journal of Business and Economic Statistics 6:287-296."},
	{"augment", "White, I.R., Daniel, R. & Royston, P. (2010). Avoiding bias due to perfect prediction in multiple imputation of incomplete categorical variables. Computational Statistics and Data Analysis 54:2267-2275."},
}

// citer numbers references in the order the text first cites them.
type citer struct{ used []string }

func (c *citer) cite(keys ...string) string {
	var nums []string
	for _, k := range keys {
		i := slices.Index(c.used, k)
		if i < 0 {
			c.used = append(c.used, k)
			i = len(c.used) - 1
		}
		nums = append(nums, fmt.Sprint(i+1))
	}
	return "[" + strings.Join(nums, ", ") + "]"
}

func (c *citer) list() []string {
	var out []string
	for i, k := range c.used {
		for _, r := range references {
			if r.key == k {
				out = append(out, fmt.Sprintf("[%d] %s", i+1, r.text))
			}
		}
	}
	return out
}

// writeMethods writes the methods paragraphs of each outcome (the data,
// the predictors, the models and what was made of them), ready to paste
// and edit, and the references it cites.
func writeMethods(d *doc, r *runner.Result) {
	d.h(2, "Methods (draft)")
	if r.Simulated != nil {
		d.p("**%s.** This draft describes a rehearsal on data simulated from the plan's assumptions: its counts and results are not of any real data, and it is not a methods section until the plan is run on the real data.", SimulatedMark)
	}
	d.p("A draft of the methods section generated from the plan and this run, to adapt before use. Numbers in brackets refer to the references below.")
	p := r.Plan
	c := &citer{}
	for _, or := range r.Outcomes {
		var s []string
		ds := or.AsRead()
		sampling := r.Analysis.Errors.Sampling
		fitted := "fitted by maximum likelihood"
		if sampling {
			fitted = fmt.Sprintf("fitted by maximum pseudo-likelihood with the sampling weights of %s, rescaled to sum to the rows used (so that no number depends on their arbitrary scale)", mdCode(p.Data.Weights))
		}
		kind := "ordinal regression models"
		if binary(or) {
			kind = "binary regression models (with two ordered categories the plan's ordinal models reduce to them)"
		}
		s = append(s, fmt.Sprintf("The outcome %s (%d ordered categories, from %s to %s) was analysed with %s %s (ordplan %s).",
			mdText(or.Outcome.Label), len(ds.Categories), mdText(ds.Categories[0]), mdText(ds.Categories[len(ds.Categories)-1]), kind, fitted, r.Version))
		if !sampling && p.Data.Weights != "" && ds.Weights != nil {
			s = append(s, fmt.Sprintf("The rows carry frequency weights (%s, whole numbers): each row counts as that many identical observations, %s in the %d rows used.", mdCode(p.Data.Weights), strconv.FormatFloat(ds.NObs(), 'g', -1, 64), ds.N))
		}
		switch {
		case or.Imputed != nil && or.Imputed.Source != "chained":
			// The rows read include every imputed set; each set is complete.
			within := ""
			if len(p.Subset) > 0 {
				within = " that met the plan's subset conditions"
			}
			s = append(s, importedMissingMethods(or, within))
		case ds.RowsOutside > 0 || ds.RowsUndecided > 0:
			s = append(s, subsetMethods(p, ds, p.Data.Imputes()))
		case ds.RowsDropped > 0:
			s = append(s, fmt.Sprintf("Of %d rows, %d were used; %d were dropped before any model was fitted%s.", ds.RowsRead, ds.N, ds.RowsDropped, dropReasons(p, ds)))
		default:
			s = append(s, fmt.Sprintf("All %d rows were used.", ds.N))
		}
		if im := or.Imputed; im != nil {
			s = append(s, imputationMethods(im, or.Data.Missing, or.Design, p.Data.Cluster, pooledClusters(or), c))
		}
		d.p("%s", strings.Join(s, " "))
		if pm := predictorsMethods(p, or); pm != "" {
			d.p("%s", pm)
		}
		s = nil
		fixed := "fixed in an analysis plan before fitting"
		if st := r.Registration; st != nil && (st.State == lock.StateNone || st.Lock == nil) {
			fixed = "set out in an analysis plan"
		}
		if binary(or) {
			s = append(s, binaryGridMethods(or, p, fixed, registeredAs(r)))
		} else {
			comps, effects := gridWords(r, or, c)
			s = append(s, fmt.Sprintf("The candidate models, %s (plan SHA-256 %s%s), crossed %s with %s, using the %s link%s.",
				fixed, short(p.Hash), registeredAs(r), words.AndList(comps), words.AndList(effects), words.AndList(wordList(p.Models.Links)), plural(len(p.Models.Links))))
		}
		if sel := p.Models.Partial.Select; sel != nil && binary(or) {
			s = append(s, fmt.Sprintf("The plan's backward stepwise selection of the predictors allowed non-parallel effects %s had nothing to test: with one category boundary each predictor has a single slope, so no parallel constraint could be tested or imposed.", c.cite("williams")))
		} else if sel != nil {
			s = append(s, fmt.Sprintf("The predictors allowed non-parallel effects were selected by backward stepwise imposition of parallel constraints with %s tests at alpha = %g %s, separately for each approach under the %s link%s; %s.", sel.Test.Title(), sel.Alpha, c.cite("williams"), p.Models.Links[0], firstLink(p.Models.Links), selectedWords(or, p.Models)))
		}
		if len(p.Tests.ParallelLines) > 0 && binary(or) {
			s = append(s, "With two categories the parallel-lines assumption has nothing to test (every effect structure gives the same model), so no parallel-lines test was computed.")
		} else if len(p.Tests.ParallelLines) > 0 {
			var tests, barred, logitOnly []string
			for _, t := range p.Tests.ParallelLines {
				if r.Analysis.Errors.Sampling && t.NeedsLikelihood() {
					barred = append(barred, t.Title())
					continue
				}
				switch t {
				case fit.TestBrant:
					tests = append(tests, "Brant "+c.cite("brant"))
					logitOnly = append(logitOnly, "Brant")
				case fit.TestWolfeGould:
					tests = append(tests, "Wolfe-Gould "+c.cite("wolfe"))
					logitOnly = append(logitOnly, "Wolfe-Gould")
				default:
					tests = append(tests, t.Title())
				}
			}
			if len(tests) > 0 {
				s = append(s, fmt.Sprintf("The parallel-lines assumption was tested by %s tests (alpha = %g), overall and for each predictor.", words.AndList(tests), p.Tests.Alpha))
			}
			if len(logitOnly) > 0 && !onlyCumulativeLogit(p.Models.Approaches, p.Models.Links) {
				s = append(s, fmt.Sprintf("The %s %s defined for the cumulative logit model only and %s not computed for the other candidates.",
					words.AndList(logitOnly), map[bool]string{true: "test is", false: "tests are"}[len(logitOnly) == 1], map[bool]string{true: "was", false: "were"}[len(logitOnly) == 1]))
			}
			if len(barred) > 0 {
				s = append(s, fmt.Sprintf("The %s tests of the parallel-lines assumption the plan asks for were not computed: with sampling weights the fits maximize a pseudo-likelihood, which gives them no chi-square reference.", words.AndList(barred)))
			}
		}
		s = append(s, fmt.Sprintf("Standard errors came from the %s.", covarianceWords(r.Analysis.Errors, mdCode(p.Data.Cluster), runner.ClusterCount(or.Data), c)))
		var rules []string
		for i, ro := range or.Rules {
			rules = append(rules, fmt.Sprintf("(%d) %s", i+1, mdText(strings.TrimSuffix(ro.Description, "."))))
		}
		if len(rules) > 0 {
			s = append(s, "The plan's decision rules were applied in order: "+strings.Join(rules, "; ")+".")
		}
		if slices.ContainsFunc(or.Rules, func(ro *runner.RuleOutcome) bool { return ro.Rule.By == "tic" }) {
			s = append(s, strings.TrimSpace(runner.TICWords+". "+runner.TICCases(p.Data.Weights != "", r.Analysis.Errors.Sampling, or.Imputed != nil)))
		}
		if binary(or) {
			s = append(s, binaryTestRulesMethods(or)...)
		}
		if or.Chosen != nil && or.Fallback {
			s = append(s, fmt.Sprintf("Every candidate was rejected by the rules, so the model reported is %s, the fallback the plan named for that case.", or.Chosen.ID))
		} else if or.Chosen != nil {
			s = append(s, fmt.Sprintf("The model retained was %s.", or.Chosen.ID))
		} else {
			s = append(s, "No model met every rule.")
		}
		if sm := stabilityMethods(r, or); sm != "" {
			s = append(s, sm)
		}
		if sampling {
			// No likelihood-based statistic is a test under sampling
			// weights: only the descriptive comparisons are named.
			s = append(s, fmt.Sprintf("Each model was compared with the model with thresholds only by pseudo-R² measures (McFadden %s, Cox-Snell and Nagelkerke %s, McKelvey-Zavoina for cumulative models with parallel effects %s); with sampling weights the likelihood-ratio statistic against that model, and the Lipsitz and Pulkstenis-Robinson statistics, are not tests and were not used.", c.cite("mcfadden"), c.cite("nagelkerke"), c.cite("mckelvey")))
			if or.Lipsitz != nil {
				s = append(s, "The fit of the chosen model was checked by comparing observed and expected weighted counts in groups of predicted score.")
			}
		} else {
			s = append(s, fmt.Sprintf("Each model was compared with the model with thresholds only by a likelihood-ratio test and pseudo-R² measures (McFadden %s, Cox-Snell and Nagelkerke %s, McKelvey-Zavoina for cumulative models with parallel effects %s).", c.cite("mcfadden"), c.cite("nagelkerke"), c.cite("mckelvey")))
			s = append(s, goodnessOfFitMethods(or, c)...)
		}
		if p.Data.Offset != "" {
			s = append(s, fmt.Sprintf("The model with thresholds only keeps the offset %s, so the comparisons with it count what the predictors add to the offset; McKelvey-Zavoina uses the variance of the predictors' part of the linear predictor, without the offset.", mdCode(p.Data.Offset)))
		}
		switch {
		case len(or.TermTests) > 0:
			s = append(s, termTestsMethods(r, or, p.Inference, sampling, c))
		case or.Chosen != nil && p.Inference.TermTests == plan.TermTestsNone:
			s = append(s, "The plan switched the tests of each term of the chosen model off (`inference.term_tests: none`).")
		}
		starts := p.Models.HasEffects(fit.ConstrainedEffects) || p.Models.HasEffects(fit.StereotypeEffects)
		switch {
		case or.Chosen != nil && starts:
			s = append(s, fmt.Sprintf("Predicted probabilities and marginal effects have delta-method standard errors (the intervals of probabilities made on their log-odds scale); the random starts of constrained fits used the seed %d.", p.Seed))
		case or.Chosen != nil:
			s = append(s, "Predicted probabilities and marginal effects have delta-method standard errors (the intervals of probabilities made on their log-odds scale).")
		case starts:
			s = append(s, fmt.Sprintf("The random starts of constrained fits used the seed %d.", p.Seed))
		}
		if hm := hypothesesMethods(or); hm != "" {
			s = append(s, hm)
		}
		if lp := levelPairsMethods(p, or); lp != "" {
			s = append(s, lp)
		}
		d.p("%s", strings.Join(s, " "))
	}
	if sm := sensitivityMethods(r); sm != "" {
		d.p("%s", sm)
	}
	d.p("References:")
	d.list(c.list())
}

// registeredAs is what the methods paragraph says of the plan's
// registration, after the plan's hash: the lock it matches or departs
// from, with the registration id, or that it was not frozen; "" when the
// plan was not compared with a lock. Runs of the plan that its output
// folder held from before it was frozen (runner.EarlierLockRuns) are
// said too: their results existed when it was registered; and, for a run
// that departs from its lock, the runs of the registered plan unchanged
// that the folder held (runner.EarlierRegisteredRuns).
func registeredAs(r *runner.Result) string {
	s := registeredText(r.Registration)
	before := 0
	for _, e := range r.UnderEarlierLocks {
		if e.Unregistered() {
			before++
		}
	}
	if before > 0 {
		s += fmt.Sprintf("; the output folder held %s of the plan made before it was frozen, whose results existed then, listed at the head of the report", words.Count(before, "run", "runs"))
	}
	switch n := len(r.EarlierRegistered); {
	case n == 0 || r.Registration == nil:
	case r.Registration.State == lock.StateMatches:
		s += fmt.Sprintf("; the output folder held %s of the same plan on other data, made before this one", words.Count(n, "run", "runs"))
	default:
		s += fmt.Sprintf("; the output folder held %s of the registered plan unchanged, whose results existed before the plan was changed, so the departures may have been chosen after seeing them", words.Count(n, "run", "runs"))
	}
	return s
}

// registeredText is registeredAs of a plan compared with its lock (nil: not
// compared), for a run's methods and a power study's opening.
func registeredText(st *lock.Status) string {
	if st == nil {
		return ""
	}
	first := firstReplaced(st)
	if (st.State == lock.StateNone || st.Lock == nil) && first != nil {
		return fmt.Sprintf("; its lock file is missing, though a lock of an earlier form of the plan, frozen on %s%s, lies beside it (%s)", first.FrozenAt, registrationOf(first.Registration), keysDiffer(first))
	}
	if st.State == lock.StateNone || st.Lock == nil {
		return "; the plan was not frozen in a lock file, so the report cannot show when it was written"
	}
	s := fmt.Sprintf("; frozen on %s", st.Lock.FrozenAt)
	if st.Lock.Registration != "" {
		s += ", registration " + st.Lock.Registration
	}
	s += fmt.Sprintf(", canonical SHA-256 %s", short(st.Lock.SHA256))
	if first != nil {
		s += fmt.Sprintf("; the plan was first frozen on %s%s and frozen anew since (%s; listed at the head of the report)", first.FrozenAt, registrationOf(first.Registration), keysDiffer(first))
	}
	switch st.State {
	case lock.StateDeviations:
		s += fmt.Sprintf("; the plan run departs from the frozen one in %d key%s (%s), each with a stated reason listed at the head of the report", len(st.Changes), plural(len(st.Changes)), changedKeys(st))
	case lock.StateUnexplained:
		s += fmt.Sprintf("; the plan run departs from the frozen one in %d key%s (%s), %d of them without a stated reason", len(st.Changes), plural(len(st.Changes)), changedKeys(st), st.Unexplained())
	}
	return s
}

// maxMethodsKeys is how many changed keys the methods paragraph names.
const maxMethodsKeys = 8

// changedKeys names the keys in which the plan departs from its lock, as
// the head of the report lists them (an item moved: "rules[3], moved from
// rules[2]"), the first maxMethodsKeys and the count of the others: a
// methods section copied without the report's head still says what
// changed after registration.
func changedKeys(st *lock.Status) string {
	var keys []string
	for _, c := range st.Changes {
		if len(keys) == maxMethodsKeys {
			keys = append(keys, fmt.Sprintf("%d more", len(st.Changes)-maxMethodsKeys))
			break
		}
		k := c.Path
		if c.Moved != "" {
			k += ", moved from " + c.Moved
		}
		keys = append(keys, k)
	}
	return strings.Join(keys, "; ")
}

// firstReplaced is the oldest readable lock that freeze --replace kept
// beside the plan's lock (nil: none).
func firstReplaced(st *lock.Status) *lock.Replaced {
	for i := range st.Replaced {
		if st.Replaced[i].Error == "" {
			return &st.Replaced[i]
		}
	}
	return nil
}

// registrationOf is " (registration ID)", or "" for a lock without one.
func registrationOf(id string) string {
	if id == "" {
		return ""
	}
	return " (registration " + id + ")"
}

// keysDiffer says how the plan run differs from a replaced lock's form.
func keysDiffer(r *lock.Replaced) string {
	if len(r.Changed) == 0 {
		return "the plan run has that form, key for key"
	}
	return "the plan run differs from that form in " + words.Count(len(r.Changed), "key", "keys")
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

// subsetMethods says how the plan's subset divided the rows read: those
// outside it (a condition fails), those whose place is unknown (a column
// a condition reads is missing, and no condition fails), and of those
// that meet the conditions the rows used and dropped. imputed: the
// outcome's missing values were imputed (data.missing: impute).
func subsetMethods(p *plan.Plan, ds *data.Dataset, imputed bool) string {
	var conds []string
	for _, c := range p.Subset {
		conds = append(conds, c.String())
	}
	in := ds.RowsRead - ds.RowsOutside - ds.RowsUndecided
	parts := []string{fmt.Sprintf("%d met the plan's subset conditions (%s)", in, strings.Join(conds, "; "))}
	if ds.RowsOutside > 0 {
		parts = append(parts, fmt.Sprintf("%d failed them", ds.RowsOutside))
	}
	undecided := ""
	if ds.RowsUndecided > 0 {
		// Each column's count is of the rows that miss it (a row missing
		// two columns counts under both), not the data section's first
		// missing column of each row.
		var cols []string
		sum := 0
		if mt := ds.Missing; mt != nil {
			for j, col := range mt.Columns {
				if mt.ByColumn[j] > 0 && slices.ContainsFunc(p.Subset, func(c data.Condition) bool { return c.Column == col }) {
					cols = append(cols, fmt.Sprintf("%d miss %s", mt.ByColumn[j], col))
					sum += mt.ByColumn[j]
				}
			}
		}
		if sum > ds.RowsUndecided {
			cols = append(cols, "some miss several")
		}
		parts = append(parts, fmt.Sprintf("%d could not be judged because they miss a column the conditions read (%s)", ds.RowsUndecided, strings.Join(cols, ", ")))
		undecided = fmt.Sprintf(" The %d rows whose membership of the subset is unknown were dropped as rows with missing values", ds.RowsUndecided)
		if imputed {
			undecided += " and not imputed: an imputed value would put a row inside the subset in some imputed sets and outside it in others"
		}
		undecided += "."
	}
	var drops []data.DropCount
	for _, dc := range ds.Dropped {
		if !dc.Subset {
			drops = append(drops, dc)
		}
	}
	why := " for " + data.DropReasons(drops, p.Data.Weights)
	if ds.RowsUndecided == 0 {
		// Every row counted under a missing column met the conditions.
		why = dropReasons(p, ds)
	} else if w, ok := metDropReasons(p, ds, in-ds.N, imputed); ok {
		why = w
	}
	used := fmt.Sprintf("Of the %d rows that met the conditions, %d were used and %d were dropped before any model was fitted%s.", in, ds.N, in-ds.N, why)
	if in == ds.N {
		used = fmt.Sprintf("All %d rows that met the conditions were used.", in)
	}
	return fmt.Sprintf("Of %d rows, %s.%s %s", ds.RowsRead, words.AndList(parts), undecided, used)
}

// dropReasons says why the rows dropped for missing values or zero
// weight (not those outside the subset) were dropped, with the counts
// when there are several reasons, to follow "N were dropped": "" when
// none were.
func dropReasons(p *plan.Plan, ds *data.Dataset) string {
	var miss []data.DropCount
	zero := 0
	for _, dc := range ds.Dropped {
		switch {
		case dc.Subset:
		case dc.ZeroWeight(p.Data.Weights):
			zero += dc.Rows
		default:
			miss = append(miss, dc)
		}
	}
	return dropReasonsOf(p, miss, zero)
}

// metDropReasons is dropReasons for the rows that met the subset's
// conditions when other rows could not be judged (they miss a column a
// condition reads, and are counted apart): the rows of each missing-value
// pattern that misses no such column, under the first used column it
// misses, as the reader counts them, and the rows of zero weight. ok is
// false when the counts cannot be made so (imputed data, whose reader
// counts a row under the first column imputation does not fill) or do not
// add up to dropped, the rows that met the conditions and were not used.
func metDropReasons(p *plan.Plan, ds *data.Dataset, dropped int, imputed bool) (string, bool) {
	mt := ds.Missing
	if imputed || mt == nil {
		return "", false
	}
	read := func(col string) bool {
		return slices.ContainsFunc(p.Subset, func(c data.Condition) bool { return c.Column == col })
	}
	counts := make([]int, len(mt.Columns))
	total := 0
	for _, pt := range mt.Patterns {
		first := -1
		for j, m := range pt.Missing {
			if !m {
				continue
			}
			if read(mt.Columns[j]) {
				first = -1
				break
			}
			if first < 0 {
				first = j
			}
		}
		if first >= 0 {
			counts[first] += pt.Rows
			total += pt.Rows
		}
	}
	var miss []data.DropCount
	for j, n := range counts {
		if n > 0 {
			miss = append(miss, data.DropCount{Column: mt.Columns[j], Rows: n})
		}
	}
	zero := 0
	for _, dc := range ds.Dropped {
		if dc.ZeroWeight(p.Data.Weights) {
			zero += dc.Rows
		}
	}
	if total+zero != dropped {
		return "", false
	}
	return dropReasonsOf(p, miss, zero), true
}

// dropReasonsOf words dropReasons from the rows dropped for a missing
// value, under the first used column each misses, and of zero weight.
func dropReasonsOf(p *plan.Plan, miss []data.DropCount, zero int) string {
	missing := 0
	for _, dc := range miss {
		missing += dc.Rows
	}
	var missWhy, zeroWhy string
	switch {
	case len(miss) == 1:
		missWhy = "for a missing value of " + mdText(miss[0].Column)
	case len(miss) > 1:
		cols := make([]string, len(miss))
		for i, dc := range miss {
			cols[i] = fmt.Sprintf("%s %d", mdText(dc.Column), dc.Rows)
		}
		missWhy = fmt.Sprintf("for missing values (each row counted under the first used column it misses: %s)", strings.Join(cols, ", "))
	}
	if zero > 0 {
		zeroWhy = "for a weight of 0 in " + mdCode(p.Data.Weights)
	}
	switch {
	case missWhy != "" && zeroWhy != "":
		return fmt.Sprintf(": %d %s and %d %s", missing, missWhy, zero, zeroWhy)
	case missWhy != "":
		return " " + missWhy
	case zeroWhy != "":
		return " " + zeroWhy
	}
	return ""
}

// predictorsMethods says how every term of the outcome enters the models,
// in the words of the table of terms (runner.DescribedTerms): terms
// described alike listed together, in the order of the first of them;
// then the offset.
func predictorsMethods(p *plan.Plan, or *runner.OutcomeResult) string {
	var s []string
	terms := or.DescribedTerms()
	if len(terms) > 0 {
		var what []string
		names := map[string][]string{}
		for _, t := range terms {
			if names[t[1]] == nil {
				what = append(what, t[1])
			}
			names[t[1]] = append(names[t[1]], mdText(t[0]))
		}
		items := make([]string, len(what))
		for i, w := range what {
			items[i] = words.AndList(names[w]) + ", " + mdText(w)
		}
		if n := len(items); n > 1 {
			items[n-1] = "and " + items[n-1]
		}
		s = append(s, fmt.Sprintf("Every candidate model held %d term%s: %s.", len(terms), plural(len(terms)), strings.Join(items, "; ")))
	}
	if p.Data.Offset != "" {
		s = append(s, fmt.Sprintf("The linear predictor also held the offset %s, with its coefficient fixed at 1.", mdCode(p.Data.Offset)))
	}
	return strings.Join(s, " ")
}

// partialSetWords names, to follow the description of the partial
// (constrained false) or constrained models, the predictors they free:
// the plan's partial set by name, with the constraint groups of
// constrained models (runner.ConstrainedGroups), or a pointer to the
// stepwise selection that chose them.
func partialSetWords(r *runner.Result, or *runner.OutcomeResult, constrained bool) string {
	switch {
	case (r.Plan.Models.Partial.Select != nil || len(or.FreeSets) == 0) && constrained:
		return " for the same predictors, in one group"
	case r.Plan.Models.Partial.Select != nil || len(or.FreeSets) == 0:
		return " for the predictors a stepwise selection left free"
	case len(or.FreeSets[0].Predictors) == 0:
		return " for no predictor (the plan's partial set holds none of the terms, so none was fitted)"
	case !constrained:
		return " for " + words.AndList(words.Each(or.FreeSets[0].Predictors, mdText))
	}
	groups := runner.ConstrainedGroups(r.Analysis.Models, or.Terms, or.FreeSets[0].Predictors)
	if len(groups) == 1 {
		w := " for " + words.AndList(words.Each(groups[0].Predictors, mdText))
		if groups[0].Name != "" {
			w += " (group " + mdText(groups[0].Name) + ")"
		}
		return w
	}
	var parts []string
	for _, g := range groups {
		parts = append(parts, mdText(g.Name)+": "+words.AndList(words.Each(g.Predictors, mdText)))
	}
	return ", one for each group of predictors (" + strings.Join(parts, "; ") + ")"
}

// selectedWords says which predictors the stepwise selection left free
// in each approach's partial and constrained models, naming only the
// kinds of model the grid m has.
func selectedWords(or *runner.OutcomeResult, m plan.Models) string {
	var kinds []string
	if m.HasEffects(fit.PartialEffects) {
		kinds = append(kinds, "partial")
	}
	if m.HasEffects(fit.ConstrainedEffects) {
		kinds = append(kinds, "constrained")
	}
	none := "none of their " + strings.Join(kinds, " or ") + " models was fitted"
	var left, failed []string
	for _, s := range or.Stepwise {
		switch {
		case s.Result == nil || !s.Result.OK:
			failed = append(failed, s.Approach.String())
		case len(s.Result.FinalNonparallel) == 0:
			left = append(left, fmt.Sprintf("no predictor free in the %s models (so %s)", s.Approach, none))
		default:
			left = append(left, fmt.Sprintf("%s free in the %s models", words.AndList(words.Each(s.Result.FinalNonparallel, mdText)), s.Approach))
		}
	}
	var out []string
	if len(left) > 0 {
		out = append(out, "it left "+words.AndList(left))
	}
	if len(failed) > 0 {
		out = append(out, fmt.Sprintf("for the %s models it could not be completed, so %s", words.AndList(failed), none))
	}
	return strings.Join(out, "; ")
}

// firstLink says, after the link of a stepwise selection, that its
// partial sets serve every link when the plan fits several.
func firstLink(links []fit.Link) string {
	if len(links) > 1 {
		return " (the first listed), its partial sets serving every link"
	}
	return ""
}

func plural(n int) string {
	if n > 1 {
		return "s"
	}
	return ""
}

// program is the program and its version, with the source revision of
// the build when the toolchain stamped it (runner.Revision).
func program(r *runner.Result) string {
	if r.Revision != "" {
		return "ordplan " + r.Version + " (" + r.Revision + ")"
	}
	return "ordplan " + r.Version
}

// writeReproducibility says exactly what produced the report.
func writeReproducibility(d *doc, r *runner.Result) {
	d.h(2, "Reproducibility")
	p := r.Plan
	cmd := r.Command
	if cmd == "" {
		cmd = "(not recorded: the report was not written by the ordplan command)"
	} else {
		cmd = md(mdCode(cmd))
	}
	rows := [][]string{
		{"Program", program(r)},
		{"Built with", r.GoVersion},
		{"Operating system / architecture", r.Platform},
		{"Command line", cmd},
		{"Plan", md(fmt.Sprintf("%s, SHA-256 `%s`", mdCode(filepath.Base(p.Path)), p.Hash))},
		{"Data", dataCell(r)},
		{"Seed", fmt.Sprint(p.Seed)},
	}
	d.captioned("What produced this report").table([]string{"Item", "Value"}, rows)
	d.p("The command line leaves out the options that cannot change the results (output directory, number of workers, queue server and its connection, progress lines) and names the plan, and the folder of an earlier run, relative to the plan's folder: run it there. The same program, plan, data and seed give the same report byte for byte; run.json lists the SHA-256 hash of every output file.")
}

// wordList gives the words of vocabulary values.
func wordList[T fmt.Stringer](xs []T) []string {
	out := make([]string, len(xs))
	for i, x := range xs {
		out[i] = x.String()
	}
	return out
}

// dataCell is the data row of the reproducibility table.
func dataCell(r *runner.Result) string {
	if r.DataParts == nil {
		return md(fmt.Sprintf("%s, SHA-256 `%s`", mdCode(r.Plan.Data.File), r.DataHash))
	}
	return md(fmt.Sprintf("%d parts (%s), SHA-256 of their SHA-256s `%s`", len(r.DataParts), partList(r), r.DataHash))
}

// onlyCumulativeLogit reports whether every candidate of a grid of these
// approaches and links is a cumulative logit model, the one the Brant and
// Wolfe-Gould tests are defined for.
func onlyCumulativeLogit(approaches []fit.Comparison, links []fit.Link) bool {
	for _, a := range approaches {
		if a != fit.Cumulative {
			return false
		}
	}
	for _, l := range links {
		if l != fit.Logit {
			return false
		}
	}
	return true
}

// covarianceWords names the standard errors in the methods paragraph with
// their sources: the sandwich estimator of one row per unit (HC0, HC1)
// cites the heteroskedasticity-consistent estimator; the cluster-robust
// sandwich (scores summed within clusters) the estimating-equation
// sandwich with clusters, and its references on G-1 degrees of freedom
// the guide to cluster-robust inference, which also covers the
// delete-one-cluster jackknife.
func covarianceWords(e runner.CovariancePolicy, cluster string, g int, c *citer) string {
	cov := e.Phrase(cluster, g)
	switch {
	case e.Jackknife():
		return cov + " " + c.cite("mnw")
	case e.Covariance == fit.Clustered:
		est := fit.Clustered.Phrase()
		return strings.Replace(cov, est, est+" "+c.cite("liang"), 1) + " " + c.cite("mnw")
	case e.Covariance == fit.Sandwich || e.Covariance == fit.SandwichPlain:
		return cov + " " + c.cite("white")
	}
	return cov
}

// termTestsMethods says how each term of the chosen model was tested, and
// goodnessOfFitMethods names the checks of the chosen model's fit that were
// made (without sampling weights): the Lipsitz test only when it was
// computed, the table of observed and expected counts whenever it was made,
// the Pulkstenis-Robinson tests that were computed; on imputed data how
// they were pooled, and a pooled statistic that D2 set to 0.
func goodnessOfFitMethods(or *runner.OutcomeResult, c *citer) []string {
	lz := or.Lipsitz
	if lz == nil || lz.Table == nil {
		return nil
	}
	var s, names []string
	var pooled []fit.Test
	if lz.Test.OK || lz.Test.Negative {
		s = append(s, fmt.Sprintf("The fit of the chosen model was checked with the Lipsitz test %s and by comparing observed and expected counts in groups of predicted score.", c.cite("lipsitz")))
		names, pooled = append(names, "Lipsitz"), append(pooled, lz.Test)
	} else {
		s = append(s, "The fit of the chosen model was checked by comparing observed and expected counts in groups of predicted score (the Lipsitz test could not be computed; the report gives the reason).")
	}
	if ps := or.PatternSplit; ps != nil && ps.PatternSplit != nil {
		var done []string
		for _, t := range []struct {
			name string
			test fit.Test
		}{{"Pearson", ps.PatternSplit.Pearson}, {"deviance", ps.PatternSplit.Deviance}} {
			if t.test.OK || t.test.Negative {
				done = append(done, t.name)
				names, pooled = append(names, "Pulkstenis-Robinson "+t.name), append(pooled, t.test)
			}
		}
		if len(done) > 0 {
			s = append(s, fmt.Sprintf("Its fit by covariate pattern of the categorical predictors (%s) was checked with the Pulkstenis-Robinson %s %s %s.", mdText(strings.Join(ps.Predictors, ", ")), strings.Join(done, " and "), "test"+plural(len(done)), c.cite("pulkstenis")))
		}
	}
	if or.GOFPooling == nil || len(pooled) == 0 {
		return s
	}
	these := "these goodness-of-fit tests were"
	if len(pooled) == 1 {
		these = "this goodness-of-fit test was"
	}
	s = append(s, fmt.Sprintf("On the imputed data %s computed on each imputed set with that set's fit of the chosen model, and the chi-square statistics were combined by the D2 rule %s, an approximation that is less powerful than the pooled tests of estimates or likelihoods.", these, c.cite("d2")))
	var zero []string
	for i, t := range pooled {
		if t.Negative {
			zero = append(zero, names[i])
		}
	}
	if len(zero) > 0 {
		s = append(s, fmt.Sprintf("For the %s test%s the D2 statistic came out negative and was set to 0, as is usual, and no p-value is reported: a negative D2 says that the imputed sets' statistics disagree more than D2 allows, so the pooled test is not informative about the fit (the p-value of 1 that F = 0 would give does not mean that the model fits).", strings.Join(zero, " and "), plural(len(zero))))
	}
	return s
}

// what the tests assume.
func termTestsMethods(r *runner.Result, or *runner.OutcomeResult, inf plan.Inference, sampling bool, c *citer) string {
	var s []string
	wald, lr := inf.WantsTermWald(), inf.WantsTermLR() && !sampling
	switch {
	case !inf.WantsTermLR():
		s = append(s, fmt.Sprintf("Each term of the chosen model was tested by a Wald test that all its slopes are 0, with the model's standard errors; the plan left out the likelihood-ratio tests (`inference.term_tests: %s`).", inf.TermTests))
	case !wald:
		s = append(s, fmt.Sprintf("Each term of the chosen model was tested by a likelihood-ratio test against the chosen model refitted without the term on the same rows; the plan left out the Wald tests (`inference.term_tests: %s`).", inf.TermTests))
	case sampling:
		s = append(s, "Each term of the chosen model was tested by a Wald test that all its slopes are 0, with the model's standard errors; with sampling weights the likelihood-ratio test against the model refitted without the term has no chi-square reference and was not computed.")
	default:
		s = append(s, "Each term of the chosen model was tested by a Wald test that all its slopes are 0 and by a likelihood-ratio test against the chosen model refitted without the term on the same rows.")
	}
	if slices.ContainsFunc(or.TermTests, func(tt runner.TermTest) bool { return len(tt.With) > 0 && tt.Column == nil }) {
		s = append(s, "A term that takes part in an interaction was tested together with every interaction containing it, and each interaction on its own.")
	}
	if slices.ContainsFunc(or.TermTests, func(tt runner.TermTest) bool { return tt.Column != nil }) {
		s = append(s, "A data column that makes several terms was also tested as a whole: every term reading it, with every interaction containing one, together.")
	}
	for _, tt := range or.TermTests {
		if tt.Bound != "" {
			s = append(s, "Columns that make up a whole constraint group, whose common factor has no meaning without them, were tested with their tests referred to the chi-square distribution of the same columns made nonparallel, a model the constrained one is nested in, which gives conservative p-values.")
			break
		}
	}
	if or.Imputed != nil {
		switch {
		case wald && lr:
			s = append(s, fmt.Sprintf("On the imputed data the Wald tests were pooled by the D1 rule %s and the likelihood-ratio tests by the D3 rule %s.", c.cite("d1"), c.cite("d3")))
		case wald:
			s = append(s, fmt.Sprintf("On the imputed data the Wald tests were pooled by the D1 rule %s.", c.cite("d1")))
		case lr:
			s = append(s, fmt.Sprintf("On the imputed data the likelihood-ratio tests were pooled by the D3 rule %s.", c.cite("d3")))
		}
	}
	cause := "a term associated with the outcome given the others is not thereby a cause of it"
	if chance := r.Plan.ByChanceColumns(); len(chance) > 0 {
		var code []string
		for _, c := range chance {
			code = append(code, mdCode(c))
		}
		cause = fmt.Sprintf("a term associated with the outcome given the others is not thereby a cause of it, except that the slopes of %s, assigned to the units by chance, estimate effects of the assignment under the trial's conditions, given the other terms, provided these were measured before the assignment", words.AndList(code))
		if interactsWithChance(r.Plan, chance) {
			cause += " (where such a term enters an interaction, its own slopes estimate the effect of the assignment where the other terms of the interaction have their columns at 0, the interaction how that effect differs with them, and those terms' own slopes remain associations)"
		}
	}
	differ := "the Wald and likelihood-ratio statistics can differ in small samples"
	if slices.Contains(or.Chosen.Result.Model.Effects, fit.Constrained) {
		differ += " (and, for constrained effects, whose Wald statistic depends on the parameterization, in large ones too; the likelihood ratio is then preferred)"
	}
	s = append(s, fmt.Sprintf("These tests assume the chosen model holds and refer their statistics to large-sample distributions: %s, in large samples they reject for effects too small to matter, and %s; their p-values were not corrected for the number of terms tested.", differ, cause))
	return strings.Join(s, " ")
}

// binaryTestRulesMethods says, for a two-category outcome, that each rule
// testing a model against a less constrained one had nothing to test (one
// boundary: the models are the same) and rejected no model.
func binaryTestRulesMethods(or *runner.OutcomeResult) []string {
	var s []string
	for i, ro := range or.Rules {
		if ro.Rule.Kind != plan.RuleRejectIfTestRejects || slices.ContainsFunc(ro.Verdicts, func(v runner.Verdict) bool { return !v.Kept }) {
			continue
		}
		s = append(s, fmt.Sprintf("With two categories rule (%d) had no restriction to test (the models it compares are the same model) and rejected none.", i+1))
	}
	return s
}

// gridWords names the plan's comparisons and effect structures of an
// outcome of three or more categories, each with its sources.
func gridWords(r *runner.Result, or *runner.OutcomeResult, c *citer) (comps, effects []string) {
	p := r.Plan
	for _, a := range p.Models.Approaches {
		switch a {
		case fit.Cumulative:
			comps = append(comps, cumulativeWords(p.Models.Links)+" "+c.cite("mccullagh"))
		case fit.Stage:
			comps = append(comps, "continuation-ratio (sequential) comparisons "+c.cite("fienberg", "mare"))
		case fit.Adjacent:
			comps = append(comps, "adjacent-category comparisons "+c.cite("agresti"))
		}
	}
	for _, e := range p.Models.Effects {
		switch e {
		case fit.ParallelEffects:
			effects = append(effects, "parallel effects")
		case fit.PartialEffects:
			effects = append(effects, "partial effects free to differ across category boundaries"+partialSetWords(r, or, false)+" "+c.cite("peterson"))
		case fit.ConstrainedEffects:
			effects = append(effects, "partial effects constrained to a common factor across boundaries"+partialSetWords(r, or, true)+" "+c.cite("peterson", "hauser"))
		case fit.NonparallelEffects:
			effects = append(effects, "fully nonparallel effects")
		case fit.StereotypeEffects:
			effects = append(effects, "the one-dimensional stereotype model "+c.cite("anderson"))
		}
	}
	return comps, effects
}

// binaryGridMethods describes the grid of a two-category outcome: every
// approach and effect structure is the same binary regression of the upper
// category against the lower one under a link, so the grid fits that model
// once per cell, and the candidates differ only in their link.
func binaryGridMethods(or *runner.OutcomeResult, p *plan.Plan, fixed, registered string) string {
	cats := or.AsRead().Categories
	links := p.Models.Links
	per := 0
	for _, f := range or.Fits {
		if !f.Auxiliary && f.Link == links[0] {
			per++
		}
	}
	var grid []string
	for _, a := range p.Models.Approaches {
		grid = append(grid, a.String())
	}
	var eff []string
	for _, e := range p.Models.Effects {
		eff = append(eff, e.String())
	}
	same := fmt.Sprintf("the plan's %s comparisons with %s effects are all that one model, fitted %d times", words.AndList(grid), words.AndList(eff), per)
	if per == 1 {
		same = "the plan's grid holds that one model"
	}
	link := fmt.Sprintf("the %s link", links[0])
	differ := ""
	if len(links) > 1 {
		link = fmt.Sprintf("each of the %s links", words.AndList(wordList(links)))
		same += " under each link"
		differ = ", and the candidates differ only in their link"
	}
	return fmt.Sprintf("The candidate models, %s (plan SHA-256 %s%s), were binary regressions of %s against %s with %s: with two categories the outcome has a single category boundary, so %s%s.",
		fixed, short(p.Hash), registered, mdText(cats[1]), mdText(cats[0]), link, same, differ)
}

// cumulativeWords names the cumulative comparisons of the methods draft
// by the links fitted: logits (the proportional odds model) only under the
// logit link alone.
func cumulativeWords(links []fit.Link) string {
	logit := slices.Contains(links, fit.Logit)
	switch {
	case logit && len(links) == 1:
		return "cumulative logits (the proportional odds model when effects are parallel)"
	case logit:
		return "cumulative probabilities through each link (under the logit link with parallel effects, the proportional odds model)"
	default:
		return "cumulative probabilities through the link"
	}
}
