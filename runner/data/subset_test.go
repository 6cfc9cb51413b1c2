package data

import (
	"errors"
	"slices"
	"strings"
	"testing"
)

// subsetRows are 14 rows counted by hand (the row's number in the comment
// is its place among the data rows; line = number + 1). The conditions are
// a >= 0 (a: a predictor, own missing code -9) and s in {x} (s: read only
// by the subset, own missing code "unk").
//
//	1 kept           6 a -9.0: unknown     11 y, a missing: unknown
//	2 kept           7 s = z: outside s    12 a = -2: outside a
//	3 a = -1: out a  8 s unk: unknown      13 kept
//	4 a NA: unknown  9 s empty: unknown    14 kept
//	5 a -9: unknown 10 y missing, inside
const subsetRows = "y,a,s\n" +
	"1,1,x\n2,2,x\n1,-1,x\n2,NA,x\n1,-9,x\n2,-9.0,x\n1,-9,z\n" +
	"2,3,unk\n1,4,\n,5,x\n,NA,x\n2,-2,unk\n1,6,x\n2,7,x\n"

func subsetOptions() Options {
	return Options{Outcome: "y", Predictors: []string{"a"},
		ColumnMissing: map[string][]string{"a": {"-9"}, "s": {"unk"}},
		Keep: []Condition{
			{Column: "a", Op: ">=", Number: 0, Key: "subset[0]"},
			{Column: "s", Op: "in", Values: []string{"x"}, Key: "subset[1]"},
		}}
}

// A row whose subset column is missing (a global marker, the column's own
// code, the code written as another number) is a row with a missing value
// in that column, not a row outside the subset, unless a condition on a
// value it holds excludes it. Counts by hand (subsetRows), the same by awk
// on the rows: awk -F, 'NR>1{am=($2=="NA"||$2+0==-9); sm=($3==""||$3=="unk");
// if((!am&&$2<0)||(!sm&&$3!="x")){out++;next}; if(am||sm)und++; if($1=="")y++;
// else if(am)a++; else if(sm)s++; else kept++}' gives outside 3, unknown 6,
// dropped under y 2, a 3, s 2, kept 4.
func TestSubsetMissingIsMissing(t *testing.T) {
	d, err := Read(strings.NewReader(subsetRows), "t.csv", subsetOptions())
	if err != nil {
		t.Fatal(err)
	}
	if d.RowsRead != 14 || d.RowsOutside != 3 || d.RowsUndecided != 6 || d.N != 4 || d.RowsDropped != 10 {
		t.Errorf("read %d, outside %d, unknown %d, used %d, dropped %d; want 14, 3, 6, 4, 10", d.RowsRead, d.RowsOutside, d.RowsUndecided, d.N, d.RowsDropped)
	}
	want := []DropCount{{Column: "y", Rows: 2}, {Column: "a", Rows: 3}, {Column: "s", Rows: 2},
		{Column: "outside the subset a >= 0", Rows: 2, Subset: true}, {Column: "outside the subset s in {x}", Rows: 1, Subset: true}}
	if !slices.Equal(d.Dropped, want) {
		t.Errorf("dropped %v, want %v", d.Dropped, want)
	}
	mt := d.Missing
	if !slices.Equal(mt.Columns, []string{"y", "a", "s"}) || !slices.Equal(mt.ByColumn, []int{2, 4, 2}) || mt.Rows != 11 {
		t.Errorf("missing table: columns %v, missing %v, rows %d; want [y a s], [2 4 2], 11", mt.Columns, mt.ByColumn, mt.Rows)
	}
	var pats []string
	for _, p := range mt.Patterns {
		var cols []string
		for j, m := range p.Missing {
			if m {
				cols = append(cols, mt.Columns[j])
			}
		}
		pats = append(pats, strings.Join(cols, "+")+":"+string(rune('0'+p.Rows)))
	}
	if got := strings.Join(pats, " "); got != "a:3 s:2 y:1 y+a:1" {
		t.Errorf("patterns %s", got)
	}
	if !slices.Equal(d.Lines, []int{2, 3, 14, 15}) {
		t.Errorf("kept lines %v, want 2 3 14 15", d.Lines)
	}
	if s := d.DropSummary(); !strings.HasSuffix(s, "(y: 2, a: 3, s: 2, outside the subset a >= 0: 2, outside the subset s in {x}: 1; a row with several of these is counted once, under the first); among them, rows that miss a column the subset's conditions read, so that whether they belong to the subset is unknown: 6 (counted as missing values, not as outside the subset)") {
		t.Errorf("summary: %s", s)
	}
	checkChunked(t, []byte(subsetRows), subsetOptions())
}

// With imputation the rows whose subset column is missing are not kept:
// their membership of the subset is unknown. Row 10 (missing only the
// outcome) is kept for imputation; row 11 (outcome and a missing) is
// dropped and counted under a, the column imputation does not fill.
func TestSubsetMissingNotImputed(t *testing.T) {
	opt := subsetOptions()
	opt.KeepIncomplete = true
	d, err := Read(strings.NewReader(subsetRows), "t.csv", opt)
	if err != nil {
		t.Fatal(err)
	}
	if d.N != 5 || d.Incomplete != 1 || d.RowsUndecided != 6 || d.RowsOutside != 3 {
		t.Errorf("kept %d (incomplete %d), unknown %d, outside %d; want 5 (1), 6, 3", d.N, d.Incomplete, d.RowsUndecided, d.RowsOutside)
	}
	want := []DropCount{{Column: "a", Rows: 4}, {Column: "s", Rows: 2},
		{Column: "outside the subset a >= 0", Rows: 2, Subset: true}, {Column: "outside the subset s in {x}", Rows: 1, Subset: true}}
	if !slices.Equal(d.Dropped, want) {
		t.Errorf("dropped %v, want %v", d.Dropped, want)
	}
	if !slices.Equal(d.Lines, []int{2, 3, 11, 14, 15}) || d.Y[2] != -1 {
		t.Errorf("kept lines %v (outcomes %v), want 2 3 11 14 15 with line 11's outcome missing", d.Lines, d.Y)
	}
	checkChunked(t, []byte(subsetRows), opt)
}

// With missing values refused, a row whose subset column is missing (and
// that no other condition excludes) stops the reading, naming its line,
// column and why it matters; rows outside the subset are not looked at.
func TestSubsetMissingRefused(t *testing.T) {
	opt := subsetOptions()
	opt.Refuse = true
	_, err := Read(strings.NewReader(subsetRows), "t.csv", opt)
	var de *Error
	if !errors.As(err, &de) || de.Line != 5 || de.Column != "a" || !strings.Contains(err.Error(), "missing value (\"NA\") where missing values are refused; the subset's condition on this column cannot be judged") {
		t.Errorf("refused: %v", err)
	}
}

// Comparisons with a code: a column's missing code is never compared as a
// number, however it is written (less_than 0 used to keep -9; at_least 0
// counted it as outside the subset).
func TestSubsetMissingCodeNotCompared(t *testing.T) {
	in := "y,a\n1,-9\n2,-9.00\n1,-3\n2,5\n1,NA\n1,6\n2,-4\n"
	opt := Options{Outcome: "y", ColumnMissing: map[string][]string{"a": {"-9"}},
		Keep: []Condition{{Column: "a", Op: "<", Number: 0, Key: "subset[0]"}}}
	for _, op := range []string{"<", ">="} {
		opt.Keep[0].Op = op
		d, err := Read(strings.NewReader(in), "t.csv", opt)
		if err != nil {
			t.Fatal(err)
		}
		want := []DropCount{{Column: "a", Rows: 3}, {Column: "outside the subset a " + op + " 0", Rows: 2, Subset: true}}
		if d.N != 2 || d.RowsOutside != 2 || d.RowsUndecided != 3 || !slices.Equal(d.Dropped, want) || !slices.Equal(d.Missing.ByColumn, []int{0, 3}) {
			t.Errorf("a %s 0: kept %d, outside %d, unknown %d, dropped %v, missing %v; want 2, 2, 3, %v, [0 3]", op, d.N, d.RowsOutside, d.RowsUndecided, d.Dropped, d.Missing.ByColumn, want)
		}
	}
}
