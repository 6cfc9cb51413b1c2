package design

import (
	"fmt"
	"slices"
)

// Names gives the design column names of every term of spec, in order,
// without data: every declared level of a categorical column counted as
// observed. Build names the columns the same way (a level that no row has
// and that the plan drops loses its column there).
func Names(spec Spec) ([][]string, error) {
	out := make([][]string, len(spec.Terms))
	index := map[string]int{}
	for i, ts := range spec.Terms {
		switch {
		case len(ts.Interact) > 0:
			var parts [][]string
			for _, name := range ts.Interact {
				k, ok := index[name]
				if !ok {
					return nil, &Error{Key: ts.Key, Msg: fmt.Sprintf("%q is not a term listed before this interaction", name)}
				}
				parts = append(parts, out[k])
			}
			out[i] = productNames(parts)
		default:
			s := slices.IndexFunc(spec.Sources, func(x Source) bool { return x.Name == ts.Source })
			if s < 0 {
				return nil, &Error{Key: ts.Key, Msg: fmt.Sprintf("column %q is not among the columns read", ts.Source)}
			}
			if c := spec.Sources[s].Cat; c != nil {
				if len(c.Levels) == 0 {
					return nil, &Error{Key: ts.Key, Msg: fmt.Sprintf("categorical column %q declares no levels", ts.Source)}
				}
				out[i] = categoricalNames(ts.Name, c.Levels, c.Levels, referenceOf(c), c.Coding)
			} else {
				out[i] = numericNames(ts.Name, ts.Transform, max(len(ts.Knots), len(ts.Quantiles)))
			}
		}
		index[ts.Name] = i
	}
	return out, nil
}

// referenceOf is a categorical column's reference level.
func referenceOf(c *Categorical) string {
	if c.Reference != "" {
		return c.Reference
	}
	return c.Levels[0]
}

// numericNames names the columns of a numeric term with knots spline knots.
func numericNames(name string, tr Transform, knots int) []string {
	n := 0
	switch {
	case tr.Poly > 0:
		n = tr.Poly
	case tr.Spline():
		n = knots - 1
	default:
		return []string{name}
	}
	out := make([]string, n)
	for k := range out {
		out[k] = fmt.Sprintf("%s.%d", name, k+1)
	}
	return out
}

// categoricalNames names the columns of a categorical term coding the
// levels kept (of the declared levels): one per level other than the
// reference (treatment, sum), or other than the first (successive).
func categoricalNames(name string, levels, kept []string, ref, coding string) []string {
	names := levelNames(levels)
	var out []string
	for j, l := range kept {
		if (coding == Successive && j == 0) || (coding != Successive && l == ref) {
			continue
		}
		out = append(out, name+"."+names[l])
	}
	return out
}

// levelNames gives each declared level its part of a column name:
// LevelName, made distinct. Levels that differ only in characters a name
// cannot hold ("cul-de-sac" and "cul de sac", or two words in another
// script) would share one; a later one gets its position among the levels
// appended ("cul_de_sac_4"), and "_2", "_3", ... after that should that
// name be taken too. The names depend on the declared levels alone, so a
// level dropped for having no row changes no other level's name.
func levelNames(levels []string) map[string]string {
	base := make([]string, len(levels))
	taken := map[string]bool{}
	for i, l := range levels {
		base[i] = LevelName(l)
		taken[base[i]] = true
	}
	out := make(map[string]string, len(levels))
	used := map[string]bool{}
	for i, l := range levels {
		n := base[i]
		if used[n] {
			n = fmt.Sprintf("%s_%d", base[i], i+1)
			for k := 2; used[n] || taken[n]; k++ {
				n = fmt.Sprintf("%s_%d_%d", base[i], i+1, k)
			}
		}
		used[n] = true
		out[l] = n
	}
	return out
}

// productNames names the columns of an interaction: every product of one
// column of each component, the first component slowest.
func productNames(parts [][]string) []string {
	cols := []string{""}
	for _, p := range parts {
		var next []string
		for _, a := range cols {
			for _, b := range p {
				if a == "" {
					next = append(next, b)
				} else {
					next = append(next, a+"&"+b)
				}
			}
		}
		cols = next
	}
	return cols
}
