package plan

import (
	"fmt"
	"math"
	"ordplan/internal/words"
	"slices"
	"strconv"

	"gopkg.in/yaml.v3"
)

// Entry is one column of the plan's data dictionary: what the column
// holds, so that check and run can validate the data file against it and
// the report can print it. A column's kind and categories are stated
// once: an outcome is ordered, with the categories of its outcomes entry;
// a categorical predictor has the levels of its categorical entry; any
// other column the plan uses is numeric, and its dictionary entry may give
// its range or its allowed values (codes such as 0/1).
type Entry struct {
	Column  string
	Key     string    // plan key, e.g. "dictionary.age"
	Label   string    // human description
	Unit    string    // unit of measurement
	Range   []float64 // [min, max], inclusive; nil = any number
	Values  []string  // allowed values of a numeric column (as written); nil = any
	Missing []string  // this column's own missing-value codes (besides data.missing_values)
	// ByChance says the column's values were assigned to the units by
	// chance (a randomized treatment): a predictor only.
	ByChance bool
}

var (
	entryKeys = keysAt("dictionary")
)

// decodeDictionary reads `dictionary: {column: {label, unit, range,
// values, missing, assigned_by_chance}}`, keeping the plan's order of
// columns.
func (d *decoder) decodeDictionary(n *yaml.Node) []Entry {
	var out []Entry
	d.eachColumn(n, "dictionary", "{label, unit, range, values, missing, assigned_by_chance}", func(k, v *yaml.Node, path string) {
		e := Entry{Column: k.Value, Key: path}
		m := d.mapping(v, path, entryKeys)
		if m == nil {
			return
		}
		m.text("label", &e.Label)
		m.text("unit", &e.Unit)
		m.boolean("assigned_by_chance", &e.ByChance)
		if v := m.get("range"); v != nil {
			e.Range = d.valueRange(v, m.at("range"))
		}
		if v := m.get("values"); v != nil {
			if list, ok := d.readList(v, m.at("values"), d.name); ok && d.clean(m.at("values")) {
				for j, s := range list {
					if _, err := strconv.ParseFloat(s, 64); err != nil {
						d.errAt(itemPath(m.at("values"), j), "%s is not a number: the values of a numeric column are numbers (the categories of an outcome are given in outcomes[].categories)", quote(s))
					}
				}
				if len(list) < 2 {
					d.errorf(deref(v), m.at("values"), "a column with fewer than 2 allowed values is constant")
				}
				e.Values = list
			}
			if e.Range != nil {
				d.errAt(m.at("values"), "give range or values, not both")
			}
		}
		if v := m.get("missing"); v != nil {
			e.Missing, _ = d.readList(v, m.at("missing"), d.missingCode)
		}
		out = append(out, e)
	})
	return out
}

// eachColumn reads a section that maps column names to mappings (the
// dictionary, the categorical columns): it refuses a section that is not
// a mapping, an empty or non-text key and a column given twice, records
// each entry's line, and calls f with the key, the value and its plan path.
func (d *decoder) eachColumn(n *yaml.Node, section, shape string, f func(k, v *yaml.Node, path string)) {
	n = deref(n)
	if n.Kind != yaml.MappingNode {
		d.errorf(n, section, "want a mapping of column: %s, got %s", shape, describe(n))
		return
	}
	seen := map[string]int{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k := deref(n.Content[i])
		if k == nil || k.Kind != yaml.ScalarNode || k.Value == "" {
			d.errorf(k, section, "keys must be column names, got %s", describe(k))
			continue
		}
		path := childPath(section, k.Value)
		if line, dup := seen[k.Value]; dup {
			d.errorf(k, path, "column is given twice (first at line %d)", line)
			continue
		}
		seen[k.Value] = k.Line
		d.record(path, n.Content[i+1])
		f(k, n.Content[i+1], path)
	}
}

// valueRange reads [min, max] with min < max.
func (d *decoder) valueRange(n *yaml.Node, path string) []float64 {
	items, ok := d.list(n, path)
	if !ok {
		return nil
	}
	if len(items) != 2 {
		d.errorf(deref(n), path, "want [min, max], got %s", words.Count(len(items), "value", "values"))
		return nil
	}
	lo, ok1 := d.number(items[0], itemPath(path, 0))
	hi, ok2 := d.number(items[1], itemPath(path, 1))
	if !ok1 || !ok2 {
		return nil
	}
	if !(lo < hi) {
		d.errorf(deref(n), path, "the minimum %s is not below the maximum %s", fmtNum(lo), fmtNum(hi))
		return nil
	}
	return []float64{lo, hi}
}

func fmtNum(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// checkDictionary checks the dictionary against the plan: it describes
// columns the plan uses, and when it is given it describes every one
// (an outcome is described by its outcomes entry and a subset column by
// its condition: their dictionary entries are optional).
func (d *decoder) checkDictionary(p *Plan) {
	if !d.given("dictionary") || !d.clean("dictionary") {
		return
	}
	used := p.UsedColumns()
	for _, e := range p.Dictionary {
		u, ok := findUsed(used, e.Column)
		if !ok && d.derived {
			// A sensitivity analysis's plan: the dictionary may describe
			// the columns another analysis uses (the plan's own check
			// counts them).
			continue
		}
		if !ok {
			var names []string
			for _, c := range used {
				names = append(names, c.Column)
			}
			d.errAt(e.Key, "column %s is not used by the plan (used: %s)", quote(e.Column), joinQuoted(names))
			continue
		}
		if u.Role == RoleOutcome {
			if e.Range != nil || e.Values != nil {
				d.errAt(e.Key, "%s is an outcome: its categories are given in %s, not here", quote(e.Column), u.Key+".categories")
			}
			if e.Label != "" {
				d.errAt(e.Key+".label", "%s is an outcome: its label is given in %s", quote(e.Column), u.Key+".label")
			}
		}
		if c := p.CategoricalOf(e.Column); c != nil && (e.Range != nil || e.Values != nil) {
			d.errAt(e.Key, "%s is categorical: its levels are given in %s, not here", quote(e.Column), c.Key+".levels")
		}
		if u.Role == RoleCluster && (e.Range != nil || e.Values != nil) {
			d.errAt(e.Key, "the cluster column holds ids, not numbers: give no range or values")
		}
		// The column's assignment is a fact of the data file: a
		// sensitivity analysis may use a column the primary plan reads as
		// a predictor otherwise (its subset keeping one arm), which the
		// plan's own check has found to be a predictor.
		if e.ByChance && u.Role != RolePredictor && !d.derived {
			d.errAt(e.Key+".assigned_by_chance", "%s is the %s column (%s), not a predictor: only a predictor's values can have been assigned to the units by chance (a randomized treatment); remove assigned_by_chance here", quote(e.Column), u.Role, u.Key)
		}
		for _, c := range e.Missing {
			if slices.Contains(e.Values, c) {
				d.errAt(e.Key+".missing", "%s is both an allowed value and a missing-value code", quote(c))
			}
		}
	}
	for _, u := range used {
		// A sensitivity analysis's plan leaves this to the plan's own
		// check, which counts the columns its changes bring (UsedColumns):
		// the column would be named twice.
		if p.EntryOf(u.Column) == nil && u.Role != RoleOutcome && u.Role != RoleSubset && !d.derived {
			d.errAt("dictionary", "column %s is used (%s) but not described; the dictionary describes every column the plan uses", quote(u.Column), u.Key)
		}
	}
}

func joinQuoted(xs []string) string {
	q := make([]string, len(xs))
	for i, x := range xs {
		q[i] = quote(x)
	}
	return fmt.Sprint(q)
}

// Column roles.
const (
	RoleOutcome   = "outcome"
	RolePredictor = "predictor"
	RoleWeights   = "weights"
	RoleOffset    = "offset"
	RoleCluster   = "cluster"
	RoleSubset    = "subset"
)

// UsedColumn is a column the plan reads, with its role and the key that
// names it.
type UsedColumn struct {
	Column string
	Role   string
	Key    string
}

// UsedColumns lists the columns the plan reads: outcomes, the raw columns
// of the predictor terms, weights, offset, cluster and subset columns,
// each once, with the first key that names it.
func (p *Plan) UsedColumns() []UsedColumn {
	var out []UsedColumn
	add := func(col, role, key string) {
		if col == "" {
			return
		}
		if _, dup := findUsed(out, col); !dup {
			out = append(out, UsedColumn{col, role, key})
		}
	}
	for i, o := range p.Outcomes {
		add(o.Column, RoleOutcome, itemPath("outcomes", i))
	}
	terms := slices.Clone(p.Terms)
	for _, o := range p.Outcomes {
		terms = append(terms, o.Terms...)
	}
	for _, t := range terms {
		add(t.Source, RolePredictor, t.Key)
	}
	add(p.Data.Weights, RoleWeights, "data.weights")
	add(p.Data.Offset, RoleOffset, "data.offset")
	add(p.Data.Cluster, RoleCluster, "data.cluster")
	for i, c := range p.Subset {
		add(c.Column, RoleSubset, itemPath("subset", i))
	}
	// Then the columns only a sensitivity analysis uses, named at its
	// change (the only way it brings a column).
	for _, s := range p.Sensitivity {
		for _, u := range s.Plan.UsedColumns() {
			add(u.Column, u.Role, s.Key+".change."+u.Key)
		}
	}
	return out
}

func findUsed(us []UsedColumn, col string) (UsedColumn, bool) {
	for _, u := range us {
		if u.Column == col {
			return u, true
		}
	}
	return UsedColumn{}, false
}

// ByChanceColumns lists the predictor columns the dictionary says were
// assigned to the units by chance, in the order of SourceColumns.
func (p *Plan) ByChanceColumns() []string {
	var out []string
	for _, c := range p.SourceColumns() {
		if e := p.EntryOf(c); e != nil && e.ByChance {
			out = append(out, c)
		}
	}
	return out
}

// EntryOf gives the dictionary entry of a column, or nil.
func (p *Plan) EntryOf(col string) *Entry {
	for i := range p.Dictionary {
		if p.Dictionary[i].Column == col {
			return &p.Dictionary[i]
		}
	}
	return nil
}

// UnitOf gives the unit the dictionary states for a column, or "".
func (p *Plan) UnitOf(col string) string {
	if e := p.EntryOf(col); e != nil {
		return e.Unit
	}
	return ""
}

// WithUnit is text that names a column, or a change of it in its own
// units, followed by the column's unit in brackets ("age (years)", "per
// unit of age (years)"); text alone when no unit is given. Every table and
// chart names a column's unit this way.
func WithUnit(text, unit string) string {
	if unit == "" {
		return text
	}
	return text + " (" + unit + ")"
}

func (p *Plan) outcomeOf(col string) *Outcome {
	for i := range p.Outcomes {
		if p.Outcomes[i].Column == col {
			return &p.Outcomes[i]
		}
	}
	return nil
}

// Kind gives a used column's kind as the plan states it: an outcome is
// ordered; a column declared under categorical is categorical (ordered
// when declared so); a cluster column holds ids; any other is numeric.
func (p *Plan) Kind(col string) string {
	u, ok := findUsed(p.UsedColumns(), col)
	switch {
	case !ok:
		return ""
	case u.Role == RoleOutcome:
		return "ordered"
	case p.CategoricalOf(col) != nil && p.CategoricalOf(col).Ordered:
		return "ordered"
	case p.CategoricalOf(col) != nil:
		return "categorical"
	case u.Role == RoleCluster:
		return "id"
	}
	return "numeric"
}

// InRange reports whether x is allowed by the entry's range (or there is
// none).
func (e *Entry) InRange(x float64) bool {
	return e.Range == nil || (x >= e.Range[0] && x <= e.Range[1]) || math.IsNaN(x)
}

// canonicalDictionary writes the dictionary for the canonical form.
func (p *Plan) canonicalDictionary() map[string]any {
	if len(p.Dictionary) == 0 {
		return nil
	}
	out := map[string]any{}
	for _, e := range p.Dictionary {
		m := map[string]any{"label": e.Label, "unit": e.Unit, "missing": nonNil(e.Missing)}
		if e.Range != nil {
			m["range"] = e.Range
		}
		if e.Values != nil {
			m["values"] = e.Values
		}
		if e.ByChance {
			// Only when given, so that the plans written before the key
			// keep their hash.
			m["assigned_by_chance"] = true
		}
		out[e.Column] = m
	}
	return out
}
