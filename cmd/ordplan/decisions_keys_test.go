package main

import (
	"os"
	"path/filepath"
	"testing"

	"ordplan/internal/jsonkeys"
)

// Every key of decisions.json is snake_case (the project's one check,
// internal/jsonkeys), except the keys of the maps keyed by a parameter,
// predictor or model name (estimates, std_errors, slopes, final_verdicts,
// phi).
func TestDecisionsKeysAreSnakeCase(t *testing.T) {
	dir := t.TempDir()
	if _, errs, code := runCLI("run", filepath.Join("..", "..", "render", "testdata", "golden.yaml"), "--out", dir, "--quiet"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, errs)
	}
	b, err := os.ReadFile(filepath.Join(dir, "decisions.json"))
	if err != nil {
		t.Fatal(err)
	}
	bad, err := jsonkeys.NotSnakeCase(b, "estimates", "std_errors", "slopes", "final_verdicts", "phi")
	if err != nil {
		t.Fatal(err)
	}
	if len(bad) > 0 {
		t.Errorf("decisions.json keys not in snake_case: %q", bad)
	}
}
