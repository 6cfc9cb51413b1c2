package fit

import (
	"slices"
	"strings"
	"testing"
)

// TestReservedNames enumerates the names every kind of model makes (the
// parameters of each comparison and effect structure, with one, two and
// named constraint groups; the baseline-category and stereotype forms;
// the goodness-of-fit refit's predictors) and tries each name, and the
// base of each indexed name, as the name of a predictor: wherever that
// predictor makes two names of one list equal, ReservedName must refuse
// it. Every name made other than a predictor's own must be refused too.
func TestReservedNames(t *testing.T) {
	const J = 4
	preds := []string{"x1", "x2"}
	type kind struct {
		name string
		m    func(k int) Model // k predictors, the last one the candidate
	}
	effects := func(cmp Comparison, link Link, e ...Effect) func(int) Model {
		return func(k int) Model {
			eff := make([]Effect, k)
			for i := range eff {
				eff[i] = e[min(i, len(e)-1)]
			}
			return Model{Comparison: cmp, Link: link, Effects: eff}
		}
	}
	var kinds []kind
	for _, c := range allComparisons {
		for _, sc := range structCases {
			m0 := effects(c.cmp, Logit, sc.eff...)
			kinds = append(kinds, kind{c.cmp.String() + "/" + sc.name, func(k int) Model {
				m := m0(k)
				m.Backward = c.backward
				return m
			}})
		}
		// two constraint groups, and one named group
		kinds = append(kinds, kind{c.cmp.String() + "/two groups", func(k int) Model {
			m := effects(c.cmp, Logit, Constrained)(k)
			m.Groups = make([]int, k)
			m.Groups[k-1] = 1
			return m
		}}, kind{c.cmp.String() + "/named group", func(k int) Model {
			m := effects(c.cmp, Logit, Constrained)(k)
			m.GroupNames = []string{"hi"}
			return m
		}})
	}
	// The lists of names, one per table, for the given predictors.
	d := synthData(3, 300, 3, J, false, false)
	adj := fitOK(t, d, Model{Comparison: Adjacent, Link: Logit, Effects: []Effect{Nonparallel, Nonparallel, Nonparallel}})
	ster := fitOK(t, d, Model{Comparison: Adjacent, Link: Logit, Effects: []Effect{Constrained, Constrained, Constrained}})
	lists := func(predictors []string) map[string][]string {
		out := map[string][]string{}
		for _, k := range kinds {
			ly, err := newLayout(k.m(len(predictors)), J, predictors)
			if err != nil {
				t.Fatal(err)
			}
			out[k.name] = ly.names()
		}
		r := *adj
		r.Predictors = predictors
		b, err := r.Baseline(0)
		if err != nil {
			t.Fatal(err)
		}
		out["baseline form"] = b.Names
		r = *ster
		r.Predictors = predictors
		s, err := r.StereotypeScores()
		if err != nil {
			t.Fatal(err)
		}
		out["stereotype scores"] = s.Names
		out["goodness-of-fit refit"] = append(slices.Clone(predictors), indicatorNames(5)...)
		return out
	}
	var candidates []string
	for list, names := range lists(append(slices.Clone(preds), "x3")) {
		for _, n := range names {
			if slices.Contains(preds, n) || n == "x3" {
				continue
			}
			if ReservedName(n) == "" {
				t.Errorf("%s: the name %q is made but not refused as a predictor's", list, n)
			}
			candidates = append(candidates, n)
			if base, _, ok := strings.Cut(n, "["); ok {
				candidates = append(candidates, base)
			}
		}
	}
	candidates = append(candidates, "score", "phi.x1", "tau1", "alpha.x", "x1[", "dose[mg]")
	slices.Sort(candidates)
	candidates = slices.Compact(candidates)
	refused := 0
	for _, c := range candidates {
		if slices.Contains(preds, c) {
			continue // a column made twice: design.Build refuses it
		}
		if ReservedName(c) != "" {
			refused++
			continue
		}
		for list, names := range lists(append(slices.Clone(preds), c)) {
			sorted := slices.Sorted(slices.Values(names))
			for i := 1; i < len(sorted); i++ {
				if sorted[i] == sorted[i-1] {
					t.Errorf("%s: a predictor named %q makes %q twice, and ReservedName allows it", list, c, sorted[i])
				}
			}
		}
	}
	if refused < 10 {
		t.Errorf("only %d of %d candidate names refused", refused, len(candidates))
	}
	t.Logf("%d candidate names, %d refused", len(candidates), refused)
}
