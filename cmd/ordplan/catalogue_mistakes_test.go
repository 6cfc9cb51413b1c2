package main

// Catalogue items of mistakes a hostile or careless user made on the
// command line, in plans and in folders (docs/bad-inputs.md), run by
// TestBadInputCatalogue with the others.

import (
	"os"
	"path/filepath"
	"testing"
)

// noFolder checks that an item made no folder name in dir.
func noFolder(name string) func(t *testing.T, dir, out, errs string) {
	return func(t *testing.T, dir, out, errs string) {
		t.Helper()
		if _, err := os.Stat(filepath.Join(dir, name)); !os.IsNotExist(err) {
			t.Errorf("%s was made: %v", name, err)
		}
	}
}

// mistakeItems are the catalogue items of this file.
func mistakeItems(dir string) []badInput {
	return []badInput{
		{id: "A30", name: "power --n above the most rows simulated", args: []string{"power", "--n", "200,2000000000", "--out", filepath.Join(dir, "A30-power")}, code: 2,
			plan:  edit() + assumed("{a: 0.2}", ""),
			want:  []string{"ordplan power: --n: the sample size 2000000000 is above 10000000, the most rows ordplan simulates (as for assumptions.n); give sizes from 10 to 10000000"},
			check: noFolder("A30-power")},
		{id: "A30", name: "rehearse --n above the most rows simulated", args: []string{"rehearse", "--n", "2000000000", "--out", filepath.Join(dir, "A30-rehearsal")}, code: 2,
			plan:  edit() + assumed("{a: 0.2}", ""),
			want:  []string{"ordplan rehearse: --n 2000000000 is above 10000000, the most rows ordplan simulates (as for assumptions.n); give --n from 10 to 10000000"},
			check: noFolder("A30-rehearsal")},
	}
}
