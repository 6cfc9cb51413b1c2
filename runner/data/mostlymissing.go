package data

import "fmt"

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
