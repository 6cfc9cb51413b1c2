package plan

import (
	"slices"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// check runs the checks that involve more than one key.
func (d *decoder) check(p *Plan) {
	d.checkColumns(p)
	d.checkTerms(p, p.Terms, "predictors")
	for i, o := range p.Outcomes {
		if o.Terms != nil {
			d.checkTerms(p, o.Terms, itemPath("outcomes", i)+".predictors")
		}
	}
	d.checkSubsetLevels(p)
	d.checkLevelMarkers(p)
	d.checkSubsetMarkers(p)
	d.checkDataOptions(p)
	d.checkImputation(p)
	d.checkStability(p)
	d.checkApproaches(p)
	d.checkPartial(p)
	d.checkStarts(p)
	d.checkGroups(p)
	d.checkRules(p)
	if d.predictorsKnown(p) {
		d.checkDictionary(p)
		d.checkAssumptions(p)
	}
	if d.predictorsKnown(p) {
		d.checkInference(p)
	}
	d.checkPanels(p)
	if f := p.Report.FocusPredictor; d.given("report.focus_predictor") && d.predictorsKnown(p) && !slices.Contains(p.Predictors, f) && !slices.Contains(p.SourceColumns(), f) {
		d.errAt("report.focus_predictor", "%s is not a predictor (%s)", quote(f), known(p.Predictors))
	}
}

// checkPanels checks report.panels_by: a column the terms read (a
// categorical one, or a numeric one holding only 0 and 1, which only the
// data can show: runner's checkPanels), not the focus predictor, and,
// numeric, not one the dictionary lets take other values.
func (d *decoder) checkPanels(p *Plan) {
	b := p.Report.PanelsBy
	if b == "" || !d.clean("report.panels_by") {
		return
	}
	const what = "panels_by names a categorical predictor, a panel per level, or a predictor holding only 0 and 1, a panel at 0 and one at 1"
	switch {
	case d.predictorsKnown(p) && !slices.Contains(p.SourceColumns(), b):
		d.errAt("report.panels_by", "%s is not a column the predictors read (%s): %s", quote(b), strings.Join(p.SourceColumns(), ", "), what)
	case b == p.Report.FocusPredictor:
		d.errAt("report.panels_by", "%s is already the focus predictor; %s, other than the focus", quote(b), what)
	case p.categorical(b) == nil:
		if e := p.EntryOf(b); e != nil {
			if v := otherThanZeroOne(e); v != "" {
				d.errAt("report.panels_by", "%s is a numeric column whose values (%s.values) include %s: %s; declare it under categorical for a panel per value", quote(b), e.Key, v, what)
			}
		}
	}
}

// otherThanZeroOne gives a value other than 0 and 1 that a dictionary
// entry lists among its column's values ("" when there is none).
func otherThanZeroOne(e *Entry) string {
	for _, v := range e.Values {
		if x, err := strconv.ParseFloat(v, 64); err != nil || (x != 0 && x != 1) {
			return v
		}
	}
	return ""
}

// predictorsKnown reports whether predictors was read well enough for
// other keys to be checked against it: it is a non-empty list. Bad items
// are reported and dropped; duplicates are kept once.
func (d *decoder) predictorsKnown(p *Plan) bool {
	if len(p.Predictors) == 0 {
		return false
	}
	for _, e := range d.errs {
		if e.Key == "predictors" {
			return false
		}
	}
	return true
}

// itemKey gives the path of the first item of list whose text is value,
// or the list's own path.
func (d *decoder) itemKey(list, value string) string {
	for i := 0; ; i++ {
		k := itemPath(list, i)
		n := d.nodes[k]
		if n == nil {
			return list
		}
		if n.Kind == yaml.ScalarNode && n.Value == value {
			return k
		}
	}
}

// known lists names for a message, shortening long lists.
func known(names []string) string {
	const most = 8
	if len(names) > most {
		return "predictors: " + strings.Join(names[:most], ", ") + ", ..."
	}
	return "predictors: " + strings.Join(names, ", ")
}

// caseTwin finds an outcome among seen whose name differs from col only in
// letter case while both are names an output file holds as they are
// (ASCII letters, digits, '-' and '_'): such outcomes' files would be one
// file where the file system ignores case. A name with other characters
// is written with a hash of it in file names, so it has no twin.
func caseTwin(seen map[string]int, col string) (string, bool) {
	if !fileSafe(col) {
		return "", false
	}
	twin, at := "", 0
	for name, line := range seen {
		if name != col && fileSafe(name) && strings.EqualFold(name, col) && (twin == "" || line < at) {
			twin, at = name, line
		}
	}
	return twin, twin != ""
}

// fileSafe tells whether a name goes into a file name as it is.
func fileSafe(s string) bool {
	for _, c := range s {
		if !FileSafeRune(c) {
			return false
		}
	}
	return true
}

// FileSafeRune tells whether a character of an outcome's name goes into
// the names of its output files as it is: ASCII letters, digits, '-' and
// '_' (render's outcome file names; others become '_' there, with a hash
// of the name).
func FileSafeRune(c rune) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '-' || c == '_'
}

// checkColumns makes sure no column plays two parts.
func (d *decoder) checkColumns(p *Plan) {
	predOK := d.predictorsKnown(p)
	outcomeAt := map[string]int{}
	for i, o := range p.Outcomes {
		key := itemPath("outcomes", i) + ".column"
		if o.Column == "" || !d.clean(key) {
			continue
		}
		if line, dup := outcomeAt[o.Column]; dup {
			d.errAt(key, "outcome %s is listed twice (first at line %d)", quote(o.Column), line)
			continue
		}
		if twin, ok := caseTwin(outcomeAt, o.Column); ok {
			d.errAt(key, "outcomes %s and %s (line %d) differ only in letter case: their output files (table-models-%s.csv and table-models-%s.csv, predictions, imputed sets) would be one file where the file system ignores case (macOS, Windows); rename one of the outcome columns in the data and the plan", quote(twin), quote(o.Column), outcomeAt[twin], twin, o.Column)
			continue
		}
		outcomeAt[o.Column] = d.line(key)
		for _, c := range o.Categories {
			d.checkMarker(p, o.Column, c, itemPath("outcomes", i)+".categories", "category")
		}
		if predOK && slices.Contains(p.SourceColumns(), o.Column) {
			pk := d.sourceKey(p, o.Column)
			d.errAt(key, "%s is both an outcome and a predictor (%s, line %d)", quote(o.Column), pk, d.line(pk))
		}
	}
	// Each column is read in one role; why is what the second role would
	// need, said when a predictor takes it too.
	roles := []struct{ key, col, why string }{
		{"data.weights", p.Data.Weights, "a weight says how much a row counts, which a predictor's slope cannot also say"},
		{"data.offset", p.Data.Offset, "an offset enters the linear predictor with its coefficient fixed at 1, a predictor with its slope estimated: give the column one of the two"},
		{"data.cluster", p.Data.Cluster, "the cluster ids are read as labels, the predictor as values or levels; to cluster the errors by a column that is also a predictor (sites as fixed effects and errors clustered by site), put a copy of the column in the data under another name and name the copy here (the fixed effects' own clustered errors are then not to be read: each rests on one cluster)"},
	}
	for _, r := range roles {
		if r.col == "" {
			continue
		}
		if _, ok := outcomeAt[r.col]; ok {
			d.errAt(r.key, "%s is an outcome column", quote(r.col))
		} else if predOK && slices.Contains(p.SourceColumns(), r.col) {
			d.errAt(r.key, "%s is also listed in predictors (%s): ordplan reads each column in one role; %s", quote(r.col), d.sourceKey(p, r.col), r.why)
		}
	}
}

// checkMarker refuses a declared outcome category or level v of column
// col (listed under the key list) that is a missing-value marker in force
// (data.MarkerClash): no cell would ever be read as v.
func (d *decoder) checkMarker(p *Plan, col, v, list, what string) {
	own, keys := p.ownMissing(col)
	if why := data.MarkerClash(v, p.Data.MissingValues, own, keys); why != "" {
		d.errAt(d.itemKey(list, v), "%s %s of column %s %s", what, quote(v), quote(col), why)
	}
}

// ownMissing is column col's own missing-value codes (its dictionary
// entry's missing), and the keys that set its markers, for MarkerClash.
func (p *Plan) ownMissing(col string) ([]string, data.MarkerKeys) {
	var own []string
	ownKey := "dictionary." + col + ".missing"
	for _, e := range p.Dictionary {
		if e.Column == col {
			own, ownKey = e.Missing, e.Key+".missing"
		}
	}
	return own, data.MarkerKeys{Markers: "data.missing_values", Own: ownKey}
}

// checkSubsetMarkers refuses a value of a subset condition that is a
// missing-value marker in force (data.Condition.MarkerValues, worded by
// data.MarkerClash): every cell it would meet is read as missing, and a
// condition does not compare a missing cell, so it never meets a row. A
// condition that keeps such rows keeps none; one that leaves them out
// does nothing the missing values do not do already.
func (d *decoder) checkSubsetMarkers(p *Plan) {
	if !d.clean("subset") || !d.clean("data") || !d.clean("dictionary") {
		return
	}
	for _, sc := range p.Subset {
		own, keys := p.ownMissing(sc.Column)
		values, marks := sc.MarkerValues(p.Data.MissingValues, own, p.Data.Dialect())
		for i, v := range values {
			op := subsetOps[slices.IndexFunc(subsetOps, func(o struct{ key, op string }) bool { return o.op == sc.Op })].key
			key := sc.Key + "." + op
			if sc.Values != nil {
				key = d.itemKey(key, v)
			}
			why := data.MarkerClash(marks[i], p.Data.MissingValues, own, keys)
			if sc.Op == "in" || sc.Op == "==" {
				d.errAt(key, "value %s of column %s matches no cell: a condition does not compare a missing cell, and %s %s", quote(v), quote(sc.Column), quote(marks[i]), why)
				continue
			}
			d.errAt(key, "value %s of column %s matches no cell: a condition does not compare a missing cell, and %s %s; a row whose %s is missing is left out anyway, as a row with a missing value: if that is what the condition is for, remove the value from it", quote(v), quote(sc.Column), quote(marks[i]), why, sc.Column)
		}
	}
}

// checkLevelMarkers refuses declared levels of categorical columns that
// are missing-value markers in force (checkMarker).
func (d *decoder) checkLevelMarkers(p *Plan) {
	for _, c := range p.Categorical {
		for _, l := range c.Levels {
			d.checkMarker(p, c.Column, l, c.Key+".levels", "level")
		}
	}
}

// checkDataOptions checks weights and clustering against covariance, and
// the workbook keys against the files.
func (d *decoder) checkDataOptions(p *Plan) {
	d.checkWorkbookKeys(p)
	d.checkDialectKeys(p)
	if p.Data.WeightKind == "sampling" && p.Data.Weights == "" && d.clean("data.weights") {
		d.errAt("data.weight_kind", "sampling weights need a weights column, and data.weights is not set")
	}
	if p.Covariance == fit.Clustered && p.Data.Cluster == "" && d.clean("data.cluster") {
		d.errAt("covariance", "clustered covariance needs a cluster column, and data.cluster is not set")
	}
	if p.Data.Cluster != "" && p.Covariance != fit.Clustered && d.clean("covariance") {
		d.errAt("data.cluster", "the cluster column is used only with covariance: clustered (covariance is %s); set covariance: clustered or remove data.cluster", quote(p.Covariance.String()))
	}
	if p.FewClusters != fit.NoCorrection && p.Covariance != fit.Clustered && d.clean("covariance") {
		d.errAt("few_clusters", "%s corrects clustered errors, but covariance is %s: set covariance: clustered with data.cluster naming the cluster column, or remove few_clusters", p.FewClusters, quote(p.Covariance.String()))
	}
}

// checkWorkbookKeys refuses data.sheet and data.header_row in a plan
// none of whose files (data.file or data.parts, data.imputed,
// inference.predict) is an .xlsx workbook: read nowhere, they would leave
// a title line above a CSV file's header, or a sheet meant for another
// file, unnoticed (as ordplan fit refuses --sheet and --header-row).
func (d *decoder) checkWorkbookKeys(p *Plan) {
	files := append([]string{p.Data.File, p.Inference.Predict}, p.Data.Parts...)
	if im := p.Data.Imputed; im != nil {
		files = append(files, im.File)
		files = append(files, im.Files...)
	}
	for _, f := range files {
		if f != "" && data.IsWorkbook(f) {
			return
		}
	}
	what := "the data"
	if p.Data.File != "" {
		what = "the data file " + quote(p.Data.File)
	}
	for _, k := range []struct{ key, advice string }{
		{"data.sheet", "remove the key"},
		{"data.header_row", "a CSV file's header is its first line: remove the lines above it (a title) from the file, and the key"},
	} {
		if d.given(k.key) && d.clean(k.key) {
			d.errAt(k.key, "applies to .xlsx workbooks, and no file of this plan is one (%s is not named *.xlsx): %s", what, k.advice)
		}
	}
}

// checkDialectKeys warns of data.delimiter given in a plan whose data
// (data.file or data.parts, data.imputed) are workbooks or Parquet files,
// which have no delimiter: it applies to CSV files only, so, at most, to
// the new rows of inference.predict when they are one. data.decimal is no
// matter of this: under comma a workbook's or Parquet file's text cells
// are read with a decimal comma, and its numbers are written with one
// where they are compared with declared levels (D57).
func (d *decoder) checkDialectKeys(p *Plan) {
	files := append([]string{p.Data.File}, p.Data.Parts...)
	if im := p.Data.Imputed; im != nil {
		files = append(files, im.File)
		files = append(files, im.Files...)
	}
	var first string
	for _, f := range files {
		if f == "" {
			continue
		}
		if !data.IsWorkbook(f) && !data.IsParquet(f) {
			return // a CSV file, which the keys describe
		}
		if first == "" {
			first = f
		}
	}
	if first == "" || p.Data.Written {
		return
	}
	what := "a workbook"
	if data.IsParquet(first) {
		what = "a Parquet file"
	}
	predict := p.Inference.Predict
	if predict != "" && (data.IsWorkbook(predict) || data.IsParquet(predict)) {
		predict = ""
	}
	if d.given("data.delimiter") && d.clean("data.delimiter") {
		if predict != "" {
			d.warnAt("data.delimiter", "applies to CSV files only: it sets how the new rows of inference.predict (%s) are read, and nothing in the data file %s, %s, which has no delimiter", quote(predict), quote(first), what)
		} else {
			d.warnAt("data.delimiter", "applies to CSV files only, and no file of this plan is one (the data file %s is %s, which has no delimiter): remove the key", quote(first), what)
		}
	}
}

// sourceKey gives the key of the first term that reads column col.
func (d *decoder) sourceKey(p *Plan, col string) string {
	for _, t := range p.Terms {
		if t.Source == col {
			return t.Key
		}
	}
	return "predictors"
}

// checkStability refuses selection_stability on imputed sets made
// elsewhere (data.imputed): a resample would have to be imputed again,
// which only the program's own imputation (data.missing: impute) can do.
func (d *decoder) checkStability(p *Plan) {
	if p.SelectionStability != nil && p.Data.Imputed != nil {
		d.errAt("selection_stability", "is not available with data.imputed: each bootstrap resample of the rows would have to be imputed again, which sets made elsewhere cannot be; remove selection_stability, or impute with the program (data.missing: impute, data.imputation), whose resamples are imputed anew")
	}
	if p.SelectionStability != nil && p.SelectionStability.Draw == StabilityChosenModel && p.Data.Missing == MissingImpute {
		d.errAt("selection_stability.draw", "chosen_model is not available with data.missing: impute: the outcomes would be drawn from a model fitted to pooled imputed sets, at rows whose missing values are themselves imputed; use draw: bootstrap (each resample imputed anew), or data.missing: drop")
	}
}
