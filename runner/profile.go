package runner

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"

	"ordplan/render/numfmt"
	"ordplan/runner/data"
	"ordplan/runner/design"
)

// Profile is where the report predicts: one column the predictors read
// (the focus) varies; every other column is held at its weighted mean
// over the rows used, or, if categorical, at its reference level or at a
// level the caller fixes. Each raw row is turned into design columns with
// the constants frozen from the data, so transformations, splines and
// interactions move with the focus.
type Profile struct {
	Focus       string
	Categorical bool     // the focus is categorical: the grid is its levels
	Levels      []string // coded levels of a categorical focus
	Binary      bool     // a numeric focus taking two values (0 and 1, 1 and 2: valuePair), Min and Max
	Min, Max    float64
	or          *OutcomeResult
	s           int       // the focus column
	base        []float64 // the raw row others are held at
	fixed       []int     // the categorical columns held at a level the caller chose
	offset      float64
	hasOff      bool
}

// NewProfile describes predictions over column focus (a column the terms
// read, or a term, whose first column is used), with the columns in fixed
// held at the given values: a categorical column at a level, a 0/1 column
// (a panel of report.panels_by) at 0 or 1.
func (or *OutcomeResult) NewProfile(focus string, fixed map[string]string) (*Profile, error) {
	if err := or.ensureDesign(); err != nil {
		return nil, err
	}
	dz := or.Design
	s := dz.Source(focus)
	if s < 0 {
		if k := dz.Term(focus); k >= 0 {
			s = dz.Source(dz.TermSources(k)[0])
		}
	}
	if s < 0 {
		return nil, fmt.Errorf("the focus predictor %q is not a predictor of the model", focus)
	}
	pf := &Profile{Focus: dz.Sources[s].Name, or: or, s: s, base: or.representative(nil, false), hasOff: or.Data.Offset != nil}
	for _, col := range slices.Sorted(maps.Keys(fixed)) {
		value := fixed[col]
		c := dz.Source(col)
		switch {
		case c >= 0 && dz.Sources[c].Cat == nil && (value == "0" || value == "1"):
			pf.base[c] = float64(value[0] - '0')
		case c < 0 || dz.Level(c, value) < 0:
			return nil, fmt.Errorf("%q is not a level of the categorical column %q", value, col)
		default:
			pf.base[c] = float64(dz.Level(c, value))
		}
		pf.fixed = append(pf.fixed, c)
	}
	if pf.hasOff {
		pf.offset = or.meanOffset()
	}
	if dz.Sources[s].Cat != nil {
		pf.Categorical = true
		pf.Levels, _ = dz.Coded(s)
		return pf, nil
	}
	// The grid spans the values the model was fitted to as the data hold
	// them: on imputed data the observed values (AsRead, as the ranges
	// that flag extrapolation, fittedRanges), not one imputed set's.
	ref := or.AsRead()
	j := slices.Index(ref.Predictors, dz.Sources[s].Name)
	if j < 0 {
		return nil, fmt.Errorf("the focus predictor %q is not a column of the data", focus)
	}
	pf.Min, pf.Max, _ = columnSpan(ref, j)
	pf.Binary = columnValues(ref.X, ref.K, j).Two()
	if or.Data.N == 0 || math.IsInf(pf.Min, 1) {
		return nil, fmt.Errorf("no observations to average over")
	}
	return pf, nil
}

// columnSpan gives the smallest and largest value of column j of ds (its
// missing values left out) and the first row holding a value other than
// 0 and 1 (-1 when there is none: a 0/1 column). It is the one reading of
// whether a numeric column holds only 0 and 1, for the focus of the
// predictions, a column of report.panels_by and the columns the
// predictions hold at their mean share.
func columnSpan(ds *data.Dataset, j int) (lo, hi float64, other int) {
	lo, hi, other = math.Inf(1), math.Inf(-1), -1
	for i := 0; i < ds.N; i++ {
		v := ds.X[i*ds.K+j]
		if math.IsNaN(v) {
			continue
		}
		lo, hi = math.Min(lo, v), math.Max(hi, v)
		if v != 0 && v != 1 && other < 0 {
			other = i
		}
	}
	return lo, hi, other
}

// zeroOne reports whether numeric column name holds only 0 and 1 in the
// data as read (AsRead: on imputed data the observed values).
func (or *OutcomeResult) zeroOne(name string) bool {
	ref := or.AsRead()
	j := slices.Index(ref.Predictors, name)
	if j < 0 {
		return false
	}
	lo, _, other := columnSpan(ref, j)
	return other < 0 && !math.IsInf(lo, 1)
}

// PanelValues gives the values at which the report's predictions are
// drawn once each for column by (report.panels_by): the coded levels of a
// categorical column, "0" and "1" for a numeric column that holds only
// those (run and check refuse any other, Analysis.checkPanels); nil when
// by is "" or a column the outcome's terms do not read. zeroOne says
// which of the two it is.
func (or *OutcomeResult) PanelValues(by string) (values []string, zeroOne bool) {
	if by == "" || or.Design == nil {
		return nil, false
	}
	s := or.Design.Source(by)
	switch {
	case s < 0:
		return nil, false
	case or.Design.Sources[s].Cat != nil:
		levels, _ := or.Design.Coded(s)
		return levels, false
	case or.zeroOne(by):
		return []string{"0", "1"}, true
	}
	return nil, false
}

// TwoValues reports whether numeric column name takes two values in the
// data as read (AsRead: on imputed data the observed values), and which,
// the lower first (the two-values rule, valuePair).
func (or *OutcomeResult) TwoValues(name string) (lo, hi float64, ok bool) {
	ref := or.AsRead()
	j := slices.Index(ref.Predictors, name)
	if j < 0 || or.Design != nil && slices.ContainsFunc(or.Design.Sources, func(s design.Source) bool { return s.Name == name && s.Cat != nil }) {
		return 0, 0, false
	}
	p := columnValues(ref.X, ref.K, j)
	return p.v[0], p.v[1], p.Two()
}

// HeldTwoValued lists the numeric columns the profile holds at their mean
// although they take two values in the data (TwoValues; not the focus,
// not a column the caller fixed), each with that mean ("pilot 0.335063",
// for a 0/1 column the share of rows at 1): a value no single row has.
func (pf *Profile) HeldTwoValued() (names, held []string) {
	for s, src := range pf.or.Design.Sources {
		if _, _, two := pf.or.TwoValues(src.Name); s == pf.s || src.Cat != nil || slices.Contains(pf.fixed, s) || !two {
			continue
		}
		names = append(names, src.Name)
		held = append(held, fmt.Sprintf("%s %s", src.Name, numfmt.Num(pf.base[s])))
	}
	return names, held
}

// Grid gives the focus values: the level indices of a categorical focus,
// its two values for a focus taking two (0 and 1, 1 and 2), else evenly spaced values (as many as points)
// from the smallest to the largest in the data.
func (pf *Profile) Grid(points int) []float64 {
	switch {
	case pf.Categorical:
		out := make([]float64, len(pf.Levels))
		for i, l := range pf.Levels {
			out[i] = float64(pf.or.Design.Level(pf.s, l))
		}
		return out
	case pf.Binary:
		return []float64{pf.Min, pf.Max}
	case pf.Min == pf.Max || points < 2:
		return []float64{pf.Min}
	}
	out := make([]float64, points)
	for i := range out {
		out[i] = pf.Min + (pf.Max-pf.Min)*float64(i)/float64(points-1)
	}
	out[points-1] = pf.Max
	return out
}

// Labels writes the values of a grid (Grid) for a reader: the levels of
// a categorical focus, else the numbers with one number of decimals
// (numfmt.Spaced), so that a table or a chart's labels read alike; the
// predictions stay made at the values themselves.
func (pf *Profile) Labels(xs []float64) []string {
	if pf.Categorical {
		out := make([]string, len(xs))
		for i, x := range xs {
			out[i] = pf.or.Design.Sources[pf.s].Cat.Levels[int(x)]
		}
		return out
	}
	return numfmt.Spaced(xs)
}

// Rows gives the design rows (and offsets, nil when none) at the focus
// values xs.
func (pf *Profile) Rows(xs []float64) ([]float64, []float64, error) {
	dz := pf.or.Design
	K := len(dz.Columns)
	X := make([]float64, len(xs)*K)
	var off []float64
	raw := append([]float64(nil), pf.base...)
	for i, x := range xs {
		raw[pf.s] = x
		if err := dz.Row(raw, X[i*K:(i+1)*K]); err != nil {
			return nil, nil, err
		}
		if pf.hasOff {
			off = append(off, pf.offset)
		}
	}
	return X, off, nil
}

// HeldAt says where the other columns are held.
func (pf *Profile) HeldAt() string {
	dz := pf.or.Design
	var parts []string
	for s, src := range dz.Sources {
		if s == pf.s {
			continue
		}
		if src.Cat != nil {
			parts = append(parts, fmt.Sprintf("%s %s", src.Name, src.Cat.Levels[int(pf.base[s])]))
			continue
		}
		if slices.Contains(pf.fixed, s) {
			parts = append(parts, fmt.Sprintf("%s %s in this panel", src.Name, numfmt.Num(pf.base[s])))
			continue
		}
		parts = append(parts, fmt.Sprintf("%s %s", src.Name, numfmt.Num(pf.base[s])))
	}
	s := "no other predictor"
	over := "the rows used"
	if sets := pf.or.usedRows(); len(sets) > 1 {
		over = fmt.Sprintf("the rows of all %d imputed sets", len(sets))
	}
	if len(parts) > 0 {
		s = "the other predictors at their means over " + over + " (" + strings.Join(parts, ", ") + ")"
		if pf.hasCategorical() {
			s = "the other predictors at their means over " + over + ", categorical ones at the level shown (" + strings.Join(parts, ", ") + ")"
		}
	}
	if pf.hasOff {
		s += fmt.Sprintf(" and the offset at its mean (%s)", numfmt.Num(pf.offset))
	}
	switch {
	case pf.or.Data.Weights == nil:
	case pf.or.Data.Sampling:
		s += ", means weighted by the sampling weights"
	default:
		s += ", means weighted by the frequency weights"
	}
	return s
}

// HeldShort says in a few words, for a caption or a file's description,
// where the other columns are held: numeric ones at their means,
// categorical ones not fixed by the caller at their reference level
// ("" when there is no other column).
func (pf *Profile) HeldShort() string {
	numeric, categorical := false, false
	for s, src := range pf.or.Design.Sources {
		switch {
		case s == pf.s || slices.Contains(pf.fixed, s):
		case src.Cat != nil:
			categorical = true
		default:
			numeric = true
		}
	}
	switch {
	case numeric && categorical:
		return "other predictors at their means, categorical ones at their reference level"
	case numeric:
		return "other predictors at their means"
	case categorical:
		return "other predictors, all categorical, at their reference level"
	}
	return ""
}

func (pf *Profile) hasCategorical() bool {
	for s, src := range pf.or.Design.Sources {
		if s != pf.s && src.Cat != nil {
			return true
		}
	}
	return false
}

// ensureDesign gives an outcome assembled from fit input alone (numeric
// columns as they are) its trivial design and raw data.
func (or *OutcomeResult) ensureDesign() error {
	if or.Design != nil {
		return nil
	}
	d := or.FitData
	var spec design.Spec
	for _, c := range d.Predictors {
		spec.Sources = append(spec.Sources, design.Source{Name: c})
		spec.Terms = append(spec.Terms, design.TermSpec{Name: c, Source: c})
	}
	dz, err := design.Build(spec, d.X, d.N(), d.Weights, nil)
	if err != nil {
		return err
	}
	or.Design = dz
	if or.Data == nil {
		or.Data = &data.Dataset{Y: d.Y, X: d.X, N: d.N(), K: len(d.Predictors), Predictors: d.Predictors, Weights: d.Weights, Offset: d.Offset}
	}
	return nil
}

// SharesAt lists the numeric columns that take two values in the data
// (TwoValues) and lie strictly between them in point, the raw row of
// marginal effects or differences at one point (MarginalSet.Point): the
// columns the means, or the predictors a profile does not set, hold at
// their mean (for a 0/1 column the share of rows at 1), a value no single
// row has. Each with that value, as HeldTwoValued writes them.
func (or *OutcomeResult) SharesAt(point []float64) (names, held []string) {
	if or.Design == nil {
		return nil, nil
	}
	for s, src := range or.Design.Sources {
		if s >= len(point) || src.Cat != nil {
			continue
		}
		if lo, hi, two := or.TwoValues(src.Name); !two || !(point[s] > lo && point[s] < hi) {
			continue
		}
		names = append(names, src.Name)
		held = append(held, fmt.Sprintf("%s %s", src.Name, numfmt.Num(point[s])))
	}
	return names, held
}
