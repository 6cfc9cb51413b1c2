package plan

import (
	"fmt"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// ParameterScope is what the parameters of one outcome's candidate models
// are made of: its terms, their design columns and the number of category
// boundaries.
type ParameterScope struct {
	Outcome    string
	Terms      []string   // term names, in order
	Columns    [][]string // the design columns of each term
	Boundaries int        // categories - 1; 0 when not known (categories taken from the data)
}

// planScopes gives each outcome's scope as the plan alone knows it: every
// declared level has its column, and the boundaries are known where the
// categories are declared. ok is false when a term's columns cannot be
// named (the predictors section has the problem).
func (p *Plan) planScopes() ([]ParameterScope, bool) {
	var out []ParameterScope
	for _, o := range p.Outcomes {
		spec := p.DesignSpec(o)
		names, err := design.Names(spec)
		if err != nil {
			return nil, false
		}
		s := ParameterScope{Outcome: o.Column, Columns: names}
		for _, t := range spec.Terms {
			s.Terms = append(s.Terms, t.Name)
		}
		if len(o.Categories) > 1 {
			s.Boundaries = len(o.Categories) - 1
		}
		out = append(out, s)
	}
	return out, len(out) > 0
}

// modelNames says which parameter names the candidate models of the
// plan's grid can have in one outcome: plain (one parameter: tau is not
// among them), by boundary (base name of NAME[m]: tau, a column with a
// slope per boundary, a common factor phi, from m = 2).
type modelNames struct {
	plain   []string
	indexed []string
	phi     []string // bases numbered from 2
	whole   []string // terms tested as a whole by "TERM = 0"
}

func (p *Plan) modelNames(s ParameterScope) modelNames {
	has := func(st fit.Structure) bool { return slices.Contains(p.Models.Effects, st) }
	pa := p.Models.Partial
	var mn modelNames
	mn.indexed = []string{strings.TrimSuffix(fit.TauName(1), "[1]")}
	for t, cols := range s.Columns {
		free := pa.Select != nil || slices.Contains(pa.Free, s.Terms[t])
		for _, c := range cols {
			if has(fit.ParallelEffects) || has(fit.ConstrainedEffects) || has(fit.StereotypeEffects) || has(fit.PartialEffects) && !free {
				mn.plain = append(mn.plain, c)
			}
			if has(fit.NonparallelEffects) || has(fit.PartialEffects) && free {
				mn.indexed = append(mn.indexed, c)
			}
		}
		mn.whole = append(mn.whole, s.Terms[t])
	}
	// The common factors: one unnamed group unless the plan names its
	// groups (a constrained model; the stereotype model has one group).
	if has(fit.StereotypeEffects) || has(fit.ConstrainedEffects) && (len(pa.Groups) == 0 || pa.Select != nil || len(pa.Groups) == 1 && pa.Groups[0].Name == "") {
		mn.phi = append(mn.phi, "phi")
	}
	if has(fit.ConstrainedEffects) && pa.Select == nil && (len(pa.Groups) > 1 || len(pa.Groups) == 1 && pa.Groups[0].Name != "") {
		for g, grp := range pa.Groups {
			name := grp.Name
			if name == "" {
				name = fmt.Sprintf("g%d", g+1)
			}
			mn.phi = append(mn.phi, "phi."+name)
		}
	}
	return mn
}

// splitIndex reads NAME[m] into NAME and m (m = 0: no index; -1: an index
// that is not a whole number from 1).
func splitIndex(name string) (string, int) {
	base, rest, ok := strings.Cut(name, "[")
	if !ok {
		return name, 0
	}
	m, err := strconv.Atoi(strings.TrimSuffix(rest, "]"))
	if err != nil || !strings.HasSuffix(rest, "]") || m < 1 || strconv.Itoa(m)+"]" != rest {
		return base, -1
	}
	return base, m
}

// has reports whether a model of the grid can have the parameter name.
func (mn modelNames) has(name string, q int) bool {
	base, m := splitIndex(name)
	switch {
	case m == 0:
		return slices.Contains(mn.plain, name)
	case m < 0 || q > 0 && m > q:
		return false
	case slices.Contains(mn.phi, base):
		return m >= 2
	}
	return slices.Contains(mn.indexed, base)
}

// list gives every name, boundaries numbered up to q (or up to m when the
// boundaries are not known), for suggestions.
func (mn modelNames) list(q int) []string {
	out := slices.Clone(mn.plain)
	for _, b := range mn.indexed {
		for m := 1; m <= q; m++ {
			out = append(out, fmt.Sprintf("%s[%d]", b, m))
		}
	}
	for _, b := range mn.phi {
		for m := 2; m <= q; m++ {
			out = append(out, fmt.Sprintf("%s[%d]", b, m))
		}
	}
	return out
}

// HypothesisErrors checks that every name in the plan's hypotheses is a
// parameter that some candidate model of some outcome can have (scopes:
// one per outcome), or a term written as "TERM = 0"; a parameter some
// candidates have and others not (one per boundary: the nonparallel
// models only) passes. Each problem names the hypothesis's key and place,
// the name, and the nearest valid names.
func (p *Plan) HypothesisErrors(scopes []ParameterScope) Errors {
	var errs Errors
	for i, h := range p.Inference.Hypotheses {
		for _, msg := range p.hypothesisProblems(h.Text, scopes) {
			errs = append(errs, &Error{File: p.Path, Line: h.Line, Col: h.Col, Key: itemPath("inference.hypotheses", i), Msg: fmt.Sprintf("%s: %s", quote(h.Text), msg)})
		}
	}
	return errs
}

// checkHypothesisNames checks the hypotheses against the plan alone.
func (d *decoder) checkHypothesisNames(p *Plan) {
	if !d.clean("inference.hypotheses") || !d.clean("models") || len(p.Inference.Hypotheses) == 0 {
		return
	}
	scopes, ok := p.planScopes()
	if !ok {
		return
	}
	d.errs = append(d.errs, p.HypothesisErrors(scopes)...)
}

// hypothesisProblems says what in text no candidate model can have.
func (p *Plan) hypothesisProblems(text string, scopes []ParameterScope) []string {
	mns := make([]modelNames, len(scopes))
	for k, s := range scopes {
		mns[k] = p.modelNames(s)
	}
	var out []string
	said := map[string]bool{}
	for _, part := range strings.Split(text, ";") {
		if name, ok := fit.WholeTermPart(part); ok && slices.ContainsFunc(mns, func(mn modelNames) bool { return slices.Contains(mn.whole, name) }) {
			continue
		}
		names, err := fit.HypothesisNames(part)
		if err != nil {
			continue // the syntax is checked with the text
		}
		for _, name := range names {
			known := said[name]
			for k, s := range scopes {
				known = known || mns[k].has(name, s.Boundaries)
			}
			if known {
				continue
			}
			said[name] = true
			out = append(out, p.nameProblem(name, scopes, mns))
		}
	}
	return out
}

// nameProblem explains why no candidate model has the parameter name,
// and gives the nearest valid names.
func (p *Plan) nameProblem(name string, scopes []ParameterScope, mns []modelNames) string {
	base, m := splitIndex(name)
	var msg string
	var valid []string
	for k, s := range scopes {
		q := s.Boundaries
		if q == 0 {
			q = max(m, 1)
		}
		valid = append(valid, mns[k].list(q)...)
		valid = append(valid, mns[k].whole...)
	}
	outcomes := func() string {
		var b []string
		for _, s := range scopes {
			if s.Boundaries == 0 {
				continue
			}
			b = append(b, fmt.Sprintf("%s has %d between its %d categories", s.Outcome, s.Boundaries, s.Boundaries+1))
		}
		return words.AndList(b)
	}
	indexed := slices.ContainsFunc(mns, func(mn modelNames) bool { return slices.Contains(mn.indexed, base) || slices.Contains(mn.phi, base) })
	plainOnly := slices.ContainsFunc(mns, func(mn modelNames) bool { return slices.Contains(mn.plain, base) })
	term := ""
	for _, s := range scopes {
		if t := slices.Index(s.Terms, name); t >= 0 && !slices.Contains(s.Columns[t], name) {
			term = fmt.Sprintf("%s is a term of %d columns (%s), not a parameter: a hypothesis tests it as a whole only as %s (every parameter of its columns at 0); otherwise name its columns", quote(name), len(s.Columns[t]), strings.Join(s.Columns[t], ", "), quote(name+" = 0"))
			break
		}
	}
	switch {
	case term != "":
		msg = term
	case m > 0 && indexed:
		if slices.ContainsFunc(mns, func(mn modelNames) bool { return slices.Contains(mn.phi, base) }) && m == 1 {
			msg = fmt.Sprintf("%s names boundary 1 of a common factor, which is 1 there by definition and not a parameter: the factors are numbered from 2", quote(name))
		} else {
			msg = fmt.Sprintf("%s names boundary %d, and no outcome has that many boundaries (%s)", quote(name), m, outcomes())
		}
	case m > 0 && plainOnly:
		msg = fmt.Sprintf("%s names a parameter of boundary %d, and no candidate model has one parameter per boundary for %s (models.effects: %s%s): its one parameter is %s", quote(name), m, quote(base), p.effectsText(), p.freeText(), quote(base))
	case m > 0 && (base == "phi" || strings.HasPrefix(base, "phi.")):
		msg = fmt.Sprintf("%s names a common factor of a constrained model, and no candidate model has %s (models.effects: %s; the factors of named groups are phi.GROUP[m])", quote(name), quote(base), p.effectsText())
	case m < 0:
		msg = fmt.Sprintf("%s: the boundary in brackets is a whole number from 1", quote(name))
	default:
		msg = fmt.Sprintf("%s is a parameter of no candidate model (theirs are tau[m] for boundary m, the terms' design columns, COLUMN[m] where a model gives a column one slope per boundary, phi[m] in constrained models; a term of several columns is named as a whole only in TERM = 0)", quote(name))
	}
	if m > 0 && indexed {
		// A boundary beyond the last: the same name's boundaries.
		valid = slices.DeleteFunc(valid, func(v string) bool { b, _ := splitIndex(v); return b != base })
	}
	if near := words.Nearest(name, valid, 3); len(near) == 1 {
		msg += fmt.Sprintf("; did you mean %s?", quote(near[0]))
	} else if len(near) > 1 {
		q := make([]string, len(near))
		for i, n := range near {
			q[i] = quote(n)
		}
		msg += "; nearest valid names: " + strings.Join(q, ", ")
	}
	return msg
}

// effectsText lists the plan's effect structures.
func (p *Plan) effectsText() string {
	var w []string
	for _, e := range p.Models.Effects {
		w = append(w, e.String())
	}
	return strings.Join(w, ", ")
}

// freeText says which terms the partial models free, when they are in
// the grid.
func (p *Plan) freeText() string {
	if !slices.Contains(p.Models.Effects, fit.PartialEffects) || p.Models.Partial.Select != nil {
		return ""
	}
	return "; models.partial.free: " + strings.Join(p.Models.Partial.Free, ", ")
}
