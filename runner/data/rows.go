package data

import (
	"io"
	"slices"
	"strconv"
	"strings"
)

// rows reads the data rows and builds the data set.
func (r *reader) rows() (*Dataset, error) {
	opt := &r.opt
	d := &Dataset{
		File:       r.file,
		Outcome:    opt.Outcome,
		Predictors: slices.Clone(opt.Predictors),
		K:          len(opt.Predictors),
	}
	if d.Predictors == nil {
		d.Predictors = []string{}
	}
	labels := map[string]int{}
	for i, l := range opt.Categories {
		labels[l] = i
	}
	var codes []int64 // outcome codes of kept rows, when no labels are declared
	drops := make([]int, len(r.cols))
	// the used column of each subset condition, the rows each drops, and
	// the level index of each categorical predictor
	condCol := make([]int, len(opt.Keep))
	for i, k := range opt.Keep {
		condCol[i] = slices.IndexFunc(r.cols, func(c usedCol) bool { return c.name == k.Column })
	}
	subsetDrops := make([]int, len(opt.Keep))
	levelIndex := map[string]map[string]int{}
	levelSeen := map[string][]float64{}
	for col, lv := range opt.PredictorLevels {
		levelIndex[col] = map[string]int{}
		for i, l := range lv {
			levelIndex[col][l] = i
		}
		levelSeen[col] = make([]float64, len(lv))
	}
	zeroWeight := 0              // rows with frequency weight 0 stand for no observation
	patterns := map[string]int{} // which used columns a row misses: 'x' missing, '.' present
	pat := make([]byte, len(r.cols))
	catMiss := map[string][]int{} // per outcome value of an incomplete row: rows missing each used column
	catIncomplete := map[string]int{}
	xs := make([]float64, d.K)
	for {
		rec, err := r.cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, r.csvErr(err, rec)
		}
		d.RowsRead++
		out := -1
		for i, k := range opt.Keep {
			c := r.cols[condCol[i]]
			cell := strings.TrimSpace(rec[c.index])
			ok, msg := k.keeps(cell, r.missing[cell])
			if msg != "" {
				line, _ := r.cr.FieldPos(c.index)
				return nil, r.fail(line, c.name, "%s", msg)
			}
			if !ok {
				out = i
				break
			}
		}
		if out >= 0 {
			subsetDrops[out]++
			continue
		}
		miss := -1
		for i := range pat {
			pat[i] = '.'
		}
		y, code, w, off, cl := 0, int64(0), 1.0, 0.0, ""
		outLabel := "" // the outcome value, when present
		for ci, c := range r.cols {
			if c.role == roleSubset {
				continue
			}
			cell := strings.TrimSpace(rec[c.index])
			line, _ := r.cr.FieldPos(c.index)
			if r.missingIn(c.name, cell) {
				if opt.Refuse {
					return nil, r.fail(line, c.name, "missing value (%s) where missing values are refused", describeMissing(cell))
				}
				if miss < 0 {
					miss = ci
				}
				pat[ci] = 'x'
				continue
			}
			var msg string
			switch c.role {
			case roleOutcome:
				if len(opt.Categories) > 0 {
					i, ok := labels[cell]
					if !ok {
						msg = "value " + quoteCell(cell) + " is not one of the declared categories: " + quoteList(opt.Categories)
					}
					y = i
					outLabel = cell
				} else {
					code, msg = parseCode(cell)
					outLabel = strconv.FormatInt(code, 10)
				}
			case rolePredictor:
				if idx, cat := levelIndex[c.name]; cat {
					l, ok := idx[cell]
					if !ok {
						msg = "value " + quoteCell(cell) + " is not one of the declared levels of this categorical predictor: " + quoteList(opt.PredictorLevels[c.name]) + " (add it to the levels, or list it among the missing-value markers)"
					}
					xs[c.pos] = float64(l)
				} else if xs[c.pos], msg = parseNumber(cell); strings.HasSuffix(msg, " is not a number") && !isNumberLike(cell) {
					msg += "; the column holds text: declare it categorical with its levels to use it as a predictor (in a plan under categorical:, in ordplan fit as COLUMN|levels=a/b/c)"
				}
			case roleWeights:
				w, msg = parseNumber(cell)
				if msg == "" && w < 0 {
					msg = "weight " + quoteCell(cell) + " is negative (frequency weights must be zero or more)"
				}
			case roleOffset:
				off, msg = parseNumber(cell)
			case roleCluster:
				cl = cell
			}
			if msg != "" {
				return nil, r.fail(line, c.name, "%s", msg)
			}
		}
		if miss >= 0 {
			drops[miss]++
			patterns[string(pat)]++
			if pat[0] != 'x' {
				cm := catMiss[outLabel]
				if cm == nil {
					cm = make([]int, len(r.cols))
					catMiss[outLabel] = cm
				}
				for ci := range pat {
					if pat[ci] == 'x' {
						cm[ci]++
					}
				}
				catIncomplete[outLabel]++
			}
			continue
		}
		if w == 0 {
			zeroWeight++
			continue
		}
		line, _ := r.cr.FieldPos(0)
		for _, c := range r.cols {
			if c.role == rolePredictor && levelSeen[c.name] != nil {
				levelSeen[c.name][int(xs[c.pos])] += w
			}
		}
		d.Lines = append(d.Lines, line)
		d.Y = append(d.Y, y)
		codes = append(codes, code)
		d.X = append(d.X, xs...)
		if opt.Weights != "" {
			d.Weights = append(d.Weights, w)
		}
		if opt.Offset != "" {
			d.Offset = append(d.Offset, off)
		}
		if opt.Cluster != "" {
			d.Cluster = append(d.Cluster, cl)
		}
	}
	if d.RowsRead == 0 {
		return nil, r.fail(0, "", "no data rows after the header")
	}
	d.N = len(d.Y)
	for ci, n := range drops {
		if n > 0 {
			d.Dropped = append(d.Dropped, DropCount{Column: r.cols[ci].name, Rows: n})
			d.RowsDropped += n
		}
	}
	d.Missing = missingPatterns(r.cols, patterns)
	if zeroWeight > 0 {
		d.Dropped = append(d.Dropped, DropCount{Column: opt.Weights + " = 0", Rows: zeroWeight})
		d.RowsDropped += zeroWeight
	}
	for i, n := range subsetDrops {
		if n > 0 {
			d.Dropped = append(d.Dropped, DropCount{Column: "outside the subset " + opt.Keep[i].String(), Rows: n, Subset: true})
			d.RowsDropped += n
			d.RowsOutside += n
		}
	}
	if d.N == 0 && d.RowsOutside == d.RowsRead {
		first := ""
		for i, n := range subsetDrops {
			if n > 0 && first == "" {
				first = opt.Keep[i].Column
			}
		}
		return nil, r.fail(0, first, "the subset keeps no rows: all %d data rows fail its conditions (%s)", d.RowsRead, dropList(d.Dropped))
	}
	for _, col := range opt.Predictors {
		if seen := levelSeen[col]; seen != nil {
			for l, c := range seen {
				if c == 0 {
					d.UnobservedLevels = append(d.UnobservedLevels, LevelRef{Column: col, Level: opt.PredictorLevels[col][l]})
				}
			}
		}
	}
	if d.N == 0 {
		why := "missing values"
		if d.RowsOutside > 0 {
			why = "missing values or the subset"
		}
		if zeroWeight > 0 {
			why = "missing values or zero weight"
		}
		return nil, r.fail(0, "", "all %d data rows were dropped for %s (%s)", d.RowsRead, why, dropList(d.Dropped))
	}
	if d.X == nil {
		d.X = []float64{}
	}
	if len(opt.Categories) > 0 {
		d.Categories = slices.Clone(opt.Categories)
	} else {
		d.Categories = codeCategories(codes, d.Y)
	}
	if err := r.tally(d); err != nil {
		return nil, err
	}
	d.Missing.byCategory(r.cols, d, catMiss, catIncomplete)
	return d, nil
}

// byCategory fills the missingness by outcome category: the kept rows of
// each category and the incomplete rows whose outcome is that category.
// Categories seen only in incomplete rows follow the data set's, sorted.
func (t *MissingTable) byCategory(cols []usedCol, d *Dataset, catMiss map[string][]int, catIncomplete map[string]int) {
	var idx []int
	for i, c := range cols {
		if c.role != roleSubset {
			idx = append(idx, i)
		}
	}
	kept := make([]int, len(d.Categories))
	for _, y := range d.Y {
		kept[y]++
	}
	t.Rows = d.N
	for _, p := range t.Patterns {
		t.Rows += p.Rows
	}
	add := func(label string, complete int) {
		cm := CategoryMissing{Category: label, ByColumn: make([]int, len(idx)), Incomplete: catIncomplete[label]}
		cm.Rows = complete + cm.Incomplete
		if m := catMiss[label]; m != nil {
			for j, i := range idx {
				cm.ByColumn[j] = m[i]
			}
		}
		t.ByCategory = append(t.ByCategory, cm)
	}
	for j, l := range d.Categories {
		add(l, kept[j])
	}
	var extra []string
	for l := range catIncomplete {
		if !slices.Contains(d.Categories, l) {
			extra = append(extra, l)
		}
	}
	slices.Sort(extra)
	for _, l := range extra {
		add(l, 0)
	}
}

// codeCategories sets y to the index of each code among the distinct codes,
// sorted numerically, and returns their decimal labels.
func codeCategories(codes []int64, y []int) []string {
	distinct := slices.Clone(codes)
	slices.Sort(distinct)
	distinct = slices.Compact(distinct)
	for i, c := range codes {
		y[i], _ = slices.BinarySearch(distinct, c)
	}
	labels := make([]string, len(distinct))
	for i, c := range distinct {
		labels[i] = strconv.FormatInt(c, 10)
	}
	return labels
}

// tally counts the kept rows per category and checks that at least two
// categories are present.
func (r *reader) tally(d *Dataset) error {
	d.Counts = make([]float64, len(d.Categories))
	for i, y := range d.Y {
		if d.Weights != nil {
			d.Counts[y] += d.Weights[i]
		} else {
			d.Counts[y]++
		}
	}
	seen := 0
	last := ""
	for j, c := range d.Counts {
		if c > 0 {
			seen++
			last = d.Categories[j]
		} else {
			d.Unobserved = append(d.Unobserved, d.Categories[j])
		}
	}
	if seen < 2 {
		return r.fail(0, d.Outcome, "only one category (%s) among the %d kept rows; at least two are needed", quoteCell(last), d.N)
	}
	return nil
}

// missingPatterns lists the used columns and, for every combination of
// them that rows miss together, the number of such rows: most frequent
// first, ties in the order of the pattern text.
func missingPatterns(cols []usedCol, patterns map[string]int) *MissingTable {
	t := &MissingTable{}
	var idx []int // positions of the columns the table shows (subset columns are not data of the fits)
	for i, c := range cols {
		if c.role == roleSubset {
			continue
		}
		idx = append(idx, i)
		t.Columns = append(t.Columns, c.name)
	}
	t.ByColumn = make([]int, len(idx))
	keys := make([]string, 0, len(patterns))
	for k := range patterns {
		keys = append(keys, k)
	}
	slices.SortFunc(keys, func(a, b string) int {
		if patterns[a] != patterns[b] {
			return patterns[b] - patterns[a]
		}
		return strings.Compare(a, b)
	})
	for _, k := range keys {
		mp := MissingPattern{Rows: patterns[k], Missing: make([]bool, len(idx))}
		for j, i := range idx {
			if k[i] == 'x' {
				mp.Missing[j] = true
				t.ByColumn[j] += patterns[k]
			}
		}
		t.Patterns = append(t.Patterns, mp)
	}
	return t
}
