package runner

import (
	"fmt"
	"sort"
	"strings"

	"ordplan/runner/fit"
)

// Spec says which model to build: the comparison, the stage direction, the
// link, and the effect structure of each predictor.
type Spec struct {
	Approach    fit.Comparison `json:"approach"`
	Backward    bool           `json:"backward"` // stage direction
	Link        fit.Link       `json:"link"`
	Predictors  []string       `json:"predictors"`  // all predictors, in order
	Nonparallel []string       `json:"nonparallel"` // predictors with free slopes
	Groups      []Group        `json:"groups"`      // constrained predictors by group
}

// Group is one constraint group: predictors whose slopes share a common
// factor phi.
type Group struct {
	Name       string   `json:"name"`
	Predictors []string `json:"predictors"`
}

// EffectsSpec builds the Spec of a typology cell: effect structure
// parallel, partial (free listed), constrained (groups), nonparallel or
// stereotype.
func EffectsSpec(approach fit.Comparison, backward bool, link fit.Link, effects fit.Structure, predictors, free []string, groups []Group) (Spec, error) {
	s := Spec{Approach: approach, Backward: backward, Link: link, Predictors: predictors}
	switch effects {
	case fit.ParallelEffects:
	case fit.PartialEffects:
		s.Nonparallel = free
	case fit.ConstrainedEffects:
		if len(groups) == 0 {
			groups = []Group{{Predictors: free}}
		}
		s.Groups = groups
	case fit.NonparallelEffects:
		s.Nonparallel = predictors
	case fit.StereotypeEffects:
		if approach != fit.Adjacent {
			return s, fmt.Errorf("the stereotype model is an adjacent-category model, not %s", approach)
		}
		s.Groups = []Group{{Predictors: predictors}}
	default:
		return s, fmt.Errorf("no %s", effects)
	}
	return s, nil
}

// Model turns a Spec into a fit.Model, checking every name.
func (s Spec) Model() (fit.Model, error) {
	var m fit.Model
	if s.Backward && s.Approach != fit.Stage {
		return m, fmt.Errorf("the backward direction exists for the stage approach only")
	}
	m = fit.Model{Comparison: s.Approach, Backward: s.Backward, Link: s.Link, Effects: make([]fit.Effect, len(s.Predictors)), Groups: make([]int, len(s.Predictors))}
	index := map[string]int{}
	for k, p := range s.Predictors {
		if _, dup := index[p]; dup {
			return m, fmt.Errorf("predictor %q is listed twice", p)
		}
		index[p] = k
	}
	where := map[string]string{}
	mark := func(p, what string) (int, error) {
		k, ok := index[p]
		if !ok {
			return 0, fmt.Errorf("%s predictor %q is not among the predictors (%s)", what, p, strings.Join(s.Predictors, ", "))
		}
		if prev, seen := where[p]; seen && prev == what {
			return 0, fmt.Errorf("predictor %q is listed twice as %s; list it once", p, what)
		} else if seen {
			return 0, fmt.Errorf("predictor %q is both %s and %s", p, prev, what)
		}
		where[p] = what
		return k, nil
	}
	for _, p := range s.Nonparallel {
		k, err := mark(p, "nonparallel")
		if err != nil {
			return m, err
		}
		m.Effects[k] = fit.Nonparallel
	}
	for g, grp := range s.Groups {
		if len(grp.Predictors) == 0 {
			return m, fmt.Errorf("constraint group %q has no predictors", grp.Name)
		}
		m.GroupNames = append(m.GroupNames, grp.Name)
		for _, p := range grp.Predictors {
			k, err := mark(p, "constrained")
			if err != nil {
				return m, err
			}
			m.Effects[k] = fit.Constrained
			m.Groups[k] = g
		}
	}
	return m, nil
}

// sortedKeys returns the keys of a map in order.
func sortedKeys[V any](m map[string]V) []string {
	ks := make([]string, 0, len(m))
	for k := range m {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	return ks
}
