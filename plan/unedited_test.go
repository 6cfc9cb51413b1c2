package plan

import (
	"strings"
	"testing"
)

// The markers of ordplan init are found in comments and at the start of
// text values, as words of their own, and not inside quotes, in other
// words (EDITED) or in the skeleton's own instruction.
func TestUnedited(t *testing.T) {
	src := `# Edit every line marked EDIT, read the others
version: 1
title: "EDIT the title"
data:
  file: "d#1.csv"   # comment without the marker
outcomes:
  - column: y   # <- outcome (guessed: EDIT)
    categories: [EDITED, "a # EDIT", b]   # EDIT: put them in order, lowest first
predictors: [x]
models:
  effects: [parallel, nonparallel]
rules:
  - choose: {by: aic}
`
	p, err := Parse([]byte(src), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, e := range p.Unedited {
		got = append(got, e.Error())
	}
	want := []string{
		`p.yaml:3:8: title: still holds the placeholder of ordplan init ("EDIT the title"): replace it`,
		`p.yaml:7:40: outcomes[0].column: still marked by ordplan init ("<- outcome (guessed: EDIT)"): check the line, then delete the marker`,
		`p.yaml:8:45: outcomes[0].categories: still marked by ordplan init ("EDIT: put them in order, lowest first"): check the line, then delete the marker`,
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("got\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
	// The markers are not part of what the plan means.
	clean := strings.NewReplacer(`"EDIT the title"`, `"EDIT the title"`, "   # <- outcome (guessed: EDIT)", "", "   # EDIT: put them in order, lowest first", "").Replace(src)
	q, err := Parse([]byte(clean), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if len(q.Unedited) != 1 || string(q.Canonical()) != string(p.Canonical()) {
		t.Errorf("without the comments: %d places; canonical forms equal: %t", len(q.Unedited), string(q.Canonical()) == string(p.Canonical()))
	}
}
