package planshapes

import (
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"ordplan/plan"
)

// Choices reads the fuzz bytes as a stream of choices; once they run out
// every choice is 0 (the first option), so every input gives a plan.
type Choices struct {
	b []byte
	i int
}

// n gives a choice in [0, k).
func (c *Choices) n(k int) int {
	if k <= 1 || c.i >= len(c.b) {
		return 0
	}
	v := int(c.b[c.i])
	c.i++
	if k > 256 && c.i < len(c.b) {
		v = v<<8 | int(c.b[c.i])
		c.i++
	}
	return v % k
}

func (c *Choices) more() bool { return c.i < len(c.b) }

func pick[T any](c *Choices, xs []T) T { return xs[c.n(len(xs))] }

// Names are the column, term, level and parameter names the values are
// drawn from: those of the bases, the design columns they make, and some
// that no base declares.
var Names = []string{
	"y", "z", "a", "b", "c", "x", "w", "cl", "off",
	"safety", "pilot", "female", "age", "child_home", "years_resident", "years_log", "cyclist", "street_type",
	"change", "arm", "baseline_pain", "site",
	"treat", "grade", "dose", "bmi", "age_s", "dose.log.c", "bmi.polynomial", "treat&age_s",
	"pilot&street_type", "pilot&street_type.through_road", "street_type.through_road", "site.east", "site.south",
	"treat.drug", "grade.2", "age_s.1", "bmi.polynomial.2",
	"residential", "through_road", "cul_de_sac", "north", "east", "south", "west", "placebo", "drug",
	"very_unsafe", "unsafe", "neutral", "safe", "very_safe", "much_worse", "worse", "same", "better", "much_better",
	"1", "2", "3", "0", "-9", "NA", "", " ", "tau[1]", "tau[2]", "pilot[1]", "pilot[2]", "phi", "g1", "g2",
	"stop", "cumulative/parallel/logit", "stage/partial/probit", "adjacent/nonparallel/cauchy", "cumulative/constrained/logit",
	"cumulative/stereotype/logit", "cumulative//logit", "x/y/z", "mean", "sd", "median", "é", "a b", "a.b", "a&b", "[1]",
}

// Texts are the values of text keys (files, titles, keys of deviations).
var Texts = []string{
	"d.csv", "data/quietstreets.csv", "data/newrows.csv", "book.xlsx", "part.parquet", "parts/*.csv", "parts/[", "../x.csv",
	"/abs/d.csv", "", " ", "Sheet1", "t\u00e9", "rules[1]", "rules", "models.links", "rules[2].reject_if_test_rejects.alpha",
	"data.file", "outcomes[1].categories", "inference", "because", "EDIT", "a\nb",
}

// Integers and Numbers include values outside every key's range.
var Integers = []string{"0", "1", "2", "3", "4", "5", "10", "20", "1000", "10000000", "10000001", "-1", "-5",
	"18446744073709551615", "18446744073709551616", "9223372036854775807", "2147483648", "1e3", "1.5", "0x10"}

var Numbers = []string{"0", "1", "-1", "0.5", "0.05", "0.01", "0.95", "0.999", "2", "10", "100", "1e-300", "5e-324",
	"1e308", "-1e308", ".nan", ".inf", "-.inf", "3", "-0.5", "0.25", "0.2", "0.1", "40", "1.0000000000000002", "-0"}

// Hypothesis tokens: hypotheses are also made of these at random.
var hypTokens = []string{"a", "b", "x", "pilot", "pilot[1]", "pilot[2]", "pilot[0]", "pilot[99]", "tau[1]", "tau[4]",
	"tau[-1]", "site", "site.east", "street_type", "pilot&street_type", "arm", "age", "=", "=", "+", "-", "*", "2",
	"0.5", "0", "1e309", "(", ")", ";", ",", " ", "[", "]", "phi[1]", "treat&age_s", "y", "é", ""}

var hypotheses = []string{"a = 0", "a = b", "pilot[1] = pilot[2] = pilot[3] = pilot[4]", "female = 0",
	"pilot&street_type = 0", "tau[1] = -tau[4]", "site = 0", "site.east = 0; site.south = 0; site.west = 0",
	"arm = 0", "2*a - b = 1", "a = a", "0 = 0", "= 0", "a =", "a == 0", "a[1] = 0", "tau[1] = tau[1]",
	"a + a - 2*a = 0", "x = 1e400"}

func scalar(tag, v string) *yaml.Node {
	return &yaml.Node{Kind: yaml.ScalarNode, Tag: tag, Value: v}
}

func str(v string) *yaml.Node { return scalar("!!str", v) }

func null() *yaml.Node { return scalar("!!null", "null") }

func number(v string) *yaml.Node {
	if _, err := strconv.ParseInt(v, 10, 64); err == nil {
		return scalar("!!int", v)
	}
	if strings.HasPrefix(v, ".") || strings.HasPrefix(v, "-.") {
		return scalar("!!float", v)
	}
	if _, err := strconv.ParseFloat(v, 64); err == nil && !strings.HasPrefix(v, "0x") {
		return scalar("!!float", v)
	}
	if _, err := strconv.ParseUint(v, 10, 64); err == nil {
		return scalar("!!int", v)
	}
	return str(v)
}

func seq(items ...*yaml.Node) *yaml.Node {
	return &yaml.Node{Kind: yaml.SequenceNode, Tag: "!!seq", Content: items}
}

func mapping(kv ...*yaml.Node) *yaml.Node {
	return &yaml.Node{Kind: yaml.MappingNode, Tag: "!!map", Content: kv}
}

// g generates values.
type g struct {
	c     *Choices
	depth int
}

// wrong is a value of some other shape than the key wants.
func (g *g) wrong() *yaml.Node {
	switch g.c.n(9) {
	case 0:
		return null()
	case 1:
		return str("")
	case 2:
		return seq()
	case 3:
		return mapping()
	case 4:
		return number(pick(g.c, Numbers))
	case 5:
		return scalar("!!bool", pick(g.c, []string{"true", "false"}))
	case 6:
		return seq(str(pick(g.c, Names)), number(pick(g.c, Numbers)))
	case 7:
		return mapping(str(pick(g.c, Names)), str(pick(g.c, Names)))
	default:
		return str(pick(g.c, Names))
	}
}

func (g *g) hypothesis() *yaml.Node {
	if g.c.n(2) == 0 {
		return str(pick(g.c, hypotheses))
	}
	var b strings.Builder
	for i, k := 0, 1+g.c.n(9); i < k; i++ {
		b.WriteString(pick(g.c, hypTokens))
		if g.c.n(2) == 0 {
			b.WriteByte(' ')
		}
	}
	return str(b.String())
}

// any is a value of a key the decoder alone checks (terms, subset
// comparisons, centre and scale, profile values, effects).
func (g *g) any(name string) *yaml.Node {
	switch name {
	case "predictors":
		return g.terms()
	case "centre":
		return pick(g.c, []func() *yaml.Node{
			func() *yaml.Node { return str("mean") }, func() *yaml.Node { return str("median") },
			func() *yaml.Node { return number(pick(g.c, Numbers)) }, g.wrong,
		})()
	case "scale":
		return pick(g.c, []func() *yaml.Node{
			func() *yaml.Node { return str("sd") }, func() *yaml.Node { return number(pick(g.c, Numbers)) }, g.wrong,
		})()
	case "effects-value", "nonparallel-value":
		return g.effect(name == "nonparallel-value")
	}
	switch g.c.n(4) {
	case 0:
		return number(pick(g.c, Numbers))
	case 1:
		return str(pick(g.c, Names))
	case 2:
		return g.wrong()
	default:
		return number(pick(g.c, Integers))
	}
}

func (g *g) effect(perBoundary bool) *yaml.Node {
	one := func() *yaml.Node {
		switch g.c.n(5) {
		case 0:
			return number(pick(g.c, Numbers))
		case 1:
			m := mapping()
			for i, k := 0, g.c.n(4); i < k; i++ {
				m.Content = append(m.Content, str(pick(g.c, Names)), number(pick(g.c, Numbers)))
			}
			return m
		case 2:
			return mapping(str("at"), g.numbers(), str("values"), g.numbers())
		case 3:
			return mapping(str(pick(g.c, []string{"at", "values", "x"})), g.numbers())
		default:
			return g.wrong()
		}
	}
	if !perBoundary || g.c.n(5) == 0 {
		return one()
	}
	s := seq()
	for i, k := 0, g.c.n(6); i < k; i++ {
		s.Content = append(s.Content, one())
	}
	return s
}

func (g *g) numbers() *yaml.Node {
	s := seq()
	for i, k := 0, g.c.n(6); i < k; i++ {
		s.Content = append(s.Content, number(pick(g.c, Numbers)))
	}
	return s
}

var termSpec = plan.Spec.Keys[termsIndex()].Item

func termsIndex() int {
	for i, k := range plan.Spec.Keys {
		if k.Name == "predictors" {
			return i
		}
	}
	panic("planshapes: no predictors key")
}

func (g *g) term() *yaml.Node {
	if g.c.n(3) == 0 {
		return str(pick(g.c, Names))
	}
	return g.value(termSpec, "")
}

func (g *g) terms() *yaml.Node {
	if g.c.n(8) == 0 {
		return g.wrong()
	}
	s := seq()
	for i, k := 0, g.c.n(5); i < k; i++ {
		s.Content = append(s.Content, g.term())
	}
	return s
}

// value generates a value for the key x (named name where x is the value
// of a map entry or a list item): mostly of its kind, sometimes not.
func (g *g) value(x *plan.Key, name string) *yaml.Node {
	if g.c.n(12) == 0 {
		return g.wrong()
	}
	g.depth++
	defer func() { g.depth-- }()
	if x == nil {
		return g.any(name)
	}
	switch x.Kind {
	case plan.KindText:
		if name == "hypotheses-item" {
			return g.hypothesis()
		}
		return str(pick(g.c, Texts))
	case plan.KindName:
		return str(pick(g.c, Names))
	case plan.KindInteger:
		return number(pick(g.c, Integers))
	case plan.KindNumber, plan.KindProbability:
		return number(pick(g.c, Numbers))
	case plan.KindBoolean:
		return scalar("!!bool", pick(g.c, []string{"true", "false"}))
	case plan.KindWord:
		if g.c.n(6) == 0 {
			return str(pick(g.c, Names))
		}
		return str(pick(g.c, x.Words))
	case plan.KindWords:
		s := seq()
		for i, k := 0, g.c.n(5); i < k; i++ {
			if g.c.n(8) == 0 {
				s.Content = append(s.Content, str(pick(g.c, Names)))
			} else {
				s.Content = append(s.Content, str(pick(g.c, x.Words)))
			}
		}
		return s
	case plan.KindNames:
		s := seq()
		for i, k := 0, g.c.n(5); i < k; i++ {
			s.Content = append(s.Content, str(pick(g.c, Names)))
		}
		return s
	case plan.KindNumbers:
		return g.numbers()
	case plan.KindMapping:
		m := mapping()
		if g.depth > 6 {
			return m
		}
		for _, k := range x.Keys {
			if k.Required || g.c.n(3) == 0 {
				m.Content = append(m.Content, str(k.Name), g.value(k, k.Name))
			}
		}
		return m
	case plan.KindMap:
		m := mapping()
		if g.depth > 6 {
			return m
		}
		for i, k := 0, g.c.n(4); i < k; i++ {
			m.Content = append(m.Content, str(pick(g.c, Names)), g.value(mapValue(x), x.Name+"-value"))
		}
		return m
	case plan.KindList:
		s := seq()
		if g.depth > 6 {
			return s
		}
		for i, k := 0, g.c.n(4); i < k; i++ {
			if x.Name == "predictors" {
				s.Content = append(s.Content, g.term())
				continue
			}
			s.Content = append(s.Content, g.value(x.Item, x.Name+"-item"))
		}
		return s
	case plan.KindRules:
		s := seq()
		for i, k := 0, 1+g.c.n(5); i < k; i++ {
			s.Content = append(s.Content, g.rule(x))
		}
		return s
	case plan.KindAny:
		return g.any(x.Name)
	}
	return g.wrong()
}

func (g *g) rule(x *plan.Key) *yaml.Node {
	v := pick(g.c, x.Variants)
	var val *yaml.Node
	if v.Kind == plan.KindBoolean || g.c.n(6) == 0 {
		val = scalar("!!bool", pick(g.c, []string{"true", "false"}))
	} else {
		val = g.value(v, v.Name)
	}
	m := mapping(str(v.Name), val)
	if g.c.n(10) == 0 { // two kinds in one rule
		w := pick(g.c, x.Variants)
		m.Content = append(m.Content, str(w.Name), g.value(w, w.Name))
	}
	return m
}

// mapValue is the key describing every value of a map (nil: any value).
func mapValue(x *plan.Key) *plan.Key {
	if len(x.Keys) == 1 {
		if x.Keys[0].Kind == plan.KindAny {
			return nil
		}
		return x.Keys[0]
	}
	return nil
}

// site is a node of the plan with the key describing it.
type site struct {
	node   *yaml.Node
	key    *plan.Key // nil: checked by the decoder only
	name   string    // the value's key name, or LIST-item / MAP-value
	parent *yaml.Node
	at     int // index in parent.Content (the value's index in a mapping)
}

func collect(n *yaml.Node, x *plan.Key, name string, parent *yaml.Node, at int, out *[]site) {
	*out = append(*out, site{n, x, name, parent, at})
	switch n.Kind {
	case yaml.MappingNode:
		for i := 0; i+1 < len(n.Content); i += 2 {
			kname := n.Content[i].Value
			var child *plan.Key
			cname := kname
			if x != nil {
				switch x.Kind {
				case plan.KindMapping:
					for _, k := range x.Keys {
						if k.Name == kname {
							child = k
						}
					}
				case plan.KindMap:
					child, cname = mapValue(x), x.Name+"-value"
				case plan.KindRules:
					for _, v := range x.Variants {
						if v.Name == kname {
							child = v
						}
					}
				}
			}
			collect(n.Content[i+1], child, cname, n, i+1, out)
		}
	case yaml.SequenceNode:
		for i, it := range n.Content {
			var child *plan.Key
			cname := name + "-item"
			if x != nil {
				switch x.Kind {
				case plan.KindList:
					child = x.Item
				case plan.KindRules:
					child = x
				}
			}
			if name == "predictors" {
				child, cname = termSpec, ""
				if it.Kind == yaml.ScalarNode {
					child = nil
				}
			}
			collect(it, child, cname, n, i, out)
		}
	}
}

// Plan makes the text of a plan from a base plan (bases[choice]) changed
// at places the fuzz bytes choose: keys dropped, duplicated or added from
// plan.Spec, values replaced by generated ones of the right kind or of
// another, lists grown, shrunk or reordered. The result is YAML text (it
// may be an invalid plan; it is always a YAML document).
func Plan(fuzz []byte, bases [][]byte) []byte {
	c := &Choices{b: fuzz}
	g := &g{c: c}
	var doc yaml.Node
	if err := yaml.Unmarshal(bases[c.n(len(bases))], &doc); err != nil || len(doc.Content) == 0 {
		panic("planshapes: a base plan is not YAML: " + err.Error())
	}
	root := doc.Content[0]
	for step := 0; step < 40 && c.more(); step++ {
		var sites []site
		collect(root, plan.Spec, "", nil, 0, &sites)
		s := sites[c.n(len(sites))]
		mutate(g, s)
	}
	out, err := yaml.Marshal(&doc)
	if err != nil {
		return []byte("version: 1\n")
	}
	return out
}

func mutate(g *g, s site) {
	c := g.c
	n := s.node
	switch c.n(8) {
	case 0: // drop this value from its parent
		if s.parent == nil {
			return
		}
		if s.parent.Kind == yaml.MappingNode {
			s.parent.Content = append(s.parent.Content[:s.at-1], s.parent.Content[s.at+1:]...)
		} else {
			s.parent.Content = append(s.parent.Content[:s.at], s.parent.Content[s.at+1:]...)
		}
	case 1: // duplicate it
		if s.parent == nil {
			return
		}
		if s.parent.Kind == yaml.MappingNode {
			if c.n(4) == 0 { // the same key twice
				s.parent.Content = append(s.parent.Content, s.parent.Content[s.at-1], g.value(s.key, s.name))
			}
			return
		}
		s.parent.Content = append(s.parent.Content, clone(n))
	case 2, 3: // replace it by a value of its kind
		*n = *g.value(s.key, s.name)
	case 4: // replace it by a value of another shape
		*n = *g.wrong()
	case 5: // add a key the mapping allows, or an item to a list
		switch {
		case n.Kind == yaml.MappingNode && s.key != nil && s.key.Kind == plan.KindMapping && len(s.key.Keys) > 0:
			k := pick(c, s.key.Keys)
			n.Content = append(n.Content, str(k.Name), g.value(k, k.Name))
		case n.Kind == yaml.MappingNode && s.key != nil && s.key.Kind == plan.KindMap:
			n.Content = append(n.Content, str(pick(c, Names)), g.value(mapValue(s.key), s.key.Name+"-value"))
		case n.Kind == yaml.MappingNode:
			n.Content = append(n.Content, str(pick(c, append([]string{"levels", "reference", "free", "column", "name"}, Names...))), g.wrong())
		case n.Kind == yaml.SequenceNode && s.key != nil && (s.key.Kind == plan.KindList || s.key.Kind == plan.KindRules):
			if s.name == "predictors" {
				n.Content = append(n.Content, g.term())
			} else if s.key.Kind == plan.KindRules {
				n.Content = append(n.Content, g.rule(s.key))
			} else {
				n.Content = append(n.Content, g.value(s.key.Item, s.name+"-item"))
			}
		case n.Kind == yaml.SequenceNode && s.name == "hypotheses":
			n.Content = append(n.Content, g.hypothesis())
		case n.Kind == yaml.SequenceNode:
			n.Content = append(n.Content, str(pick(c, Names)))
		}
	case 6: // reorder a list or a mapping
		if len(n.Content) < 2 {
			return
		}
		if n.Kind == yaml.SequenceNode {
			i, j := c.n(len(n.Content)), c.n(len(n.Content))
			n.Content[i], n.Content[j] = n.Content[j], n.Content[i]
		} else if n.Kind == yaml.MappingNode {
			i, j := 2*c.n(len(n.Content)/2), 2*c.n(len(n.Content)/2)
			n.Content[i], n.Content[j] = n.Content[j], n.Content[i]
			n.Content[i+1], n.Content[j+1] = n.Content[j+1], n.Content[i+1]
		}
	case 7: // a scalar becomes a name, a number or empty
		if n.Kind == yaml.ScalarNode {
			switch c.n(3) {
			case 0:
				*n = *str(pick(c, Names))
			case 1:
				*n = *number(pick(c, Numbers))
			default:
				*n = *null()
			}
		}
	}
}

func clone(n *yaml.Node) *yaml.Node {
	m := *n
	m.Content = nil
	for _, c := range n.Content {
		m.Content = append(m.Content, clone(c))
	}
	return &m
}
