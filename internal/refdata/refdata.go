package refdata

import (
	"fmt"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
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

// ParamName maps a parameter name of the reference files to ordplan's:
// the files name boundary parameter m "cut" followed by m; ordplan names
// it tau[m]. Other names are the same.
func ParamName(name string) string {
	if rest, ok := strings.CutPrefix(name, "cut"); ok {
		if m, err := strconv.Atoi(rest); err == nil && m >= 1 {
			return fmt.Sprintf("tau[%d]", m)
		}
	}
	return name
}

// ParamNames returns m with its keys mapped by ParamName.
func ParamNames[V any](m map[string]V) map[string]V {
	if m == nil {
		return nil
	}
	out := make(map[string]V, len(m))
	for k, v := range m {
		out[ParamName(k)] = v
	}
	return out
}
