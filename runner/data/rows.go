package data

import (
	"fmt"
	"io"
	"maps"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode"

	"ordplan/internal/words"
)

// rows reads the data rows and builds the data set, in phases: the
// lookups the rows need, then row by row the subset conditions, the cells,
// and the keeping of a complete row (or the counting of an incomplete
// one), then the counts of dropped rows, and last the outcome's
// categories and their counts.
func (r *reader) rows() (*Dataset, error) {
	d := r.newDataset()
	t := r.newRowTally(d.K)
	for {
		rec, err := r.cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, r.csvErr(err, rec)
		}
		if blankRow(rec) {
			continue // delimiters alone: a blank line (blankRow)
		}
		d.RowsRead++
		if err := r.record(t, d, rec); err != nil {
			return nil, err
		}
	}
	return r.finish(t, d)
}

// newDataset is the data set before any row is read.
func (r *reader) newDataset() *Dataset {
	d := &Dataset{
		File:       r.file,
		Outcome:    r.opt.Outcome,
		Predictors: slices.Clone(r.opt.Predictors),
		K:          len(r.opt.Predictors),
	}
	if d.Predictors == nil {
		d.Predictors = []string{}
	}
	return d
}

// record takes one data record (already counted in d.RowsRead): the
// subset conditions, the cells, then the row is kept or counted.
func (r *reader) record(t *rowTally, d *Dataset, rec []string) error {
	if r.repeatsHeader(rec) {
		return r.headerAgain()
	}
	if r.opt.OnlyLevels != nil && !r.ofLevels(t, rec) {
		return nil
	}
	if out, err := r.outsideSubset(t, rec); err != nil {
		return err
	} else if out >= 0 {
		t.subsetDrops[out]++
		return nil
	}
	row, err := r.parseRow(t, rec)
	if err != nil {
		return err
	}
	r.settle(t, d, row)
	return nil
}

// settle keeps a parsed row, or counts it as incomplete or of zero weight.
func (r *reader) settle(t *rowTally, d *Dataset, row cells) {
	switch {
	case row.miss >= 0 && r.keepsIncomplete(t):
		t.countIncomplete(row)
		t.drops[row.miss]--
		d.Incomplete++
		if t.pat[0] == 'x' {
			row.y = -1
		}
		r.keepRow(t, d, row)
	case row.miss >= 0:
		if r.opt.KeepIncomplete {
			// Dropped for a column imputation does not fill (weights,
			// offset, cluster): counted under that column, not under
			// an imputed one it may miss before it.
			row.miss = r.unimputed(t)
		}
		t.countIncomplete(row)
	case row.w == 0:
		t.zeroWeight++
	default:
		r.keepRow(t, d, row)
	}
}

// finish counts the dropped rows, and sets the outcome's categories and
// their counts, once every row is read.
func (r *reader) finish(t *rowTally, d *Dataset) (*Dataset, error) {
	opt := &r.opt
	if err := r.countDrops(t, d); err != nil {
		return nil, err
	}
	if err := r.wholeCounts(d); err != nil {
		return nil, err
	}
	if err := r.dwarfingWeight(d); err != nil {
		return nil, err
	}
	if !opt.Part {
		d.Notes = append(d.Notes, r.pointNotes...)
		d.PointNotes = r.pointNotes
		if n := t.respelledNote(opt.Cluster); n != "" {
			d.Notes = append(d.Notes, n)
		}
	}
	if opt.Sampling && !opt.Unscaled {
		total := weightTotal(d.Weights)
		if opt.Part {
			if opt.WholeWeights == nil {
				return nil, &Error{File: r.file, Msg: errPartSampling.Error()}
			}
			total = *opt.WholeWeights
		}
		rescaleSampling(d.Weights, total)
		d.Sampling = d.Weights != nil
	}
	if d.X == nil {
		d.X = []float64{}
	}
	switch {
	case len(opt.Categories) > 0:
		d.Categories = slices.Clone(opt.Categories)
	case len(opt.Codes) > 0:
		cats, err := r.listedCodes(t.codes, d)
		if err != nil {
			return nil, err
		}
		d.Categories = cats
	default:
		d.Categories = codeCategories(t.codes, d.Y)
		if n := CodeGapNote(opt.Outcome, d.Categories); n != "" && !opt.Part {
			d.Notes = append(d.Notes, n)
			d.StrayCode = strayCode(opt.Outcome, d.Categories)
		}
	}
	tally(d)
	d.Missing.byCategory(r.cols, d, t.catMiss, t.catIncomplete)
	d.entries = opt.Entries
	if !opt.Part {
		d.MostlyMissing = mostlyMissing(r.cols, d.Missing, opt.KeepIncomplete)
		d.Notes = append(d.Notes, d.MostlyMissing...)
		if d.NothingObserved = r.nothingObserved(d); d.NothingObserved != "" {
			d.Notes = append(d.Notes, d.NothingObserved)
		}
		// After the notes, which its refusal gives when few rows remain
		// (Dataset.FewRowsSentence); parts are judged once on the whole
		// data (PartsSummary).
		if err := r.twoCategories(d); err != nil {
			return nil, err
		}
	}
	return d, nil
}

// wholeCounts refuses frequency weights that are not whole numbers. A
// frequency weight counts identical rows: the observations are the
// weights' sum and every standard error is that of so many independent
// rows, which weights such as 0.5 or 2.7 (sampling or inverse-probability
// weights read as frequency weights, the default kind) are not. The one
// place for this decision: every fit, the imputation that expands the
// rows by their weights, and every format read through here.
func (r *reader) wholeCounts(d *Dataset) error {
	if r.opt.Sampling || d.Weights == nil {
		return nil
	}
	first, count, sum := -1, 0, 0.0
	for i, w := range d.Weights {
		sum += w
		if w != math.Trunc(w) {
			if first < 0 {
				first = i
			}
			count++
		}
	}
	if first < 0 {
		return nil
	}
	others := ""
	if count > 1 {
		others = fmt.Sprintf(" (and %d more rows used)", count-1)
	}
	e := r.fail(d.Lines[first], r.opt.Weights, "frequency weight %s is not a whole number%s: a frequency weight (data.weight_kind: frequency, the default) counts identical rows, so these weights would make %s observations of the %d rows and give every standard error as if there were that many independent rows; if they are sampling or inverse-probability weights, set data.weight_kind: sampling (ordplan fit: --weight-kind sampling); if they are counts, correct them",
		strconv.FormatFloat(d.Weights[first], 'g', -1, 64), others, strconv.FormatFloat(sum, 'g', 6, 64), d.N)
	e.Key = "data.weight_kind"
	return e
}

// minRestShare is the smallest share of the total weight that the rows
// other than the heaviest must carry: the square root of float64's
// relative precision (2^-26, about 1.5e-8). Where one row weighs W and
// the others R together, a fit brings that row's category probability
// within about R/W of 1 (or its linear predictor to where it is), and
// 1 - p is held to about 1e-16 absolute: the others' share of the scores
// and the information is then known to a relative 1e-16 W/R, and below
// this share less than half of float64's digits are left for them, fewer
// than the fits' convergence needs (with one weight of 1e10 among 119
// weights of 1, the probit and adjacent-category fits no longer reach a
// maximum; with 1e9 they do, the logit fits to 1e15).
const minRestShare = 0x1p-26

// dwarfingWeight refuses a weight that dwarfs all the others together
// (minRestShare), frequency or sampling alike (the share has no scale),
// on the whole data only (a part read alone is not the data). A weight
// beyond 1e15 is refused at its cell (weightInRange); this is the one
// place for a weight within that bound but too large for the rest of the
// data. Several rows that between them dwarf the others are left to the
// fits' own checks (collinearity in the weighted design, separation).
func (r *reader) dwarfingWeight(d *Dataset) error {
	if r.opt.Part || d.Weights == nil || len(d.Weights) < 2 {
		return nil
	}
	top := 0
	for i, w := range d.Weights {
		if w > d.Weights[top] {
			top = i
		}
	}
	rest := 0.0
	for i, w := range d.Weights {
		if i != top {
			rest += w
		}
	}
	w := d.Weights[top]
	if rest >= minRestShare*(w+rest) {
		return nil
	}
	others := fmt.Sprintf("the other %d rows used weigh %s together", len(d.Weights)-1, strconv.FormatFloat(rest, 'g', 6, 64))
	if len(d.Weights) == 2 {
		others = "the other row used weighs " + strconv.FormatFloat(rest, 'g', 6, 64)
	}
	return r.fail(d.Lines[top], r.opt.Weights, "weight %s dwarfs the others: %s, %s of the total, below the 1.5e-8 (the square root of float64's precision) a fit needs to tell their part from the rounding of this row's, so any fit of these data would be numerically meaningless (and in effect a fit of this one row); check the column (a misplaced decimal mark, a total or a population size in place of a weight)",
		strconv.FormatFloat(w, 'g', -1, 64), others, strconv.FormatFloat(rest/(w+rest), 'g', 2, 64))
}

// rowTally holds what reading the rows needs and counts: lookups built
// once, the tallies of dropped rows, and the current row's scratch.
type rowTally struct {
	labels        map[string]int            // declared outcome label -> category
	condCol       []int                     // used column of each subset condition
	levelIndex    map[string]map[string]int // categorical predictor -> level -> index
	levelSeen     map[string][]float64      // categorical predictor -> weight seen per level
	codes         []int64                   // outcome codes of kept rows, when no labels are declared
	drops         []int                     // rows dropped for a missing value, by first missing column
	subsetDrops   []int                     // rows outside the subset, by first failed condition
	zeroWeight    int                       // rows with frequency weight 0 stand for no observation
	patterns      map[string]int            // which used columns a row misses: 'x' missing, '.' present
	catMiss       map[string][]int          // per outcome value of an incomplete row: rows missing each used column
	catIncomplete map[string]int            // per outcome value: incomplete rows
	pat           []byte                    // the current row's pattern
	xs            []float64                 // the current row's predictor values
	clusters      map[string]string         // one copy of each cluster id kept
	spelled       map[string]string         // cluster id -> its first spelling in the file, when that is not the id
	respelled     map[string]string         // other spellings of a cluster id written as a number (7.0 beside 7) -> the id
	listSeen      ListValues                // per one_of/none_of condition: the values its column holds (nil: other conditions)
}

// cells is one parsed row.
type cells struct {
	miss     int // first used column with a missing value (-1: none)
	y        int
	code     int64
	outLabel string // the outcome value, when present
	w        float64
	off      float64
	cl       string
}

func (r *reader) newRowTally(K int) *rowTally {
	opt := &r.opt
	t := &rowTally{
		labels:        map[string]int{},
		condCol:       make([]int, len(opt.Keep)),
		levelIndex:    map[string]map[string]int{},
		levelSeen:     map[string][]float64{},
		drops:         make([]int, len(r.cols)),
		subsetDrops:   make([]int, len(opt.Keep)),
		patterns:      map[string]int{},
		catMiss:       map[string][]int{},
		catIncomplete: map[string]int{},
		pat:           make([]byte, len(r.cols)),
		xs:            make([]float64, K),
		clusters:      map[string]string{},
		spelled:       map[string]string{},
		respelled:     map[string]string{},
	}
	for i, l := range opt.Categories {
		t.labels[l] = i
	}
	spellingsOf(opt.Categories, t.labels)
	t.listSeen = make(ListValues, len(opt.Keep))
	for i, k := range opt.Keep {
		t.condCol[i] = slices.IndexFunc(r.cols, func(c usedCol) bool { return c.name == k.Column })
		if k.Op == "in" || k.Op == "not_in" {
			t.listSeen[i] = map[string]bool{}
		}
	}
	for col, lv := range opt.PredictorLevels {
		t.levelIndex[col] = map[string]int{}
		for i, l := range lv {
			t.levelIndex[col][l] = i
		}
		spellingsOf(lv, t.levelIndex[col])
		t.levelSeen[col] = make([]float64, len(lv))
	}
	return t
}

// outsideSubset returns the first subset condition the row fails (-1: it
// fails none). A condition whose column the row misses is not judged: the
// row is outside the subset only when another condition excludes it;
// otherwise it is a row with a missing value in that column (parseRow
// marks it, countIncomplete counts it), whose place in the subset is
// unknown.
func (r *reader) outsideSubset(t *rowTally, rec []string) (int, error) {
	for i, seen := range t.listSeen {
		if seen != nil && len(seen) < maxListValues {
			if v := textKey(strings.TrimSpace(rec[r.cols[t.condCol[i]].index])); !seen[v] {
				seen[strings.Clone(v)] = true
			}
		}
	}
	for i, k := range r.opt.Keep {
		c := r.cols[t.condCol[i]]
		cell := strings.TrimSpace(rec[c.index])
		if r.missingIn(c.name, cell) {
			continue
		}
		ok, msg := k.keeps(cell, r.opt.Dialect)
		if msg != "" {
			line, _ := r.cr.FieldPos(c.index)
			return -1, r.fail(line, c.name, "%s", msg)
		}
		if !ok {
			return i, nil
		}
	}
	return -1, nil
}

// ofLevels reports whether a record's cells of the columns of
// Options.OnlyLevels are their levels (ofLevel).
func (r *reader) ofLevels(t *rowTally, rec []string) bool {
	for _, lr := range r.opt.OnlyLevels {
		if !r.ofLevel(t, rec, lr) {
			return false
		}
	}
	return true
}

// ofLevel reports whether a record's cell of column lr.Column is level
// lr.Level (as parseRow reads a level), or, for the outcome column, its
// declared category.
func (r *reader) ofLevel(t *rowTally, rec []string, lr LevelRef) bool {
	for _, c := range r.cols {
		if c.name != lr.Column || c.role != rolePredictor && c.role != roleOutcome {
			continue
		}
		cell := strings.TrimSpace(rec[c.index])
		if r.missingIn(c.name, cell) {
			return false
		}
		if c.role == roleOutcome {
			i, ok := declaredCategory(t.labels, cell, r.opt.Dialect.mark())
			return len(r.opt.Categories) > 0 && ok && i == slices.Index(r.opt.Categories, lr.Level)
		}
		idx, cat := t.levelIndex[c.name]
		if !cat {
			return false
		}
		l, ok := lookupText(idx, cell)
		return ok && l == slices.Index(r.opt.PredictorLevels[c.name], lr.Level)
	}
	return false
}

// parseRow reads the used cells of a row: the outcome, the predictors
// (into t.xs), the weight, offset and cluster; it marks missing cells in
// t.pat. A cell that is neither missing nor valid is an error naming its
// line and column.
func (r *reader) parseRow(t *rowTally, rec []string) (cells, error) {
	opt := &r.opt
	for i := range t.pat {
		t.pat[i] = '.'
	}
	row := cells{miss: -1, w: 1}
	for ci, c := range r.cols {
		cell := strings.TrimSpace(rec[c.index])
		line, _ := r.cr.FieldPos(c.index)
		ref := cellName(r.cr, c.index)
		if r.missingIn(c.name, cell) {
			if opt.Refuse {
				undecided := ""
				if c.cond {
					undecided = "; the subset's condition on this column cannot be judged"
				}
				e := r.fail(line, c.name, "missing value (%s) where missing values are refused%s", describeMissing(cell), undecided)
				e.Key = "data.missing"
				return row, e
			}
			if row.miss < 0 {
				row.miss = ci
			}
			t.pat[ci] = 'x'
			if c.role == rolePredictor {
				t.xs[c.pos] = math.NaN()
			}
			continue
		}
		if c.role == roleSubset {
			continue // judged by outsideSubset
		}
		var msg string
		switch c.role {
		case roleOutcome:
			if len(opt.Categories) > 0 {
				i, ok := declaredCategory(t.labels, cell, opt.Dialect.mark())
				if !ok {
					msg = "value " + quoteCell(cell) + " is not one of the declared categories: " + quoteList(opt.Categories) + r.outcomeHint(c.name, cell, ref)
				}
				row.y = i
				row.outLabel = cell
				if ok {
					row.outLabel = opt.Categories[i] // as declared: a boolean word in any spelling
				}
			} else {
				if row.code, msg = parseCode(cell, opt.Dialect.mark()); msg != "" {
					msg += r.outcomeHint(c.name, cell, ref)
				}
				row.outLabel = strconv.FormatInt(row.code, 10)
			}
		case rolePredictor:
			if idx, cat := t.levelIndex[c.name]; cat {
				l, ok := lookupText(idx, cell)
				if !ok {
					hint := formulaHint(cell, ref)
					if hint == "" {
						hint = r.markLevelHint(cell, opt.PredictorLevels[c.name])
					}
					if hint == "" {
						hint = levelHint(cell, opt.PredictorLevels[c.name], "level", "write the levels as the data do")
					}
					if hint == "" {
						hint = r.missingWordHint(c.name, cell)
					}
					if hint == "" {
						hint = " (add it to the levels, or list it among the missing-value markers)"
					}
					msg = "value " + quoteCell(cell) + " is not one of the declared levels of this categorical predictor: " + quoteList(opt.PredictorLevels[c.name]) + hint
				}
				t.xs[c.pos] = float64(l)
			} else {
				t.xs[c.pos], msg = r.opt.Dialect.number(cell)
				msg += r.notNumberHint(c.name, cell, msg, ref)
			}
		case roleWeights:
			row.w, msg = r.opt.Dialect.number(cell)
			switch {
			case msg == "" && row.w < 0:
				msg = "weight " + quoteCell(cell) + " is negative (weights must be zero or more; a row of weight 0 is dropped)"
			case msg == "" && !weightInRange(row.w):
				msg = fmt.Sprintf("weight %s is larger than 1e15: a weight counts the observations a row stands for (or their share of a population), and sums of such weights lose the digits of the likelihood and its errors; check the column, or divide it by a power of ten", quoteCell(cell))
			case strings.HasSuffix(msg, " is not a number"):
				msg += lookalikeHint(cell, r.opt.Dialect) + r.missingWordHint(c.name, cell)
			}
		case roleOffset:
			row.off, msg = r.opt.Dialect.number(cell)
			switch {
			case msg == "" && !offsetInRange(row.off):
				msg = fmt.Sprintf("offset %s is beyond ±1e8: an offset is added to the linear predictor as it is (its coefficient is 1), where a probability is already 0 or 1 from about ±40 on, and such a value leaves the model's own terms no digits; give the offset on the scale of the linear predictor (the log of an exposure, not the exposure)", quoteCell(cell))
			case strings.HasSuffix(msg, " is not a number"):
				msg += lookalikeHint(cell, r.opt.Dialect) + r.missingWordHint(c.name, cell)
			}
		case roleCluster:
			row.cl = cell
		}
		if msg != "" {
			return row, r.fail(line, c.name, "%s", msg)
		}
	}
	return row, nil
}

// notNumberHint is what follows msg, the message for a predictor's cell
// of column col that is not a number, to say what the cell is: a date or
// a time, a word that marks a missing value, a spreadsheet's formula,
// merged cell or error value, or text; "" for a malformed number, whose
// message says enough, and for any other message. ref is the cell's
// reference in a workbook (formulaHint).
func (r *reader) notNumberHint(col, cell, msg, ref string) string {
	if !strings.HasSuffix(msg, " is not a number") {
		return ""
	}
	switch {
	case lookalikeHint(cell, r.opt.Dialect) != "":
		return lookalikeHint(cell, r.opt.Dialect)
	case timeHint(cell) != "":
		return timeHint(cell)
	case r.missingWordHint(col, cell) != "":
		return r.missingWordHint(col, cell)
	case isNumberLike(cell) && strings.HasSuffix(cell, "%"):
		return "; it is a percentage: write it as a number without the percent sign (50, or 0.5 as a share)"
	case groupedHint(cell, r.opt.Dialect) != "":
		return groupedHint(cell, r.opt.Dialect)
	case isNumberLike(cell):
		return ""
	case formulaHint(cell, ref) != "":
		return formulaHint(cell, ref)
	}
	return "; the column holds text: declare it categorical with its levels to use it as a predictor (in a plan under categorical:, in ordplan fit as COLUMN|levels=a/b/c)"
}

// currencySigns are the signs of money a spreadsheet writes before or
// after an amount.
const currencySigns = "$€£¥₹₽₩₺"

// digitGroupers are the characters that separate groups of three digits
// in the numbers some locales write: spaces (the no-break and the narrow
// no-break space among them) and the apostrophe.
var digitGroupers = []string{" ", "\u00a0", "\u202f", "\u2009", "'", "\u2019"}

// groupedHint says, of a cell that is not a number but would be one
// without a currency sign ($12.50, 12,50 €) or without the spaces or
// apostrophes that group its digits in threes (1 234,5, 1'234.5), what it
// holds and what to write; "" otherwise.
func groupedHint(cell string, d Dialect) string {
	if t := strings.TrimSpace(strings.Trim(cell, currencySigns+" \u00a0")); t != cell && t != "" && strings.ContainsAny(cell, currencySigns) {
		if _, msg := d.number(t); msg == "" {
			return "; it holds a currency sign: write the amount as a number without it, such as " + t + " (the currency in the column's name or the data dictionary's unit)"
		}
	}
	for _, g := range digitGroupers {
		if !strings.Contains(cell, g) {
			continue
		}
		parts := strings.Split(cell, g)
		whole := true
		for _, p := range parts[1:] {
			if len(p) < 3 || p[0] < '0' || p[0] > '9' || p[1] < '0' || p[1] > '9' || p[2] < '0' || p[2] > '9' || len(p) > 3 && p[3] >= '0' && p[3] <= '9' {
				whole = false
			}
		}
		joined := strings.Join(parts, "")
		if _, msg := d.number(joined); whole && msg == "" {
			return fmt.Sprintf("; it separates groups of digits with %s: write the number without them, such as %s", groupName(g), joined)
		}
	}
	return ""
}

// groupName names a character that groups digits (digitGroupers).
func groupName(g string) string {
	switch g {
	case " ":
		return "spaces"
	case "'", "\u2019":
		return "apostrophes"
	}
	return fmt.Sprintf("the character U+%04X (a space)", []rune(g)[0])
}

// lookalikes are characters that look like the minus sign a number is
// written with, the ASCII hyphen-minus, and are not it (a word processor's
// or a typeset table's minus and dashes).
var lookalikes = map[rune]string{
	'\u2212': "MINUS SIGN", '\u2012': "FIGURE DASH", '\u2013': "EN DASH", '\u2014': "EM DASH",
	'\u2010': "HYPHEN", '\u2011': "NON-BREAKING HYPHEN", '\ufe63': "SMALL HYPHEN-MINUS", '\uff0d': "FULLWIDTH HYPHEN-MINUS",
}

// lookalikeHint says, of a cell that is not a number but would be one
// with the ASCII hyphen-minus in place of a character that looks like it
// (−1.5 written with U+2212), which character it holds and what to write;
// "" otherwise.
func lookalikeHint(cell string, d Dialect) string {
	fixed, found := minusLookalikes(cell)
	if len(found) == 0 {
		return ""
	}
	if _, msg := d.number(fixed); msg != "" {
		return ""
	}
	return fmt.Sprintf("; it holds the character %s where a number has the ASCII hyphen-minus \"-\": write it %s (a word processor or a typeset table may have replaced the sign)", strings.Join(found, " and "), fixed)
}

// minusLookalikes gives s with the ASCII hyphen-minus in place of each
// character that looks like it (lookalikes), and those characters named.
func minusLookalikes(s string) (string, []string) {
	var found []string
	fixed := strings.Map(func(c rune) rune {
		if name, ok := lookalikes[c]; ok {
			if q := fmt.Sprintf("U+%04X (%s)", c, name); !slices.Contains(found, q) {
				found = append(found, q)
			}
			return '-'
		}
		return c
	}, s)
	return fixed, found
}

// MissingCodeHint says, of a missing-value code that would be a number
// but for a character that looks like the minus sign (−99 copied from a
// typeset codebook), that it marks no cell the data write with the ASCII
// minus, and what to write; "" for any other code. Such a code would
// leave every -99 read as a value.
func MissingCodeHint(code string) string {
	fixed, found := minusLookalikes(strings.TrimSpace(code))
	if len(found) == 0 {
		return ""
	}
	if _, msg := parseNumber(strings.Replace(fixed, ",", ".", 1)); msg != "" {
		return ""
	}
	return fmt.Sprintf(": it holds the character %s where a number has the ASCII hyphen-minus \"-\", so it would mark no cell written %s as missing, and those cells would be read as the value %s: write %s", strings.Join(found, " and "), fixed, fixed, fixed)
}

// PlanNumberHint is what follows a plan's message for a text where a
// number is wanted (a subset's threshold, a range, a knot; also a number
// of ordplan fit's --predictors), when the
// text would be a number but for a character that looks like the minus
// sign (−1.5) or a decimal comma (0,5, as a decimal-comma data file
// writes it): which, and the number to write, since a plan writes its
// numbers with the ASCII minus and a decimal point whatever data.decimal
// says; "" otherwise.
func PlanNumberHint(s string) string {
	fixed, found := minusLookalikes(strings.TrimSpace(s))
	var why []string
	if len(found) > 0 {
		why = append(why, fmt.Sprintf("it holds the character %s where a number has the ASCII hyphen-minus \"-\"", strings.Join(found, " and ")))
	}
	or := ""
	if i := strings.IndexByte(fixed, ','); i >= 0 && strings.Count(fixed, ",") == 1 && !strings.ContainsRune(fixed, '.') {
		if thousands(fixed[:i], fixed[i+1:]) {
			or = " (or " + fixed[:i] + fixed[i+1:] + " if the comma separates thousands)"
		}
		fixed = fixed[:i] + "." + fixed[i+1:]
		why = append(why, "it has a decimal comma, and a plan writes numbers with a decimal point whatever the data's decimal mark (data.decimal)")
	}
	if len(why) == 0 {
		return ""
	}
	if _, msg := parseNumber(fixed); msg != "" {
		return ""
	}
	return "; " + strings.Join(why, ", and ") + ": write " + fixed + or
}

// outcomeHint is what follows the message for an outcome cell of column
// col that is no declared category or no integer code: a spreadsheet's
// formula or error value, a word that marks a missing value, or a
// declared category written otherwise; "" when it is none of these. ref
// is the cell's reference in a workbook (formulaHint).
func (r *reader) outcomeHint(col, cell, ref string) string {
	if h := formulaHint(cell, ref); h != "" {
		return h
	}
	if h := r.missingWordHint(col, cell); h != "" {
		return h
	}
	if len(r.opt.Categories) > 0 {
		if h := levelHint(cell, r.opt.Categories, "category", "write the categories as the data do"); h != "" {
			return h
		}
		return " (add it to the categories, or list it among the missing-value markers)"
	}
	return ""
}

// missingWords are, in lower case, the words data commonly write for a
// missing value (besides the default markers, DefaultMissing).
var missingWords = map[string]bool{
	"na": true, "n/a": true, "n.a.": true, "n.a": true, "nan": true,
	"null": true, "(null)": true, "none": true, "nil": true, "missing": true,
	"unknown": true, "not available": true, "not applicable": true,
	"-": true, "--": true, "?": true, ".": true,
}

// looksMissing reports whether a cell is a word that commonly marks a
// missing value (missingWords, in any case, or a statistics package's
// extended missing values .a to .z), or empty (read as text only when
// data.missing_values, which replaces the default markers, leaves "" out).
func looksMissing(cell string) bool {
	if cell == "" {
		return true
	}
	if len(cell) == 2 && cell[0] == '.' && (cell[1]|0x20) >= 'a' && (cell[1]|0x20) <= 'z' {
		return true
	}
	return len(cell) <= 16 && missingWords[strings.ToLower(cell)]
}

// missingWordHint says, of a cell of column col that looks like a
// missing-value marker (looksMissing) and is none of the markers in force,
// how to have it read as missing; "" for any other cell.
func (r *reader) missingWordHint(col, cell string) string {
	if !looksMissing(cell) {
		return ""
	}
	toks := r.opt.MissingTokens
	if toks == nil {
		toks = DefaultMissing
	}
	q := make([]string, 0, len(toks)+1)
	for _, m := range append(slices.Clone(toks), cell) {
		q = append(q, strconv.Quote(m))
	}
	fit := " (ordplan fit: --missing-codes " + col + "=" + cell + ")"
	switch {
	case cell == "":
		fit = " (ordplan fit reads an empty cell as missing always)"
	case strings.ContainsAny(col+cell, ",/="):
		fit = " (ordplan fit cannot give this code, which holds a comma, slash or equals sign: use a plan)"
	}
	lead := "; it looks like a missing-value marker, which is not among the markers in force"
	if cell == "" {
		lead = "; an empty cell (or a Parquet file's null) is not a missing value here: data.missing_values replaces the default markers (\"\", \"NA\", \"NaN\", \".\") and leaves \"\" out"
	}
	return lead + ": to read it as missing, set data.missing_values: [" + strings.Join(q, ", ") + "] (the markers in force and it), or list it for this column alone under dictionary." + col + ".missing" + fit
}

// intern returns one copy of a cluster id for all rows that have it, so
// that kept ids do not hold on to the text they were read from.
// The largest weight and the largest offset in absolute value that are
// read (weightInRange, offsetInRange), as predictors have their range
// (fit: values beyond 1e100 are refused): a frequency weight of 1e15
// already stands for more observations than any study has, and an offset
// of 1e8 leaves the linear predictor about 1e-8 of resolution.
const (
	maxWeight = 1e15
	maxOffset = 1e8
)

// weightInRange reports whether a weight is one that is read: from 0 to
// maxWeight.
func weightInRange(w float64) bool { return w >= 0 && w <= maxWeight }

// offsetInRange reports whether an offset is one that is read: within
// maxOffset of 0.
func offsetInRange(x float64) bool { return x >= -maxOffset && x <= maxOffset }

// ClusterID is the id under which a cluster cell is counted: a cell
// written as a decimal number (in the file's decimal mark) is that
// number's shortest text, so that 7, 7.0, 07 and +7 are one cluster (as
// 2.0 is the outcome code 2) while a long id keeps all its digits (the
// text is rewritten, not read as a double); any other cell is its text.
func ClusterID(cell string, d Dialect) string {
	mark := byte('.')
	if d.DecimalComma {
		mark = ','
	}
	s, neg := strings.CutPrefix(cell, "-")
	if !neg {
		s = strings.TrimPrefix(cell, "+")
	}
	whole, frac, _ := strings.Cut(s, string(mark))
	digits := func(x string) bool { return strings.Trim(x, "0123456789") == "" }
	if whole+frac == "" || !digits(whole) || !digits(frac) {
		return cell
	}
	whole, frac = strings.TrimLeft(whole, "0"), strings.TrimRight(frac, "0")
	if whole == "" {
		whole = "0"
	}
	out := whole
	if frac != "" {
		out += "." + frac
	}
	if neg && out != "0" {
		out = "-" + out
	}
	return out
}

func (t *rowTally) intern(s string) string {
	if c, ok := t.clusters[s]; ok {
		return c
	}
	c := strings.Clone(s)
	t.clusters[c] = c
	return c
}

// keepsIncomplete reports whether the current row, which has a missing
// value, is kept for imputation: only its outcome or predictors miss.
func (r *reader) keepsIncomplete(t *rowTally) bool {
	return r.opt.KeepIncomplete && r.unimputed(t) < 0
}

// unimputed is the first used column the current row misses that
// imputation does not fill, or -1: neither the outcome nor a predictor,
// or a column a subset condition reads. The subset says which rows the
// analysis is about; a row whose membership is unknown is not imputed
// into it (imputing the column would put the row in the subset in some
// imputed sets and out of it in others, and the sets must hold the same
// rows).
func (r *reader) unimputed(t *rowTally) int {
	for ci, c := range r.cols {
		if t.pat[ci] == 'x' && (c.cond || c.role != roleOutcome && c.role != rolePredictor) {
			return ci
		}
	}
	return -1
}

// countIncomplete counts a row with a missing value: under its first
// missing column, under its pattern, and (when its outcome is present)
// under its outcome value for each column it misses.
func (t *rowTally) countIncomplete(row cells) {
	t.drops[row.miss]++
	t.patterns[string(t.pat)]++
	if t.pat[0] == 'x' {
		return
	}
	cm := t.catMiss[row.outLabel]
	if cm == nil {
		cm = make([]int, len(t.pat))
		t.catMiss[row.outLabel] = cm
	}
	for ci := range t.pat {
		if t.pat[ci] == 'x' {
			cm[ci]++
		}
	}
	t.catIncomplete[row.outLabel]++
}

// keepRow appends a complete row with a positive weight to the data set.
func (r *reader) keepRow(t *rowTally, d *Dataset, row cells) {
	line, _ := r.cr.FieldPos(0)
	d.X = append(d.X, t.xs...)
	r.keepValues(t, d, &row, line)
}

// keepValues appends all but the predictor values of a kept row, which
// end d.X, to the data set.
func (r *reader) keepValues(t *rowTally, d *Dataset, row *cells, line int) {
	opt := &r.opt
	if len(t.levelSeen) > 0 {
		xs := d.X[len(d.X)-d.K:]
		for _, c := range r.cols {
			if c.role == rolePredictor && t.levelSeen[c.name] != nil && !math.IsNaN(xs[c.pos]) {
				t.levelSeen[c.name][int(xs[c.pos])] += row.w
			}
		}
	}
	d.Lines = append(d.Lines, line)
	d.Y = append(d.Y, row.y)
	t.codes = append(t.codes, row.code)
	if opt.Weights != "" {
		d.Weights = append(d.Weights, row.w)
	}
	if opt.Offset != "" {
		d.Offset = append(d.Offset, row.off)
	}
	if opt.Cluster != "" {
		id := ClusterID(row.cl, opt.Dialect)
		t.spelling(id, row.cl)
		d.Cluster = append(d.Cluster, t.intern(id))
	}
}

// spelling notes that the cluster cell cell is counted under id: a
// second way of writing one id (7 and 7.0, 07) is remembered, so that
// the data's notes can say that such cells were counted as one cluster.
func (t *rowTally) spelling(id, cell string) {
	first, ok := t.spelled[id]
	switch {
	case !ok:
		t.spelled[strings.Clone(id)] = strings.Clone(cell)
	case first != cell:
		if _, seen := t.respelled[cell]; !seen {
			t.respelled[strings.Clone(cell)] = id
		}
	}
}

// joinSpellings adds the cluster spellings of a later chunk's tally.
func (t *rowTally) joinSpellings(c *rowTally) {
	for id, cell := range c.spelled {
		t.spelling(id, cell)
	}
	for cell, id := range c.respelled {
		t.spelling(id, cell)
	}
}

// respelledNote is the data's note on cluster ids written as one number in
// several ways ("" when there are none): the first other spelling in
// sorted order, beside its id's first spelling in the file.
func (t *rowTally) respelledNote(column string) string {
	n := len(t.respelled)
	if n == 0 {
		return ""
	}
	cell := slices.Min(slices.Collect(maps.Keys(t.respelled)))
	more := ""
	if n > 1 {
		more = fmt.Sprintf(", and %d more such spellings", n-1)
	}
	return fmt.Sprintf("Cluster column %s: ids written as one number in different ways were counted as one cluster (%s and %s%s), as outcome codes 2 and 2.0 are one category; if such ids name different clusters, write them so that they do not read as the same number (a letter before the digits, say)",
		column, strconv.Quote(t.spelled[t.respelled[cell]]), strconv.Quote(cell), more)
}

// countDrops records the rows dropped (missing values, zero weight,
// outside the subset), the missing-value patterns and the declared levels
// of categorical predictors that no kept row has; it is an error when no
// row is kept.
func (r *reader) countDrops(t *rowTally, d *Dataset) error {
	opt := &r.opt
	if d.RowsRead == 0 {
		if opt.Part {
			return r.fail(0, "", emptyPart)
		}
		return r.fail(0, "", "no data rows after the header")
	}
	d.N = len(d.Y)
	for ci, n := range t.drops {
		if n > 0 {
			d.Dropped = append(d.Dropped, DropCount{Column: r.cols[ci].name, Rows: n})
			d.RowsDropped += n
		}
	}
	d.Missing = missingPatterns(r.cols, t.patterns)
	d.RowsUndecided = r.undecided(t.patterns)
	if t.zeroWeight > 0 {
		d.Dropped = append(d.Dropped, DropCount{Column: opt.Weights + " = 0", Rows: t.zeroWeight})
		d.RowsDropped += t.zeroWeight
	}
	for i, n := range t.subsetDrops {
		if n > 0 {
			d.Dropped = append(d.Dropped, DropCount{Column: opt.Keep[i].DropColumn(), Rows: n, Subset: true})
			d.RowsDropped += n
			d.RowsOutside += n
		}
	}
	if err := r.unknownListValues(t, d); err != nil {
		return err
	}
	if err := r.noneKept(d, true); err != nil {
		return err
	}
	for _, col := range opt.Predictors {
		if seen := t.levelSeen[col]; seen != nil {
			for l, c := range seen {
				if c == 0 {
					d.UnobservedLevels = append(d.UnobservedLevels, LevelRef{Column: col, Level: opt.PredictorLevels[col][l]})
				}
			}
		}
	}
	return r.noneKept(d, false)
}

// undecided counts the rows of the missing-value patterns that miss a
// column of a subset condition: no condition excluded them (those are
// outside the subset, and not in the patterns), and one could not be
// judged.
func (r *reader) undecided(patterns map[string]int) int {
	n := 0
	for k, rows := range patterns {
		for ci, c := range r.cols {
			if c.cond && k[ci] == 'x' {
				n += rows
				break
			}
		}
	}
	return n
}

// noneKept refuses data that keep no row: outside the subset (subset set:
// every row fails its conditions), else for any reason. A part of data
// held as parts (Options.Part) is not refused: the whole data is judged
// once (PartsSummary), as when the parts are read as one data set.
func (r *reader) noneKept(d *Dataset, subset bool) error {
	opt := &r.opt
	if d.N > 0 || opt.Part {
		return nil
	}
	if subset {
		if d.RowsOutside != d.RowsRead {
			return nil
		}
		first := ""
		for _, c := range opt.Keep {
			if first == "" && slices.ContainsFunc(d.Dropped, func(dc DropCount) bool {
				return dc.Subset && dc.Rows > 0 && dc.Column == c.DropColumn()
			}) {
				first = c.Column
			}
		}
		return r.fail(0, first, "the subset keeps no rows: all %d data rows fail its conditions (%s)", d.RowsRead, dropList(d.Dropped))
	}
	return r.fail(0, "", "all %d data rows were dropped for %s (%s)", d.RowsRead, DropReasons(d.Dropped, opt.Weights), dropList(d.Dropped))
}

// byCategory fills the missingness by outcome category: the kept rows of
// each category and the incomplete rows whose outcome is that category.
// Categories seen only in incomplete rows follow the data set's, sorted.
func (t *MissingTable) byCategory(cols []usedCol, d *Dataset, catMiss map[string][]int, catIncomplete map[string]int) {
	kept := make([]int, len(d.Categories))
	for i, y := range d.Y {
		// Without kept incomplete rows every row is complete: no NaN to look for.
		if y >= 0 && (d.Incomplete == 0 || !slices.ContainsFunc(d.X[i*d.K:(i+1)*d.K], math.IsNaN)) {
			kept[y]++
		}
	}
	t.Rows = d.N - d.Incomplete
	for _, p := range t.Patterns {
		t.Rows += p.Rows
	}
	add := func(label string, complete int) {
		cm := CategoryMissing{Category: label, ByColumn: make([]int, len(cols)), Incomplete: catIncomplete[label]}
		cm.Rows = complete + cm.Incomplete
		if m := catMiss[label]; m != nil {
			copy(cm.ByColumn, m)
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
// sorted numerically, and returns their decimal labels; rows whose y is -1
// (a missing outcome kept for imputation) keep it. Codes within a span of
// codeSpan (the usual case: an outcome has few categories, coded by small
// integers) are looked up in a table indexed by the code, the rows in
// blocks on the workers; others are sorted.
func codeCategories(codes []int64, y []int) []string {
	lo, hi, any := int64(math.MaxInt64), int64(math.MinInt64), false
	for i, c := range codes {
		if y[i] >= 0 {
			lo, hi, any = min(lo, c), max(hi, c), true
		}
	}
	var distinct []int64
	switch {
	case !any:
	case uint64(hi-lo) < codeSpan:
		seen := make([]int, hi-lo+1) // code - lo -> its index + 1, once seen
		for i, c := range codes {
			if y[i] >= 0 {
				seen[c-lo] = 1
			}
		}
		for j, s := range seen {
			if s != 0 {
				distinct = append(distinct, lo+int64(j))
				seen[j] = len(distinct)
			}
		}
		const block = 1 << 16
		forEach((len(codes)+block-1)/block, func(b int) {
			for i := b * block; i < min(len(codes), (b+1)*block); i++ {
				if y[i] >= 0 {
					y[i] = seen[codes[i]-lo] - 1
				}
			}
		})
	default:
		for i, c := range codes {
			if y[i] >= 0 {
				distinct = append(distinct, c)
			}
		}
		slices.Sort(distinct)
		distinct = slices.Compact(distinct)
		for i, c := range codes {
			if y[i] >= 0 {
				y[i], _ = slices.BinarySearch(distinct, c)
			}
		}
	}
	labels := make([]string, len(distinct))
	for i, c := range distinct {
		labels[i] = strconv.FormatInt(c, 10)
	}
	return labels
}

// CodeGapNote says, of an outcome whose categories are the integer codes
// its data hold (labels: their decimal texts, sorted numerically), that
// the codes are taken as ordered categories and which integers between
// them do not occur, when some do not (1, 2, 5: 3 and 4); "" when the
// codes are consecutive. Each code is a category whatever the distance
// to the next: a code that does not occur is no category, and is not
// counted as one without rows.
func CodeGapNote(outcome string, labels []string) string {
	var absent []string
	count := int64(0)
	for i := 1; i < len(labels); i++ {
		a, errA := strconv.ParseInt(labels[i-1], 10, 64)
		b, errB := strconv.ParseInt(labels[i], 10, 64)
		if errA != nil || errB != nil || b-a > 1<<20 {
			return ""
		}
		for c := a + 1; c < b; c++ {
			if count++; count <= 6 {
				absent = append(absent, strconv.FormatInt(c, 10))
			}
		}
	}
	if count == 0 {
		return ""
	}
	none := words.AndList(absent) + " do not occur"
	switch {
	case count == 1:
		none = absent[0] + " does not occur"
	case count > 6:
		none = fmt.Sprintf("%d integers between them do not occur (%s, ...)", count, strings.Join(absent, ", "))
	}
	note := fmt.Sprintf("The outcome %s holds the integer codes %s, taken as ordered categories, lowest first; %s, so no category stands for them, and the distance between two codes plays no part", outcome, words.AndList(labels), none)
	if s := strayCode(outcome, labels); s != "" {
		note += ". " + s
	}
	return note
}

// StrayCodeAt is the index among integer outcome codes (labels,
// ascending) of the one that lies apart as a code for a missing answer
// does (see strayCode), -1 when none does; ordplan init marks it.
func StrayCodeAt(labels []string) int {
	k := len(labels)
	if k < 3 {
		return -1
	}
	codes := make([]int64, k)
	for i, l := range labels {
		c, err := strconv.ParseInt(l, 10, 64)
		if err != nil {
			return -1
		}
		codes[i] = c
	}
	switch {
	case codes[k-1] >= 8 && codes[k-1]-codes[k-2] >= 2 && codes[k-1]-codes[k-2] > codes[k-2]-codes[0]:
		return k - 1
	case codes[0] < 0 && codes[1]-codes[0] >= 2 && codes[1]-codes[0] > codes[k-1]-codes[1]:
		return 0
	}
	return -1
}

// strayCode says, of an outcome whose categories are its integer codes as
// found (labels, ascending), that its highest code, 8 or more, lies
// further from the next than the other codes span (9 beside 1 to 4, 99
// beside 1 to 5; not 5 beside 1 and 2, a scale whose middle no row has), or
// that its lowest is negative and lies so from the next (-9 beside 1 to 3;
// not -1 beside 0 and 1, a scale of its own), as codes for "don't know" or
// a missing answer do; "" when neither. Such a code was analysed as a
// category at the end of the scale.
func strayCode(outcome string, labels []string) string {
	i := StrayCodeAt(labels)
	if i < 0 {
		return ""
	}
	code, end := labels[i], "highest"
	keep := slices.Delete(slices.Clone(labels), i, i+1)
	if i == 0 {
		end = "lowest"
	}
	return fmt.Sprintf("Code %s lies apart from the others (%s to %s), as codes for \"don't know\" or a missing answer often do: it was analysed as the %s category; if it is not a point of the scale, list it as missing (dictionary.%s.missing: [\"%s\"]; ordplan fit: --missing-codes %s=%s), or declare the categories (outcomes[].categories: [%s])",
		code, keep[0], keep[len(keep)-1], end, outcome, code, outcome, code, strings.Join(keep, ", "))
}

// listedCodes sets y to the index of each code among Options.Codes and
// returns their decimal labels; a code not listed is an error naming the
// first row that has it.
func (r *reader) listedCodes(codes []int64, d *Dataset) ([]string, error) {
	at := make(map[int64]int, len(r.opt.Codes))
	labels := make([]string, len(r.opt.Codes))
	for j, c := range r.opt.Codes {
		at[c] = j
		labels[j] = strconv.FormatInt(c, 10)
	}
	for i, c := range codes {
		if d.Y[i] < 0 {
			continue
		}
		j, ok := at[c]
		if !ok {
			return nil, r.fail(d.Lines[i], r.opt.Outcome, "outcome code %d is not one of the codes the whole data has (%s): the parts must code the outcome alike", c, strings.Join(labels, ", "))
		}
		d.Y[i] = j
	}
	return labels, nil
}

// codeSpan is the largest span of outcome codes looked up in a table.
const codeSpan = 1 << 16

// tally counts the kept rows per category and lists those no row has
// (finish then checks that at least two categories are present).
func tally(d *Dataset) {
	d.Counts = make([]float64, len(d.Categories))
	for i, y := range d.Y {
		if y < 0 {
			continue
		}
		if d.Weights != nil {
			d.Counts[y] += d.Weights[i]
		} else {
			d.Counts[y]++
		}
	}
	for j, c := range d.Counts {
		if c == 0 {
			d.Unobserved = append(d.Unobserved, d.Categories[j])
		}
	}
}

// twoCategories refuses data whose kept rows hold fewer than two outcome
// categories, saying why so few rows remain when more were dropped than
// kept (Dataset.FewRowsSentence).
func (r *reader) twoCategories(d *Dataset) error {
	seen := 0
	last := ""
	for j, c := range d.Counts {
		if c > 0 {
			seen++
			last = d.Categories[j]
		}
	}
	if seen < 2 {
		e := r.fail(0, d.Outcome, "only one category (%s) among the %d kept rows; at least two are needed", quoteCell(last), d.N)
		if few := d.FewRowsSentence(); few != "" {
			e.Msg += ". " + few
			e.Dropped = d.Dropped
		}
		return e
	}
	return nil
}

// missingPatterns lists the used columns and, for every combination of
// them that rows miss together, the number of such rows: most frequent
// first, ties in the order of the pattern text.
func missingPatterns(cols []usedCol, patterns map[string]int) *MissingTable {
	t := &MissingTable{}
	for _, c := range cols {
		t.Columns = append(t.Columns, c.name)
	}
	t.ByColumn = make([]int, len(cols))
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
		mp := MissingPattern{Rows: patterns[k], Missing: make([]bool, len(cols))}
		for j := range cols {
			if k[j] == 'x' {
				mp.Missing[j] = true
				t.ByColumn[j] += patterns[k]
			}
		}
		t.Patterns = append(t.Patterns, mp)
	}
	return t
}

// maxListValues bounds the distinct values of a column kept to check the
// values of a one_of or none_of condition: a column with more is not a
// set of levels, and its values are not checked.
const maxListValues = 1000

// ListValues are, per condition of Options.Keep, the values the column
// of a one_of or none_of condition holds (nil for the other conditions),
// at most maxListValues of them.
type ListValues []map[string]bool

// Add adds the values of o (the same conditions) to l.
func (l ListValues) Add(o ListValues) {
	for i, seen := range o {
		for v := range seen {
			if len(l[i]) < maxListValues {
				l[i][v] = true
			}
		}
	}
}

// unknownListValues judges the values of the one_of and none_of
// conditions on the values the file holds (CheckListValues), unless the
// file is one part of data read part by part (Options.Part): then it
// keeps them in d.ListSeen, to be judged once over all parts.
func (r *reader) unknownListValues(t *rowTally, d *Dataset) error {
	if r.opt.Part {
		d.ListSeen = t.listSeen
		return nil
	}
	notes, err := CheckListValues(r.file, r.opt, t.listSeen)
	d.Notes = append(d.Notes, notes...)
	return err
}

// CheckListValues looks at each value of a one_of or none_of condition
// that no row of its column holds (seen: the values of the whole data,
// missing or not, inside the subset or not) and that is not a declared
// level of the column. When it is another value written differently
// (case, spaces, punctuation: "Cul-de-sac" for "cul_de_sac"), it is
// refused, because the misspelt value keeps or drops other rows than
// meant; otherwise (a value listed in case it occurs) it returns a note
// that it matched no row. file names the data in the error.
func CheckListValues(file string, opt Options, seen ListValues) ([]string, error) {
	missing := opt.missingSet()
	var notes []string
	for i, seen := range seen {
		if seen == nil || len(seen) >= maxListValues {
			continue
		}
		k := opt.Keep[i]
		declared := opt.PredictorLevels[k.Column]
		for _, v := range k.Values {
			if seen[textKey(v)] || slices.ContainsFunc(declared, func(l string) bool { return sameText(l, v) }) {
				continue
			}
			if slices.ContainsFunc(slices.Collect(maps.Keys(seen)), func(h string) bool { return !missing[h] && sameValue(v, h, opt.Dialect) }) {
				continue // the same number written otherwise (3.0 for 3): keeps compares it as a number
			}
			var near []string
			for h := range seen {
				if h != "" && !missing[h] && LooseText(h) == LooseText(v) {
					near = append(near, h)
				}
			}
			for _, h := range declared {
				if LooseText(h) == LooseText(v) && !slices.Contains(near, h) {
					near = append(near, h)
				}
			}
			if len(near) == 0 {
				notes = append(notes, fmt.Sprintf("The subset condition %s (%s) names %s, which no row of column %s holds: it keeps or drops no row", k.String(), k.Key, strconv.Quote(v), k.Column))
				continue
			}
			slices.Sort(near)
			for j := range near {
				near[j] = strconv.Quote(near[j])
			}
			return notes, &Error{File: file, Column: k.Column, Key: k.Key, Msg: fmt.Sprintf("the subset condition %s names the value %s, which no row of the column holds and which is not a declared level; the column holds %s, written differently: a misspelt value keeps or drops other rows than meant, write it as the data do", k.String(), strconv.Quote(v), strings.Join(near, " and "))}
		}
	}
	return notes, nil
}

// levelHint says, of a cell that is no declared level, the level it is
// written like: the same number written otherwise ("2.0", " 2" for "2"), or
// the same letters and digits in another case or with other spaces and
// marks ("East" for "east"); "" when it is like none. remedy ends the
// hint: what to change.
func levelHint(cell string, levels []string, what, remedy string) string {
	like := func(l string) string {
		return " (it is the " + what + " " + strconv.Quote(l) + " written otherwise; a " + what + " is read only as the plan writes it: " + remedy + ")"
	}
	if x, err := strconv.ParseFloat(strings.TrimSpace(cell), 64); err == nil {
		for _, l := range levels {
			if y, err := strconv.ParseFloat(strings.TrimSpace(l), 64); err == nil && x == y {
				return like(l)
			}
		}
	}
	for _, l := range levels {
		if k := LooseText(l); k != "" && k == LooseText(cell) {
			return like(l)
		}
	}
	return ""
}

// markLevelHint says, of a cell of a workbook or Parquet file that is not
// one of a categorical predictor's declared levels but is the number a
// level writes with the other decimal mark (the cell read as "2,5" under
// data.decimal: comma, the level "2.5"; or the reverse), that the file's
// numbers, typed as numbers, are compared with the levels as data.decimal
// writes them, and which level to write; "" otherwise. A CSV file's cells
// are text as written, which levelHint speaks of.
func (r *reader) markLevelHint(cell string, levels []string) string {
	if !IsWorkbook(r.file) && !IsParquet(r.file) {
		return ""
	}
	d := r.opt.Dialect
	if _, msg := d.number(cell); msg != "" {
		return ""
	}
	from, to := ",", "."
	if d.DecimalComma {
		from, to = ".", ","
	}
	for _, l := range levels {
		if !strings.Contains(l, from) || strings.Replace(strings.TrimSpace(l), from, to, 1) != cell {
			continue
		}
		if d.DecimalComma {
			return fmt.Sprintf(" (the cell is a number, which data.decimal: comma writes %s, as it writes every number of a workbook or Parquet file before comparing it with the declared levels; write the level %s, or remove data.decimal: comma)", quoteCell(cell), quoteCell(cell))
		}
		return fmt.Sprintf(" (the cell is a number, compared with the declared levels as %s; the level %s writes it with a decimal comma, which a workbook's or Parquet file's numbers take only under data.decimal: comma: write the level %s, or set data.decimal: comma)", quoteCell(cell), quoteCell(l), quoteCell(cell))
	}
	return ""
}

// LooseText is s in lower case with only its letters and digits: two
// spellings of one value ("Cul-de-sac", "cul_de_sac") compare equal.
func LooseText(s string) string {
	var b strings.Builder
	for _, c := range strings.ToLower(s) {
		if unicode.IsLetter(c) || unicode.IsDigit(c) {
			b.WriteRune(c)
		}
	}
	return b.String()
}
