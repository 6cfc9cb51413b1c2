package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"testing"
)

// A subset condition with an error is the one thing check says about it:
// no consequence of the error follows (a level it leaves out by a misspelt
// value, a value made a number it is not); a condition leaving one level
// of a predictor says that first, not a level to remove that would only
// lead there.
func TestCheckSubsetSaysTheCauseOnly(t *testing.T) {
	src, err := os.ReadFile(filepath.Join("..", "..", "plans", "example.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, c := range []struct{ cond, want string }{
		{"one_of: [Cul_De_Sac, residential, through_road]", `:5: subset[0]: names "Cul_De_Sac", which is not a level of street_type but is written like its level "cul_de_sac" (categorical.street_type.levels): a misspelt value keeps or drops other rows than meant; write the level as declared`},
		{"equal_to: residential", `:37: subset[0].equal_to: want a number, got string "residential": equal_to compares numbers; to compare the text, write one_of: [residential]`},
		{"one_of: [residential]", `:5: subset[0]: leaves only one level ("residential") of street_type among the rows used: a categorical predictor needs two; drop street_type from the predictors of this subset`},
	} {
		p := filepath.Join(dir, "p.yaml")
		if err := os.WriteFile(p, append(append([]byte{}, src...), "subset:\n  - {column: street_type, "+c.cond+"}\n"...), 0o644); err != nil {
			t.Fatal(err)
		}
		_, stderr, code := runCLI("check", "--no-data", p)
		// The condition is on the plan's second line from its end.
		line := bytes.Count(src, []byte("\n")) + 2
		if want := fmt.Sprintf("%s:%d%s\n", p, line, c.want); code != 1 || stderr != want {
			t.Errorf("%s: exit %d, stderr\n%s\nwant\n%s", c.cond, code, stderr, want)
		}
	}
}
