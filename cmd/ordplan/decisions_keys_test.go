package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// Every key of decisions.json is snake_case, except the keys of the maps
// keyed by a parameter, predictor or model name (estimates, std_errors,
// slopes, final_verdicts, phi).
func TestDecisionsKeysAreSnakeCase(t *testing.T) {
	dir := t.TempDir()
	if _, errs, code := runCLI("run", filepath.Join("..", "..", "render", "testdata", "golden.yaml"), "--out", dir, "--quiet"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, errs)
	}
	b, err := os.ReadFile(filepath.Join(dir, "decisions.json"))
	if err != nil {
		t.Fatal(err)
	}
	var v any
	if err := json.Unmarshal(b, &v); err != nil {
		t.Fatal(err)
	}
	snake := regexp.MustCompile(`^[a-z0-9_]+$`)
	named := map[string]bool{"estimates": true, "std_errors": true, "slopes": true, "final_verdicts": true, "phi": true}
	var walk func(x any, path string)
	walk = func(x any, path string) {
		switch x := x.(type) {
		case map[string]any:
			last := path[strings.LastIndex(path, ".")+1:]
			for k, val := range x {
				if !named[last] && !snake.MatchString(k) {
					t.Errorf("%s: key %q is not snake_case", path, k)
				}
				walk(val, path+"."+k)
			}
		case []any:
			for _, it := range x {
				walk(it, path)
			}
		}
	}
	walk(v, "")
}
