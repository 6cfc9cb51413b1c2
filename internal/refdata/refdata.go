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
