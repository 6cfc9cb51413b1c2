package main

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"slices"
	"strconv"
	"strings"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/design"
)

// compactHelp documents the command line's compact form of predictor
// terms (`ordplan fit --predictors`).
const compactHelp = `Predictor terms, comma separated (quote the whole list for the shell):
  age                         a numeric column as it is
  site|levels=n/e/s/w         a categorical column with its levels (text in the data); options:
                              |ref=e (reference level; default the first), |coding=sum or
                              |coding=successive (ordered levels only), |drop (drop the column
                              of a listed level no row has, instead of refusing)
  dose|log                    log(dose); dose|log+1 is log(dose + 1), inc|log-1000 log(inc - 1000)
  dose|sqrt                   square root
  age|centre=mean|scale       centred at the sample mean (or centre=40), divided by the sample SD
  age|polynomial=2            orthogonal polynomial of degree 2 (polynomial=2raw: raw powers)
  age|spline=30/45/60         natural cubic spline, knots at 30, 45, 60 (first and last are
                              the boundary knots; within the data's range); spline=q0.1/0.5/0.9
                              puts them at quantiles
  treat&age                   interaction of terms listed before it
  ...|as=name                 names the term (columns derive from it)
Transformations apply in this order: log or sqrt, centre, scale, polynomial or spline. Columns are
named term, term.level (categorical), term.1, term.2 (polynomial, spline) and a&b (products);
--nonparallel and --constrained name terms. Each option is given once; log, sqrt and drop take
no value, scale only sd. A term may not be named as the models name other parameters (tau,
phi, alpha, NAME[m]).`

// parseCompactTerms reads the compact form of predictor terms (see
// compactHelp) into the raw columns and terms of a design.
func parseCompactTerms(s string) (design.Spec, error) {
	var spec design.Spec
	names := map[string]bool{}
	declared := map[string]string{} // categorical column -> the item that declared it
	items, err := listItems(s)
	if err != nil {
		return spec, err
	}
	for i, item := range items {
		t, src, err := parseCompactTerm(item, names, spec.Terms)
		if err != nil {
			return spec, fmt.Errorf("predictor %d (%q): %v", i+1, item, err)
		}
		if names[t.Name] {
			return spec, fmt.Errorf("predictor %d (%q): term %q is given twice", i+1, item, t.Name)
		}
		names[t.Name] = true
		t.Key = fmt.Sprintf("--predictors item %d", i+1)
		spec.Terms = append(spec.Terms, t)
		if src == nil {
			continue
		}
		known := -1
		for j, x := range spec.Sources {
			if x.Name == src.Name {
				known = j
			}
		}
		switch {
		case known < 0:
			spec.Sources = append(spec.Sources, *src)
			if src.Cat != nil {
				declared[src.Name] = fmt.Sprintf("predictor %d (%q)", i+1, item)
			}
		case src.Cat == nil && spec.Sources[known].Cat == nil:
		case src.Cat == nil || spec.Sources[known].Cat == nil:
			return spec, fmt.Errorf("predictor %d (%q): column %q is used both as categorical and as numeric", i+1, item, src.Name)
		case !reflect.DeepEqual(*src.Cat, *spec.Sources[known].Cat):
			return spec, fmt.Errorf("predictor %d (%q): column %q is declared categorical with other options in %s; a column has one set of levels, reference and coding: give the same options in every term that uses it", i+1, item, src.Name, declared[src.Name])
		}
	}
	return spec, nil
}

func parseCompactTerm(item string, earlier map[string]bool, terms []design.TermSpec) (design.TermSpec, *design.Source, error) {
	var t design.TermSpec
	parts := strings.Split(item, "|")
	head := strings.TrimSpace(parts[0])
	if strings.Contains(head, "&") {
		for _, p := range strings.Split(head, "&") {
			p = strings.TrimSpace(p)
			if !earlier[p] {
				if hint := design.ColumnNotTerm(p, terms); hint != "" {
					return t, nil, fmt.Errorf("%q is not a term listed before this interaction (%s)", p, hint)
				}
				return t, nil, fmt.Errorf("%q is not a term listed before this interaction", p)
			}
			t.Interact = append(t.Interact, p)
		}
		t.Name = head
		for _, o := range parts[1:] {
			k, v, _ := strings.Cut(strings.TrimSpace(o), "=")
			if k != "as" {
				return t, nil, fmt.Errorf("an interaction takes only |as=name, not |%s", o)
			}
			if v == "" {
				return t, nil, fmt.Errorf("|as= names the term: give a name (as=name)")
			}
			t.Name = v
		}
		return t, nil, checkTermName(t.Name)
	}
	if head == "" {
		return t, nil, fmt.Errorf("no column")
	}
	t.Source = head
	src := &design.Source{Name: head}
	var suffix []string
	given := map[string]string{} // option -> the item's text that gave it
	for _, o := range parts[1:] {
		o = strings.TrimSpace(o)
		k, v, hasV := strings.Cut(o, "=")
		// One option once, as a plan's key (a mapping holds a key once);
		// an option without a value takes none.
		opt := k
		if strings.HasPrefix(k, "log+") || strings.HasPrefix(k, "log-") {
			opt = "log"
		}
		if first, ok := given[opt]; ok {
			return t, nil, fmt.Errorf("|%s is given twice (|%s and |%s): give each option once", opt, first, o)
		}
		given[opt] = o
		if hasV && (opt == "log" || k == "sqrt" || k == "drop") {
			return t, nil, fmt.Errorf("|%s takes no value, got |%s (write |%s)", k, o, k)
		}
		switch {
		case k == "levels":
			levels := strings.Split(v, "/")
			for i, l := range levels {
				if l == "" || slices.Contains(levels[:i], l) {
					return t, nil, fmt.Errorf("levels=%s: level %q is empty or given twice", v, l)
				}
			}
			src.Cat = &design.Categorical{Levels: levels, Coding: design.Treatment, Unobserved: design.UnobservedRefuse}
			src.Cat.Reference = src.Cat.Levels[0]
		case k == "ref" || k == "coding" || k == "drop":
			// applied below, once the levels are known
		case k == "log" || strings.HasPrefix(k, "log+") || strings.HasPrefix(k, "log-"):
			// log+1 is log(x + 1), log-1000 log(x - 1000) (log+-1000 too).
			t.Log = true
			if k != "log" {
				num := strings.TrimPrefix(k, "log+")
				if strings.HasPrefix(k, "log-") {
					num = strings.TrimPrefix(k, "log")
				}
				x, err := finiteNumber(num)
				if err != nil {
					return t, nil, fmt.Errorf("bad shift in %q: %v (want log+NUMBER or log-NUMBER)", o, err)
				}
				t.Shift = x
			}
			suffix = append(suffix, "log")
		case k == "sqrt":
			t.Sqrt = true
			suffix = append(suffix, "sqrt")
		case k == "centre" && hasV:
			if v == "mean" {
				t.Centre = "mean"
			} else {
				x, err := finiteNumber(v)
				if err != nil {
					return t, nil, fmt.Errorf("centre=%s: want mean or a finite number%s", v, data.PlanNumberHint(v))
				}
				t.Centre, t.CentreAt = "value", x
			}
			suffix = append(suffix, "c")
		case k == "scale":
			if hasV && v != "sd" {
				// The plan's scale: takes the one word sd.
				return t, nil, fmt.Errorf("|%s: unknown scale %q (want sd: |scale divides by the sample SD; to divide by another number, transform the column before)", o, v)
			}
			t.Scale = true
			suffix = append(suffix, "s")
		case k == "polynomial" && hasV:
			raw := strings.HasSuffix(v, "raw")
			d, err := strconv.Atoi(strings.TrimSuffix(v, "raw"))
			if err != nil {
				return t, nil, fmt.Errorf("polynomial=%s: want a degree from 1 to 10, optionally followed by raw", v)
			}
			if err == nil {
				err = design.CheckDegree(d)
			}
			if err != nil {
				return t, nil, fmt.Errorf("polynomial=%s: %v", v, err)
			}
			t.Poly, t.PolyRaw = d, raw
			suffix = append(suffix, "polynomial")
		case k == "spline" && hasV:
			q := strings.HasPrefix(v, "q")
			var xs []float64
			for _, f := range strings.Split(strings.TrimPrefix(v, "q"), "/") {
				x, err := finiteNumber(f)
				if err != nil {
					return t, nil, fmt.Errorf("spline=%s: %v", v, err)
				}
				xs = append(xs, x)
			}
			if _, err := design.CheckKnots(xs, q); err != nil {
				return t, nil, fmt.Errorf("spline=%s: %v", v, err)
			}
			if q {
				t.Quantiles = xs
			} else {
				t.Knots = xs
			}
			suffix = append(suffix, "spline")
		case k == "as" && hasV:
			if v == "" {
				return t, nil, fmt.Errorf("|as= names the term: give a name (as=name)")
			}
			t.Name = v
		default:
			return t, nil, fmt.Errorf("unknown option %q", "|"+o)
		}
	}
	for _, o := range parts[1:] {
		k, v, _ := strings.Cut(strings.TrimSpace(o), "=")
		if k != "ref" && k != "coding" && k != "drop" {
			continue
		}
		if src.Cat == nil {
			return t, nil, fmt.Errorf("|%s needs |levels=... (a categorical column)", k)
		}
		switch k {
		case "ref":
			if v == "" {
				return t, nil, fmt.Errorf("|ref= names the reference level: give one of the levels (ref=%s)", src.Cat.Levels[0])
			}
			src.Cat.Reference = v
		case "coding":
			switch v {
			case design.Treatment, design.Sum:
			case design.Successive:
				src.Cat.Ordered = true
			default:
				return t, nil, fmt.Errorf("coding=%s: want treatment, sum or successive", v)
			}
			src.Cat.Coding = v
		case "drop":
			src.Cat.Unobserved = design.UnobservedDrop
		}
	}
	if src.Cat != nil {
		if key, err := src.Cat.Check(); err != nil {
			return t, nil, fmt.Errorf("|%s: %v", compactOption[key], err)
		}
		if !t.Transform.Empty() {
			return t, nil, fmt.Errorf("a categorical column cannot be transformed")
		}
	}
	if key, err := t.Transform.Conflict(); err != nil {
		return t, nil, fmt.Errorf("|%s: %v", compactOption[key], err)
	}
	if t.Name == "" {
		t.Name = strings.Join(append([]string{head}, suffix...), ".")
	}
	if len(suffix) > 0 || src.Cat != nil {
		if err := checkTermName(t.Name); err != nil {
			return t, nil, err
		}
	}
	return t, src, nil
}

// finiteNumber reads a number of an option, refusing NaN and infinities
// as the plan's keys do.
func finiteNumber(s string) (float64, error) {
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return 0, fmt.Errorf("%q is not a number%s", s, data.PlanNumberHint(s))
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("%q is not a finite number", s)
	}
	return x, nil
}

// compactOption is the compact form's word for an option the design's
// checks name by its plan key.
var compactOption = map[string]string{"levels": "levels", "reference": "ref", "sqrt": "sqrt", "spline": "spline"}

// checkTermName refuses a term name that cannot be part of a column name.
func checkTermName(name string) error {
	if bad := design.BadNameChars(name); bad != "" {
		return fmt.Errorf("term name %q holds %s, which cannot be part of a column name (use |as=name)", name, bad)
	}
	return nil
}

// errEmptyGroup is an empty constraint group: a usage problem (exit 2).
var errEmptyGroup = errors.New("remove the extra semicolon")

// parseGroups reads constraint groups written as "name:a,b;other:c" (or
// "a,b" for a single unnamed group).
func parseGroups(s string) ([]runner.Group, error) {
	var out []runner.Group
	if strings.TrimSpace(s) == "" {
		return nil, nil
	}
	names := map[string]bool{}
	parts := strings.Split(s, ";")
	for k, part := range parts {
		part = strings.TrimSpace(part)
		if part == "" {
			return nil, fmt.Errorf("group %d of %d in %q is empty (nothing but spaces between two semicolons, or a semicolon at either end): %w", k+1, len(parts), s, errEmptyGroup)
		}
		g := runner.Group{}
		if i := strings.Index(part, ":"); i >= 0 {
			g.Name = strings.TrimSpace(part[:i])
			part = part[i+1:]
			if g.Name == "" {
				return nil, fmt.Errorf("group %d of %d in %q has an empty name before the colon: write NAME:%s, or leave the colon out for a group without a name", k+1, len(parts), s, strings.TrimSpace(part))
			}
		}
		if names[g.Name] {
			return nil, fmt.Errorf("constraint group %q is given twice", g.Name)
		}
		names[g.Name] = true
		var err error
		if g.Predictors, err = listItems(part); err != nil {
			return nil, fmt.Errorf("group %d: %w", k+1, err)
		}
		if len(g.Predictors) == 0 {
			return nil, fmt.Errorf("constraint group %q has no predictors", g.Name)
		}
		out = append(out, g)
	}
	if len(out) > 1 {
		for i := range out {
			if out[i].Name == "" {
				return nil, fmt.Errorf("with several constraint groups every group needs a name (name:a,b;other:c)")
			}
		}
	}
	return out, nil
}

// listItems splits a comma-separated flag value ("a, b,c") into its
// trimmed items. An empty item (two commas in a row, a comma at either end,
// only spaces between commas) is refused: dropping it would read another
// list than the one typed. A value of spaces only has no items.
func listItems(s string) ([]string, error) {
	if strings.TrimSpace(s) == "" {
		return nil, nil
	}
	items := strings.Split(s, ",")
	for i := range items {
		items[i] = strings.TrimSpace(items[i])
		if items[i] == "" {
			return nil, &emptyItemError{list: s, item: i + 1, of: len(items)}
		}
	}
	return items, nil
}

// emptyItemError is an empty item in a list of the command line: a usage
// problem (exit 2).
type emptyItemError struct {
	list     string
	item, of int
}

func (e *emptyItemError) Error() string {
	return fmt.Sprintf("item %d of %d in %q is empty (nothing but spaces between two commas, or a comma at either end): remove the extra comma or give the missing name", e.item, e.of, e.list)
}

// parseMissingCodes reads --missing-codes, a column's own missing-value
// codes as the plan's dictionary.COLUMN.missing gives them:
// COLUMN=CODE/CODE items, comma separated (nil when empty). A column
// given twice, an item without "=", an empty name or code is refused.
func parseMissingCodes(s string) (map[string][]string, error) {
	items, err := listItems(s)
	if err != nil || items == nil {
		return nil, err
	}
	out := map[string][]string{}
	for i, it := range items {
		col, codes, ok := strings.Cut(it, "=")
		col = strings.TrimSpace(col)
		if !ok || col == "" {
			return nil, fmt.Errorf("item %d (%q) is not COLUMN=CODE: give the column, then its codes separated by /, such as baseline_pain=-9 or age=-9/-99", i+1, it)
		}
		if _, twice := out[col]; twice {
			return nil, fmt.Errorf("item %d (%q): column %q is given twice; give all its codes in one item, separated by / (%s=-9/-99)", i+1, it, col, col)
		}
		var list []string
		for _, c := range strings.Split(codes, "/") {
			if c = strings.TrimSpace(c); c == "" {
				return nil, fmt.Errorf("item %d (%q): an empty code; give codes separated by /, such as %s=-9/-99 (an empty cell is missing anyway)", i+1, it, col)
			}
			if h := data.MissingCodeHint(c); h != "" {
				return nil, fmt.Errorf("item %d (%q): code %q%s", i+1, it, c, h)
			}
			list = append(list, c)
		}
		out[col] = list
	}
	return out, nil
}
