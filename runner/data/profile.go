package data

import (
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
)

// Profile describes one column of a file as found: how many cells are
// missing, whether the others are all numbers (integers), their range and
// their distinct values (up to MaxValues).
type Profile struct {
	Name     string
	Rows     int // data rows
	Missing  int // cells that are missing-value tokens
	Numeric  bool
	Integer  bool
	Min, Max float64 // numeric columns
	Values   []string
	Distinct int  // distinct non-missing values (counted up to MaxValues+1)
	Many     bool // more than MaxValues distinct values
	// Count is the number of distinct non-missing values, counted up to
	// MaxCount (0: more): with Rows and Missing it says whether the
	// values repeat, as the ids of clusters do, or are one per row.
	Count int
	// Codes are the conventional missing-value codes (missingLikeCodes:
	// -7, -8, -9, -77, ..., -9999) a numeric column holds, in order, and
	// MinOther the smallest of its other values (+Inf when none): codes
	// below values that are all 0 or more look like missing values.
	Codes    []float64
	MinOther float64
	// TopCodes are the conventional codes written at the top of a scale
	// (topLikeCodes: 99, 999, 9999, 98, ...) that a numeric column holds
	// far above its other values (MaxOther, -Inf when none, at most 0.9
	// times the code), in order: codes above the values look like missing
	// values too.
	TopCodes []float64
	MaxOther float64
	// ThousandsPoint, of a column read as numbers with a decimal point in
	// a file whose delimiter is a semicolon or a tab, or with a decimal
	// comma, is a cell whose decimal mark looks like a thousands separator
	// (pointEvidence: 3.473 beside 313, "3,473" beside 313), and
	// ThousandsBeside an integer written without one ("" when every value
	// has such a mark, which three decimals could be too); "" when the
	// column shows no such sign.
	ThousandsPoint, ThousandsBeside string
	// ZeroFraction, of a column of integers, is a value written with a
	// zero fraction (2.0, as tools that store integers as floating-point
	// numbers export them), "" when none is: Values lists such a value
	// as the integer it is read as (2), the text a declared category
	// matches (declaredCategory), as a code found is named.
	ZeroFraction string
	// Hidden: a workbook's column the sheet hides from view (read as data
	// all the same).
	Hidden bool
	// Nested: what a Parquet file's nested column is ("a list", "a map",
	// "a struct", ...), which ordplan does not read; "" for any other.
	Nested string
	// CommaNumber, of a column of text read with a decimal point, every
	// value of which (all of them listed: not Many) is a number written with
	// a decimal comma or a whole number, is the first with a comma ("0,25"):
	// numbers a workbook or Parquet file holds as text, which data.decimal:
	// comma reads as numbers; "" otherwise.
	CommaNumber string
	// Formatted, of a column of text every value of which (all of them
	// listed: not Many) is a number, or one but for a currency sign or
	// digits grouped by spaces or apostrophes (groupedHint), is the first
	// such value ("$12.50", "1 234,5"); "" otherwise.
	Formatted string
	// Merged are the ranges of merged cells (B3:B22) that cover cells of a
	// workbook's column but for the one holding their value, in order:
	// those cells hold no value, are not counted among the values, and a
	// plan reading the column is refused (sheetRecords.mergedUsed).
	Merged []string
}

// topLikeCodes are numbers that surveys conventionally write at the top
// of a scale for a missing, refused or not applicable answer.
var topLikeCodes = []float64{77, 88, 97, 98, 99, 777, 888, 997, 998, 999, 7777, 8888, 9997, 9998, 9999}

// topCodes keeps, of the top-like codes a column holds (sorted), those
// far above its other values, whose largest is max: at most 0.9 times the
// code. A code not kept is one of the values, and raises max for the
// codes above it. It returns the codes kept and the largest other value.
func topCodes(codes []float64, max float64) ([]float64, float64) {
	var out []float64
	for _, c := range codes {
		if max <= 0.9*c {
			out = append(out, c)
		} else if len(out) == 0 {
			max = math.Max(max, c)
		}
	}
	return out, max
}

// missingLikeCodes are numbers that surveys and registers conventionally
// write for a missing, refused or not applicable answer.
var missingLikeCodes = []float64{-9999, -999, -99, -98, -97, -9, -8, -7, -888, -777, -88, -77}

// MaxValues is the number of distinct values a profile lists.
const MaxValues = 30

// MaxCount is the number of distinct values a profile counts.
const MaxCount = 10000

// ProfileFile reads a data file in the given dialect (delimiter and
// decimal mark of CSV text, sheet and header row of a workbook; a Parquet
// file needs none) and profiles every column. Values are listed in order
// of first appearance, or numerically for numbers.
func ProfileFile(path string, missingTokens []string, d Dialect) ([]Profile, error) {
	p, _, err := ProfileSheet(path, missingTokens, d)
	return p, err
}

// ProfileSheet is ProfileFile, with the worksheet read when the file is
// a workbook (the one the reader picks when d names none: chooseSheet),
// nil otherwise.
func ProfileSheet(path string, missingTokens []string, d Dialect) ([]Profile, *SheetRead, error) {
	f, err := openData(path)
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	r := &reader{file: path, opt: Options{MissingTokens: missingTokens, Dialect: d}}
	r.missing = r.opt.missingSet()
	if err := r.start(f); err != nil {
		return nil, nil, err
	}
	p, err := r.profile()
	var sheet *SheetRead
	if sr, ok := r.cr.(*sheetRecords); ok {
		read := sr.read
		sheet = &read
		for i := range p {
			p[i].Hidden = sr.hiddenCols[sr.lead+i+1]
		}
	}
	if cr, ok := r.cr.(*columnRecords); ok {
		for i := range p {
			p[i].Nested = cr.nested[i]
		}
	}
	return p, sheet, err
}

// profile profiles every column of the rows after the header.
func (r *reader) profile() ([]Profile, error) {
	d := r.opt.Dialect
	names, _, err := r.names()
	if err != nil {
		return nil, err
	}
	out := make([]Profile, len(names))
	points := make([]pointEvidence, len(names))
	for i := range points {
		points[i].mark = d.thousandsMark()
	}
	seen := make([]map[string]bool, len(names))
	all := make([]map[string]struct{}, len(names)) // nil once past MaxCount
	for i, n := range names {
		out[i] = Profile{Name: n, Numeric: true, Integer: true, Min: math.Inf(1), Max: math.Inf(-1), MinOther: math.Inf(1), MaxOther: math.Inf(-1)}
		seen[i] = map[string]bool{}
		all[i] = map[string]struct{}{}
	}
	for {
		rec, err := r.cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, r.csvErr(err, rec)
		}
		if r.repeatsHeader(rec) {
			return nil, r.headerAgain()
		}
		for i, cell := range rec[:min(len(rec), len(out))] { // not the unnamed columns after the last name
			p := &out[i]
			p.Rows++
			cell = strings.TrimSpace(cell)
			if r.missing[cell] {
				p.Missing++
				continue
			}
			if m := mergedRange(cell); m != "" {
				if !slices.Contains(p.Merged, m) {
					p.Merged = append(p.Merged, m)
				}
				continue
			}
			if all[i] != nil {
				if all[i][cell] = struct{}{}; len(all[i]) > MaxCount {
					all[i] = nil
				}
			}
			if !seen[i][cell] && !p.Many {
				seen[i][cell] = true
				if len(p.Values) < MaxValues {
					p.Values = append(p.Values, cell)
				} else {
					p.Many = true
				}
			}
			if p.Numeric {
				v, msg := d.number(cell)
				if msg != "" {
					p.Numeric, p.Integer = false, false
					continue
				}
				line, _ := r.cr.FieldPos(i)
				points[i].add(cell, line)
				p.Min, p.Max = math.Min(p.Min, v), math.Max(p.Max, v)
				switch {
				case slices.Contains(missingLikeCodes, v):
					if !slices.Contains(p.Codes, v) {
						p.Codes = append(p.Codes, v)
					}
				case slices.Contains(topLikeCodes, v):
					if !slices.Contains(p.TopCodes, v) {
						p.TopCodes = append(p.TopCodes, v)
					}
					p.MinOther = math.Min(p.MinOther, v)
				default:
					p.MinOther = math.Min(p.MinOther, v)
					p.MaxOther = math.Max(p.MaxOther, v)
				}
				if v != math.Trunc(v) {
					p.Integer = false
				}
			}
		}
	}
	for i := range out {
		p := &out[i]
		if p.Rows == p.Missing {
			p.Numeric, p.Integer = false, false
		}
		p.CommaNumber = commaNumbers(p, d)
		p.Formatted = formattedNumbers(p, d)
		if p.Numeric {
			// Booleans read as numbers are listed as the numbers they
			// are read as, whatever the format (true, TRUE: 1).
			for j, v := range p.Values {
				if b, ok := boolWord(v); ok {
					p.Values[j] = strconv.FormatFloat(b, 'g', -1, 64)
				}
				if whole, ok := zeroFraction(v, d.mark()); ok && p.Integer {
					if p.ZeroFraction == "" {
						p.ZeroFraction = v
					}
					p.Values[j] = whole
				}
			}
			slices.Sort(p.Values)
			p.Values = slices.Compact(p.Values)
		}
		p.Distinct = len(p.Values)
		p.Count = len(all[i])
		if p.Numeric {
			slices.SortFunc(p.Values, func(a, b string) int {
				x, _ := d.number(a)
				y, _ := d.number(b)
				switch {
				case x < y:
					return -1
				case x > y:
					return 1
				}
				return strings.Compare(a, b)
			})
			slices.Sort(p.Codes)
			slices.Sort(p.TopCodes)
			p.TopCodes, p.MaxOther = topCodes(p.TopCodes, p.MaxOther)
			if pe := points[i]; pe.suspect() && d.thousandsMark() != 0 && r.head != nil {
				p.ThousandsPoint, p.ThousandsBeside = pe.example, pe.integer
			}
		} else {
			p.Min, p.Max = 0, 0
			p.Codes, p.MinOther = nil, math.Inf(1)
			p.TopCodes, p.MaxOther = nil, math.Inf(-1)
		}
	}
	return out, nil
}

// commaNumbers is Profile.CommaNumber of p, profiled in dialect d.
func commaNumbers(p *Profile, d Dialect) string {
	if p.Numeric || p.Many || d.DecimalComma || len(p.Values) == 0 {
		return ""
	}
	first := ""
	comma := Dialect{DecimalComma: true}
	for _, v := range p.Values {
		if _, msg := comma.number(v); msg != "" {
			return ""
		}
		if first == "" && strings.Contains(v, ",") {
			first = v
		}
	}
	return first
}

// formattedNumbers is Profile.Formatted of p, profiled in dialect d.
func formattedNumbers(p *Profile, d Dialect) string {
	if p.Numeric || p.Many || len(p.Values) == 0 {
		return ""
	}
	first := ""
	for _, v := range p.Values {
		if _, msg := d.number(v); msg == "" {
			continue
		}
		if groupedHint(v, d) == "" {
			return ""
		}
		if first == "" {
			first = v
		}
	}
	return first
}
