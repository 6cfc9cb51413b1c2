package plan

import (
	"strings"
	"testing"

	"gopkg.in/yaml.v3"
)

// An unknown key is followed by the allowed key it is a slip of, when one
// is near in spelling; a key of a letter or two, or one near none, gets no
// suggestion.
func TestNearKey(t *testing.T) {
	allowed := []string{"resamples", "seed", "draw"}
	for key, want := range map[string]string{
		"resample":  `; did you mean "resamples"?`,
		"Resamples": `; did you mean "resamples"?`,
		"draws":     `; did you mean "draw"?`,
		"sed":       `; did you mean "seed"?`,
		"x":         "",
		"dr":        "",
		"bootstrap": "",
	} {
		if got := nearKey(key, allowed); got != want {
			t.Errorf("nearKey(%q) = %q, want %q", key, got, want)
		}
	}
}

// A required key misspelt is said once, at the slip, not also missing.
func TestSlipNotAlsoMissing(t *testing.T) {
	d := &decoder{nodes: map[string]*yaml.Node{}}
	var n yaml.Node
	if err := yaml.Unmarshal([]byte("{resample: 50, seed: 3}"), &n); err != nil {
		t.Fatal(err)
	}
	m := d.mapping(n.Content[0], "selection_stability", []string{"resamples", "seed", "draw"})
	m.required("resamples")
	m.required("seed")
	m.required("draw")
	var got []string
	for _, e := range d.errs {
		got = append(got, e.Error())
	}
	if len(got) != 2 || !strings.Contains(got[0], `did you mean "resamples"?`) || !strings.Contains(got[1], "selection_stability.draw: required key is missing") {
		t.Errorf("errors %q, want the slip of resamples and draw missing", got)
	}
}
