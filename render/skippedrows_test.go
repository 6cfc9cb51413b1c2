package render

import (
	"strings"
	"testing"

	"ordplan/runner/data"
)

// The report names the new rows skipped for a missing value by line, with
// the columns each misses, the first skippedListed of them, and points to
// decisions.json for every one.
func TestSkippedNewRowsNamed(t *testing.T) {
	if got := skippedNewRows(&data.Rows{}); got != "none skipped for a missing value" {
		t.Errorf("none: %q", got)
	}
	one := &data.Rows{Skipped: []int{6}, SkippedColumns: [][]string{{"dose"}}}
	if got, want := skippedNewRows(one), "1 skipped for a missing value and not predicted: line 6 (dose), the missing columns in brackets; every one is in decisions.json's `new_rows_skipped`"; got != want {
		t.Errorf("one:\n got %q\nwant %q", got, want)
	}
	many := &data.Rows{}
	for i := range 13 {
		many.Skipped = append(many.Skipped, 10+i)
		many.SkippedColumns = append(many.SkippedColumns, []string{"a", "b"}[:1+i%2])
	}
	got := skippedNewRows(many)
	for _, want := range []string{"13 skipped for a missing value and not predicted: lines 10 (a), 11 (a, b), 12 (a)", "19 (a, b) and 3 more, the missing columns"} {
		if !strings.Contains(got, want) {
			t.Errorf("lacks %q:\n%s", want, got)
		}
	}
	if strings.Contains(got, "20 (") {
		t.Errorf("names more than %d rows: %s", skippedListed, got)
	}
}
