package render

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// holdsAtSentence says what the column Holds at of the hypotheses' tables
// (the report's, power.md's) means, with one of the plan's hypotheses
// (text) and where it holds as the example.
func holdsAtSentence(text, where string) string {
	return fmt.Sprintf("A restriction on a term that enters an interaction in the model tests that term's effect where the terms it interacts with have their columns at 0, as its odds ratios do (column Holds at): %s is tested at %s only, not at every value of the terms it interacts with; a test at every value also restricts the interaction's columns.", mdCode(text), where)
}

// partsOfColumns says, for each hypothesis that restricts some and not
// all of the terms a data column makes (runner.HypothesisResult.
// PartOfColumn), what it asks and where the test of the column as a whole
// is: the row of the tests of each term that tests every term reading it
// (runner.ColumnLabel), or, when they were not made, the hypothesis that
// restricts every term.
func partsOfColumns(or *runner.OutcomeResult) []string {
	var out []string
	seen := map[string]bool{}
	for _, h := range or.Hypotheses {
		for _, c := range h.PartOfColumn {
			if key := h.Text + "\x00" + c.Column; !seen[key] {
				seen[key] = true
				out = append(out, partOfColumnSentence(or, h.Text, c))
			}
		}
		for _, c := range h.PartOfBasis {
			if key := h.Text + "\x00basis\x00" + c.Column; !seen[key] {
				seen[key] = true
				tested := slices.ContainsFunc(or.TermTests, func(t runner.TermTest) bool { return t.Term == c.Column })
				out = append(out, c.BasisSentence(h.Text, tested, mdCode, mdText))
			}
		}
	}
	return out
}

func partOfColumnSentence(or *runner.OutcomeResult, text string, c runner.ColumnTerms) string {
	label := runner.ColumnLabel(c.Column)
	tested := slices.ContainsFunc(or.TermTests, func(t runner.TermTest) bool { return t.Term == label })
	return c.Sentence(text, tested, mdCode, mdText)
}

// writeHypotheses writes the Wald tests of the plan's hypotheses.
func writeHypotheses(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	if len(or.Hypotheses) == 0 {
		return
	}
	level, _ := confidence(r)
	d.h(3, "Hypotheses of the plan")
	d.p("Each hypothesis is a set of linear restrictions on parameters, tested by a Wald test in every candidate model that has the parameters it names (with that model's standard errors). A hypothesis of one restriction also has its estimate: the left side minus the right side as written (column Estimate, with its standard error and %s interval); decisions.json gives every restriction's estimate.", pct(level))
	adjusted, pooled, fdf := "", false, 0.0
	for _, h := range or.Hypotheses {
		if h.Adjusted != nil {
			adjusted = map[string]string{"holm": "Holm", "benjamini_hochberg": "Benjamini-Hochberg"}[h.Adjustment]
		}
		pooled = pooled || h.Test.Pooled != ""
		if h.Test.FRef {
			fdf = h.Test.DF2 + float64(h.Test.DF) // G
		}
	}
	if fdf > 0 {
		d.p("The standard errors are cluster-robust, from G = %s clusters: the p-value of a hypothesis of q restrictions is that of W (G-q)/((G-1) q) on F(q, G-q), W the Wald statistic (column Chi-square) and q its df, and an estimate's interval is from t on G-1 = %s degrees of freedom.", numfmt.Num(fdf), numfmt.Num(fdf-1))
	}
	if pooled {
		d.p("On imputed data an estimate is pooled by Rubin's rules, its interval from t on the Barnard-Rubin degrees of freedom; each test is pooled by D1 and shown as its F statistic on q and v degrees of freedom, F(q, v) = F, with the p-value of that F distribution.")
	}
	at := slices.IndexFunc(or.Hypotheses, func(h runner.HypothesisResult) bool { return h.HoldsAt != "" })
	where := at >= 0
	if where {
		d.p("%s", holdsAtSentence(or.Hypotheses[at].Text, or.Hypotheses[at].HoldsAt))
	}
	for _, p := range partsOfColumns(or) {
		d.p("%s", p)
	}
	head := append([]string{"Hypothesis", "Plan line", "Model", "Estimate", "Std. error", pct(level) + " low", pct(level) + " high"}, testHead("", pooled)[1:]...)
	if adjusted != "" {
		head = append(head, "p, "+adjusted)
		d.p("The p-values in the chosen model are also given adjusted for multiplicity (%s) over every hypothesis of every outcome, each in its chosen model; the run notes give the size of the family.", adjusted)
	}
	if where {
		head = append(head[:2], append([]string{"Holds at"}, head[2:]...)...)
	}
	var rows [][]string
	for _, h := range or.Hypotheses {
		model := h.Model
		if model == "" {
			model = "(none)"
		}
		row := []string{md(mdCode(h.Text)), fmt.Sprint(h.Line), model, "", "", "", ""}
		if len(h.Contrasts) == 1 && h.Test.OK {
			c := h.Contrasts[0]
			row[3], row[4], row[5], row[6] = numfmt.Est(c.Estimate), numfmt.Est(c.SE), numfmt.Est(c.Low), numfmt.Est(c.High)
		}
		if where {
			row = append(row[:2], append([]string{md(h.HoldsAt)}, row[2:]...)...)
		}
		if !h.Test.OK {
			row = append(append(row, emptyStat(pooled)...), "not computed: "+h.Test.Reason)
		} else {
			if h.Test.Pooled != "" {
				row[2] += " (pooled, " + h.Test.Pooled + ")"
			}
			row = append(append(row, statCells(h.Test, pooled)...), numfmt.PValue(h.Test.P))
		}
		if adjusted != "" {
			a := ""
			if h.Adjusted != nil {
				a = numfmt.PValue(*h.Adjusted)
			}
			row = append(row, a)
		}
		rows = append(rows, row)
	}
	d.table(head, rows)
}

// writeNewRows summarizes the predictions for the plan's new rows.
func writeNewRows(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	level, z := chosenConfidence(r, or)
	times := numfmt.Fixed(z, 3)
	if or.NewRows != nil && or.NewRows.DF != nil {
		times = "a t quantile on its degrees of freedom (below) times its"
	}
	nr := or.NewRows
	if nr == nil {
		return
	}
	d.h(3, "Predictions for new rows")
	if nr.Error != "" {
		d.p("Not computed: %s.", mdText(nr.Error))
		return
	}
	neg := 0
	for i, b := range nr.Pred.Negative {
		if b && nr.Predicted(i) {
			neg++
		}
	}
	rowsOf := fmt.Sprintf("the %d rows", nr.Rows.N)
	if n := len(nr.Unpredicted); n > 0 {
		rowsOf = fmt.Sprintf("%d of the %d rows (%d not predicted, below)", nr.Rows.N-n, nr.Rows.N, n)
	}
	probCols, cumCols, linCols, renamed := predictionsColumnsText(or, lvText(level))
	file := "`" + nr.File + "`"
	if s := nr.Rows.Sheet; s != nil {
		file += ", " + mdText(s.Where())
		if n := s.HiddenNote(); n != "" {
			file += "; " + mdText(n)
		}
	}
	d.p("The chosen model's predictions for %s of %s (%d rows read, %s) are in `%s`: for each row its line in the file and the file's own columns (so a row label travels with its predictions), the category probabilities (%s), the cumulative probabilities P(y <= m) (%s), the expected category (`expected`, categories scored 1 to %d), the most likely category (`most_likely`), the linear predictors (%s) and whether the row lies outside the population the model was fitted to (`outside`, with the reasons in `outside_why`), each number with its delta-method standard error (`se_...`) and its %s interval (`low_%s_...`, `high_%s_...`). The interval of a linear predictor is the number plus and minus %s standard errors. That of a probability is made on its log-odds scale, logit(p) plus and minus the same multiple of the error se/(p(1 − p)), and transformed back, so that it stays between 0 and 1 and is not symmetric about p near either end (empty for a negative probability); that of the expected category likewise on the log-odds scale of its place between 1 and %d. Rows with a negative predicted probability: %d.",
		rowsOf, file, nr.Rows.RowsRead, skippedNewRows(nr.Rows), predictionsFile(or), probCols, cumCols, len(or.Data.Categories), linCols, pct(level), lvText(level), lvText(level), times, len(or.Data.Categories), neg)
	if renamed != "" {
		d.p("%s", renamed)
	}
	if nr.DF != nil {
		d.p("On imputed data each number was predicted on each of the %d imputed sets by that set's fit and pooled by Rubin's rules: the prediction is the mean over the sets, its standard error the square root of the mean squared delta-method error plus (1 + 1/%d) times the variance between the sets, and each standard error is followed by its Barnard-Rubin degrees of freedom (`df_...`, inf when the sets agree) ; the intervals use t on them. The most likely category is that of the pooled probabilities; a row is flagged negative when a pooled probability or any set's is.",
			or.Imputed.M, or.Imputed.M)
	}
	writeNewRowsNotEstimable(d, or)
	writeNotPredicted(d, or)
	writeNewRowsOutside(d, or)
}

// writeNewRowsNotEstimable names the new rows whose predictions have no
// standard error or interval (empty cells of the predictions file)
// because at their values the prediction depends on parameters of the
// chosen model whose clustered standard errors are not estimable
// (fit.NotEstimable), as a level met in one cluster.
func writeNewRowsNotEstimable(d *doc, or *runner.OutcomeResult) {
	nr := or.NewRows
	if or.Chosen == nil || or.Chosen.Result == nil || or.Chosen.Result.NotEstimable == nil || nr.Pred == nil || nr.Rows == nil {
		return
	}
	J := len(or.Data.Categories)
	var lines []string
	for i := range nr.Rows.Lines {
		if !nr.Predicted(i) || (i+1)*J > len(nr.Pred.SE) {
			continue
		}
		if slices.ContainsFunc(nr.Pred.SE[i*J:(i+1)*J], math.IsNaN) {
			lines = append(lines, strconv.Itoa(nr.Rows.Lines[i]))
		}
	}
	if len(lines) == 0 {
		return
	}
	which := "line " + words.Some(lines, newRowsListed)
	if len(lines) > 1 {
		which = "lines " + words.Some(lines, newRowsListed)
	}
	d.p("%s of the %d rows (%s of the file) %s no standard error or interval (empty cells in `%s`): at %s values the prediction depends on parameters of %s whose clustered standard errors are not estimable (see the warning under the chosen model); the predictions themselves stand.",
		strconv.Itoa(len(lines)), nr.Rows.N, which, sing(len(lines) == 1, "has", "have"), predictionsFile(or), sing(len(lines) == 1, "its", "their"), or.Chosen.ID)
}

// writeNotPredicted says which new rows are not predicted because a term
// cannot be computed for them (runner.NewRows.Unpredicted).
func writeNotPredicted(d *doc, or *runner.OutcomeResult) {
	nr := or.NewRows
	if len(nr.Unpredicted) == 0 {
		return
	}
	if len(nr.Unpredicted) == 1 {
		d.p("**Not predicted:** 1 of the %d rows is not predicted: a term of the model cannot be computed for it (a transformation undefined at the row's value), so the model says nothing of it. The other rows are predicted. In `%s` its predictions are empty and `outside_why` begins with `not predicted:` and the reason; decisions.json's `new_rows_not_predicted` lists it.",
			nr.Rows.N, predictionsFile(or))
	} else {
		d.p("**Not predicted:** %d of the %d rows are not predicted: a term of the model cannot be computed for them (a transformation undefined at the row's value), so the model says nothing of them. The other rows are predicted. In `%s` their predictions are empty and `outside_why` begins with `not predicted:` and the reason; decisions.json's `new_rows_not_predicted` lists every one.",
			len(nr.Unpredicted), nr.Rows.N, predictionsFile(or))
	}
	var rows [][]string
	for _, u := range nr.Unpredicted[:min(len(nr.Unpredicted), newRowsListed)] {
		rows = append(rows, []string{strconv.Itoa(u.Line), u.Reason})
	}
	d.captioned("New rows not predicted").table([]string{"Line", "Why"}, rows)
	if len(nr.Unpredicted) > newRowsListed {
		d.p("The first %d are listed.", newRowsListed)
	}
}

// skippedListed is how many new rows skipped for a missing value the
// report names; decisions.json lists every one (new_rows_skipped).
const skippedListed = 10

// skippedNewRows says how many new rows were left out of the predictions
// for a missing value, and which: the lines of the first few, with the
// columns each misses.
func skippedNewRows(rs *data.Rows) string {
	n := len(rs.Skipped)
	if n == 0 {
		return "none skipped for a missing value"
	}
	lines := make([]string, 0, min(n, skippedListed))
	for i, line := range rs.Skipped[:min(n, skippedListed)] {
		lines = append(lines, fmt.Sprintf("%d (%s)", line, strings.Join(rs.SkippedColumns[i], ", ")))
	}
	which := "line " + lines[0]
	if n > 1 {
		which = "lines " + strings.Join(lines, ", ")
	}
	if n > skippedListed {
		which += fmt.Sprintf(" and %d more", n-skippedListed)
	}
	return fmt.Sprintf("%d skipped for a missing value and not predicted: %s, the missing columns in brackets; every one is in decisions.json's `new_rows_skipped`", n, which)
}

// newRowsListed is how many rows outside the population fitted the report
// lists; the predictions file flags every one.
const newRowsListed = 20

// writeNewRowsOutside says which new rows lie outside the population the
// model was fitted to, and why (runner.NewRows.Flagged).
func writeNewRowsOutside(d *doc, or *runner.OutcomeResult) {
	nr := or.NewRows
	for _, n := range nr.Notes {
		d.p("%s", mdText(n))
	}
	checked := "Each row was checked against the plan's subset conditions, the ranges and values the data dictionary declares, and the range of each numeric column over the rows the model was fitted to. Each column is checked alone: a row within every column's range can still be a combination of values that no row used has."
	if len(nr.Flagged) == 0 {
		d.p("Every row lies within the population the model was fitted to. %s", checked)
		return
	}
	lie, predicted, them := "rows lie", "They are predicted all the same, as asked", "them"
	if len(nr.Flagged) == 1 {
		lie, predicted, them = "rows lies", "It is predicted all the same, as asked", "it"
	}
	if len(nr.Unpredicted) > 0 {
		predicted = "Those a term can be computed for are predicted all the same, as asked"
	}
	d.p("**Outside the population fitted:** %d of the %d %s outside the population the model was fitted to. %s, but a prediction for a row the plan's subset excludes, or beyond the values of the rows used (extrapolation), rests on the model's form alone, and its interval does not show that; read it with care. The columns `outside` and `outside_why` of `%s` flag %s. %s",
		len(nr.Flagged), nr.Rows.N, lie, predicted, predictionsFile(or), them, checked)
	var rows [][]string
	for _, f := range nr.Flagged[:min(len(nr.Flagged), newRowsListed)] {
		rows = append(rows, []string{strconv.Itoa(f.Line), strings.Join(f.Reasons, "; ")})
	}
	d.captioned("New rows outside the population fitted").table([]string{"Line", "Why"}, rows)
	if len(nr.Flagged) > newRowsListed {
		d.p("The first %d are listed; the predictions file flags all %d.", newRowsListed, len(nr.Flagged))
	}
}

// predictionsFile names the predictions file of an outcome: the column
// name with characters other than letters, digits, '-' and '_' replaced by
// '_', and then, when something was replaced, the first 8 hex digits of the
// name's SHA-256, so that outcomes "safety.2" and "safety_2" get distinct
// files.
// lvText is the level as the CSV headers write it ("95", "90").
func lvText(level float64) string { return fmt.Sprintf("%g", 100*level) }

func predictionsFile(or *runner.OutcomeResult) string {
	return outcomeFile("predictions", or.Outcome.Column)
}

// imputedSetsFile names the file of an outcome's completed imputed sets
// (data.imputation.write_sets) as predictionsFile names its predictions.
func imputedSetsFile(or *runner.OutcomeResult) string {
	return ImputedSetsFile(or.Outcome.Column)
}

// ImputedSetsFile names the file of the completed sets of an outcome,
// known from the plan before anything is computed.
func ImputedSetsFile(outcome string) string {
	return outcomeFile("imputed-sets", outcome)
}

// outcomeFile names an outcome's file PREFIX-OUTCOME.csv, OUTCOME its
// outcomePart.
func outcomeFile(prefix, col string) string {
	return prefix + "-" + outcomePart(col) + ".csv"
}

// outcomePart is the part of a file name that names an outcome: the
// column's name with characters other than letters, digits, '-' and '_'
// made '_', and a name so changed followed by 8 hex digits of its SHA-256,
// so that outcomes differing only there ("safety.2" and "safety_2",
// "satisfaction é" and "satisfaction è") get distinct files. Every file
// named after an outcome (tables, predictions, imputed sets) takes it.
func outcomePart(col string) string {
	name := []rune(col)
	changed := false
	for i, c := range name {
		if !plan.FileSafeRune(c) {
			name[i] = '_'
			changed = true
		}
	}
	if changed {
		h := sha256.Sum256([]byte(col))
		return string(name) + "-" + hex.EncodeToString(h[:4])
	}
	return string(name)
}

// predictionsCSV writes the predictions for new rows: the row's line in
// the new-rows file, every column of that file as written (so its
// identifying columns, such as a row label, travel with the predictions),
// then the predictions, and last whether the row lies outside the
// population the model was fitted to (outside) and why (outside_why, the
// reasons of runner.NewRows.Outside joined by "; ", empty when inside). Every header name is a plain identifier (letters,
// digits, '_'), usable without quoting.
func predictionsCSV(r *runner.Result, or *runner.OutcomeResult) []byte {
	level, z := chosenConfidence(r, or)
	lv95 := lvText(level)
	nr := or.NewRows
	pr := nr.Pred
	lv := or.Data.Categories
	J, q := pr.J, pr.J-1
	df := nr.DF
	head, _, in := predictionsColumns(or, lv95)
	var b bytes.Buffer
	f := func(x float64) string {
		if math.IsNaN(x) {
			return ""
		}
		return strconv.FormatFloat(x, 'g', 10, 64)
	}
	// num writes a number, its error, df and interval: for a number
	// between lo and hi (probabilities, the expected category) made on the
	// log-odds scale of its place in that range (fit.BoundedInterval), for
	// a linear predictor (lo = hi) the number -/+ q errors.
	num := func(v, se float64, dfs []float64, a int, lo, hi float64) {
		b.WriteString("," + f(v) + "," + f(se))
		q := z
		if df != nil {
			b.WriteString(",")
			b.WriteString(csvDF(dfs[a]))
			q = fit.TQuantile(0.5+level/2, dfs[a])
		}
		l, h := v-q*se, v+q*se
		if lo < hi {
			l, h = fit.BoundedInterval(v, se, q, lo, hi)
		}
		b.WriteString("," + f(l) + "," + f(h))
	}
	var dProb, dCum, dExp, dLin []float64
	if df != nil {
		dProb, dCum, dExp, dLin = df.Prob, df.Cum, df.Expected, df.Linear
	}
	b.WriteString(strings.Join(head, ",") + "\n")
	for i := 0; i < pr.N; i++ {
		b.WriteString(strconv.Itoa(nr.Rows.Lines[i]))
		for _, c := range nr.Rows.Cells[i] {
			b.WriteString("," + csvCell(c))
		}
		if !nr.Predicted(i) {
			// Every prediction cell empty, then outside_why led by the reason.
			b.WriteString(strings.Repeat(",", len(head)-len(in)-4))
			why := []string{"not predicted: " + nr.NotPredicted[i]}
			if nr.Outside != nil {
				why = append(why, nr.Outside[i]...)
			}
			fmt.Fprintf(&b, ",,true,%s\n", csvCell(strings.Join(why, "; ")))
			continue
		}
		for j := 0; j < J; j++ {
			num(pr.Prob[i*J+j], pr.SE[i*J+j], dProb, i*J+j, 0, 1)
		}
		for m := 0; m < q; m++ {
			num(pr.Cum[i*q+m], pr.CumSE[i*q+m], dCum, i*q+m, 0, 1)
		}
		num(pr.Expected[i], pr.ExpectedSE[i], dExp, i, 1, float64(J))
		b.WriteString("," + csvCell(lv[pr.MostLikely[i]]))
		for m := 0; m < q; m++ {
			num(pr.Linear[i*q+m], pr.LinearSE[i*q+m], dLin, i*q+m, 0, 0)
		}
		var why []string
		if nr.Outside != nil {
			why = nr.Outside[i]
		}
		fmt.Fprintf(&b, ",%t,%t,%s\n", pr.Negative[i], len(why) > 0, csvCell(strings.Join(why, "; ")))
	}
	return b.Bytes()
}

// predictionsColumnsText names the columns of predictions-OUTCOME.csv that
// the report's paragraph describes, as the file spells them (a range
// first to last: `prob_c1` to `prob_c4`), and, when the file spells a
// category or a column of the new rows otherwise than written, a sentence
// giving each such name (csvNames), so that no reader looks for a column
// the file does not have.
func predictionsColumnsText(or *runner.OutcomeResult, lv95 string) (prob, cum, lin, renamed string) {
	_, cat, in := predictionsColumns(or, lv95)
	span := func(first, last string) string {
		if first == last {
			return "`" + first + "`"
		}
		return "`" + first + "` to `" + last + "`"
	}
	J := len(cat)
	prob = span("prob_"+cat[0], "prob_"+cat[J-1])
	cum = span("cumprob_"+cat[0], "cumprob_"+cat[J-2])
	lin = span("linear_1", fmt.Sprintf("linear_%d", J-1))
	var names []string
	for i, c := range cat {
		if l := or.Data.Categories[i]; c != l {
			names = append(names, fmt.Sprintf("category %s as `%s`", mdText(l), c))
		}
	}
	for i, c := range in {
		if l := or.NewRows.Rows.Header[i]; c != l {
			names = append(names, fmt.Sprintf("column %s of the new rows as `%s`", mdText(l), c))
		}
	}
	if len(names) > 0 {
		renamed = "The file's column names hold only letters, digits and _ (any other character becomes _, a name that starts with a digit gets a c before it, a repeated name a number after it, and a column of the new rows named as a prediction column _input), so it writes " + strings.Join(names, ", ") + "."
	}
	return prob, cum, lin, renamed
}

// predictionsColumns gives the header of predictions-OUTCOME.csv (line,
// the new-rows file's columns, then the predictions), the category names
// as its columns spell them and the new-rows file's column names as it
// writes them (csvNames; a name that clashes with a prediction column
// gets the suffix _input).
func predictionsColumns(or *runner.OutcomeResult, lv95 string) (head, cat, in []string) {
	nr := or.NewRows
	q := nr.Pred.J - 1
	cat = csvNames(or.Data.Categories)
	// On imputed data every standard error is followed by the pooled
	// degrees of freedom (df_..., inf when infinite).
	df := nr.DF
	head = append(head, "line")
	pair := func(name string) {
		head = append(head, name, "se_"+name)
		if df != nil {
			head = append(head, "df_"+name)
		}
		head = append(head, "low_"+lv95+"_"+name, "high_"+lv95+"_"+name)
	}
	for _, c := range cat {
		pair("prob_" + c)
	}
	for m := 0; m < q; m++ {
		pair("cumprob_" + cat[m])
	}
	pair("expected")
	head = append(head, "most_likely")
	for m := 1; m <= q; m++ {
		pair(fmt.Sprintf("linear_%d", m))
	}
	head = append(head, "negative", "outside", "outside_why")
	ours := map[string]bool{}
	for _, h := range head {
		ours[h] = true
	}
	// The new-rows file's columns follow "line"; a name that clashes
	// with a prediction column gets the suffix _input.
	in = csvNames(nr.Rows.Header)
	for i := range in {
		for ours[in[i]] {
			in[i] += "_input"
		}
		ours[in[i]] = true
	}
	head = append(head[:1], append(in, head[1:]...)...)
	return head, cat, in
}

// csvNames turns labels into header names a program can use without
// quoting: letters, digits and '_' only, not starting with a digit, and
// distinct (a repeat gets _2, _3, ...).
func csvNames(labels []string) []string {
	out := make([]string, len(labels))
	seen := map[string]bool{}
	for i, l := range labels {
		r := []rune(l)
		for k, c := range r {
			if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_') {
				r[k] = '_'
			}
		}
		name := string(r)
		if name == "" || name[0] >= '0' && name[0] <= '9' {
			name = "c" + name
		}
		base := name
		for n := 2; seen[name]; n++ {
			name = fmt.Sprintf("%s_%d", base, n)
		}
		seen[name] = true
		out[i] = name
	}
	return out
}

func csvCell(s string) string {
	for _, c := range s {
		if c == ',' || c == '"' || c == '\n' || c == '\r' {
			return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
		}
	}
	return s
}

// hypothesisForm is one of the plan's hypotheses as the chosen model tests
// it, and the number of restrictions it takes in the other candidates
// whose test was made, when that differs: then the form of its test (what
// it restricts, its degrees of freedom, its power) depended on the choice.
type hypothesisForm struct {
	Text   string
	Model  string           // the chosen model
	DF     int              // restrictions in the chosen model
	Others map[int][]string // other numbers of restrictions: the candidates that have them
}

// hypothesisForms lists the plan's hypotheses tested in the chosen model of
// or, in the plan's order, with the candidates where the test takes another
// number of restrictions.
func hypothesisForms(or *runner.OutcomeResult) []hypothesisForm {
	if or.Chosen == nil {
		return nil
	}
	candidate := map[string]bool{}
	for _, f := range or.Fits {
		if !f.Auxiliary {
			candidate[f.ID] = true
		}
	}
	var out []hypothesisForm
	for _, h := range or.Hypotheses {
		if h.Model != or.Chosen.ID || !h.Test.OK {
			continue
		}
		hf := hypothesisForm{Text: h.Text, Model: h.Model, DF: h.Test.DF, Others: map[int][]string{}}
		for _, o := range or.Hypotheses {
			if o.Text == h.Text && o.Line == h.Line && o.Model != h.Model && candidate[o.Model] && o.Test.OK && o.Test.DF != h.Test.DF {
				hf.Others[o.Test.DF] = append(hf.Others[o.Test.DF], o.Model)
			}
		}
		out = append(out, hf)
	}
	return out
}

// othersWords says how many restrictions a hypothesis takes in the other
// candidates: "1 in cumulative/parallel/logit and 3 in
// cumulative/nonparallel/logit".
func (hf hypothesisForm) othersWords() string {
	var dfs []int
	for df := range hf.Others {
		dfs = append(dfs, df)
	}
	slices.Sort(dfs)
	var parts []string
	for _, df := range dfs {
		parts = append(parts, fmt.Sprintf("%d in %s", df, words.AndList(hf.Others[df])))
	}
	return words.AndList(parts)
}

// restrictions writes "1 restriction" or "n restrictions".
func restrictions(n int) string {
	if n == 1 {
		return "1 restriction"
	}
	return fmt.Sprintf("%d restrictions", n)
}

// hypothesisChoiceSentence is the caveat of the limits on hypotheses whose
// test took its form from the model the rules chose; "" when none did.
func hypothesisChoiceSentence(r *runner.Result) string {
	var parts []string
	for _, or := range r.Outcomes {
		for _, hf := range hypothesisForms(or) {
			if len(hf.Others) == 0 {
				continue
			}
			where := ""
			if len(r.Outcomes) > 1 {
				where = " (outcome " + mdText(or.Outcome.Label) + ")"
			}
			parts = append(parts, fmt.Sprintf("%s%s is a test of %s in the chosen model %s, but of %s", mdCode(hf.Text), where, restrictions(hf.DF), hf.Model, hf.othersWords()))
		}
	}
	if len(parts) == 0 {
		return ""
	}
	return "The plan's hypotheses are read in the chosen model, and their tests took their form from it: " + strings.Join(parts, "; ") + ". What such a test restricts, its degrees of freedom and its power therefore depended on the choice the rules made on the same data, and its p-value does not allow for that choice."
}

// hypothesesMethods is the Methods draft's sentence on the plan's
// hypotheses of one outcome: tested in every candidate, read in the chosen
// model, with the number of restrictions there and, when the candidates
// differ in it, that the test's form depended on the choice.
func hypothesesMethods(or *runner.OutcomeResult) string {
	forms := hypothesisForms(or)
	if len(forms) == 0 {
		return ""
	}
	var parts []string
	depended := false
	for _, hf := range forms {
		w := fmt.Sprintf("%s (%s", mdCode(hf.Text), restrictions(hf.DF))
		if len(hf.Others) > 0 {
			depended = true
			w += "; " + hf.othersWords()
		}
		parts = append(parts, w+")")
	}
	s := fmt.Sprintf("The plan's hypotheses were tested by Wald tests in every candidate model that has their parameters and are read in the chosen model, %s: %s.", forms[0].Model, words.AndList(parts))
	if depended {
		s += " Where the candidates differ in the number of restrictions, the form of the test depended on the model the rules chose."
	}
	return s
}
