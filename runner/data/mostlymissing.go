package data

import (
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strings"
)

// mostlyMissing are the notes on predictor columns observed in fewer than
// half of the rows the missing-value table describes (the rows that meet
// the subset, or miss a column it reads): with more values missing than
// observed, complete cases lose every row that misses the column, and
// imputation (keep: rows kept with their missing values) fills more
// values than the data hold. One note per such column, in the order of
// the predictors; check and run warn of them (Dataset.MostlyMissing).
func mostlyMissing(cols []usedCol, mt *MissingTable, keep bool) []string {
	if mt == nil || mt.Rows == 0 {
		return nil
	}
	var out []string
	for j, c := range cols {
		if c.role != rolePredictor || j >= len(mt.ByColumn) {
			continue
		}
		miss := mt.ByColumn[j]
		seen := mt.Rows - miss
		if 2*seen >= mt.Rows {
			continue
		}
		head := fmt.Sprintf("Predictor column %q is observed in %d of the %d rows (%d missing, %s), fewer than half", c.name, seen, mt.Rows, miss, percentOf(miss, mt.Rows))
		if keep {
			out = append(out, fmt.Sprintf("%s: more of its values are imputed than observed, and the %d imputed rest on those %d observed and on the imputation models: the fewer observed, the more its estimated effects restate those models rather than the data. Check the column (the one meant, its missing-value markers); if it is this sparse, leave it out of the predictors, or analyse the rows that have it (subset)", head, miss, seen))
			continue
		}
		out = append(out, fmt.Sprintf("%s: every row missing it, %d, is dropped (complete cases), so at most %d rows remain for the fits. Check the column (the one meant, its missing-value markers); if it is this sparse, leave it out of the predictors, or analyse the rows that have it (subset)", head, miss, seen))
	}
	return out
}

// percentOf writes n of total as a percentage with one decimal.
func percentOf(n, total int) string {
	return fmt.Sprintf("%.1f%%", 100*float64(n)/float64(total))
}

// nothingObserved is the note on the rows kept for imputation that
// observe none of the columns it fills, the outcome and every predictor
// column (W37), "" when there are none: the imputation models make up
// every value of such a row, which adds a row to every imputed set, and to
// the observations their degrees of freedom count, without a datum of its
// own. A note, a total or a spacer row below or within a table that holds
// text only in a column the plan does not read is such a row, and so is a
// unit that answered nothing the plan reads. Complete cases drop such rows
// (counted), so only imputation is warned of.
func (r *reader) nothingObserved(d *Dataset) string {
	if !r.opt.KeepIncomplete || d.Incomplete == 0 {
		return ""
	}
	var lines []string
	n := 0
	for i, y := range d.Y {
		if y >= 0 || slices.ContainsFunc(d.Row(i), func(x float64) bool { return !math.IsNaN(x) }) {
			continue
		}
		n++
		if len(lines) < 3 {
			lines = append(lines, r.where(d.Lines[i]))
		}
	}
	if n == 0 {
		return ""
	}
	if n > len(lines) {
		lines = append(lines, fmt.Sprintf("and %d more", n-len(lines)))
	}
	cols := append([]string{d.Outcome}, d.Predictors...)
	rows := "1 row kept for imputation observes"
	if n > 1 {
		rows = fmt.Sprintf("%d rows kept for imputation observe", n)
	}
	return fmt.Sprintf("%s none of the columns it fills (%s; %s): the imputation models make up every value of such a row, so it adds a row to every imputed set, and to the observations their degrees of freedom count, without a datum of its own (data.missing: impute). If such rows are notes, totals or spacer rows beside the table, delete them from the data; if they are units that answered nothing the plan reads, delete them too, or analyse complete cases (data.missing: drop), which drops them",
		rows, strings.Join(cols, ", "), strings.Join(lines, ", "))
}

// where writes a line number of the rows being read as "file:line",
// through the parts for data held as parts (Dataset.Where once read), the
// file by its name without its folder: the notes go into the report,
// whose bytes do not depend on where the files lie (a rehearsal's
// simulated file lies in a temporary folder).
func (r *reader) where(line int) string {
	file := r.file
	if pr, ok := r.cr.(*partRecords); ok {
		file, line = placeOf(pr.spans, file, line)
	}
	return fmt.Sprintf("%s:%d", filepath.Base(file), line)
}
