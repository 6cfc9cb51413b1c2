package data

import (
	"fmt"
	"strings"

	"ordplan/internal/words"
)

// DropCount is the number of rows dropped because of a missing value in
// one column.
type DropCount struct {
	Column string `json:"column"`
	Rows   int    `json:"rows"`
	Subset bool   `json:"subset,omitempty"` // dropped by the plan's subset, not for a missing value
}

// ZeroWeight reports whether dc counts the rows whose weight, in the
// column weights ("" = none), is 0, rather than rows missing a column or
// outside the subset.
func (dc DropCount) ZeroWeight(weights string) bool {
	return weights != "" && !dc.Subset && dc.Column == weights+" = 0"
}

// LevelRef is one level of a categorical predictor column.
type LevelRef struct {
	Column string
	Level  string
}

// Dataset is the analysis data set: the kept rows of the file, with the
// outcome coded as category indices and the predictors as a dense
// row-major matrix.
type Dataset struct {
	File       string
	Outcome    string
	Categories []string // J category labels, lowest first
	Y          []int    // kept rows: category index 0..J-1
	Predictors []string
	X          []float64 // kept rows, row-major N x K
	N, K       int
	Weights    []float64 // nil when no weights column
	// Sampling says Weights are sampling weights, read rescaled to sum
	// to the rows (Options.Sampling).
	Sampling bool
	Offset   []float64 // nil when none
	Cluster  []string  // nil when none
	RowsRead int       // data rows in the file
	// Incomplete counts the kept rows with a missing outcome or predictor
	// (Options.KeepIncomplete).
	Incomplete  int
	RowsDropped int
	// Dropped lists rows dropped for missing values per column. A row is
	// counted once, under the first used column (outcome, predictors,
	// weights, offset, cluster, columns only the subset reads) that is
	// missing, or with KeepIncomplete under the first it misses that
	// imputation does not fill; entries follow that order.
	Dropped []DropCount
	// Missing counts the missing values of the used columns: per column
	// (every missing cell, not only the first of its row) and per pattern.
	Missing *MissingTable
	Counts  []float64 // per category: kept rows (sum of weights when weighted)
	Lines   []int     // kept rows: 1-based line number in the file
	// Unobserved lists declared categories that no kept row has. Reading does
	// not refuse them; the caller decides.
	Unobserved []string
	// UnobservedLevels lists declared levels of categorical predictors
	// that no kept row has.
	UnobservedLevels []LevelRef
	// RowsOutside is the number of rows the subset conditions dropped
	// (included in RowsDropped): rows that fail a condition.
	RowsOutside int
	// RowsUndecided is the number of rows that fail no subset condition
	// but miss a column one reads, so that whether they belong to the
	// subset is unknown: they are rows with missing values, counted in
	// Dropped under their first missing column and in Missing (included in
	// RowsDropped; never kept for imputation). RowsRead - RowsOutside -
	// RowsUndecided rows meet the conditions.
	RowsUndecided int
	// Notes are remarks of the steps after reading that the user must see
	// (a declared level dropped because no row has it).
	Notes []string
	// PointNotes are the notes (in Notes too) on columns whose every value
	// has a point and three digits after it, which may separate thousands
	// (thousandsPoints): check and run print them on the terminal too.
	PointNotes []string
	// StrayCode, when the outcome's categories are its integer codes as
	// found, says that its highest or lowest code lies apart from the
	// others as a code for a missing answer does (strayCode; in Notes
	// too, through CodeGapNote): check and run warn of it.
	StrayCode string
	// MostlyMissing are the notes (in Notes too) on predictor columns
	// observed in fewer than half of the rows (mostlyMissing): check and
	// run warn of them.
	MostlyMissing []string
	// NothingObserved is the note (in Notes too) on the rows kept for
	// imputation that observe none of the columns it fills (the outcome
	// and every predictor column), "" when there are none; check and run
	// warn of it (W37).
	NothingObserved string
	// entries are Options.Entries, for FewRowsCause.
	entries map[string][]Entry
	// Sheet names the worksheet of a workbook the rows come from, and
	// what of it is hidden; nil for other files and for parts (each
	// workbook part's is in Parts).
	Sheet *SheetRead
	// Parts are the files of a data set read as parts (LoadFiles), with
	// the numbering of their lines in Lines; nil for one file.
	Parts []PartSpan
	// ListSeen are the values the columns of one_of and none_of
	// conditions hold, for a part read alone (Options.Part); nil otherwise.
	ListSeen ListValues
}

// MissingTable is the missing-value pattern of the used columns (outcome,
// predictors, weights, offset, cluster, then the columns only the subset
// reads, in that order).
type MissingTable struct {
	Columns  []string
	ByColumn []int            // rows with a missing value in each column
	Patterns []MissingPattern // rows dropped, by the set of columns they miss
	// Rows is the number of rows the table describes: the rows no subset
	// condition excludes (those that meet them, and those that miss a
	// column one reads), less complete rows of zero weight (complete rows N
	// plus the rows of Patterns).
	Rows int
	// ByCategory gives, for each outcome category (the categories of the
	// data set in order, then any category seen only in incomplete rows),
	// how many of its rows miss each other used column.
	ByCategory []CategoryMissing
}

// CategoryMissing is the missingness of the rows of one outcome category.
type CategoryMissing struct {
	Category   string
	Rows       int   // rows with this category (complete and incomplete)
	ByColumn   []int // per column of the table: rows missing it (0 for the outcome)
	Incomplete int   // rows missing at least one used column
}

// MissingPattern is a set of columns missing together and how many rows
// miss exactly those.
type MissingPattern struct {
	Missing []bool // per column of the table
	Rows    int
}

// NObs returns the number of observations: the sum of the weights, or N
// when there are no weights.
func (d *Dataset) NObs() float64 {
	if d.Weights == nil {
		return float64(d.N)
	}
	s := 0.0
	for _, w := range d.Weights {
		s += w
	}
	return s
}

// Row returns the predictor values of kept row i (a slice of X).
func (d *Dataset) Row(i int) []float64 {
	return d.X[i*d.K : (i+1)*d.K : (i+1)*d.K]
}

// DropSummary describes the dropped rows on one line, for example
// "12 of 1800 rows dropped for missing values (age: 4, years_resident: 8)".
// It returns "no rows dropped for missing values" when none were.
func (d *Dataset) DropSummary() string {
	if d.RowsDropped == 0 {
		return "no rows dropped for missing values"
	}
	// The dataset does not know its weights column's name: a count of
	// rows of weight 0 is the one named "W = 0" (ZeroWeight).
	why := dropReasons(d.Dropped, func(dc DropCount) bool { return strings.HasSuffix(dc.Column, " = 0") })
	return fmt.Sprintf("%d of %d rows dropped for %s (%s)%s",
		d.RowsDropped, d.RowsRead, why, dropList(d.Dropped), d.UndecidedSummary())
}

// FewRowsCause says why few rows remain, for a refusal that counts the
// rows used, when more rows were dropped than kept: the rows dropped and
// what for, by column (DropSummary), then the notes of the predictor
// columns observed in fewer than half of the rows (MostlyMissing, W34),
// which a refusal would otherwise keep from being printed. "" when fewer
// rows were dropped than kept.
func (d *Dataset) FewRowsCause() string {
	if d == nil || d.RowsDropped <= d.N {
		return ""
	}
	s := d.DropSummary()
	if e := d.lostTo(); e != "" {
		s += ". Rows were lost to the missing values of " + e
	}
	if len(d.MostlyMissing) > 0 {
		s += ". " + strings.Join(d.MostlyMissing, ". ")
	}
	return s
}

// lostTo names, for each column whose missing values dropped rows, the
// plan's entries that read it (Options.Entries): `column "z", read by
// predictors[1] (PLAN:6:17) and predictors[3] (PLAN:8:5), and of column
// "w", read by ...`, in the order of the rows dropped by column; "" when
// no such column is read by a known entry.
func (d *Dataset) lostTo() string {
	var cols []string
	for _, c := range d.Dropped {
		es := d.entries[c.Column]
		if c.Rows == 0 || c.Subset || strings.HasSuffix(c.Column, " = 0") || len(es) == 0 {
			continue
		}
		var named []string
		for _, e := range es {
			if e.Where != "" {
				named = append(named, e.Key+" ("+e.Where+")")
			} else {
				named = append(named, e.Key)
			}
		}
		cols = append(cols, fmt.Sprintf("column %q, read by %s", c.Column, words.AndList(named)))
	}
	return strings.Join(cols, ", and of ")
}

// FewRowsSentence is the sentence a refusal that counts the rows used
// (a constant or collinear term, one outcome category, more parameters
// than observations) ends with when more rows were dropped than kept:
// "Only N of the M rows read are used: " and FewRowsCause. "" otherwise,
// and for no data set (nil). The one wording of it: Analysis.Observed
// words its refusal around FewRowsCause itself.
func (d *Dataset) FewRowsSentence() string {
	why := d.FewRowsCause()
	if why == "" {
		return ""
	}
	return fmt.Sprintf("Only %d of the %d rows read are used: %s", d.N, d.RowsRead, why)
}

// DropReasons says what the rows counted in dc were dropped for, naming
// only the reasons some row was: "the subset", "missing values", "zero
// weight", in that order ("missing values or zero weight"; "zero weight"
// alone when every row dropped weighs 0). weights is the weights column
// ("" for none).
func DropReasons(dc []DropCount, weights string) string {
	return dropReasons(dc, func(c DropCount) bool { return c.ZeroWeight(weights) })
}

func dropReasons(dc []DropCount, zeroWeight func(DropCount) bool) string {
	var subset, missing, zero bool
	for _, c := range dc {
		switch {
		case c.Rows == 0:
		case c.Subset:
			subset = true
		case zeroWeight(c):
			zero = true
		default:
			missing = true
		}
	}
	var why []string
	if subset {
		why = append(why, "the subset")
	}
	if missing || !subset && !zero {
		why = append(why, "missing values")
	}
	if zero {
		why = append(why, "zero weight")
	}
	if len(why) == 1 {
		return why[0]
	}
	return strings.Join(why[:len(why)-1], ", ") + " or " + why[len(why)-1]
}

// UndecidedSummary says, after a list of dropped rows, how many of them
// miss a column of the subset's conditions (RowsUndecided); "" for none.
func (d *Dataset) UndecidedSummary() string {
	if d.RowsUndecided == 0 {
		return ""
	}
	return fmt.Sprintf("; among them, rows that miss a column the subset's conditions read, so that whether they belong to the subset is unknown: %d (counted as missing values, not as outside the subset)", d.RowsUndecided)
}

// dropList lists the dropped rows per reason; with several reasons it says
// that a row is counted once, under the first that applies (so a column's
// count may be less than its missing values in the missing-value table).
func dropList(dc []DropCount) string {
	parts := make([]string, len(dc))
	for i, c := range dc {
		parts[i] = fmt.Sprintf("%s: %d", c.Column, c.Rows)
	}
	s := strings.Join(parts, ", ")
	if len(dc) > 1 {
		s += "; a row with several of these is counted once, under the first"
	}
	return s
}

// LevelDrops reads the data (paths, opt) for the rows whose cell of each
// categorical predictor column of levels is its level (or, the column the
// outcome, whose declared category it is: a combination of levels of an
// interaction when several), and says why none of them is used: "It occurs in 20 rows of the data, each dropped for the
// subset (outside the subset region in {a}: 20)", the reasons and the
// counts by column as the data's count of dropped rows gives them
// (DropReasons, under the first reason that applies: the subset, a
// missing value, a weight of 0), the plan keys behind them, keys of
// those counts (nil: none), last in the parentheses ("...: 20; plan key
// subset[0]"). "" when no row has the level, or some row of it is used,
// or the data cannot be read so.
func LevelDrops(paths []string, opt Options, levels []LevelRef, keys func([]DropCount) []string) string {
	opt.OnlyLevels = levels
	// Read as a part is: no refusal for keeping no row, no judging of
	// the subset's listed values on these rows alone, no rescaling.
	opt.Part, opt.Sampling, opt.WholeWeights = true, false, nil
	opt.Refuse, opt.KeepIncomplete = false, false
	d, err := LoadFiles(paths, opt)
	if err != nil || d.N > 0 || d.RowsDropped == 0 {
		return ""
	}
	each := "each "
	if d.RowsDropped == 1 {
		each = ""
	}
	list := dropList(d.Dropped)
	if keys != nil {
		switch k := keys(d.Dropped); len(k) {
		case 0:
		case 1:
			list += "; plan key " + k[0]
		default:
			list += "; plan keys " + words.AndList(k)
		}
	}
	return fmt.Sprintf("It occurs in %s of the data, %sdropped for %s (%s)",
		words.Count(d.RowsDropped, "row", "rows"), each, DropReasons(d.Dropped, opt.Weights), list)
}
