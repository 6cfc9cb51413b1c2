package plan

import (
	"errors"
	"testing"
)

// A term named twice in one interaction is one mistake, said once as a
// name listed twice: not also as "an interaction needs at least two
// terms, got 1", when two were written.
func TestInteractionNamingATermTwice(t *testing.T) {
	src := `version: 1
data:
  file: d.csv
outcomes:
  - column: y
predictors: [a, b, {interact: [a, a]}]
models: {effects: [parallel]}
rules:
  - choose: {by: aic}
`
	_, err := Parse([]byte(src), "bad.yaml")
	var es Errors
	if !errors.As(err, &es) || len(es) != 1 || es[0].Error() != `bad.yaml:6:35: predictors[2].interact[1]: "a" is listed twice (first at line 6)` {
		t.Fatalf("errors: %v", err)
	}
	// One name alone is still an interaction of one term.
	_, err = Parse([]byte(`version: 1
data:
  file: d.csv
outcomes:
  - column: y
predictors: [a, b, {interact: [a]}]
models: {effects: [parallel]}
rules:
  - choose: {by: aic}
`), "bad.yaml")
	if !errors.As(err, &es) || len(es) != 1 || es[0].Error() != `bad.yaml:6:31: predictors[2].interact: an interaction needs at least two terms, got 1` {
		t.Fatalf("errors: %v", err)
	}
}
