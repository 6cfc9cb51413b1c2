package runner

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"hash"
	"math"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
	"ordplan/render/numfmt"
	"ordplan/runner/data"
)

// OutcomeColumns is, in run.json, what one outcome's data held: for each
// column the outcome reads (the outcome, the predictors, the weights,
// the offset, the cluster) a summary and two fingerprints of its values
// in the rows used, so that a rerun on corrected data can say which
// columns changed and how (ColumnChanges). It is of the data as read
// (OutcomeResult.AsRead: on imputed data the original file, incomplete
// rows kept), made after the rows are read (Result.DataColumns), for the
// runs that write run.json: ordplan fit does not make it.
type OutcomeColumns struct {
	Outcome string `json:"outcome"`
	// Rows are the rows used (with imputation, the rows kept for it).
	Rows int `json:"rows"`
	// RowsMultiset is a fingerprint of the rows that does not depend on
	// their order: the same rows, every used value of each together, in
	// any order give the same; a value moved to another row does not.
	RowsMultiset string        `json:"rows_multiset"`
	Columns      []ColumnPrint `json:"columns"`
}

// ColumnPrint is one column of OutcomeColumns.
type ColumnPrint struct {
	Column string `json:"column"`
	// Role is what the outcome reads it as: outcome, predictor, weights,
	// offset or cluster.
	Role string `json:"role"`
	// Values are the rows used that hold a value (imputation keeps rows
	// missing one); Missing the rows missing it among those no subset
	// condition excludes (the missing-value table's count).
	Values  int `json:"values"`
	Missing int `json:"missing"`
	// Sum, Mean, Min and Max summarise a numeric column's values (sampling
	// weights as read, rescaled to sum to the rows).
	Sum  *float64 `json:"sum,omitempty"`
	Mean *float64 `json:"mean,omitempty"`
	Min  *float64 `json:"min,omitempty"`
	Max  *float64 `json:"max,omitempty"`
	// Levels count the rows of each category of the outcome or level of
	// a categorical predictor (rows, not weights), in their order.
	Levels []LevelCount `json:"levels,omitempty"`
	// Clusters is the number of distinct clusters of the cluster column.
	Clusters int `json:"clusters,omitempty"`
	// ValuesSHA256 is the SHA-256 of the values in row order: it changes
	// when a value changes or moves to another row. ValuesMultiset does
	// not depend on the order: the same values in other rows give the
	// same.
	ValuesSHA256   string `json:"values_sha256"`
	ValuesMultiset string `json:"values_multiset"`
}

// LevelCount is the number of rows of one level.
type LevelCount struct {
	Level string `json:"level"`
	Rows  int    `json:"rows"`
}

// DataColumns is the record of the columns of every outcome of a run
// (OutcomeColumns), in plan order, for run.json and the comparison with
// an earlier run: made when first asked (a pass over the rows read, in
// memory), so that runs that write no record (the replicates of a power
// study) do not make it.
func (res *Result) DataColumns() []OutcomeColumns {
	if res.columns == nil {
		res.columns = dataColumns(res)
	}
	return res.columns
}

func dataColumns(res *Result) []OutcomeColumns {
	out := make([]OutcomeColumns, 0, len(res.Outcomes))
	for _, or := range res.Outcomes {
		out = append(out, outcomeColumns(or.AsRead(), or.dataOptions))
	}
	return out
}

// column is one column of a Dataset, for printing: its values as numbers
// (category or level indexes for categorical ones, missing as NaN or -1),
// or texts (the cluster).
type column struct {
	name, role string
	at         func(i int) float64 // nil for texts
	text       []string
	levels     []string // categorical: the labels of the indexes
}

// outcomeColumns prints the columns of one outcome's data set.
func outcomeColumns(ds *data.Dataset, opt data.Options) OutcomeColumns {
	outcome, levels := opt.Outcome, opt.PredictorLevels
	cols := []column{{name: outcome, role: "outcome", levels: ds.Categories, at: func(i int) float64 { return float64(ds.Y[i]) }}}
	for k, p := range ds.Predictors {
		cols = append(cols, column{name: p, role: "predictor", levels: levels[p], at: func(i int) float64 { return ds.X[i*ds.K+k] }})
	}
	if ds.Weights != nil {
		cols = append(cols, column{name: opt.Weights, role: "weights", at: func(i int) float64 { return ds.Weights[i] }})
	}
	if ds.Offset != nil {
		cols = append(cols, column{name: opt.Offset, role: "offset", at: func(i int) float64 { return ds.Offset[i] }})
	}
	if ds.Cluster != nil {
		cols = append(cols, column{name: opt.Cluster, role: "cluster", text: ds.Cluster})
	}
	missing := map[string]int{}
	if t := ds.Missing; t != nil {
		for j, c := range t.Columns {
			missing[c] = t.ByColumn[j]
		}
	}
	rows := make([]uint64, ds.N) // each row's values, mixed column by column
	rec := OutcomeColumns{Outcome: outcome, Rows: ds.N}
	for j, c := range cols {
		cp := c.print(ds.N, uint64(j+1), rows)
		cp.Missing = missing[c.name]
		rec.Columns = append(rec.Columns, cp)
	}
	var sum uint64
	for _, r := range rows {
		sum += mix64(r)
	}
	rec.RowsMultiset = hex64(sum)
	return rec
}

// print summarises the column over n rows and mixes its values into the
// rows' fingerprints (salt: the column's place).
func (c column) print(n int, salt uint64, rows []uint64) ColumnPrint {
	cp := ColumnPrint{Column: c.name, Role: c.role}
	h := sha256.New()
	w := hashWriter{h: h}
	var set uint64
	if c.text != nil {
		seen := map[string]bool{}
		for i, s := range c.text {
			w.u64(uint64(len(s)))
			w.str(s)
			v := mix64(fnv64(s) + salt*golden)
			set += v
			rows[i] = mix64(rows[i] ^ v)
			seen[s] = true
		}
		cp.Values, cp.Clusters = n, len(seen)
	} else {
		categorical := c.levels != nil
		var counts []int
		if categorical {
			counts = make([]int, len(c.levels))
			for _, l := range c.levels { // the labels take part: a relabelled level is another value
				w.u64(uint64(len(l)))
				w.str(l)
			}
		}
		sum, lo, hi := 0.0, math.Inf(1), math.Inf(-1)
		for i := range n {
			x := c.at(i)
			missing := math.IsNaN(x) || (categorical && x < 0)
			var bits uint64
			switch {
			case missing:
				bits = math.Float64bits(math.NaN())
			case x == 0:
				bits = 0 // -0 as 0
			default:
				bits = math.Float64bits(x)
			}
			w.u64(bits)
			v := mix64(bits + salt*golden)
			set += v
			rows[i] = mix64(rows[i] ^ v)
			if missing {
				continue
			}
			cp.Values++
			if categorical {
				if k := int(x); k < len(counts) {
					counts[k]++
				}
				continue
			}
			sum += x
			lo, hi = min(lo, x), max(hi, x)
		}
		if categorical {
			for k, l := range c.levels {
				cp.Levels = append(cp.Levels, LevelCount{Level: l, Rows: counts[k]})
			}
		} else if cp.Values > 0 {
			mean := sum / float64(cp.Values)
			cp.Sum, cp.Mean, cp.Min, cp.Max = &sum, &mean, &lo, &hi
		}
	}
	w.flush()
	cp.ValuesSHA256 = hex.EncodeToString(h.Sum(nil))
	cp.ValuesMultiset = hex64(set)
	return cp
}

// golden is the odd constant of the 64-bit mixer's sequence.
const golden = 0x9e3779b97f4a7c15

// mix64 is a bijective 64-bit mixer (the finaliser of a splitmix
// sequence): values that differ in one bit differ in about half.
func mix64(x uint64) uint64 {
	x += golden
	x = (x ^ x>>30) * 0xbf58476d1ce4e5b9
	x = (x ^ x>>27) * 0x94d049bb133111eb
	return x ^ x>>31
}

// fnv64 is the 64-bit FNV-1a hash of a text.
func fnv64(s string) uint64 {
	h := uint64(14695981039346656037)
	for i := 0; i < len(s); i++ {
		h = (h ^ uint64(s[i])) * 1099511628211
	}
	return h
}

func hex64(x uint64) string { return fmt.Sprintf("%016x", x) }

// hashWriter writes to a hash through a buffer (a write per value would
// cost more than the hashing).
type hashWriter struct {
	h   hash.Hash
	buf [4096]byte
	n   int
}

func (w *hashWriter) u64(x uint64) {
	if w.n+8 > len(w.buf) {
		w.flush()
	}
	binary.LittleEndian.PutUint64(w.buf[w.n:], x)
	w.n += 8
}

func (w *hashWriter) str(s string) {
	for len(s) > 0 {
		if w.n == len(w.buf) {
			w.flush()
		}
		k := copy(w.buf[w.n:], s)
		w.n += k
		s = s[k:]
	}
}

func (w *hashWriter) flush() {
	w.h.Write(w.buf[:w.n])
	w.n = 0
}

// ColumnChanges says which columns of each outcome's data changed between
// an earlier run's record of them (was) and this run's (now), and how,
// where the summaries tell it: one line per column, led by the outcome.
// A column whose values are the same in other rows says so (values
// exchanged between rows). Rows that are the same, every column's values
// together, only in another order are said once per outcome and no
// column is named: a reordering changes no fit. An outcome whose columns
// are all the same, though the data changed, says that the change is
// elsewhere. An outcome or a column in one run only is not compared (the
// plan changed, which is said already). was nil: the earlier record did
// not hold the columns (an older program); the caller says so.
func ColumnChanges(was, now []OutcomeColumns) []string {
	var out []string
	for _, n := range now {
		i := slices.IndexFunc(was, func(w OutcomeColumns) bool { return w.Outcome == n.Outcome })
		if i < 0 {
			continue
		}
		out = append(out, outcomeColumnChanges(was[i], n)...)
	}
	return out
}

// changedColumns names the columns whose values differ between two
// records (in any outcome, each once, in the order of the later record);
// none when either lacks them.
func changedColumns(was, now []OutcomeColumns) []string {
	var names []string
	for _, n := range now {
		for _, w := range was {
			if w.Outcome != n.Outcome || sameRows(w, n) {
				continue // the same rows, maybe in another order: no column named
			}
			for _, c := range n.Columns {
				for _, p := range w.Columns {
					if p.Column == c.Column && p.Role == c.Role && p.ValuesSHA256 != c.ValuesSHA256 && !slices.Contains(names, c.Column) {
						names = append(names, c.Column)
					}
				}
			}
		}
	}
	return names
}

// recordChangedColumns is changedColumns of two run records: the
// primary analysis's columns, then those of each sensitivity analysis
// recorded in both under its name that the primary's do not name.
func recordChangedColumns(was, now *RunRecord) []string {
	names := changedColumns(was.DataColumns, now.DataColumns)
	for _, s := range now.Sensitivity {
		i := slices.IndexFunc(was.Sensitivity, func(w SensitivityRunRecord) bool { return w.Name == s.Name })
		if i < 0 {
			continue
		}
		for _, c := range changedColumns(was.Sensitivity[i].DataColumns, s.DataColumns) {
			if !slices.Contains(names, c) {
				names = append(names, c)
			}
		}
	}
	return names
}

// sameRows says whether two records hold the same rows, every used value
// of each together, in any order.
func sameRows(was, now OutcomeColumns) bool {
	return was.Rows == now.Rows && was.RowsMultiset == now.RowsMultiset
}

// noColumnChanged begins the line of an outcome whose columns are the
// same.
const noColumnChanged = "no column this outcome uses changed in the rows it uses"

// columnPair is one column in both records of an outcome, in its role.
type columnPair struct{ was, now ColumnPrint }

// compareColumns pairs the columns of two records of an outcome (in the
// later record's order) and says of each pair whether it is the same (0),
// its values moved between rows (1) or changed (2), with the counts of
// moved and changed columns; unpaired are the later record's columns the
// earlier does not hold in their role, "COLUMN (ROLE)".
func compareColumns(was, now OutcomeColumns) (pairs []columnPair, kind []int, moved, changed int, unpaired []string) {
	for _, c := range now.Columns {
		n := len(pairs)
		for _, w := range was.Columns {
			if w.Column == c.Column && w.Role == c.Role {
				pairs = append(pairs, columnPair{w, c})
			}
		}
		if len(pairs) == n {
			unpaired = append(unpaired, fmt.Sprintf("%s (%s)", c.Column, c.Role))
		}
	}
	kind = make([]int, len(pairs))
	for i, p := range pairs {
		switch {
		case p.was.ValuesSHA256 == p.now.ValuesSHA256 && len(summaryChanges(p.was, p.now)) == 0:
			// (the same values may miss in more rows that are not used)
		case p.was.ValuesSHA256 == p.now.ValuesSHA256, len(renamedLevels(p.was, p.now)) > 0:
			kind[i] = 2
			changed++
		case p.was.ValuesMultiset == p.now.ValuesMultiset && p.was.Values == p.now.Values:
			kind[i] = 1
			moved++
		default:
			kind[i] = 2
			changed++
		}
	}
	return pairs, kind, moved, changed, unpaired
}

// outcomeColumnChanges words how the columns of an outcome changed
// between two records (columnLines), then names the columns the earlier
// record read, in their role, that the later one does not read and did
// not take under another name (a predictor dropped from the plan).
func outcomeColumnChanges(was, now OutcomeColumns) []string {
	out, sources := columnLines(was, now)
	label := func(c ColumnPrint) string { return fmt.Sprintf("%s (%s)", c.Column, c.Role) }
	for _, w := range was.Columns {
		if !slices.ContainsFunc(now.Columns, func(c ColumnPrint) bool { return label(c) == label(w) }) && !slices.Contains(sources, label(w)) {
			out = append(out, fmt.Sprintf("%s: column %s is no longer read: the earlier run read it in this role, this run does not", now.Outcome, label(w)))
		}
	}
	return out
}

// columnLines words how the columns both records read changed, and
// returns with them the earlier record's columns that the later one
// holds under another name (renamedColumns).
func columnLines(was, now OutcomeColumns) (lines, sources []string) {
	pairs, kind, moved, changed, unpaired := compareColumns(was, now)
	who := now.Outcome + ": "
	renamed, sources, unpaired := renamedColumns(was, now, unpaired)
	for i := range renamed {
		renamed[i] = who + renamed[i]
	}
	// Rows that differ where no column compared differs differ in a
	// column the earlier record does not hold (not read then, or not in
	// this role, or a record edited since): whether it changed cannot be
	// said, and no column may be said to be unchanged.
	var notCompared string
	if len(unpaired) > 0 && !sameRows(was, now) {
		notCompared = fmt.Sprintf("%s%s %s, which this run reads (that run did not read %s in this role, or its record was edited since), so whether %s changed cannot be said", who, notComparedLead, strings.Join(unpaired, ", "), words.Form(len(unpaired), "it", "them"), words.Form(len(unpaired), "it", "they"))
	}
	if changed == 0 && moved == 0 && notCompared != "" {
		return append(renamed, notCompared+"; no column both runs read changed in the rows used"), sources
	}
	if changed == 0 && moved == 0 && len(renamed) > 0 {
		return append(renamed, who+"no other column this outcome uses changed in the rows it uses"), sources
	}
	if changed == 0 && moved == 0 {
		return []string{who + noColumnChanged + " (the data changed in columns it does not read, or in rows it does not use: outside the subset, or dropped for a missing value)"}, sources
	}
	if changed == 0 && sameRows(was, now) {
		return append(renamed, fmt.Sprintf("%sthe %d%s: no value of a column changed (a reordering of the rows changes no fit beyond rounding in the last digits, so no column is named)", who, now.Rows, rowsReordered)), sources
	}
	out := renamed
	for i, p := range pairs {
		lead := fmt.Sprintf("%scolumn %s (%s) changed: ", who, p.now.Column, p.now.Role)
		switch d := summaryChanges(p.was, p.now); {
		case kind[i] == 0:
		case kind[i] == 1:
			out = append(out, lead+"the same values in other rows (values exchanged between rows; its "+sameSummaries(p.now)+" are the same)")
		case len(d) > 0:
			out = append(out, lead+strings.Join(d, ", "))
		default:
			out = append(out, lead+"other values, with the same "+sameSummaries(p.now))
		}
	}
	if notCompared != "" {
		out = append(out, notCompared)
	}
	return out, sources
}

// renamedColumns finds, among the later record's columns the earlier one
// does not hold (unpaired, "COLUMN (ROLE)"), those whose values are row
// for row those of a column of the earlier record, in the same role, that
// the later one does not hold: the same column under a new name (an
// export that renamed it, and the plan following it). It words each and
// returns the earlier columns so renamed ("COLUMN (ROLE)") and the
// unpaired columns left.
func renamedColumns(was, now OutcomeColumns, unpaired []string) (renamed, sources, left []string) {
	label := func(c ColumnPrint) string { return fmt.Sprintf("%s (%s)", c.Column, c.Role) }
	for _, u := range unpaired {
		i := slices.IndexFunc(now.Columns, func(c ColumnPrint) bool { return label(c) == u })
		j := -1
		if i >= 0 {
			c := now.Columns[i]
			j = slices.IndexFunc(was.Columns, func(w ColumnPrint) bool {
				return w.Role == c.Role && w.ValuesSHA256 == c.ValuesSHA256 && w.Values == c.Values &&
					!slices.ContainsFunc(now.Columns, func(o ColumnPrint) bool { return label(o) == label(w) })
			})
		}
		if j < 0 {
			left = append(left, u)
			continue
		}
		renamed = append(renamed, fmt.Sprintf("column %s holds, row for row, the values that column %s held in the earlier run: the same column under another name", u, was.Columns[j].Column))
		sources = append(sources, label(was.Columns[j]))
	}
	return renamed, sources, left
}

// rowsReordered is the words of the line of rows that are the same in
// another order, after their number.
const rowsReordered = " rows used are the same, in another order"

// notComparedLead begins the line of the columns the earlier record does
// not hold.
const notComparedLead = "the earlier run's record has no fingerprint of"

// sameSummaries names the summaries of a column that did not change.
func sameSummaries(c ColumnPrint) string {
	switch {
	case c.Levels != nil:
		return "counts per level and of missing values"
	case c.Clusters > 0:
		return "numbers of values, of clusters and of missing values"
	}
	return "number of values, of missing values, sum, smallest and largest value"
}

// summaryChanges lists how a column's summaries changed: values,
// missing, sum, mean, smallest, largest, the count of each level, the
// number of clusters.
func summaryChanges(was, now ColumnPrint) []string {
	var d []string
	if was.Values != now.Values {
		d = append(d, fmt.Sprintf("values %d -> %d", was.Values, now.Values))
	}
	if was.Missing != now.Missing {
		d = append(d, fmt.Sprintf("missing %d -> %d", was.Missing, now.Missing))
	}
	for _, s := range []struct {
		what     string
		was, now *float64
	}{{"sum", was.Sum, now.Sum}, {"mean", was.Mean, now.Mean}, {"smallest", was.Min, now.Min}, {"largest", was.Max, now.Max}} {
		if s.was != nil && s.now != nil && *s.was != *s.now {
			a, b := numPair(*s.was, *s.now)
			d = append(d, fmt.Sprintf("%s %s -> %s", s.what, a, b))
		}
	}
	if was.Clusters != now.Clusters {
		d = append(d, fmt.Sprintf("clusters %d -> %d", was.Clusters, now.Clusters))
	}
	if r := renamedLevels(was, now); len(r) > 0 {
		return append(d, r...)
	}
	before, after := map[string]int{}, map[string]int{}
	for _, l := range was.Levels {
		before[l.Level] = l.Rows
	}
	for _, l := range now.Levels {
		after[l.Level] = l.Rows
	}
	var lv, gone, added []string
	for _, l := range now.Levels {
		if b, ok := before[l.Level]; ok && b != l.Rows {
			lv = append(lv, fmt.Sprintf("%s %d -> %d", l.Level, b, l.Rows))
		}
	}
	if len(lv) > 0 {
		d = append(d, "rows per level "+strings.Join(lv, ", "))
	}
	for _, l := range was.Levels {
		if _, ok := after[l.Level]; !ok {
			gone = append(gone, fmt.Sprintf("%s (%d rows then)", l.Level, l.Rows))
		}
	}
	for _, l := range now.Levels {
		if _, ok := before[l.Level]; !ok {
			added = append(added, fmt.Sprintf("%s (%d rows)", l.Level, l.Rows))
		}
	}
	if len(gone) > 0 {
		d = append(d, "no longer "+words.Form(len(gone), "a level", "levels")+": "+strings.Join(gone, ", "))
	}
	if len(added) > 0 {
		d = append(d, words.Form(len(added), "new level", "new levels")+": "+strings.Join(added, ", "))
	}
	return d
}

// renamedLevels says which levels of a column were renamed, when the
// column holds the same values in any order (ValuesMultiset, of the
// levels' places, not their names; ValuesSHA256 takes the names too) and
// its levels are the same in number and in rows, in order, some under
// other names: "level neutral renamed neither (533 rows, as before)".
// None otherwise.
func renamedLevels(was, now ColumnPrint) []string {
	if was.ValuesMultiset != now.ValuesMultiset || was.Values != now.Values || len(was.Levels) != len(now.Levels) {
		return nil
	}
	var out []string
	for i, l := range was.Levels {
		n := now.Levels[i]
		if n.Rows != l.Rows {
			return nil
		}
		if n.Level != l.Level {
			out = append(out, fmt.Sprintf("level %s renamed %s (%d rows, as before)", l.Level, n.Level, n.Rows))
		}
	}
	return out
}

// numPair writes two different numbers so that they read differently:
// as the tables do, else with every digit needed.
func numPair(a, b float64) (string, string) {
	x, y := numfmt.Num(a), numfmt.Num(b)
	if x == y {
		x, y = strconv.FormatFloat(a, 'g', -1, 64), strconv.FormatFloat(b, 'g', -1, 64)
	}
	return x, y
}

// sensitivityColumnChanges says what changed in the data each
// sensitivity analysis of res read (its run.json record's data_columns
// against the earlier record's of the analysis of the same name), where
// the primary analysis's lines do not say it already: a column only the
// analysis reads (its cluster column), rows only it uses (another
// subset, incomplete rows it imputes). Each line is led by the
// analysis's name. An analysis the earlier record holds no columns of
// (new, could not be run, an older program's record: said so when the
// data changed) is not compared;
// without a change of the data (the plan alone changed), lines saying
// that nothing changed are left out, as dataChanges leaves them.
func sensitivityColumnChanges(prevRec *RunRecord, res *Result, dataChanged bool) []string {
	primaryNow := res.DataColumns()
	var out []string
	for _, sr := range res.Sensitivity {
		if sr.Result == nil {
			continue
		}
		i := slices.IndexFunc(prevRec.Sensitivity, func(p SensitivityRunRecord) bool { return p.Name == sr.Sensitivity.Name })
		if i < 0 {
			continue
		}
		if prevRec.Sensitivity[i].DataColumns == nil {
			if dataChanged && prevRec.Sensitivity[i].Error == "" {
				// Ran then, but its record (an older program's) holds no
				// columns: a change only it reads cannot be said.
				out = append(out, fmt.Sprintf("Sensitivity analysis %s: the earlier run did not record the columns it read (its run.json was written by an older ordplan), so what changed in columns or rows only it reads cannot be said.", sr.Sensitivity.Name))
			}
			continue
		}
		was := prevRec.Sensitivity[i].DataColumns
		subset := sensitivitySubsetChange(prevRec.Plan.Canonical, res.Plan.Canonical(), sr.Sensitivity.Name)
		for _, n := range sr.Result.DataColumns() {
			w := slices.IndexFunc(was, func(o OutcomeColumns) bool { return o.Outcome == n.Outcome })
			if w < 0 {
				continue
			}
			if subset != "" {
				out = append(out, fmt.Sprintf("Sensitivity analysis %s: %s.", sr.Sensitivity.Name, subsetLine(subset, was[w], n, dataChanged)))
				continue
			}
			var primary []string
			pw := slices.IndexFunc(prevRec.DataColumns, func(o OutcomeColumns) bool { return o.Outcome == n.Outcome })
			pn := slices.IndexFunc(primaryNow, func(o OutcomeColumns) bool { return o.Outcome == n.Outcome })
			if pw >= 0 && pn >= 0 {
				primary = outcomeColumnChanges(prevRec.DataColumns[pw], primaryNow[pn])
			}
			who := n.Outcome + ": "
			for _, line := range outcomeColumnChanges(was[w], n) {
				if !dataChanged && (strings.Contains(line, noColumnChanged) || strings.Contains(line, notComparedLead)) {
					continue
				}
				if !saidAlready(who, line, primary) {
					out = append(out, fmt.Sprintf("Sensitivity analysis %s: %s.", sr.Sensitivity.Name, line))
				}
			}
		}
	}
	return out
}

// sensitivitySubsetChange is how the subset a sensitivity analysis
// changes (its change's subset key) differs between two canonical forms
// of the plan, the keys with both values (subset[0].at_most 70 -> 60), as
// the plan's changes are named (planKeys); "" when the analysis changes no
// subset in either, has the same one, or either form is missing (an older
// record). An analysis found in one form only is not compared.
func sensitivitySubsetChange(was, now json.RawMessage, name string) string {
	a, aok := changedSubset(was, name)
	b, bok := changedSubset(now, name)
	if !aok || !bok {
		return ""
	}
	return subsetKeyChanges(a, b)
}

// primarySubsetChange is sensitivitySubsetChange for the plan's own
// subset (its top-level key subset).
func primarySubsetChange(was, now json.RawMessage) string {
	var p, q struct {
		Subset json.RawMessage `json:"subset"`
	}
	if len(was) == 0 || len(now) == 0 || json.Unmarshal(was, &p) != nil || json.Unmarshal(now, &q) != nil {
		return ""
	}
	return subsetKeyChanges(p.Subset, q.Subset)
}

// subsetKeyChanges is how subset a became subset b (nil: none), the keys
// with both values, or "" when neither is set or they are the same.
func subsetKeyChanges(a, b json.RawMessage) string {
	if a == nil && b == nil {
		return ""
	}
	wrap := func(v json.RawMessage) json.RawMessage {
		if v == nil {
			return json.RawMessage(`{}`)
		}
		return append(append(json.RawMessage(`{"subset":`), v...), '}')
	}
	keys, known := planKeys(wrap(a), wrap(b))
	if !known {
		return ""
	}
	return strings.Join(keys, "; ")
}

// changedSubset is the subset that the sensitivity analysis named name
// gives in its change in the canonical form canon (nil: it changes none);
// not ok when the form or the analysis is missing.
func changedSubset(canon json.RawMessage, name string) (json.RawMessage, bool) {
	var p struct {
		Sensitivity []struct {
			Name   string                     `json:"name"`
			Change map[string]json.RawMessage `json:"change"`
		} `json:"sensitivity"`
	}
	if len(canon) == 0 || json.Unmarshal(canon, &p) != nil {
		return nil, false
	}
	for _, s := range p.Sensitivity {
		if s.Name == name {
			return s.Change["subset"], true
		}
	}
	return nil, false
}

// subsetLine says in one line how an outcome's data under a sensitivity
// analysis whose subset changed (keys: how) changed: the rows used before
// and now, and how many of the columns it reads changed with them (one
// line for what the columns' own lines would say of every column); with
// the data changed too, that the two are not told apart.
func subsetLine(keys string, was, now OutcomeColumns, dataChanged bool) string {
	_, _, moved, changed, _ := compareColumns(was, now)
	s := fmt.Sprintf("%s: its subset changed (%s): ", now.Outcome, keys)
	switch {
	case sameRows(was, now):
		s += fmt.Sprintf("it uses the same %d rows", now.Rows)
	case moved+changed == len(now.Columns):
		s += fmt.Sprintf("rows used %d -> %d, and all %d columns it reads changed with them", was.Rows, now.Rows, len(now.Columns))
	default:
		s += fmt.Sprintf("rows used %d -> %d, and %d of the %d columns it reads changed with them", was.Rows, now.Rows, moved+changed, len(now.Columns))
	}
	if dataChanged {
		s += " (the data changed too: the columns' changes are not only the subset's)"
	}
	return s
}

// saidAlready reports whether a line of one outcome's column changes
// (who leads it) under a sensitivity analysis says what a line of the
// primary analysis's says already: the same line, the same column in the
// same role changed (its summaries may differ over other rows), or the
// rows reordered.
func saidAlready(who, line string, primary []string) bool {
	subject := func(l string) string {
		if i := strings.Index(l, " changed: "); i >= 0 && strings.HasPrefix(l, who+"column ") {
			return l[:i]
		}
		if strings.HasPrefix(l, who) && strings.Contains(l, rowsReordered) {
			return who + rowsReordered
		}
		return ""
	}
	s := subject(line)
	return slices.ContainsFunc(primary, func(p string) bool { return p == line || s != "" && subject(p) == s })
}
