package design

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"sync"

	"ordplan/runner/fit"
)

// Term kinds.
const (
	KindNumeric     = "numeric"
	KindCategorical = "categorical"
	KindInteraction = "interaction"
)

// Term is one built term with its frozen constants.
type Term struct {
	Name    string
	Kind    string
	Key     string   // plan key
	Source  int      // index into Design.Sources (numeric, categorical)
	Parts   []int    // interaction: indices of the component terms
	Columns []string // design column names
	First   int      // index of the first column in the design

	Transform Transform
	// Frozen constants of a numeric term (NaN when not used).
	Mean  float64 // of the value after log/sqrt, when Centre == "mean"
	SD    float64 // after centring, when Scale
	Knots []float64
	// Orthogonal polynomial recurrence: p_{k+1} = (u - Alpha_k) p_k - Beta_k p_{k-1},
	// columns p_k / sqrt(Norm2_k), k = 1..degree.
	Alpha []float64
	Norm2 []float64
	// Categorical: the coded levels (declared order, unobserved dropped)
	// and the coding matrix: level index -> column values.
	Kept    []string
	Dropped []string
	code    map[int][]float64
	// Empty lists, for an interaction reading two or more categorical
	// columns, the combinations of their kept levels that no row used has
	// (one level per column of EmptyOf, first column slowest): for these
	// the interaction cannot be estimated. Found by Build for its messages;
	// not part of the frozen design.
	Empty   [][]string
	EmptyOf []string
}

// Design is a built design.
type Design struct {
	Sources []Source
	Terms   []Term
	Columns []string
	// Notes say what Build decided that the user should know (levels
	// dropped because no row has them).
	Notes []string
	// scales gives the scale of each numeric source (SourceScales), made
	// when first asked for.
	scales func() []float64
}

// SourceScales is the scale of each numeric source (its sample SD, or 1),
// for numerical steps and the frozen design; taken from the rows on the
// first call, since a plain design never asks for it (the rows are not
// written after Build).
func (d *Design) SourceScales() []float64 {
	if d.scales == nil {
		return nil
	}
	return d.scales()
}

// Error is a problem building a design: a term that cannot be built on
// the data (with the data line of the offending row when there is one).
type Error struct {
	Key    string // plan key of the term
	Line   int    // data line, 0 when none
	Column string // raw column
	Msg    string
	// Levels: the problem is the column's declared levels against the
	// rows used (a level or the reference that no row has, one level
	// alone), which a plan names where it declares them.
	Levels bool
	// Level is the declared level no row used has (the reference or
	// another), "" for any other problem.
	Level string
	// Fix, when set, is what to do about it, written after Msg ("; "); a
	// refusal that goes on to say why so few rows remain puts it after
	// that instead (runner's levelsAfterLoss).
	Fix string
}

func (e *Error) Error() string {
	var b strings.Builder
	if e.Key != "" {
		b.WriteString(e.Key + ": ")
	}
	if e.Line > 0 {
		fmt.Fprintf(&b, "data line %d: ", e.Line)
	}
	if e.Column != "" {
		fmt.Fprintf(&b, "column %q: ", e.Column)
	}
	b.WriteString(e.Msg)
	if e.Fix != "" {
		b.WriteString("; " + e.Fix)
	}
	return b.String()
}

// Build builds the design from the raw columns: raw is N x S row-major in
// the order of spec.Sources, w the row weights (nil: all 1; frequency or
// sampling weights make the sample constants weighted), lines the data
// line of each row (nil: none).
func Build(spec Spec, raw []float64, n int, w []float64, lines []int) (*Design, error) {
	return build(spec, raw, n, w, lines, nil)
}

// build is Build; with fz set, the constants are fz's instead of the
// sample's (raw is not read).
func build(spec Spec, raw []float64, n int, w []float64, lines []int, fz *Frozen) (*Design, error) {
	S := len(spec.Sources)
	d := &Design{Sources: spec.Sources}
	if fz != nil {
		if len(fz.Terms) != len(spec.Terms) || len(fz.SourceScale) != S {
			return nil, fmt.Errorf("frozen design: %d terms and %d scales for %d terms and %d columns", len(fz.Terms), len(fz.SourceScale), len(spec.Terms), S)
		}
		scale := slices.Clone(fz.SourceScale)
		d.scales = func() []float64 { return scale }
		n = 0
	} else {
		d.scales = sync.OnceValue(func() []float64 {
			scale := make([]float64, S)
			sourceScales(scale, spec.Sources, raw, n, w)
			return scale
		})
	}
	col := func(s int) []float64 {
		out := make([]float64, n)
		for i := range out {
			out[i] = raw[i*S+s]
		}
		return out
	}
	index := map[string]int{}
	for k, ts := range spec.Terms {
		var ft *TermRecord
		if fz != nil {
			ft = &fz.Terms[k]
		}
		if _, dup := index[ts.Name]; dup {
			return nil, &Error{Key: ts.Key, Msg: fmt.Sprintf("term %q is given twice", ts.Name)}
		}
		t := Term{Name: ts.Name, Key: ts.Key, Transform: ts.Transform, First: len(d.Columns), Mean: math.NaN(), SD: math.NaN()}
		var err error
		if len(ts.Interact) > 0 {
			err = d.buildInteraction(&t, ts, index)
			if err == nil && fz == nil {
				d.emptyCells(&t, raw, n, w)
			}
		} else {
			s := slices.IndexFunc(spec.Sources, func(x Source) bool { return x.Name == ts.Source })
			if s < 0 {
				return nil, &Error{Key: ts.Key, Msg: fmt.Sprintf("column %q is not among the columns read", ts.Source)}
			}
			t.Source = s
			switch {
			case spec.Sources[s].Cat != nil:
				err = d.buildCategorical(&t, spec.Sources[s], col(s), w, ft)
			case ts.Transform.Empty() && fz == nil:
				// The column as it is: no constant to freeze, no value to refuse.
				t.Kind, t.Columns = KindNumeric, numericNames(t.Name, ts.Transform, 0)
			default:
				err = d.buildNumeric(&t, spec.Sources[s].Name, col(s), w, lines, ft)
			}
		}
		if err != nil {
			return nil, err
		}
		for _, c := range t.Columns {
			if why := fit.ReservedName(c); why != "" {
				return nil, &Error{Key: ts.Key, Msg: fmt.Sprintf("design column %q cannot be made: %s; give the term another name", c, why)}
			}
			if slices.Contains(d.Columns, c) {
				return nil, &Error{Key: ts.Key, Msg: fmt.Sprintf("design column %q would be made twice; give the term another name", c)}
			}
			d.Columns = append(d.Columns, c)
		}
		index[t.Name] = len(d.Terms)
		d.Terms = append(d.Terms, t)
	}
	return d, nil
}

// sourceScales sets scale[s] to the sample SD of each numeric source with
// n > 1 rows and to 1 otherwise; the SDs are columnMeanSDs' of raw
// (n x len(srcs)), the same path meanSD takes for one column.
func sourceScales(scale []float64, srcs []Source, raw []float64, n int, w []float64) {
	_, sd := columnMeanSDs(raw, len(srcs), n, w)
	for s, src := range srcs {
		scale[s] = 1
		if src.Cat == nil && n > 1 && sd[s] > 0 {
			scale[s] = sd[s]
		}
	}
}

// meanSD is the weighted mean and standard deviation (divisor: sum of
// weights minus 1, the sample SD of the rows the weights stand for) of one
// column: columnMeanSDs with one column.
func meanSD(v, w []float64) (float64, float64) {
	m, sd := columnMeanSDs(v, 1, len(v), w)
	return m[0], sd[0]
}

// columnMeanSDs is the weighted mean and standard deviation (divisor: sum
// of weights minus 1; 0 when the weights sum to 1 or less) of each of the S
// columns of raw, n rows stored row after row, in two passes over the rows.
func columnMeanSDs(raw []float64, S, n int, w []float64) (mean, sd []float64) {
	tot := 0.0
	mean, sd = make([]float64, S), make([]float64, S)
	for i := 0; i < n; i++ {
		wi := weight(w, i)
		tot += wi
		for s, x := range raw[i*S : (i+1)*S] {
			mean[s] += wi * x
		}
	}
	for s := range mean {
		mean[s] /= tot
	}
	for i := 0; i < n; i++ {
		wi := weight(w, i)
		for s, x := range raw[i*S : (i+1)*S] {
			sd[s] += wi * (x - mean[s]) * (x - mean[s]) // the sum of squares until below
		}
	}
	for s, ss := range sd {
		sd[s] = 0
		if tot > 1 {
			sd[s] = math.Sqrt(ss / (tot - 1))
		}
	}
	return mean, sd
}

func weight(w []float64, i int) float64 {
	if w == nil {
		return 1
	}
	return w[i]
}

// LevelName makes a level usable in a column name: characters other than
// letters, digits, '_' and '.' become '_'.
func LevelName(level string) string {
	var b strings.Builder
	for _, r := range level {
		if r < 128 && (r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '_' || r == '.') {
			b.WriteRune(r)
		} else {
			b.WriteByte('_')
		}
	}
	return b.String()
}

func (d *Design) buildCategorical(t *Term, src Source, v, w []float64, fz *TermRecord) error {
	c := src.Cat
	t.Kind = KindCategorical
	L := len(c.Levels)
	count := make([]float64, L)
	for i, x := range v {
		count[int(x)] += weight(w, i)
	}
	if fz != nil { // the levels kept where the design was built
		for l, name := range c.Levels {
			if slices.Contains(fz.Levels, name) {
				count[l] = 1
			}
		}
	}
	ref := referenceOf(c)
	var keptIdx []int
	for l, name := range c.Levels {
		if count[l] > 0 {
			keptIdx = append(keptIdx, l)
			continue
		}
		switch {
		case name == ref:
			return &Error{Key: t.Key, Column: src.Name, Msg: fmt.Sprintf("the reference level %q occurs in no row used", name), Fix: "choose another reference", Levels: true, Level: name}
		case c.Unobserved == UnobservedDrop:
			t.Dropped = append(t.Dropped, name)
			asked := t.Key
			if c.UnobservedAt != "" {
				asked = c.UnobservedAt
			}
			d.Notes = append(d.Notes, fmt.Sprintf("Level %q of %s occurs in no row used; its column was dropped, as asked (%s).", name, src.Name, asked))
		default:
			return &Error{Key: t.Key, Column: src.Name, Msg: fmt.Sprintf("level %q is declared but occurs in no row used", name),
				Fix: "remove it from the levels, or have its column dropped (in a plan unobserved: drop, in ordplan fit |drop)", Levels: true, Level: name}
		}
	}
	if len(keptIdx) < 2 {
		return &Error{Key: t.Key, Column: src.Name, Msg: fmt.Sprintf("only one level (%q) occurs in the rows used; a categorical predictor needs two", c.Levels[keptIdx[0]]), Levels: true}
	}
	for _, l := range keptIdx {
		t.Kept = append(t.Kept, c.Levels[l])
	}
	r := slices.Index(t.Kept, ref)
	K := len(t.Kept)
	t.code = map[int][]float64{}
	switch c.Coding {
	case Successive:
		for j, l := range keptIdx {
			row := make([]float64, K-1)
			for k := 1; k < K; k++ {
				if j >= k {
					row[k-1] = 1
				}
			}
			t.code[l] = row
		}
	default: // treatment and sum: one column per kept level other than the reference
		for j, l := range keptIdx {
			row := make([]float64, K-1)
			switch {
			case j == r && c.Coding == Sum:
				for k := range row {
					row[k] = -1
				}
			case j != r:
				k := j
				if j > r {
					k--
				}
				row[k] = 1
			}
			t.code[l] = row
		}
	}
	t.Columns = categoricalNames(t.Name, c.Levels, t.Kept, ref, c.Coding)
	return nil
}

func (d *Design) buildInteraction(t *Term, ts TermSpec, index map[string]int) error {
	t.Kind = KindInteraction
	if len(ts.Interact) < 2 {
		return &Error{Key: ts.Key, Msg: "an interaction needs at least two terms"}
	}
	var parts [][]string
	for _, name := range ts.Interact {
		k, ok := index[name]
		if !ok {
			return &Error{Key: ts.Key, Msg: fmt.Sprintf("%q is not a term listed before this interaction", name)}
		}
		if slices.Contains(t.Parts, k) {
			return &Error{Key: ts.Key, Msg: fmt.Sprintf("term %q appears twice in the interaction", name)}
		}
		t.Parts = append(t.Parts, k)
		parts = append(parts, d.Terms[k].Columns)
	}
	// The same raw column in two components (say age and age squared) is
	// allowed; two categorical components on one column are not.
	seen := map[int]bool{}
	for _, k := range t.Parts {
		for _, s := range d.termSources(k) {
			if d.Sources[s].Cat != nil && seen[s] {
				return &Error{Key: ts.Key, Msg: fmt.Sprintf("the categorical column %q enters the interaction twice", d.Sources[s].Name)}
			}
			seen[s] = true
		}
	}
	t.Columns = productNames(parts)
	return nil
}

// emptyCells sets t.Empty and t.EmptyOf for interaction t (its Parts set)
// from the raw rows: the combinations of the kept levels of the
// categorical columns it reads, when two or more, that no row of positive
// weight has. Left unset when the combinations number more than a million.
func (d *Design) emptyCells(t *Term, raw []float64, n int, w []float64) {
	S := len(d.Sources)
	var cats []int
	for _, p := range t.Parts {
		for _, s := range d.termSources(p) {
			if d.Sources[s].Cat != nil && !slices.Contains(cats, s) {
				cats = append(cats, s)
			}
		}
	}
	if len(cats) < 2 {
		return
	}
	kept := make([][]string, len(cats))
	pos := make([]map[int]int, len(cats)) // declared level index -> place among the kept
	cells := 1
	for j, s := range cats {
		kept[j], _ = d.Coded(s)
		pos[j] = map[int]int{}
		for k, l := range kept[j] {
			pos[j][d.Level(s, l)] = k
		}
		if cells *= len(kept[j]); cells > 1<<20 {
			return
		}
	}
	seen := make([]bool, cells)
	for i := 0; i < n; i++ {
		if weight(w, i) <= 0 {
			continue
		}
		c := 0
		for j, s := range cats {
			c = c*len(kept[j]) + pos[j][int(raw[i*S+s])]
		}
		seen[c] = true
	}
	for c, ok := range seen {
		if ok {
			continue
		}
		combo := make([]string, len(cats))
		for j := len(cats) - 1; j >= 0; j-- {
			combo[j] = kept[j][c%len(kept[j])]
			c /= len(kept[j])
		}
		t.Empty = append(t.Empty, combo)
	}
	if t.Empty != nil {
		for _, s := range cats {
			t.EmptyOf = append(t.EmptyOf, d.Sources[s].Name)
		}
	}
}

// EmptyCells says which combinations of levels interaction term k needs
// and no row used has, as `reg "e" with grade "hi"` (at most three, then
// how many more), or "" when there is none (or the term is no such
// interaction).
func (d *Design) EmptyCells(k int) string {
	t := &d.Terms[k]
	var out []string
	for _, combo := range t.Empty[:min(3, len(t.Empty))] {
		parts := make([]string, len(combo))
		for j, l := range combo {
			parts[j] = fmt.Sprintf("%s %q", t.EmptyOf[j], l)
		}
		out = append(out, strings.Join(parts, " with "))
	}
	s := strings.Join(out, ", nor ")
	if len(t.Empty) > 3 {
		s += fmt.Sprintf(" (nor %d more combinations)", len(t.Empty)-3)
	}
	return s
}

// termSources lists the raw columns term k reads.
func (d *Design) termSources(k int) []int {
	t := &d.Terms[k]
	if t.Kind != KindInteraction {
		return []int{t.Source}
	}
	var out []int
	for _, p := range t.Parts {
		for _, s := range d.termSources(p) {
			if !slices.Contains(out, s) {
				out = append(out, s)
			}
		}
	}
	return out
}

// Sources of term k, by name.
func (d *Design) TermSources(k int) []string {
	var out []string
	for _, s := range d.termSources(k) {
		out = append(out, d.Sources[s].Name)
	}
	return out
}

// Term returns the index of the named term, or -1.
func (d *Design) Term(name string) int {
	return slices.IndexFunc(d.Terms, func(t Term) bool { return t.Name == name })
}

// TermColumns returns the design columns of the named terms, in design
// order; ok is false when a name is not a term.
func (d *Design) TermColumns(names []string) ([]string, bool) {
	var out []string
	for _, n := range names {
		k := d.Term(n)
		if k < 0 {
			return nil, false
		}
		out = append(out, d.Terms[k].Columns...)
	}
	return out, true
}

// Trivial reports whether the design is the raw numeric columns as they
// are (one column per term, named after it).
func (d *Design) Trivial() bool {
	for _, t := range d.Terms {
		if t.Kind != KindNumeric || !t.Transform.Empty() {
			return false
		}
	}
	return true
}

func fmtNum(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// PartNames lists the names of an interaction's components.
func (t *Term) PartNames(d *Design) []string {
	out := make([]string, len(t.Parts))
	for i, p := range t.Parts {
		out[i] = d.Terms[p].Name
	}
	return out
}
