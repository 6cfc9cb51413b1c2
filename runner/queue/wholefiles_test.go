package queue

import (
	"errors"
	"strings"
	"testing"

	"ordplan/runner/data"
)

// The values of a one_of condition are judged on the whole data, whatever
// parts hold them: a part holding only "Cul-de-sac" is not refused for
// one_of [cul_de_sac, ...] when another part holds "cul_de_sac", as the
// data read as one (data.LoadFiles) are not; a value written otherwise than
// every part writes it is refused once, naming the parts.
func TestPartitionFilesJudgeSubsetValuesOnAllParts(t *testing.T) {
	dir := t.TempDir()
	a := writePart(t, dir, "a.csv", "y,x,street\n1,0.5,cul_de_sac\n2,1.5,residential\n1,0.2,residential\n2,0.9,cul_de_sac\n").Path
	b := writePart(t, dir, "b.csv", "y,x,street\n1,0.3,Cul-de-sac\n2,1.1,Cul-de-sac\n2,0.7,residential\n1,0.4,residential\n").Path
	keep := func(vals ...string) data.Options {
		return data.Options{Outcome: "y", Categories: []string{"1", "2"}, Predictors: []string{"x"},
			Keep: []data.Condition{{Column: "street", Op: "in", Values: vals, Key: "subset[0]"}}}
	}
	opt := keep("cul_de_sac", "residential")
	if _, err := data.LoadFiles([]string{a, b}, opt); err != nil {
		t.Fatalf("the parts read as one: %v", err)
	}
	whole, _, sum, err := PartitionFiles([]string{a, b}, opt)
	if err != nil {
		t.Fatalf("the parts read one at a time: %v", err)
	}
	if read := sum.RowsRead(); read != 8 || whole.Rows != 6 || len(whole.Notes) != 0 {
		t.Errorf("read %d, kept %d, notes %q; want 8, 6 (no Cul-de-sac row), none", sum.RowsRead(), whole.Rows, whole.Notes)
	}
	// Part b alone is judged as data in one file.
	if _, err := data.Load(b, opt); err == nil {
		t.Errorf("b alone: no error for cul_de_sac, which it writes Cul-de-sac")
	}
	// A value no part holds is noted once, for the whole data.
	whole, _, _, err = PartitionFiles([]string{a, b}, keep("cul_de_sac", "residential", "lane"))
	if err != nil || len(whole.Notes) != 1 || whole.Notes[0] != `The subset condition street in {cul_de_sac, residential, lane} (subset[0]) names "lane", which no row of column street holds: it keeps or drops no row` {
		t.Errorf("a value no part holds: %v %q", err, whole.Notes)
	}
	// A misspelt value is refused as for the data read as one.
	opt = keep("Cul_De_Sac", "residential")
	_, one := data.LoadFiles([]string{a, b}, opt)
	_, _, _, err = PartitionFiles([]string{a, b}, opt)
	var de *data.Error
	if one == nil || err == nil || !errors.As(err, &de) || de.Key != "subset[0]" || err.Error() != one.Error() ||
		!strings.Contains(err.Error(), `the column holds "Cul-de-sac" and "cul_de_sac", written differently`) {
		t.Errorf("a misspelt value:\n parts one at a time: %v\n read as one:         %v", err, one)
	}
}
