package runner

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
	"ordplan/render/numfmt"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// FewLevelRows is the count below which a level of a categorical
// predictor, or a combination of levels of an interaction of categorical
// predictors, is warned of (FewRowLevels): the same 10 as the report's
// observations per parameter (M22), a level's coefficient being one
// parameter estimated from its rows against the reference's.
const FewLevelRows = 10

// fewRowCell is a level, or a combination of levels, of the rows used
// and its count.
type fewRowCell struct {
	label  string
	count  float64
	ref    bool   // the reference level of its column
	term   string // the interaction of a combination
	column string // its design column ("g.rare", "g.n&k.hi"), "" when it has none
}

// FewRowLevels warns of the levels of categorical predictors, and the
// combinations of levels of interactions reading two or more categorical
// predictors, that the rows used in ds have but fewer than FewLevelRows
// times (frequency weights summed, sampling-weighted rows counted as
// rows, rows of weight 0 left out): the estimates of such a level rest on
// those rows alone. A combination is left out when one of its levels is
// named already (it holds no more rows than that level); a level or
// combination with no row is not one of these (dropped, or refused as
// T19). It returns "" when there is none.
//
// On imputed data (data.missing: impute, data.imputed) ds is the data as
// read, incomplete rows kept (OutcomeResult.levelRows): a level counts
// the rows where it is observed, never the values imputed into it. In
// every imputed set a level holds those rows and the rows imputed into it,
// whose values are drawn from the imputation models rather than observed,
// so the observed rows are what its estimate rests on and the fewest any
// set can hold, whatever the draw or the number of sets (counting one set
// would name a level or not by chance). The message says so.
//
// A level or combination that another message speaks of is left out:
// under clustered errors a level whose rows lie in one cluster (W29, its
// combinations too); and, given the fits made (run), one whose column
// the separation of every candidate fit names (M5: no candidate has an
// estimate of it, and each verdict says why). check, which fits nothing,
// names it.
func (a *Analysis) FewRowLevels(r Reading, dz *design.Design, ds *data.Dataset, fits []*FitEntry) string {
	if dz == nil || ds == nil || ds.N == 0 {
		return ""
	}
	// Under clustered errors a level whose rows lie in one cluster is
	// warned of already (FewClusters, W29): its errors, tests and
	// intervals are not available, and its estimate is to be read alone.
	var told []string
	if a.Errors.Covariance == fit.Clustered && len(ds.Cluster) > 0 {
		told, _ = levelsInOneCluster(r, ds, false)
	}
	cells := fewRowCells(dz, ds, FewLevelRows, func(label string) bool {
		return slices.ContainsFunc(told, func(t string) bool { return strings.HasPrefix(t, label+" (cluster ") })
	})
	cells = slices.DeleteFunc(cells, func(c fewRowCell) bool { return separatedEverywhere(fits, c.column) })
	if len(cells) == 0 {
		return ""
	}
	unit := "rows"
	if ds.Weights != nil && !ds.Sampling {
		unit = "observations"
	}
	var named []string
	var refs []string
	for _, c := range cells {
		s := fmt.Sprintf("%s (%s %s", c.label, numfmt.Num(c.count), strings.TrimSuffix(unit, "s"))
		if c.count != 1 {
			s += "s"
		}
		if c.term != "" {
			s += fmt.Sprintf(", in term %s", strconv.Quote(c.term))
		}
		if c.ref {
			s += ", the reference level"
			name := strings.SplitN(c.label, " = ", 2)[0]
			if a.Plan {
				refs = append(refs, "categorical."+name+".reference")
			} else {
				refs = append(refs, "--predictors "+name+"|ref=LEVEL")
			}
		}
		named = append(named, s+")")
	}
	refNote := ""
	if len(refs) > 0 {
		refNote = fmt.Sprintf("; a reference level with few rows makes every other level's contrast with it rest on them too: make a larger level the reference (%s)", strings.Join(refs, ", "))
	}
	total := numfmt.Num(ds.NObs())
	if unit == "rows" {
		total = strconv.Itoa(ds.N)
	}
	counted := ""
	if a.Imputes() || a.Imputed != nil {
		counted = fmt.Sprintf(", counting at each level the %s where it is observed, not the values imputed into it", unit)
	}
	return fmt.Sprintf("Few %s at some levels of categorical predictors (fewer than %d of the %s %s used%s): %s. "+
		"The coefficients, odds ratios, marginal effects and Wald tests of such a level or combination of levels rest on those %s alone, and their standard errors, p-values and intervals on a large-sample (normal) approximation that so few support poorly: read them as rough. "+
		"Merge such a level with a neighbouring one in the data (one code for both), leave the term out, or, if the level is meant as it is, keep it and interpret its estimates with care%s",
		unit, FewLevelRows, total, unit, counted, words.Some(named, 6), unit, refNote)
}

// separatedEverywhere reports whether column is among the predictors of
// the separation of every candidate fit (none when there are no fits).
func separatedEverywhere(fits []*FitEntry, column string) bool {
	if column == "" {
		return false
	}
	n := 0
	for _, f := range fits {
		if f == nil || f.Auxiliary {
			continue
		}
		if f.Result == nil || f.Result.Separation == nil || !slices.Contains(f.Result.Separation.Predictors, column) {
			return false
		}
		n++
	}
	return n > 0
}

// fewRowCells counts the rows (frequency weights summed) of each coded
// level of the categorical columns the terms of dz read, then of each
// combination of coded levels of the interactions reading two or more of
// them, and returns those counted above 0 and below limit, in design
// order (levels in their declared order, combinations first column
// slowest), a combination only when none of its levels is among them.
// A level told(label) is warned of elsewhere (whatever its count): it is
// left out, and so are its combinations.
func fewRowCells(dz *design.Design, ds *data.Dataset, limit float64, told func(level string) bool) []fewRowCell {
	weight := func(i int) float64 {
		switch {
		case ds.Weights == nil:
			return 1
		case ds.Weights[i] <= 0 || math.IsNaN(ds.Weights[i]):
			return 0
		case ds.Sampling:
			return 1
		}
		return ds.Weights[i]
	}
	// level of row i in categorical source s: its place among the coded
	// levels, or -1.
	type catCol struct {
		source int
		col    int
		kept   []string
		pos    map[int]int
	}
	cols := map[int]*catCol{}
	catOf := func(s int) *catCol {
		if c, ok := cols[s]; ok {
			return c
		}
		var c *catCol
		if j := slices.Index(ds.Predictors, dz.Sources[s].Name); j >= 0 && dz.Sources[s].Cat != nil {
			kept, _ := dz.Coded(s)
			c = &catCol{source: s, col: j, kept: kept, pos: map[int]int{}}
			for k, l := range kept {
				c.pos[dz.Level(s, l)] = k
			}
		}
		cols[s] = c
		return c
	}
	levelOf := func(c *catCol, i int) int {
		v := ds.X[i*ds.K+c.col]
		if math.IsNaN(v) {
			return -1
		}
		if k, ok := c.pos[int(v)]; ok {
			return k
		}
		return -1
	}
	var out []fewRowCell
	few := map[string]bool{} // "source\x00level" of the levels found
	var order []int
	for _, t := range dz.Terms {
		for _, name := range dz.TermSources(slices.IndexFunc(dz.Terms, func(u design.Term) bool { return u.Name == t.Name })) {
			if s := dz.Source(name); s >= 0 && catOf(s) != nil && !slices.Contains(order, s) {
				order = append(order, s)
			}
		}
	}
	for _, s := range order {
		c := cols[s]
		counts := make([]float64, len(c.kept))
		for i := 0; i < ds.N; i++ {
			if k := levelOf(c, i); k >= 0 {
				counts[k] += weight(i)
			}
		}
		_, ref := dz.Coded(s)
		for k, n := range counts {
			label := fmt.Sprintf("%s = %s", dz.Sources[s].Name, c.kept[k])
			if told(label) {
				few[fmt.Sprint(s, "\x00", k)] = true
				continue
			}
			if n > 0 && n < limit {
				few[fmt.Sprint(s, "\x00", k)] = true
				out = append(out, fewRowCell{label: label, count: n, ref: c.kept[k] == ref, column: levelColumn(dz, s, c.kept[k])})
			}
		}
	}
	for k, t := range dz.Terms {
		if t.Kind != design.KindInteraction {
			continue
		}
		var cats []*catCol
		size := 1
		for _, name := range dz.TermSources(k) {
			if s := dz.Source(name); s >= 0 && cols[s] != nil {
				cats = append(cats, cols[s])
				if size *= len(cols[s].kept); size > 1<<20 {
					break
				}
			}
		}
		if len(cats) < 2 || size > 1<<20 || size == 0 {
			continue
		}
		counts := make([]float64, size)
	rows:
		for i := 0; i < ds.N; i++ {
			at := 0
			for _, c := range cats {
				l := levelOf(c, i)
				if l < 0 {
					continue rows
				}
				at = at*len(c.kept) + l
			}
			counts[at] += weight(i)
		}
	cells:
		for at, n := range counts {
			if n <= 0 || n >= limit {
				continue
			}
			parts := make([]string, len(cats))
			levels := map[int]string{} // source -> level
			for j := len(cats) - 1; j >= 0; j-- {
				l := at % len(cats[j].kept)
				at /= len(cats[j].kept)
				if few[fmt.Sprint(cats[j].source, "\x00", l)] {
					continue cells
				}
				parts[j] = fmt.Sprintf("%s %s", dz.Sources[cats[j].source].Name, strconv.Quote(cats[j].kept[l]))
				levels[cats[j].source] = cats[j].kept[l]
			}
			label := strings.Join(parts, " with ")
			if slices.ContainsFunc(out, func(c fewRowCell) bool { return c.label == label }) {
				continue // the same columns in another interaction
			}
			out = append(out, fewRowCell{label: label, count: n, term: t.Name, column: cellColumn(dz, k, levels)})
		}
	}
	return out
}

// levelColumn is the design column of level of categorical source s (its
// categorical term's column TERM.LEVEL), or "" when it has none of its
// own (the reference, a sum or successive coding).
func levelColumn(dz *design.Design, s int, level string) string {
	for _, t := range dz.Terms {
		if t.Kind == design.KindCategorical && t.Source == s && slices.Contains(t.Columns, t.Name+"."+level) {
			return t.Name + "." + level
		}
	}
	return ""
}

// cellColumn is the design column of interaction term k at the levels
// given by source, when every part of it is a categorical term with a
// column of its own at its level (g.n&k.hi), or "".
func cellColumn(dz *design.Design, k int, levels map[int]string) string {
	t := &dz.Terms[k]
	var parts []string
	for _, p := range t.Parts {
		pt := &dz.Terms[p]
		l, ok := levels[pt.Source]
		if pt.Kind != design.KindCategorical || !ok {
			return ""
		}
		c := levelColumn(dz, pt.Source, l)
		if c == "" {
			return ""
		}
		parts = append(parts, c)
	}
	if c := strings.Join(parts, "&"); slices.Contains(t.Columns, c) {
		return c
	}
	return ""
}
