package main

import (
	"bytes"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"ordplan/runner/data"
)

const committed = "../../plans/data/quietstreets.csv"

// TestRegenerate checks that the generator reproduces the committed file
// byte for byte.
func TestRegenerate(t *testing.T) {
	out := filepath.Join(t.TempDir(), "quietstreets.csv")
	if err := writeFile(out); err != nil {
		t.Fatal(err)
	}
	got, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	want, err := os.ReadFile(committed)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Fatalf("regenerated data differ from %s; run: go run ./plans/gendemo -out plans/data/quietstreets.csv", committed)
	}
}

// TestCommittedLoads checks that the committed file reads as the example
// plans use it: all five categories seen, incomplete rows dropped.
func TestCommittedLoads(t *testing.T) {
	d, err := data.Load(committed, data.Options{
		Outcome:    "safety",
		Categories: labels,
		Predictors: []string{"pilot", "female", "age", "child_home", "years_resident", "cyclist"},
		Cluster:    "district",
	})
	if err != nil {
		t.Fatal(err)
	}
	if d.RowsRead != nRows {
		t.Errorf("read %d rows, want %d", d.RowsRead, nRows)
	}
	if len(d.Unobserved) != 0 {
		t.Errorf("unobserved categories %v", d.Unobserved)
	}
	cols := []string{}
	for _, dc := range d.Dropped {
		cols = append(cols, dc.Column)
	}
	if !reflect.DeepEqual(cols, []string{"age", "years_resident"}) {
		t.Errorf("dropped rows under %v, want age and years_resident", cols)
	}
	if d.RowsDropped < nRows/100 || d.RowsDropped > nRows/20 {
		t.Errorf("%d rows dropped, want about 3%%", d.RowsDropped)
	}
}
