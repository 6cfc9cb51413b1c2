// Package refdata locates the published reference data sets that the tests
// check against. They live in testdata/reference at the root of the
// repository (see its README for the published source of each set), so a
// fresh clone has everything its tests need.
package refdata

import (
	"path/filepath"
	"runtime"
)

// Dir is the absolute path of testdata/reference.
func Dir() string {
	_, file, _, ok := runtime.Caller(0)
	if !ok {
		return filepath.Join("testdata", "reference")
	}
	return filepath.Join(filepath.Dir(file), "..", "..", "testdata", "reference")
}

// Path is the absolute path of one file of the reference sets, e.g.
// Path("gsswarm.csv").
func Path(name string) string { return filepath.Join(Dir(), name) }
