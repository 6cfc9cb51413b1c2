package main

import (
	"testing"

	"ordplan/runner/simulate"
)

// The summary line names every model tied at the top share, in order of
// name, whatever order the study listed them in; a single top model alone.
func TestMostOftenChosenNamesTies(t *testing.T) {
	share := func(m string, c int) simulate.ModelShare {
		return simulate.ModelShare{Model: m, Share: simulate.Rate{Count: c, Of: 40, Rate: float64(c) / 40}}
	}
	for _, tc := range []struct {
		chosen []simulate.ModelShare
		want   string
	}{
		{[]simulate.ModelShare{share("cumulative/parallel/logit", 19), share("adjacent/parallel/logit", 19), share("(none)", 2)},
			"most often chosen, tied: adjacent/parallel/logit, cumulative/parallel/logit (0.475 each)"},
		{[]simulate.ModelShare{share("cumulative/parallel/logit", 20), share("adjacent/parallel/logit", 19), share("(none)", 1)},
			"most often chosen cumulative/parallel/logit (0.500)"},
		{[]simulate.ModelShare{share("b", 10), share("a", 10), share("c", 10), share("d", 10)},
			"most often chosen, tied: a, b, c, d (0.250 each)"},
	} {
		if got := mostOftenChosen(tc.chosen); got != tc.want {
			t.Errorf("got  %s\nwant %s", got, tc.want)
		}
	}
}
