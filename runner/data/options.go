package data

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// Options says which columns of the file to use and how.
type Options struct {
	Outcome string `json:"outcome"` // outcome column (required)
	// Categories gives the category order as labels, lowest first. If empty,
	// the outcome must hold integer codes and the categories are the distinct
	// codes observed, sorted numerically, labelled by their decimal text.
	Categories []string `json:"categories"`
	// Codes, when Categories is empty, are the outcome's integer codes in
	// category order (each labelled by its decimal text), as the whole of
	// data held in parts has them: a part is then coded as the whole even
	// when it lacks a category, and a code is read as a number (+2 and 02
	// are 2). A code not listed is an error naming its row. Empty: the
	// codes seen.
	Codes      []int64  `json:"codes"`
	Predictors []string `json:"predictors"` // predictor columns, in the order wanted
	// PredictorLevels declares categorical predictor columns: the cell
	// text must be one of the listed levels and is stored in X as the
	// level's index (0-based). A level no kept row has is listed in
	// Dataset.UnobservedLevels.
	PredictorLevels map[string][]string `json:"predictor_levels"`
	// Keep lists conditions a row must meet to be used; the others are
	// dropped and counted, like rows with missing values.
	Keep    []Condition `json:"keep"`
	Weights string      `json:"weights"` // optional column of positive weights ("" = none)
	Offset  string      `json:"offset"`  // optional numeric offset column
	Cluster string      `json:"cluster"` // optional cluster id column (kept as strings)
	// Refuse makes a missing value in a used column an error instead of a
	// reason to drop the row.
	Refuse bool `json:"refuse"`
	// KeepIncomplete keeps rows whose missing values are all in the
	// outcome or predictor columns, for imputation: a missing predictor is
	// NaN in X, a missing outcome -1 in Y (Dataset.Incomplete counts such
	// rows). Rows missing a weight, offset, cluster or a column a subset
	// condition reads are dropped as usual.
	KeepIncomplete bool `json:"keep_incomplete"`
	// MissingTokens are the cell values (after trimming spaces) that mean
	// missing; nil means DefaultMissing.
	MissingTokens []string `json:"missing_tokens"`
	// ColumnMissing gives columns their own missing-value codes (such as
	// "-9" in one column only), besides MissingTokens.
	ColumnMissing map[string][]string `json:"column_missing"`
	// Dialect is the file's delimiter and decimal mark (zero: comma, point).
	Dialect Dialect `json:"dialect"`
	// Part says the file is one part of data read part by part, each part
	// alone (a partitioned run): the values of one_of and none_of
	// conditions are not judged on the part, which may lack values the
	// other parts hold, but kept in Dataset.ListSeen, to be judged once
	// over all parts (CheckListValues), as for the data in one file.
	Part bool `json:"-"`
	// Sampling says the weights are sampling weights, whose scale is
	// arbitrary: the reader rescales them to sum to the rows kept
	// (sampling.go), so that nothing read from them depends on their
	// scale. A part read alone (Part) is rescaled as the whole data are,
	// by WholeWeights.
	Sampling bool `json:"sampling,omitempty"`
	// WholeWeights are the rows kept and the weights' sum of the whole
	// data, for a part read alone under Sampling (PartsSummary.Weights).
	WholeWeights *WeightTotal `json:"whole_weights,omitempty"`
	// Unscaled reads sampling weights as the file gives them, not
	// rescaled: a part summed before the whole data's total is known
	// (runner/queue's wholeFiles). They are still sampling weights, so
	// whole numbers are not asked of them (wholeCounts).
	Unscaled bool `json:"-"`
	// Entries are the plan's entries that read each predictor column
	// (predictors[i], with their places), which a refusal counting the
	// rows used names when the column's missing values dropped rows
	// (Dataset.FewRowsSentence); nil outside a plan.
	Entries map[string][]Entry `json:"-"`
	// OnlyLevels, when set, reads only the rows whose cell of each
	// categorical predictor column named is the given level, or of the
	// outcome its declared category (LevelDrops): the other rows are
	// counted as read and nothing more.
	OnlyLevels []LevelRef `json:"-"`
}

// Entry is a plan entry that reads a column: its key (predictors[1]) and
// where the plan writes it (PLAN:6:17, or "").
type Entry struct{ Key, Where string }

// DefaultMissing are the missing-value tokens used when
// Options.MissingTokens is nil.
var DefaultMissing = []string{"", "NA", "NaN", "."}

// MarkerKeys name, for a message, what sets the missing-value markers of
// a column: Markers the list read for every column (data.missing_values;
// "" when it cannot be set, as in ordplan fit, whose markers are
// DefaultMissing), Own the column's own codes (dictionary.COLUMN.missing,
// --missing-codes).
type MarkerKeys struct{ Markers, Own string }

// MarkerClash says why a declared outcome category or level v of a
// column can never be read, "" when it can: v is one of the
// missing-value markers in force (markers: the list for every column, nil
// for DefaultMissing; own: the column's own codes), so every cell v is
// read as missing (missingIn looks at the markers before the levels),
// never as v. The text follows the value's name in a message and ends
// with the way out. The one place that decides it: plans (plan check) and
// the flags of ordplan fit (runner.ResolveFit) ask it.
func MarkerClash(v string, markers, own []string, k MarkerKeys) string {
	v = strings.TrimSpace(v)
	for _, m := range own {
		if strings.TrimSpace(m) == v {
			return fmt.Sprintf("is also one of the column's own missing-value codes (%s): every cell %s is read as missing, never as this value; remove it from %s, or recode the value in the data", k.Own, quoteCell(v), k.Own)
		}
	}
	given := markers != nil
	if !given {
		markers = DefaultMissing
	}
	if !slices.ContainsFunc(markers, func(m string) bool { return strings.TrimSpace(m) == v }) {
		return ""
	}
	q := make([]string, 0, len(markers))
	keep := []string{}
	for _, m := range markers {
		q = append(q, strconv.Quote(m))
		if strings.TrimSpace(m) != v {
			keep = append(keep, strconv.Quote(m))
		}
	}
	list := "[" + strings.Join(keep, ", ") + "]"
	switch {
	case k.Markers == "":
		return fmt.Sprintf("is also one of the missing-value markers %s of ordplan fit, which cannot change them: every cell %s is read as missing, never as this value; run a plan (ordplan init writes one) whose data.missing_values lists the markers the data use without %s, such as %s, or recode the value in the data", strings.Join(q, ", "), quoteCell(v), quoteCell(v), list)
	case given:
		return fmt.Sprintf("is also a missing-value marker in %s: every cell %s is read as missing, never as this value; remove it from %s (%s), or recode the value in the data", k.Markers, quoteCell(v), k.Markers, list)
	}
	return fmt.Sprintf("is also one of the default missing-value markers %s, in force while %s is not set: every cell %s is read as missing, never as this value; set %s to the markers the data use, without %s, such as %s, or recode the value in the data", strings.Join(q, ", "), k.Markers, quoteCell(v), k.Markers, quoteCell(v), list)
}

// MarkerValues gives the values of a subset condition that are
// missing-value markers in force (markers: the list for every column, nil
// for DefaultMissing; own: the column's own codes), each with the marker
// it is, for MarkerClash: a text of one_of or none_of that is a marker,
// or the number of equal_to or not_equal_to that a marker is as a number
// in the dialect d (the reader reads a column a subset compares with a
// number so: readNumbers, a marker -9 marks -9.0 too). Every cell such a
// value would meet is read as missing, and a condition does not judge a
// missing cell (outsideSubset), so the value never meets a row.
func (c Condition) MarkerValues(markers, own []string, d Dialect) (values, marks []string) {
	if markers == nil {
		markers = DefaultMissing
	}
	all := slices.Concat(own, markers)
	switch c.Op {
	case "in", "not_in":
		for _, v := range c.Values {
			if i := slices.IndexFunc(all, func(m string) bool { return strings.TrimSpace(m) == strings.TrimSpace(v) }); i >= 0 {
				values, marks = append(values, v), append(marks, all[i])
			}
		}
	case "==", "!=":
		for _, m := range all {
			t := strings.TrimSpace(m)
			if _, b := boolWord(t); b || t == "" {
				continue
			}
			if v, ok := codeNumber(t, d); ok && v == c.Number {
				return []string{strconv.FormatFloat(c.Number, 'g', -1, 64)}, []string{m}
			}
		}
	}
	return values, marks
}

// role is what a used column is for.
type role int

const (
	roleOutcome role = iota
	rolePredictor
	roleWeights
	roleOffset
	roleCluster
	roleSubset
)

func (r role) String() string {
	return [...]string{"outcome", "predictor", "weights", "offset", "cluster", "subset"}[r]
}

// usedCol is a column the options ask for, with its place in the header.
type usedCol struct {
	name  string
	role  role
	pos   int // position among the predictors (predictors only)
	index int // field index in the file
	// cond: a subset condition reads the column (whatever its role), so
	// that a row missing it cannot be placed in or out of the subset: it
	// is a row with a missing value there, which imputation does not fill.
	cond bool
}

// plan lists the used columns in Options order: outcome, predictors,
// weights, offset, cluster, then the columns only the subset reads.
func (o *Options) plan() ([]usedCol, error) {
	if strings.TrimSpace(o.Outcome) == "" {
		return nil, fmt.Errorf("no outcome column given")
	}
	cols := []usedCol{{name: o.Outcome, role: roleOutcome}}
	for i, p := range o.Predictors {
		if strings.TrimSpace(p) == "" {
			return nil, fmt.Errorf("predictor %d has an empty column name", i+1)
		}
		cols = append(cols, usedCol{name: p, role: rolePredictor, pos: i})
	}
	for _, c := range []struct {
		name string
		r    role
	}{{o.Weights, roleWeights}, {o.Offset, roleOffset}, {o.Cluster, roleCluster}} {
		if c.name != "" {
			cols = append(cols, usedCol{name: c.name, role: c.r})
		}
	}
	seen := map[string]role{}
	for _, c := range cols {
		seen[c.name] = c.role
	}
	for i, k := range o.Keep {
		if _, used := seen[k.Column]; !used {
			cols = append(cols, usedCol{name: k.Column, role: roleSubset, pos: i})
			seen[k.Column] = roleSubset
		}
	}
	seen = map[string]role{}
	for _, c := range cols {
		if r, ok := seen[c.name]; ok {
			if r == c.role {
				return nil, fmt.Errorf("column %q is given twice as %s", c.name, r)
			}
			return nil, fmt.Errorf("column %q is given both as %s and as %s", c.name, r, c.role)
		}
		seen[c.name] = c.role
	}
	for i := range cols {
		cols[i].cond = slices.ContainsFunc(o.Keep, func(k Condition) bool { return k.Column == cols[i].name })
	}
	if err := checkCategories(o.Categories); err != nil {
		return nil, err
	}
	return cols, nil
}

func checkCategories(cats []string) error {
	if len(cats) == 0 {
		return nil
	}
	if len(cats) < 2 {
		hint := ""
		if sep := strings.IndexAny(cats[0], "/;|"); sep >= 0 {
			// The separator of a level list in --predictors (levels=a/b/c).
			hint = fmt.Sprintf(": categories are separated by commas (ordplan fit --categories %s), not by %q", strings.NewReplacer("/", ",", ";", ",", "|", ",").Replace(cats[0]), string(cats[0][sep]))
		}
		return fmt.Errorf("only one outcome category declared (%s); at least two are needed%s", quoteList(cats), hint)
	}
	seen := map[string]bool{}
	for i, l := range cats {
		if strings.TrimSpace(l) != l || l == "" {
			return fmt.Errorf("outcome category %d (%s) is empty or has surrounding spaces", i+1, quoteCell(l))
		}
		if seen[l] {
			return fmt.Errorf("outcome category %s is declared twice", quoteCell(l))
		}
		seen[l] = true
	}
	return nil
}

// missingSet returns the set of missing-value tokens, trimmed.
func (o *Options) missingSet() map[string]bool {
	toks := o.MissingTokens
	if toks == nil {
		toks = DefaultMissing
	}
	m := make(map[string]bool, len(toks))
	for _, t := range toks {
		m[strings.TrimSpace(t)] = true
	}
	return m
}

// missingIn reports whether a trimmed cell of column col is missing: it
// is one of the markers, or, in a column read as numbers, its number is
// one of the markers that are numbers (missingNumber).
func (r *reader) missingIn(col, cell string) bool {
	if r.missingText(col, cell) {
		return true
	}
	if r.numCodes[col] == nil {
		return false
	}
	v, msg := r.opt.Dialect.number(cell)
	return msg == "" && r.missingNumber(col, v)
}

// missingText reports whether a trimmed cell of column col is one of the
// missing-value markers as written.
func (r *reader) missingText(col, cell string) bool {
	if r.missing[cell] {
		return true
	}
	for _, t := range r.opt.ColumnMissing[col] {
		if strings.TrimSpace(t) == cell {
			return true
		}
	}
	return false
}

// missingNumber reports whether v, a number of column col, is one of the
// column's missing-value markers that are numbers: a code such as -99
// marks a missing value however a file writes it (-99.0, -99.00, as a
// spreadsheet's export of a column shown with decimals writes it), not
// only as written in the plan.
func (r *reader) missingNumber(col string, v float64) bool {
	for _, c := range r.numCodes[col] {
		if c == v {
			return true
		}
	}
	return false
}

// readNumbers notes the columns read as numbers, for missingIn: those of
// their missing-value markers (data.missing_values and their own) that
// are numbers in the dialect. Called before the rows are read, on any
// worker.
func (r *reader) readNumbers(cols ...string) {
	for _, col := range cols {
		var codes []float64
		add := func(tok string) {
			tok = strings.TrimSpace(tok)
			if _, b := boolWord(tok); b {
				return // a marker TRUE marks the text, not every 1
			}
			if v, ok := codeNumber(tok, r.opt.Dialect); ok && !slices.Contains(codes, v) {
				codes = append(codes, v)
			}
		}
		for tok := range r.missing {
			add(tok)
		}
		for _, tok := range r.opt.ColumnMissing[col] {
			add(tok)
		}
		if codes != nil {
			if r.numCodes == nil {
				r.numCodes = map[string][]float64{}
			}
			r.numCodes[col] = codes
		}
	}
}

// codeNumber is the number a missing-value code is, if it is one: as the
// data file writes numbers (dialect d), or as a plan does, with a
// decimal point (-99.0 in a plan for a decimal-comma file, as a subset's
// threshold is written).
func codeNumber(tok string, d Dialect) (float64, bool) {
	if v, msg := d.number(tok); msg == "" {
		return v, true
	}
	if d.DecimalComma && !strings.ContainsRune(tok, ',') {
		if v, msg := parseNumber(tok); msg == "" {
			return v, true
		}
	}
	return 0, false
}

// comparedAsNumbers reports whether a subset condition compares column
// col with a number: its cells are then read as numbers, and a missing
// code that is a number marks that number however it is written (-9.0).
func (r *reader) comparedAsNumbers(col string) bool {
	return slices.ContainsFunc(r.opt.Keep, func(k Condition) bool { return k.Column == col && k.numeric() })
}

// CodedAs returns o set to read the outcome as the whole of data held in
// parts has it (its category labels, lowest first), so that a part that
// lacks a category is coded as the whole: o's own categories or codes when
// it has them, else the whole's labels as integer codes when each is the
// decimal text of one, else the labels. An error when o then names
// another number of categories.
func (o Options) CodedAs(whole []string) (Options, error) {
	if len(o.Categories) == 0 && len(o.Codes) == 0 {
		// Integer codes: every part reads them as the whole data's codes,
		// as numbers (a code written +2 or 02 is the category 2).
		for _, l := range whole {
			c, err := strconv.ParseInt(l, 10, 64)
			if err != nil || strconv.FormatInt(c, 10) != l {
				o.Codes = nil
				break
			}
			o.Codes = append(o.Codes, c)
		}
		if len(o.Codes) == 0 {
			o.Categories = whole
		}
	}
	if max(len(o.Categories), len(o.Codes)) != len(whole) {
		return o, fmt.Errorf("the data options need the %d category labels of the whole data, in order", len(whole))
	}
	return o, nil
}
