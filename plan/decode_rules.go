package plan

import (
	"slices"
	"strings"

	"gopkg.in/yaml.v3"
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
		r.Test = "lr"
		m, ok := d.ruleOptions(v, p, rejectKeys)
		if !ok {
			return r
		}
		m.word("test", "test", ruleTestWords, &r.Test)
		m.probability("alpha", &r.Alpha) // 0 = tests.alpha, set in applyDefaults
	case RuleChoose, RulePreferSimpler:
		r.By = "bic"
		if kind == RulePreferSimpler {
			r.Margin = 2
		}
		m, ok := d.ruleOptions(v, p, chooseKeys)
		if !ok {
			return r
		}
		m.word("by", "criterion", criterionWords, &r.By)
		if mv := m.get("margin"); mv != nil {
			if f, ok := d.number(mv, m.at("margin")); ok {
				if f < 0 {
					d.errorf(deref(mv), m.at("margin"), "%v is out of range (want a number >= 0)", f)
				} else {
					r.Margin = f
				}
			}
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
