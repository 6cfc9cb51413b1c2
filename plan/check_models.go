package plan

import (
	"slices"

	"ordplan/runner/fit"
)

// checkApproaches checks settings that need a particular approach.
func (d *decoder) checkApproaches(p *Plan) {
	mo := p.Models
	if !d.clean("models.approaches") {
		return
	}
	if mo.HasEffects(fit.StereotypeEffects) && !mo.HasApproach(fit.Adjacent) {
		d.errAt(d.itemKey("models.effects", "stereotype"), "the stereotype effect structure needs the adjacent approach, and models.approaches does not include adjacent")
	}
	if d.given("models.direction") && !mo.HasApproach(fit.Stage) {
		d.errAt("models.direction", "only the stage approach has a direction, and models.approaches does not include stage")
	}
}

// checkStarts refuses models.run_every_start when no effect structure of
// the grid is searched from several starts.
func (d *decoder) checkStarts(p *Plan) {
	mo := p.Models
	if d.given("models.run_every_start") && d.clean("models.effects") && !mo.HasEffects(fit.ConstrainedEffects) && !mo.HasEffects(fit.StereotypeEffects) {
		d.errAt("models.run_every_start", "applies only to constrained and stereotype models (searched from several starts), and models.effects includes neither")
	}
}

// checkPartial checks that the partial set exists exactly when an effect structure
// uses it, and names real predictors.
func (d *decoder) checkPartial(p *Plan) {
	mo := p.Models
	pa := mo.Partial
	hasFree := d.given("models.partial.free")
	hasSelect := d.given("models.partial.select")
	hasGroups := d.given("models.partial.groups")
	var users []string
	for _, s := range []fit.Structure{fit.PartialEffects, fit.ConstrainedEffects} {
		if mo.HasEffects(s) {
			users = append(users, s.String())
		}
	}
	if d.clean("models.effects") {
		switch {
		case len(users) > 0 && !hasFree && !hasSelect && d.clean("models.partial"):
			what := "effect structure " + quote(users[0]) + " needs"
			if len(users) == 2 {
				what = "effect structures " + quote(users[0]) + " and " + quote(users[1]) + " need"
			}
			if !d.given("models.effects") {
				// The default grid, not a list the user wrote, asks for them:
				// say so, and how to leave them out.
				d.errAt("models.partial", "%s a partial set, and models.effects is not given, so its default (%s) includes them: give models.partial.free (a list of predictors) or models.partial.select, or list models.effects without them, e.g. models: {effects: [parallel, nonparallel]}", what, joinWords(defaultEffects))
				break
			}
			d.errAt("models.partial", "%s a partial set: give models.partial.free (a list of predictors) or models.partial.select", what)
		case len(users) == 0 && (hasFree || hasSelect || hasGroups):
			d.errAt("models.partial", "is unused, because models.effects includes neither partial nor constrained")
		case hasGroups && !mo.HasEffects(fit.ConstrainedEffects):
			d.errAt("models.partial.groups", "groups are used only by the constrained effect structure, which models.effects does not include")
		}
	}
	if hasFree && hasSelect {
		d.errAt("models.partial.select", "give either free or select, not both")
	}
	if hasGroups && hasSelect && !hasFree {
		d.errAt("models.partial.groups", "groups split a listed free set; they cannot be used with select")
	}
	if sel := pa.Select; hasSelect && sel != nil && p.Data.Sampling() && sel.Test.NeedsLikelihood() && d.clean("data") {
		key := "models.partial.select"
		if d.given(key + ".test") {
			key += ".test"
		}
		d.errAt(key, "the %s test needs a likelihood, but with sampling weights (data.weight_kind: sampling) the fits maximize a pseudo-likelihood; use test: wald (the default)", sel.Test.Title())
	}
	if d.predictorsKnown(p) {
		for _, f := range pa.Free {
			if !p.hasTerm(f) {
				d.errAt(d.itemKey("models.partial.free", f), "%s is not a predictor (%s)%s", quote(f), known(p.Predictors), p.columnOfTerm(f))
			}
		}
	}
}

// checkGroups checks that the constraint groups split the free set:
// every free predictor in exactly one group, names given and distinct.
func (d *decoder) checkGroups(p *Plan) {
	const path = "models.partial.groups"
	pa := p.Models.Partial
	if !d.given(path) || !d.clean(path) || !d.given("models.partial.free") || !d.clean("models.partial.free") || !d.predictorsKnown(p) {
		return
	}
	nameLine := map[string]int{}
	groupOf := map[string]string{}
	for i, g := range pa.Groups {
		gp := itemPath(path, i)
		if g.Name == "" && len(pa.Groups) > 1 {
			d.errAt(gp, "a name is required when there are several groups")
		} else if line, dup := nameLine[g.Name]; dup && g.Name != "" {
			d.errAt(gp+".name", "group name %s is used twice (first at line %d)", quote(g.Name), line)
		} else {
			nameLine[g.Name] = d.line(gp + ".name")
		}
		for _, x := range g.Predictors {
			key := d.itemKey(gp+".predictors", x)
			switch other, dup := groupOf[x]; {
			case !p.hasTerm(x):
				d.errAt(key, "%s is not a predictor (%s)%s", quote(x), known(p.Predictors), p.columnOfTerm(x))
			case !slices.Contains(pa.Free, x):
				d.errAt(key, "%s is not in models.partial.free, so it cannot be constrained", quote(x))
			case dup:
				d.errAt(key, "%s is already in group %s", quote(x), quote(other))
			default:
				groupOf[x] = g.Name
			}
		}
	}
	for _, f := range pa.Free {
		if _, ok := groupOf[f]; !ok {
			d.errAt(path, "free predictor %s is in no group", quote(f))
		}
	}
}
