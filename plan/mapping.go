package plan

import (
	"slices"
	"strings"

	"gopkg.in/yaml.v3"

	"ordplan/internal/words"
)

// mapping is a checked YAML mapping: only allowed keys, each at most once.
type mapping struct {
	d    *decoder
	path string
	node *yaml.Node // nil when the mapping was absent or null
	vals map[string]*yaml.Node
	// slipped holds the allowed keys that an unknown key was said to be a
	// slip of: such a key, when required, is not also said to be missing.
	slipped map[string]bool
}

// mapping checks that n is a mapping holding only the allowed keys. A null
// or absent n gives an empty mapping; any other kind is reported and gives
// nil.
func (d *decoder) mapping(n *yaml.Node, path string, allowed []string) *mapping {
	n = deref(n)
	m := &mapping{d: d, path: path, vals: map[string]*yaml.Node{}}
	if isNull(n) {
		return m
	}
	if n.Kind != yaml.MappingNode {
		d.errorf(n, path, "want a mapping with keys %s; got %s", strings.Join(allowed, ", "), describe(n))
		return nil
	}
	m.node = n
	keyLine := map[string]int{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := deref(n.Content[i]), n.Content[i+1]
		if k == nil || k.Kind != yaml.ScalarNode {
			d.errorf(k, path, "keys must be plain names, got %s", describe(k))
			continue
		}
		p := childPath(path, k.Value)
		if line, dup := keyLine[k.Value]; dup {
			d.errorf(k, p, "key is given twice (first at line %d)", line)
			continue
		}
		keyLine[k.Value] = k.Line
		if !slices.Contains(allowed, k.Value) {
			d.errorf(k, p, "unknown key %s (allowed: %s)%s", quote(k.Value), strings.Join(allowed, ", "), nearKey(k.Value, allowed))
			if near := nearest(k.Value, allowed); near != "" {
				if m.slipped == nil {
					m.slipped = map[string]bool{}
				}
				m.slipped[near] = true
			}
			continue
		}
		m.vals[k.Value] = d.record(p, v)
	}
	return m
}

// nearKey suggests the allowed key an unknown key is a slip of
// (resample for resamples, selection_stabilty), or says nothing when
// none is near.
func nearKey(key string, allowed []string) string {
	if near := nearest(key, allowed); near != "" {
		return "; did you mean " + quote(near) + "?"
	}
	return ""
}

// nearest is the allowed key nearest in spelling to key, or "" when none
// is near.
func nearest(key string, allowed []string) string {
	if len(key) < 3 {
		return "" // a letter or two is near too many keys to suggest one
	}
	if near := words.Nearest(key, allowed, 1); len(near) == 1 {
		return near[0]
	}
	return ""
}

// at gives the path of key inside the mapping.
func (m *mapping) at(key string) string { return childPath(m.path, key) }

// get gives the value of key, or nil when it is absent or null.
func (m *mapping) get(key string) *yaml.Node {
	if m == nil {
		return nil
	}
	v := m.vals[key]
	if isNull(v) {
		return nil
	}
	return v
}

// required gives the value of key, reporting it when absent or null.
func (m *mapping) required(key string) *yaml.Node {
	if m == nil {
		return nil
	}
	v, present := m.vals[key]
	switch {
	case !present && m.slipped[key]:
		return nil // said at the unknown key that is a slip of it
	case !present:
		where := m.node
		if where == nil {
			where = m.d.near(m.path)
		}
		m.d.errorf(where, m.at(key), "required key is missing")
		return nil
	case isNull(v):
		m.d.errorf(v, m.at(key), "required; null does not count as a value")
		return nil
	}
	return v
}

// Typed getters: each leaves *dst unchanged when the key is absent, null or bad.

func (m *mapping) name(key string, dst *string) {
	if v := m.get(key); v != nil {
		if s, ok := m.d.name(v, m.at(key)); ok {
			*dst = s
		}
	}
}

func (m *mapping) text(key string, dst *string) {
	if v := m.get(key); v != nil {
		if s, ok := m.d.text(v, m.at(key)); ok {
			*dst = s
		}
	}
}

func (m *mapping) word(key, what string, words []string, dst *string) {
	if v := m.get(key); v != nil {
		if s, ok := m.d.word(v, m.at(key), what, words); ok {
			*dst = s
		}
	}
}

func (m *mapping) probability(key string, dst *float64) {
	if v := m.get(key); v != nil {
		if f, ok := m.d.probability(v, m.at(key)); ok {
			*dst = f
		}
	}
}

func (m *mapping) boolean(key string, dst *bool) {
	if v := m.get(key); v != nil {
		if b, ok := m.d.boolean(v, m.at(key)); ok {
			*dst = b
		}
	}
}

// words reads a list of allowed words; an empty list is reported unless
// emptyOK. Bad items are dropped; if none is left *dst keeps its default.
// It reports whether *dst was set.
func (m *mapping) words(key, what string, words []string, emptyOK bool, dst *[]string) bool {
	v := m.get(key)
	if v == nil {
		return false
	}
	if !emptyOK && !m.d.nonEmpty(v, m.at(key), what) {
		return false
	}
	list, ok := m.d.words(v, m.at(key), what, words)
	if ok && (len(list) > 0 || emptyOK && m.d.clean(m.at(key))) {
		*dst = list
		return true
	}
	return false
}
