package render

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"strconv"

	"ordplan/render/numfmt"
	"ordplan/runner"
)

// writeHypotheses writes the Wald tests of the plan's hypotheses.
func writeHypotheses(d *doc, or *runner.OutcomeResult) {
	if len(or.Hypotheses) == 0 {
		return
	}
	d.h(3, "Hypotheses of the plan")
	d.p("Each hypothesis is a set of linear restrictions on parameters, tested by a Wald test in every candidate model that has the parameters it names (with that model's standard errors).")
	adjusted := ""
	for _, h := range or.Hypotheses {
		if h.Adjusted != nil {
			adjusted = map[string]string{"holm": "Holm", "benjamini_hochberg": "Benjamini-Hochberg"}[h.Adjustment]
		}
	}
	head := []string{"Hypothesis", "Plan line", "Model", "Chi-square", "df", "p"}
	if adjusted != "" {
		head = append(head, "p, "+adjusted)
		d.p("The p-values in the chosen model are also given adjusted for multiplicity (%s) over every hypothesis of every outcome, each in its chosen model; the run notes give the size of the family.", adjusted)
	}
	var rows [][]string
	for _, h := range or.Hypotheses {
		model := h.Model
		if model == "" {
			model = "(none)"
		}
		var row []string
		if !h.Test.OK {
			row = []string{"`" + h.Text + "`", fmt.Sprint(h.Line), model, "", "", "not computed: " + h.Test.Reason}
		} else {
			row = []string{"`" + h.Text + "`", fmt.Sprint(h.Line), model, numfmt.Stat(h.Test.Chi2), fmt.Sprint(h.Test.DF), numfmt.PValue(h.Test.P)}
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
func writeNewRows(d *doc, or *runner.OutcomeResult) {
	nr := or.NewRows
	if nr == nil {
		return
	}
	d.h(3, "Predictions for new rows")
	if nr.Error != "" {
		d.p("Not computed: %s.", nr.Error)
		return
	}
	neg := 0
	for _, b := range nr.Pred.Negative {
		if b {
			neg++
		}
	}
	d.p("The chosen model's predictions for the %d rows of `%s` (%d rows read, %d skipped for a missing value) are in `%s`: for each row its line in the file, the category probabilities, the cumulative probabilities P(y <= m), the expected category (categories scored 1 to %d), the most likely category and the linear predictors, each with its delta-method standard error. Rows with a negative predicted probability: %d.",
		nr.Rows.N, nr.File, nr.Rows.RowsRead, len(nr.Rows.Skipped), predictionsFile(or), len(or.Data.Levels), neg)
}

// predictionsFile names the predictions file of an outcome: the column
// name with characters other than letters, digits, '-' and '_' replaced by
// '_', and then, when something was replaced, the first 8 hex digits of the
// name's SHA-256, so that outcomes "safety.2" and "safety_2" get distinct
// files.
func predictionsFile(or *runner.OutcomeResult) string {
	col := or.Outcome.Column
	name := []rune(col)
	changed := false
	for i, c := range name {
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '-' || c == '_') {
			name[i] = '_'
			changed = true
		}
	}
	if changed {
		h := sha256.Sum256([]byte(col))
		return "predictions-" + string(name) + "-" + hex.EncodeToString(h[:4]) + ".csv"
	}
	return "predictions-" + string(name) + ".csv"
}

// predictionsCSV writes the predictions for new rows.
func predictionsCSV(or *runner.OutcomeResult) []byte {
	nr := or.NewRows
	pr := nr.Pred
	lv := or.Data.Levels
	J, q := pr.J, pr.J-1
	var b bytes.Buffer
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', 10, 64) }
	b.WriteString("line")
	for _, l := range lv {
		fmt.Fprintf(&b, ",P(%s),se P(%s)", l, l)
	}
	for m := 0; m < q; m++ {
		fmt.Fprintf(&b, ",P(<=%s),se P(<=%s)", lv[m], lv[m])
	}
	b.WriteString(",expected,se expected,most_likely")
	for m := 0; m < q; m++ {
		fmt.Fprintf(&b, ",L%d,se L%d", m+1, m+1)
	}
	b.WriteString(",negative\n")
	for i := 0; i < pr.N; i++ {
		b.WriteString(strconv.Itoa(nr.Rows.Lines[i]))
		for j := 0; j < J; j++ {
			b.WriteString("," + f(pr.Prob[i*J+j]) + "," + f(pr.SE[i*J+j]))
		}
		for m := 0; m < q; m++ {
			b.WriteString("," + f(pr.Cum[i*q+m]) + "," + f(pr.CumSE[i*q+m]))
		}
		b.WriteString("," + f(pr.Expected[i]) + "," + f(pr.ExpectedSE[i]) + "," + csvCell(lv[pr.MostLikely[i]]))
		for m := 0; m < q; m++ {
			b.WriteString("," + f(pr.Linear[i*q+m]) + "," + f(pr.LinearSE[i*q+m]))
		}
		fmt.Fprintf(&b, ",%t\n", pr.Negative[i])
	}
	return b.Bytes()
}

func csvCell(s string) string {
	for _, c := range s {
		if c == ',' || c == '"' || c == '\n' {
			return strconv.Quote(s)
		}
	}
	return s
}
