package plan

import (
	"strings"

	"gopkg.in/yaml.v3"
)

// Deviation is one stated departure from the registered (frozen) plan: the
// key path of the canonical form that changed, or a section above it, and
// the reason. Deviations are not part of the canonical form: stating why
// the plan changed does not change the analysis.
type Deviation struct {
	Key    string // key path of the canonical form, e.g. "rules[2].reject_if_test_rejects.alpha" or "rules"
	Reason string
	Line   int
}

var deviationKeys = keysAt("deviations")

// Covers reports whether the deviation explains a change at path: the
// path is its key or lies below it.
func (dv Deviation) Covers(path string) bool {
	k := dv.Key
	return path == k || strings.HasPrefix(path, k+".") || strings.HasPrefix(path, k+"[")
}

// decodeDeviations reads the deviations list.
func (d *decoder) decodeDeviations(n *yaml.Node) []Deviation {
	items, ok := d.list(n, "deviations")
	if !ok {
		return nil
	}
	var out []Deviation
	seen := map[string]int{}
	for i, it := range items {
		path := itemPath("deviations", i)
		m := d.mapping(it, path, deviationKeys)
		if m == nil {
			continue
		}
		if m.node == nil {
			d.errorf(it, path, "want a mapping with keys key, reason; got null")
			continue
		}
		var dv Deviation
		dv.Line = deref(it).Line
		if v := m.required("key"); v != nil {
			if s, ok := d.name(v, m.at("key")); ok {
				dv.Key = strings.TrimSpace(s)
				if line, dup := seen[dv.Key]; dup {
					d.errorf(deref(v), m.at("key"), "%s is already explained at line %d; give one reason per key", quote(dv.Key), line)
				}
				seen[dv.Key] = dv.Line
			}
		}
		if v := m.required("reason"); v != nil {
			if s, ok := d.text(v, m.at("reason")); ok {
				if strings.TrimSpace(s) == "" {
					d.errorf(deref(v), m.at("reason"), "the reason is empty; say why the registered plan was changed")
				} else {
					dv.Reason = strings.TrimSpace(s)
				}
			}
		}
		out = append(out, dv)
	}
	return out
}
