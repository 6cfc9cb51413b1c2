package plan

import (
	"fmt"
	"slices"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"ordplan/runner/fit"
)

// decodeRules reads the rules list. Every item gives one Rule, so indexes
// match the plan; bad items have an empty Kind.
func (d *decoder) decodeRules(n *yaml.Node) []Rule {
	if !d.nonEmpty(n, "rules", "rule") {
		return nil
	}
	items, ok := d.list(n, "rules")
	if !ok {
		return nil
	}
	out := make([]Rule, len(items))
	for i, it := range items {
		out[i] = d.decodeRule(it, itemPath("rules", i))
	}
	return out
}

const ruleShape = "a one-key mapping naming the rule kind, such as `reject_unconverged: true` or `choose: {by: bic}`"

func (d *decoder) decodeRule(n *yaml.Node, path string) Rule {
	n = deref(n)
	r := Rule{}
	if n == nil || n.Kind != yaml.MappingNode {
		d.errorf(n, path, "want %s; got %s", ruleShape, describe(n))
		return r
	}
	r.Line = n.Line
	if len(n.Content) != 2 {
		d.errorf(n, path, "want %s; got a mapping with %d keys", ruleShape, len(n.Content)/2)
		return r
	}
	k, v := deref(n.Content[0]), n.Content[1]
	if k == nil || k.Kind != yaml.ScalarNode {
		d.errorf(k, path, "want %s; the key is %s", ruleShape, describe(k))
		return r
	}
	kind := k.Value
	if !slices.Contains(ruleKindWords, kind) {
		d.errorf(k, path, "%s", unknownWord("rule kind", kind, ruleKindWords))
		return r
	}
	p := childPath(path, kind)
	d.record(p, v)
	switch kind {
	case RuleRejectUnconverged, RuleRejectNegativeProbabilities:
		if !d.flag(v, p) {
			return r
		}
	case RuleRejectIfTestRejects:
		r.Test, r.Against = fit.TestLR, AgainstLeast
		m, ok := d.ruleOptions(v, p, rejectKeys)
		if !ok {
			return r
		}
		typedWord(m, "test", "test", fit.TestWords, ruleTests, &r.Test)
		m.probability("alpha", &r.Alpha) // 0 = tests.alpha, set in applyDefaults
		m.word("against", "comparison", againstWords, &r.Against)
		typedWords(m, "applies_to", "effect structure", fit.StructureWords, fit.StructureWords.All(), false, &r.AppliesTo)
	case RuleChoose, RulePreferSimpler:
		r.By, r.Otherwise = "bic", OtherwiseStop
		if kind == RulePreferSimpler {
			r.Margin = 2
		}
		m, ok := d.ruleOptions(v, p, chooseKeys)
		if !ok {
			return r
		}
		m.word("by", "criterion", criterionWords, &r.By)
		if f, ok := m.bounded(ruleKey(kind, "margin")); ok {
			r.Margin = f
		}
		m.name("otherwise", &r.Otherwise)
	case RuleRejectIfSimplerIsClose:
		m, ok := d.ruleOptions(v, p, closeKeys)
		if !ok {
			return r
		}
		if m.required("max_difference") != nil {
			m.probability("max_difference", &r.MaxDifference)
		}
		r.Grid = d.decodeGrid(m.get("grid"), m.at("grid"))
	case RuleRejectIfSparse:
		m, ok := d.ruleOptions(v, p, sparseKeys)
		if !ok {
			return r
		}
		if f, ok := m.bounded(ruleKey(kind, "per_parameter")); ok {
			r.PerParameter = f
		}
		if f, ok := m.bounded(ruleKey(kind, "smallest_category")); ok {
			r.SmallestCategory = f
		}
		m.name("within", &r.Within)
		if m.get("per_parameter") == nil && m.get("smallest_category") == nil {
			d.errorf(deref(v), p, "give per_parameter (observations per parameter), smallest_category (smallest outcome category count) or both")
		}
		if r.Within != "" && m.get("smallest_category") == nil {
			d.errAt(m.at("within"), "within counts the outcome categories within each value of a column, and smallest_category is not given")
		}
	case RuleRejectIfUnstable:
		m, ok := d.ruleOptions(v, p, unstableKeys)
		if !ok {
			return r
		}
		if f, ok := m.bounded(ruleKey(kind, "max_condition")); ok {
			r.MaxCondition = f
		}
		if n, ok := m.wholeInRange(ruleKey(kind, "min_starts_agreeing")); ok {
			r.MinStartsAgreeing = int(n)
		}
		if m.get("max_condition") == nil && m.get("min_starts_agreeing") == nil {
			d.errorf(deref(v), p, "give max_condition (largest condition number of the information), min_starts_agreeing (starts of a constrained search that reach the best value) or both")
		}
	}
	r.Kind = kind
	return r
}

// flag reads the value of a rule without options: true or an empty mapping.
func (d *decoder) flag(v *yaml.Node, path string) bool {
	v = deref(v)
	if v != nil && v.Kind == yaml.MappingNode && len(v.Content) == 0 {
		return true
	}
	if v != nil && v.Kind == yaml.ScalarNode && v.ShortTag() == "!!bool" {
		var b bool
		if v.Decode(&b) == nil && b {
			return true
		}
		d.errorf(v, path, "want true, got false; remove the rule to turn it off")
		return false
	}
	d.errorf(v, path, "want true (this rule has no options), got %s", describe(v))
	return false
}

// ruleOptions reads the value of a rule with options: true (all defaults)
// or a mapping of options.
func (d *decoder) ruleOptions(v *yaml.Node, path string, keys []string) (*mapping, bool) {
	v = deref(v)
	if v != nil && v.Kind == yaml.ScalarNode && v.ShortTag() == "!!bool" {
		var b bool
		if v.Decode(&b) == nil && b {
			return d.mapping(nil, path, keys), true
		}
		d.errorf(v, path, "want true or a mapping of options, got false; remove the rule to turn it off")
		return nil, false
	}
	if v == nil || v.Kind != yaml.MappingNode {
		d.errorf(v, path, "want true or a mapping with keys %s; got %s", strings.Join(keys, ", "), describe(v))
		return nil, false
	}
	m := d.mapping(v, path, keys)
	return m, m != nil
}

// ruleKey is the description in Spec of option name of rule kind.
func ruleKey(kind, name string) *Key { return Spec.find("rules." + kind + "." + name) }

// bounded reads the number of key x (a KindNumber with Min) within the
// bound its description gives: >= Min, or > Min when MinOpen, so that the
// help, the schema and the decoder hold one bound.
func (m *mapping) bounded(x *Key) (float64, bool) {
	mv := m.get(x.Name)
	if mv == nil {
		return 0, false
	}
	op := ">="
	if x.MinOpen {
		op = ">"
	}
	want := fmt.Sprintf("a number %s %v", op, *x.Min)
	f, ok := m.d.numberWant(mv, m.at(x.Name), want)
	if !ok {
		return 0, false
	}
	if f < *x.Min || x.MinOpen && f == *x.Min {
		m.d.errorf(deref(mv), m.at(x.Name), "%v is out of range (want %s)", f, want)
		return 0, false
	}
	return f, true
}

// wholeInRange reads the whole number of key x (a KindInteger with Min
// and Max) within the range its description gives, as bounded does for a
// number: the help, the schema and the decoder hold one range.
func (m *mapping) wholeInRange(x *Key) (int64, bool) {
	mv := m.get(x.Name)
	if mv == nil {
		return 0, false
	}
	num := func(f float64) string { return strconv.FormatFloat(f, 'f', -1, 64) }
	want := fmt.Sprintf("a whole number from %s to %s", num(*x.Min), num(*x.Max))
	n, ok := m.d.integerWant(mv, m.at(x.Name), want)
	if !ok {
		return 0, false
	}
	if float64(n) < *x.Min || float64(n) > *x.Max {
		m.d.errorf(deref(mv), m.at(x.Name), "%d is out of range (want %s)", n, want)
		return 0, false
	}
	return n, true
}

// gridCategoricalWant is what a grid takes for a categorical column.
func gridCategoricalWant(col string) string {
	return fmt.Sprintf("%s is categorical: give %s (%s: %s, every level the rows used have), one of its levels, or a list of its levels", quote(col), GridAllLevels, col, GridAllLevels)
}

// gridNumericAll says why all is refused for a column not declared
// categorical.
func gridNumericAll(col string) string {
	return fmt.Sprintf("%s is for a categorical column (every level); %s is numeric (not declared under categorical): give a list of numbers, such as %s: [-1, 0, 1]", GridAllLevels, quote(col), col)
}

// isWord reports whether n is the plain scalar w (not null).
func isWord(n *yaml.Node, w string) bool {
	return n != nil && n.Kind == yaml.ScalarNode && n.ShortTag() != "!!null" && n.Value == w
}

// decodeGrid reads a grid of prediction points: a mapping of predictor to
// a non-empty list of numbers (a numeric column) or to all, a level or a
// list of levels (a declared categorical column), in plan order. The
// levels are checked against the declared ones by checkRules.
func (d *decoder) decodeGrid(n *yaml.Node, path string) []GridAxis {
	n = deref(n)
	if n == nil {
		return nil
	}
	if n.Kind != yaml.MappingNode || len(n.Content) == 0 {
		d.errorf(n, path, "want a mapping of predictor: [values], such as {age: [20, 40, 60]}; got %s", describe(n))
		return nil
	}
	var out []GridAxis
	seen := map[string]bool{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := deref(n.Content[i]), n.Content[i+1]
		kp := childPath(path, k.Value)
		d.record(kp, v)
		if seen[k.Value] {
			d.errorf(k, kp, "predictor is given twice")
			continue
		}
		seen[k.Value] = true
		ax := GridAxis{Predictor: k.Value, Key: kp, Line: k.Line, Col: k.Column}
		if d.categorical[k.Value] {
			if ax, ok := d.gridLevels(ax, deref(v), k); ok {
				out = append(out, ax)
			}
			continue
		}
		if isWord(deref(v), GridAllLevels) {
			d.errorf(deref(v), kp, "%s", gridNumericAll(k.Value))
			continue
		}
		items, ok := d.list(v, kp)
		if !ok {
			continue
		}
		if len(items) == 0 {
			d.errorf(deref(v), kp, "list is empty; give at least one value")
			continue
		}
		for j, it := range items {
			if isWord(deref(it), GridAllLevels) {
				d.errorf(deref(it), itemPath(kp, j), "%s", gridNumericAll(k.Value))
				continue
			}
			if f, ok := d.number(it, itemPath(kp, j)); ok {
				ax.Values = append(ax.Values, f)
			}
		}
		out = append(out, ax)
	}
	return out
}

// gridLevels reads the grid's value for a categorical column: all, one
// level, or a list of levels (numbers and booleans as written, as
// categorical.COLUMN.levels lists them). Anything else is refused once,
// at the column's key (P41).
func (d *decoder) gridLevels(ax GridAxis, v, key *yaml.Node) (GridAxis, bool) {
	kp := ax.Key
	switch {
	case isWord(v, GridAllLevels):
		ax.AllLevels = true
		return ax, true
	case v != nil && v.Kind == yaml.ScalarNode && v.ShortTag() != "!!null":
		if l, ok := d.name(v, kp); ok {
			ax.Levels = []string{l}
			return ax, true
		}
		return ax, false
	case v != nil && v.Kind == yaml.SequenceNode && len(v.Content) > 0:
		ok := true
		for j, it := range v.Content {
			ip := itemPath(kp, j)
			d.record(ip, it)
			if it := deref(it); it == nil || it.Kind != yaml.ScalarNode || it.ShortTag() == "!!null" {
				d.errorf(it, ip, "%s; got %s", gridCategoricalWant(ax.Predictor), describe(it))
				ok = false
				continue
			}
			l, lok := d.name(it, ip)
			if !lok {
				ok = false
				continue
			}
			ax.Levels = append(ax.Levels, l)
		}
		return ax, ok
	}
	at, got := v, describe(v)
	if at == nil {
		at = key
	}
	if v != nil && v.Kind == yaml.SequenceNode {
		got = "an empty list"
	}
	d.errorf(at, kp, "%s; got %s", gridCategoricalWant(ax.Predictor), got)
	return ax, false
}
