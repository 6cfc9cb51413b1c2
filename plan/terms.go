package plan

import (
	"fmt"
	"slices"
	"strings"

	"gopkg.in/yaml.v3"

	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// CategoricalColumn is one entry of the `categorical` section: a column
// read as text (or as integer codes) whose values are the listed levels.
type CategoricalColumn struct {
	Column string
	Key    string // plan key, e.g. categorical.site
	// LevelsLine and LevelsCol are where the plan writes the levels (0:
	// not from a plan file): a problem of the levels against the data
	// (one that no row used has) is named there.
	LevelsLine, LevelsCol int
	design.Categorical
}

var (
	categoricalKeys = keysAt("categorical")
	codingWords     = []string{design.Treatment, design.Sum, design.Successive}
	unobservedWords = []string{design.UnobservedRefuse, design.UnobservedDrop}
	termKeys        = keysAt("predictors")
	logKeys         = keysAt("predictors.log")
	polyKeys        = keysAt("predictors.polynomial")
	polyBasisWords  = []string{"orthogonal", "raw"}
	splineKeys      = keysAt("predictors.spline")
)

// decodeCategorical reads the categorical section: column: {levels, ...}.
func (d *decoder) decodeCategorical(n *yaml.Node) []CategoricalColumn {
	var out []CategoricalColumn
	d.eachColumn(n, "categorical", "{levels: [...], ...}", func(k, v *yaml.Node, path string) {
		c := CategoricalColumn{Column: k.Value, Key: path}
		c.Coding, c.Unobserved = design.Treatment, design.UnobservedRefuse
		m := d.mapping(v, path, categoricalKeys)
		if m == nil {
			return
		}
		if v := m.required("levels"); v != nil {
			c.LevelsLine, c.LevelsCol = deref(v).Line, deref(v).Column
			if list, ok := d.names(v, m.at("levels")); ok && d.clean(m.at("levels")) {
				c.Levels = list
			}
		}
		m.name("reference", &c.Reference)
		m.word("coding", "coding", codingWords, &c.Coding)
		m.boolean("ordered", &c.Ordered)
		m.word("unobserved", "handling of an unobserved level", unobservedWords, &c.Unobserved)
		if c.Unobserved == design.UnobservedDrop {
			c.UnobservedAt = m.at("unobserved")
		}
		if c.Levels != nil {
			if key, err := c.Check(); err != nil {
				d.errAt(m.at(key), "%v", err)
			}
		}
		if c.Coding == design.Successive && !c.Ordered && d.clean(m.at("coding")) {
			d.errAt(m.at("coding"), "successive-difference coding is for ordered levels; add ordered: true (the levels are then in the order listed)")
		}
		if c.Reference == "" && len(c.Levels) > 0 {
			c.Reference = c.Levels[0]
		}
		out = append(out, c)
	})
	return out
}

// decodeTerms reads a predictor list: each item a column name or a
// mapping describing one term. It returns the term names (Predictors)
// and the terms.
func (d *decoder) decodeTerms(n *yaml.Node, path string) ([]string, []design.TermSpec) {
	items, ok := d.list(n, path)
	if !ok {
		return nil, nil
	}
	var names []string
	var terms []design.TermSpec
	var badTerms []string
	defer func() { d.badTerms = append(d.badTerms, badTerms...) }()
	seen := map[string]int{}
	for i, it := range items {
		p := itemPath(path, i)
		var t design.TermSpec
		if deref(it).Kind == yaml.MappingNode {
			var ok bool
			if t, ok = d.decodeTerm(it, p); !ok {
				// a bad term is reported once, not again by every term
				// that names it
				seen[t.Name] = deref(it).Line
				badTerms = append(badTerms, t.Name)
				continue
			}
		} else {
			s, ok := d.name(it, p)
			if !ok {
				continue
			}
			t = design.TermSpec{Name: s, Source: s, Key: p}
		}
		if line, dup := seen[t.Name]; dup {
			d.errorf(deref(it), p, "%s is listed twice (first at line %d)", quote(t.Name), line)
			continue
		}
		seen[t.Name] = deref(it).Line
		t.Line, t.Col = deref(it).Line, deref(it).Column
		names = append(names, t.Name)
		terms = append(terms, t)
	}
	return names, terms
}

// decodeTerm reads one term written as a mapping.
func (d *decoder) decodeTerm(n *yaml.Node, path string) (design.TermSpec, bool) {
	t := design.TermSpec{Key: path}
	m := d.mapping(n, path, termKeys)
	if m == nil {
		return t, false
	}
	before := len(d.errs)
	m.name("name", &t.Name)
	if v := m.get("interact"); v != nil {
		if m.get("column") != nil {
			d.errAt(m.at("interact"), "a term is either a column (column: ...) or an interaction (interact: [...]), not both")
		}
		named := len(d.errs)
		list, ok := d.names(v, m.at("interact"))
		// A name listed twice is said once, as such (interact: [z, z]),
		// not also as an interaction of one term.
		if ok && len(list) < 2 && len(d.errs) == named {
			d.errorf(deref(v), m.at("interact"), "an interaction needs at least two terms, got %d", len(list))
		}
		t.Interact = list
		for _, k := range []string{"log", "sqrt", "centre", "scale", "polynomial", "spline"} {
			if m.get(k) != nil {
				d.errAt(m.at(k), "an interaction multiplies terms as they are; transform a column in its own term and name that term in interact")
			}
		}
		if t.Name == "" {
			t.Name = strings.Join(list, "&")
		}
		return t, len(d.errs) == before
	}
	if v := m.required("column"); v != nil {
		t.Source, _ = d.name(v, m.at("column"))
	}
	tr := &t.Transform
	var parts []string
	if v := m.get("log"); v != nil {
		tr.Log = true
		parts = append(parts, "log")
		if dv := deref(v); dv.Kind == yaml.MappingNode {
			lm := d.mapping(v, m.at("log"), logKeys)
			if s := lm.get("shift"); s != nil {
				tr.Shift, _ = d.number(s, lm.at("shift"))
			}
		} else if b, ok := d.boolean(v, m.at("log")); ok && !b {
			tr.Log = false
			parts = parts[:0]
		}
	}
	if v := m.get("sqrt"); v != nil {
		if b, ok := d.boolean(v, m.at("sqrt")); ok && b {
			tr.Sqrt = true
			parts = append(parts, "sqrt")
		}
	}
	if v := m.get("centre"); v != nil {
		dv := deref(v)
		if dv.Kind == yaml.ScalarNode && dv.ShortTag() == "!!str" {
			if dv.Value != "mean" {
				d.errorf(dv, m.at("centre"), "want mean or a number, got %s", describe(dv))
			}
			tr.Centre = "mean"
		} else if x, ok := d.numberWant(v, m.at("centre"), "mean or a number"); ok {
			tr.Centre, tr.CentreAt = "value", x
		}
		parts = append(parts, "c")
	}
	if v := m.get("scale"); v != nil {
		if _, ok := d.word(v, m.at("scale"), "scale", []string{"sd"}); ok {
			tr.Scale = true
			parts = append(parts, "s")
		}
	}
	if v := m.get("polynomial"); v != nil {
		tr.Poly = 0
		pm := d.mapping(v, m.at("polynomial"), polyKeys)
		if pm != nil {
			if dg := pm.required("degree"); dg != nil {
				if k, ok := d.integer(dg, pm.at("degree")); ok {
					if err := design.CheckDegree(int(k)); err != nil {
						d.errorf(deref(dg), pm.at("degree"), "%v", err)
					} else {
						tr.Poly = int(k)
					}
				}
			}
			basis := "orthogonal"
			pm.word("basis", "polynomial basis", polyBasisWords, &basis)
			tr.PolyRaw = basis == "raw"
		}
		parts = append(parts, "polynomial")
	}
	if v := m.get("spline"); v != nil {
		sm := d.mapping(v, m.at("spline"), splineKeys)
		if sm != nil {
			kn, qu := sm.get("knots"), sm.get("quantiles")
			switch {
			case kn != nil && qu != nil:
				d.errAt(sm.at("quantiles"), "give knots or quantiles, not both")
			case kn != nil:
				tr.Knots = d.increasing(kn, sm.at("knots"), false)
			case qu != nil:
				tr.Quantiles = d.increasing(qu, sm.at("quantiles"), true)
			default:
				d.errAt(m.at("spline"), "a spline needs knots: [values] or quantiles: [probabilities]")
			}
		}
		parts = append(parts, "spline")
	}
	if key, err := tr.Conflict(); err != nil {
		d.errAt(m.at(key), "%v", err)
	}
	if t.Name == "" {
		t.Name = strings.Join(append([]string{t.Source}, parts...), ".")
	}
	return t, len(d.errs) == before
}

// increasing reads at least 3 strictly increasing numbers (probabilities
// in [0, 1] when prob).
func (d *decoder) increasing(n *yaml.Node, path string, prob bool) []float64 {
	items, ok := d.list(n, path)
	if !ok {
		return nil
	}
	var out []float64
	for i, it := range items {
		x, ok := d.number(it, itemPath(path, i))
		if !ok {
			return nil
		}
		out = append(out, x)
	}
	if i, err := design.CheckKnots(out, prob); err != nil {
		if i < 0 {
			d.errorf(deref(n), path, "%v", err)
		} else {
			d.errorf(deref(items[i]), itemPath(path, i), "%v", err)
		}
		return nil
	}
	return out
}

// checkTerms checks the terms against the categorical section: a
// categorical column is not transformed, an interaction names terms
// listed before it, and term names are usable as column names.
func (d *decoder) checkTerms(p *Plan, terms []design.TermSpec, listKey string) {
	names := map[string]bool{}
	for i, t := range terms {
		plain := len(t.Interact) == 0 && t.Transform.Empty() && p.categorical(t.Source) == nil
		if bad := design.BadNameChars(t.Name); bad != "" && !plain && d.clean(t.Key) {
			d.errAt(t.Key, "term name %s contains %s, which cannot be part of a column name (names are used in hypotheses and in the command line's group syntax); give the term a name with name:", quote(t.Name), bad)
		}
		// A numeric term of one column is that column's name, which the
		// models must not give another parameter: refused here without the
		// data (a registered plan could not run), and for every design
		// column where the design is built.
		if len(t.Interact) == 0 && p.categorical(t.Source) == nil && t.Transform.Poly == 0 && !t.Transform.Spline() && d.clean(t.Key) {
			if why := fit.ReservedName(t.Name); why != "" {
				d.errAt(t.Key, "term name %s cannot be used: %s; give the term another name: {name: NAME, column: %s}", quote(t.Name), why, t.Source)
			}
		}
		if len(t.Interact) > 0 {
			for _, c := range t.Interact {
				if !names[c] && !slices.Contains(d.badTerms, c) {
					hint := design.ColumnNotTerm(c, terms[:i])
					if hint == "" {
						hint = "interactions name earlier terms, e.g. interact: [treat, age]"
					}
					d.errAt(d.itemKey(t.Key+".interact", c), "%s is not a term listed before this interaction in %s (%s)", quote(c), listKey, hint)
				}
			}
		} else if p.categorical(t.Source) != nil && !t.Transform.Empty() {
			d.errAt(t.Key, "column %s is declared categorical (%s) and cannot be transformed", quote(t.Source), p.categorical(t.Source).Key)
		}
		names[t.Name] = true
	}
}

func (p *Plan) categorical(col string) *CategoricalColumn {
	for i := range p.Categorical {
		if p.Categorical[i].Column == col {
			return &p.Categorical[i]
		}
	}
	return nil
}

// Categorical returns the declaration of a categorical column, or nil.
func (p *Plan) CategoricalOf(col string) *CategoricalColumn { return p.categorical(col) }

// DesignSpec is the design of an outcome's predictors: the raw columns
// its terms read (in order of first use) and the terms.
func (p *Plan) DesignSpec(o Outcome) design.Spec {
	terms := p.Terms
	if o.Terms != nil {
		terms = o.Terms
	}
	var s design.Spec
	have := map[string]bool{}
	for _, t := range terms {
		s.Terms = append(s.Terms, t)
		if t.Source == "" || have[t.Source] {
			continue
		}
		have[t.Source] = true
		src := design.Source{Name: t.Source, Unit: p.UnitOf(t.Source)}
		if c := p.categorical(t.Source); c != nil {
			cat := c.Categorical
			src.Cat = &cat
		}
		s.Sources = append(s.Sources, src)
	}
	return s
}

// PredictorsOf gives the term names of an outcome (its own list, or the
// plan's).
func (p *Plan) PredictorsOf(o Outcome) []string {
	if o.Predictors != nil {
		return o.Predictors
	}
	return p.Predictors
}

// SourceColumns lists the raw columns the plan's terms read, in order of
// first use (over the plan's list and the outcomes' own lists).
func (p *Plan) SourceColumns() []string {
	var out []string
	add := func(terms []design.TermSpec) {
		for _, t := range terms {
			if t.Source != "" && !slices.Contains(out, t.Source) {
				out = append(out, t.Source)
			}
		}
	}
	add(p.Terms)
	for _, o := range p.Outcomes {
		add(o.Terms)
	}
	return out
}

// hasTerm reports whether name is a term of the plan's list or of an
// outcome's own list.
func (p *Plan) hasTerm(name string) bool {
	if slices.Contains(p.Predictors, name) {
		return true
	}
	for _, o := range p.Outcomes {
		if slices.Contains(o.Predictors, name) {
			return true
		}
	}
	return false
}

// checkSubsetLevels refuses a subset that leaves out levels of a
// categorical predictor the plan cannot then use: its reference level, a
// level whose column the plan keeps (unobserved: refuse), or all levels
// but one. No row used can have such a level, so the run would stop on
// the data; said here, at the subset condition, before any data.
func (d *decoder) checkSubsetLevels(p *Plan) {
	if !d.clean("subset") || !d.clean("categorical") {
		return
	}
	for _, col := range p.SourceColumns() {
		c := p.categorical(col)
		if c == nil || len(c.Levels) < 2 {
			continue
		}
		for _, sc := range p.Subset {
			for _, v := range sc.Values {
				if sc.Column != col || slices.Contains(c.Levels, v) {
					continue
				}
				if l := slices.IndexFunc(c.Levels, func(l string) bool { return data.LooseText(l) == data.LooseText(v) }); l >= 0 {
					d.errAt(sc.Key, "names %s, which is not a level of %s but is written like its level %s (%s.levels): a misspelt value keeps or drops other rows than meant; write the level as declared", quote(v), col, quote(c.Levels[l]), c.Key)
					return
				}
			}
		}
		// All levels but one left out is said first: removing the levels
		// one by one would end there.
		var kept []string
		for _, l := range c.Levels {
			if excludedBy(p, col, l) == nil {
				kept = append(kept, l)
			}
		}
		if len(kept) < 2 {
			first := slices.IndexFunc(c.Levels, func(l string) bool { return !slices.Contains(kept, l) })
			at := excludedBy(p, col, c.Levels[first]).Key
			if len(kept) == 1 {
				d.errAt(at, "leaves only one level (%s) of %s among the rows used: a categorical predictor needs two; drop %s from the predictors of this subset", quote(kept[0]), col, col)
			} else {
				d.errAt(at, "leaves out every level of %s (%s): no row used can have one", col, strings.Join(c.Levels, ", "))
			}
			continue
		}
		for _, l := range c.Levels {
			sc := excludedBy(p, col, l)
			switch {
			case sc == nil:
			case l == c.Reference:
				d.errAt(sc.Key, "leaves out the rows of level %s of %s, the reference level (%s): no row used has it; choose another reference", quote(l), col, c.Key)
				return
			case c.Unobserved != design.UnobservedDrop:
				d.errAt(sc.Key, "leaves out the rows of level %s of %s, which %s declares: no row used has it, so its column cannot be estimated; remove the level from %s.levels (rows outside the subset may keep it) or set %s.unobserved: drop", quote(l), col, c.Key, c.Key, c.Key)
				return
			}
		}
	}
}

// columnOfTerm says, for a name that is a design column of a term with
// several columns (a level of a categorical predictor, a column of a
// polynomial, spline or interaction), that the term is listed instead:
// its columns move together. "" otherwise.
func (p *Plan) columnOfTerm(name string) string {
	specs := []design.Spec{p.DesignSpec(Outcome{})}
	for _, o := range p.Outcomes {
		if o.Terms != nil {
			specs = append(specs, p.DesignSpec(o))
		}
	}
	for _, spec := range specs {
		names, err := design.Names(spec)
		if err != nil {
			continue
		}
		for i, cols := range names {
			if len(cols) > 1 && slices.Contains(cols, name) {
				return fmt.Sprintf("; %s is a column of the term %s, whose %d columns (%s) move together: name the term", quote(name), quote(spec.Terms[i].Name), len(cols), strings.Join(cols, ", "))
			}
		}
	}
	return ""
}

// Subset conditions: the key names the comparison.
var subsetOps = []struct{ key, op string }{
	{"less_than", "<"}, {"at_most", "<="}, {"greater_than", ">"}, {"at_least", ">="},
	{"equal_to", "=="}, {"not_equal_to", "!="}, {"one_of", "in"}, {"none_of", "not_in"},
}

// decodeSubset reads the subset section: a list of conditions, each
// {column: c, <comparison>: value} (a number, or a list of values for
// one_of / none_of). A row is used when it meets every condition.
func (d *decoder) decodeSubset(n *yaml.Node) []data.Condition {
	items, ok := d.list(n, "subset")
	if !ok {
		return nil
	}
	keys := []string{"column"}
	for _, o := range subsetOps {
		keys = append(keys, o.key)
	}
	var out []data.Condition
	for i, it := range items {
		p := itemPath("subset", i)
		m := d.mapping(it, p, keys)
		if m == nil {
			continue
		}
		c := data.Condition{Key: p}
		if v := m.required("column"); v != nil {
			c.Column, _ = d.name(v, m.at("column"))
		}
		given := 0
		for _, o := range subsetOps {
			v := m.get(o.key)
			if v == nil {
				continue
			}
			given++
			c.Op = o.op
			switch t := deref(v); {
			case o.op == "in" || o.op == "not_in":
				c.Values, _ = d.readList(v, m.at(o.key), d.token)
			case (o.op == "==" || o.op == "!=") && t != nil && t.Kind == yaml.ScalarNode && t.ShortTag() == "!!str":
				// A level or code compared as a number: say which key compares text.
				list := "one_of"
				if o.op == "!=" {
					list = "none_of"
				}
				if h := numberTextHint(t); h != "" {
					d.errorf(t, m.at(o.key), "want a number, got string %s%s", quote(t.Value), h)
					continue
				}
				item := t.Value
				if strings.ContainsAny(item, ",[]{}#:&*!|>'\"%@`") || item != strings.TrimSpace(item) {
					item = quote(item) // read as one text in a flow list
				}
				d.errorf(t, m.at(o.key), "want a number, got string %s: %s compares numbers; to compare the text, write %s: [%s]", quote(t.Value), o.key, list, item)
			default:
				c.Number, _ = d.number(v, m.at(o.key))
			}
		}
		if given != 1 {
			names := make([]string, len(subsetOps))
			for j, o := range subsetOps {
				names[j] = o.key
			}
			d.errorf(deref(it), p, "a condition needs the column and exactly one comparison (%s), got %d", orList(names), given)
			continue
		}
		out = append(out, c)
	}
	return out
}
