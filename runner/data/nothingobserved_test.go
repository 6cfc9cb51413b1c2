package data

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Rows kept for imputation that observe neither the outcome nor any
// predictor column (notes below a table, in a column the plan does not
// read) are named, file and line, through the parts too; a row that
// observes one used value is not, and complete cases, which drop such
// rows, have no such note.
func TestNothingObserved(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	a := write("a.csv", "id,y,x,g\n1,1,0.5,p\n2,2,,q\n3,,1.5,\n4,1,-1,p\nnote,,,\n5,2,2,q\n")
	b := write("b.csv", "id,y,x,g\n6,1,0.5,q\n7,,,\n8,2,1,p\nsource,,,\nend,,NA,\n")
	opt := Options{Outcome: "y", Predictors: []string{"x", "g"}, PredictorLevels: map[string][]string{"g": {"p", "q"}}, KeepIncomplete: true}
	d, err := Load(a, opt)
	if err != nil {
		t.Fatal(err)
	}
	if want := "1 row kept for imputation observes none of the columns it fills (y, x, g; a.csv:6): the imputation models"; !strings.HasPrefix(d.NothingObserved, want) {
		t.Errorf("one file: %q, want it to start %q", d.NothingObserved, want)
	}
	d, err = LoadFiles([]string{a, b}, opt)
	if err != nil {
		t.Fatal(err)
	}
	if want := "4 rows kept for imputation observe none of the columns it fills (y, x, g; a.csv:6, b.csv:3, b.csv:5, and 1 more): "; !strings.HasPrefix(d.NothingObserved, want) {
		t.Errorf("parts: %q, want it to start %q", d.NothingObserved, want)
	}
	if !strings.Contains(strings.Join(d.Notes, "\n"), d.NothingObserved) {
		t.Error("the note is not among the data's notes")
	}
	opt.KeepIncomplete = false
	if d, err := LoadFiles([]string{a, b}, opt); err != nil || d.NothingObserved != "" {
		t.Errorf("complete cases: %q, %v", d.NothingObserved, err)
	}
}
