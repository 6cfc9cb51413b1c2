package runner

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// HypothesisResult is the Wald test of one of the plan's hypotheses in one
// model.
type HypothesisResult struct {
	Text  string   `json:"hypothesis"`
	Line  int      `json:"line"`
	Model string   `json:"model"`
	Test  fit.Test `json:"test"`
	// Adjusted is the p-value corrected for multiplicity (the plan's
	// inference.multiplicity), set for tests in the chosen model only.
	Adjusted   *float64 `json:"adjusted_p,omitempty"`
	Adjustment string   `json:"adjustment,omitempty"`
	// Contrasts estimates each restriction (left side minus right side)
	// with its interval at the report's level.
	Contrasts []fit.Contrast `json:"contrasts,omitempty"`
	// HoldsAt says where the restriction holds when it names a term that
	// enters an interaction in the model: the other terms' columns at 0,
	// as the odds ratios say it ("female = 0"; with several such terms,
	// "dose: female = 0; female: dose = placebo"); empty otherwise.
	HoldsAt string `json:"holds_at,omitempty"`
	// PartOfColumn lists each data column that makes several terms (x
	// beside log(x)) of which the hypothesis restricts some and not all:
	// it then tests those terms with the column's others held fixed,
	// which the column cannot do, and the test of the column as a whole
	// is ColumnLabel's row of the tests of each term (partOfColumn).
	PartOfColumn []ColumnTerms `json:"part_of_column,omitempty"`
	// PartOfBasis lists each spline term of which the hypothesis
	// restricts some basis columns by name, neither all of them nor all
	// but the first (the straight line, whose restriction tests that the
	// curve is straight): Column the term, Terms its columns, Named those
	// restricted (partOfBasis, ColumnTerms.BasisSentence).
	PartOfBasis []ColumnTerms `json:"part_of_basis,omitempty"`
}

// ColumnTerms is a data column that makes several terms: the terms
// (Terms) and those a hypothesis names (Named).
type ColumnTerms struct {
	Column string   `json:"column"`
	Terms  []string `json:"terms"`
	Named  []string `json:"named"`
}

// Sentence says what hypothesis text, which restricts c.Named and not
// the column's other terms, asks, and where the test of the column as a
// whole is: the row ColumnLabel of the tests of each term when they are
// made (tested), or the hypothesis restricting every term. code writes
// a hypothesis, name a column or term. The one wording of the report and
// of the warning of check and run (PartOfColumnWarnings).
func (c ColumnTerms) Sentence(text string, tested bool, code, name func(string) string) string {
	var others, whole []string
	for _, t := range c.Terms {
		if !slices.Contains(c.Named, t) {
			others = append(others, name(t))
		}
		whole = append(whole, t+" = 0")
	}
	verb := "is"
	if len(others) > 1 {
		verb = "are"
	}
	term, adds := "term", "adds"
	if len(c.Named) > 1 {
		term, adds = "terms", "add"
	}
	named := words.AndList(words.Each(c.Named, name))
	s := fmt.Sprintf("%s restricts %s %s, which data column %s makes together with %s: it asks what %s %s while %s %s held fixed, which cannot happen as the column changes, and not whether column %s is associated with the outcome.",
		code(text), term, named, name(c.Column), words.AndList(others), named, adds, words.AndList(others), verb, name(c.Column))
	if tested {
		return s + fmt.Sprintf(" For that, read the row \"%s\" of the tests of each term, which tests every term reading the column together, or write the hypothesis as %s.", name(ColumnLabel(c.Column)), code(strings.Join(whole, "; ")))
	}
	return s + fmt.Sprintf(" For that, write the hypothesis as %s.", code(strings.Join(whole, "; ")))
}

// BasisSentence says, for a spline term c (partOfBasis), what hypothesis
// text, which restricts some of its basis columns, tests and what would
// test the term or the curve's straightness; code writes a hypothesis,
// name a column or term. The one wording of the report and of the
// warning of check and run (PartOfColumnWarnings).
func (c ColumnTerms) BasisSentence(text string, tested bool, code, name func(string) string) string {
	cols := "column"
	if len(c.Named) > 1 {
		cols = "columns"
	}
	s := fmt.Sprintf("%s restricts %s %s of the spline basis of term %s (its columns %s), holding the others fixed: a basis column's coefficient has no reading of its own (it depends on how the basis is written), so this tests neither whether the term is associated with the outcome nor whether its curve is straight.",
		code(text), cols, words.AndList(words.Each(c.Named, name)), name(c.Column), words.AndList(words.Each(c.Terms, name)))
	whole := code(c.Column + " = 0")
	if tested {
		whole += fmt.Sprintf(" (the row \"%s\" of the tests of each term)", name(c.Column))
	}
	var curved []string
	for _, t := range c.Terms[1:] {
		curved = append(curved, t+" = 0")
	}
	return s + fmt.Sprintf(" For the first, write %s; for the second, %s, every column but the straight line %s.", whole, code(strings.Join(curved, "; ")), name(c.Terms[0]))
}

// partOfBasis lists the spline terms of dz (their first column the value
// itself, the others the curve) of which the hypothesis names some
// columns, neither all nor all but the first; nil for none.
func partOfBasis(text string, dz *design.Design) []ColumnTerms {
	if dz == nil {
		return nil
	}
	var named []string
	for _, part := range strings.Split(text, ";") {
		if name, ok := fit.WholeTermPart(part); ok && dz.Term(name) >= 0 {
			continue // the whole term
		}
		names, _ := fit.HypothesisNames(part)
		for _, n := range names {
			col, _, _ := strings.Cut(n, "[")
			named = append(named, col)
		}
	}
	var out []ColumnTerms
	for _, t := range dz.Terms {
		if t.Kind != design.KindNumeric || !t.Transform.Spline() || len(t.Columns) < 2 {
			continue
		}
		c := ColumnTerms{Column: t.Name, Terms: slices.Clone(t.Columns)}
		for _, col := range t.Columns {
			if slices.Contains(named, col) {
				c.Named = append(c.Named, col)
			}
		}
		straight := len(c.Named) == len(t.Columns)-1 && !slices.Contains(c.Named, t.Columns[0])
		if len(c.Named) > 0 && len(c.Named) < len(t.Columns) && !straight {
			out = append(out, c)
		}
	}
	return out
}

// PartOfColumnWarnings are the warnings of check and run for outcome's
// design dz: one for each hypothesis of p restricting some, not all, of
// the terms a data column makes (partOfColumn), or part of a spline
// basis (partOfBasis), at its place, as the report words it
// (ColumnTerms.Sentence, ColumnTerms.BasisSentence).
func PartOfColumnWarnings(p *plan.Plan, outcome string, dz *design.Design) []string {
	var out []string
	tested := p.Inference.TermTests != plan.TermTestsNone
	quote := func(s string) string { return `"` + s + `"` }
	same := func(s string) string { return s }
	for i, h := range p.Inference.Hypotheses {
		for _, c := range partOfColumn(h.Text, dz) {
			out = append(out, fmt.Sprintf("outcome %s: inference.hypotheses[%d] (line %d): %s", outcome, i, h.Line, c.Sentence(h.Text, tested, quote, same)))
		}
		for _, c := range partOfBasis(h.Text, dz) {
			out = append(out, fmt.Sprintf("outcome %s: inference.hypotheses[%d] (line %d): %s", outcome, i, h.Line, c.BasisSentence(h.Text, tested, quote, same)))
		}
	}
	return out
}

// MarginalSet is one kind of marginal effects of the chosen model.
type MarginalSet struct {
	Kind        string               `json:"kind"`                   // average, means or profile
	Point       []float64            `json:"point,omitempty"`        // the raw row: one value per column read
	PointLevels []string             `json:"point_levels,omitempty"` // the level of each categorical column of Point
	Effects     []fit.MarginalEffect `json:"effects"`
	Error       string               `json:"error,omitempty"`
	// Notes name the columns whose effects could not be computed, and why.
	Notes []string `json:"notes,omitempty"`
	// Pooling is Rubin's rules for each effect on imputed data (one per
	// effect, in order); the effects then hold the pooled values, with
	// t-based p-values and intervals.
	Pooling []PoolingParam `json:"pooling,omitempty"`
}

// NewRows are the chosen model's predictions for the plan's new rows.
type NewRows struct {
	File string          `json:"file"`
	Rows *data.Rows      `json:"-"`
	Pred *fit.Prediction `json:"-"`
	// Design is the new rows' design (N x columns), made from their raw
	// values with the constants frozen from the fitted data.
	Design []float64 `json:"-"`
	Error  string    `json:"error,omitempty"`
	// DF are the degrees of freedom of the pooled predictions on imputed
	// data (nil otherwise).
	DF *PredictionDF `json:"-"`
	// Outside gives, per row, why it lies outside the population the model
	// was fitted to (nil: inside; flagNewRows); Flagged the rows with a
	// reason, by line; Notes what could not be checked.
	Outside [][]string      `json:"-"`
	Flagged []NewRowOutside `json:"-"`
	Notes   []string        `json:"-"`
	// NotPredicted gives, per row, why it is not predicted ("": it is;
	// nil: every row is): a term cannot be computed for it (designOf);
	// Unpredicted the rows so, by line.
	NotPredicted []string             `json:"-"`
	Unpredicted  []NewRowNotPredicted `json:"-"`
}

// NewRowNotPredicted is a new row that is not predicted: its line and
// why (a term cannot be computed for it).
type NewRowNotPredicted struct {
	Line   int    `json:"line"`
	Reason string `json:"reason"`
}

// designOf makes the new rows' design row by row: a row that a term's
// transformation cannot take (design.UndefinedError: the log of 0, say)
// is not predicted, with the reason (NotPredicted; its design row is
// left 0 and its predictions are not written), and the others are; any
// other error (a level the model has no effect of) stops, naming the
// row. The data's rows are never so treated: the model is fitted to
// them, and such a value there is refused.
func (nr *NewRows) designOf(dz *design.Design) ([]float64, int, error) {
	rows := nr.Rows
	S, K := len(dz.Sources), len(dz.Columns)
	X := make([]float64, rows.N*K)
	for i := 0; i < rows.N; i++ {
		x := X[i*K : (i+1)*K]
		err := dz.Row(rows.X[i*S:(i+1)*S], x)
		var u *design.UndefinedError
		switch {
		case err == nil:
			continue
		case !errors.As(err, &u):
			return nil, i, err
		}
		clear(x)
		if nr.NotPredicted == nil {
			nr.NotPredicted = make([]string, rows.N)
		}
		nr.NotPredicted[i] = u.Reason()
		nr.Unpredicted = append(nr.Unpredicted, NewRowNotPredicted{Line: rows.Lines[i], Reason: u.Reason()})
	}
	return X, -1, nil
}

// notPredictedWarnings are the warnings of `ordplan check` for the new
// rows of an outcome that will not be predicted, one per row, at most newRowsWarned
// (then one saying how many more).
func (nr *NewRows) notPredictedWarnings(outcome string) []string {
	var out []string
	for k, u := range nr.Unpredicted {
		if k == newRowsWarned {
			out = append(out, fmt.Sprintf("outcome %s: inference.predict: %d more rows of %s will not be predicted", outcome, len(nr.Unpredicted)-k, nr.File))
			break
		}
		out = append(out, fmt.Sprintf("outcome %s: inference.predict: %s:%d: %s: this row will not be predicted (the other rows will be)", outcome, nr.File, u.Line, u.Reason))
	}
	return out
}

// newRowsWarned is how many new rows check warns of one by one.
const newRowsWarned = 10

// Predicted reports whether new row i is predicted.
func (nr *NewRows) Predicted(i int) bool {
	return nr.NotPredicted == nil || nr.NotPredicted[i] == ""
}

// runInference computes what the plan's inference section asks for.
func runInference(an *Analysis, or *OutcomeResult) error {
	inf := an.Inference
	testHypotheses(an, or)
	if or.Chosen == nil {
		return nil
	}
	or.ProfileOutside = profileOutside(an, or.fittedRanges(), or.dataOptions.Keep)
	res := or.Chosen.Result
	for _, kind := range inf.MarginalEffects {
		or.Marginal = append(or.Marginal, marginalSet(an, or, res, kind))
	}
	or.LevelPairs = levelPairSets(an, or, res, func(kind string, s int, levels []string) MarginalSet {
		return pairSet(an, or, res, kind, s, levels)
	})
	if inf.PredictPath != "" {
		nr, err := readNewRows(an, or)
		if err != nil {
			return err
		}
		if nr.Pred, err = res.Predict(nr.Design, nr.Rows.Offset); err != nil {
			nr.Error = err.Error()
		}
		or.NewRows = nr
	}
	return nil
}

// testHypotheses tests the plan's hypotheses in every model that has
// their parameters.
func testHypotheses(an *Analysis, or *OutcomeResult) {
	for _, h := range an.Inference.Hypotheses {
		or.Hypotheses = append(or.Hypotheses, hypothesisTests(h, or, an.Level)...)
	}
}

// marginalSet computes one kind of marginal effects (average, means,
// profile) of fit res on the outcome's data.
func marginalSet(an *Analysis, or *OutcomeResult, res *fit.Result, kind string) MarginalSet {
	level := an.Level
	set := MarginalSet{Kind: kind}
	var err error
	switch kind {
	case "average":
		set.Effects, set.Notes, err = sourceEffects(or, res, or.Data.X, or.Data.N, or.Data.Offset, or.Data.Weights, level)
	default:
		raw, off := or.atPoint(an.Inference.Profile, kind)
		set.Point = raw
		set.PointLevels = or.levelsAt(raw)
		set.Effects, set.Notes, err = sourceEffects(or, res, raw, 1, off, nil, level)
	}
	if err != nil {
		set.Error = err.Error()
	}
	return set
}

// readNewRows reads the plan's new rows and makes their design with the
// constants frozen from the fitted data; with the fitted data (not in
// check) it flags the rows outside the population fitted (flagNewRows).
func readNewRows(an *Analysis, or *OutcomeResult) (*NewRows, error) {
	inf, dopt := an.Inference, or.dataOptions
	dopt.Dialect = an.NewRowsDialect
	nr := &NewRows{File: inf.Predict}
	sources := make([]string, len(or.Design.Sources))
	levels := map[string][]string{}
	for i, s := range or.Design.Sources {
		sources[i] = s.Name
		if s.Cat != nil {
			levels[s.Name] = s.Cat.Levels
		}
	}
	rows, err := data.LoadNewRows(inf.PredictPath, sources, levels, dopt)
	if err != nil {
		return nil, fmt.Errorf("%s: inference.predict: %v", an.Source, err)
	}
	nr.Rows = rows
	X, i, err := or.Design.Matrix(rows.X, rows.N)
	if err != nil {
		X, i, err = nr.designOf(or.Design)
	}
	if err != nil {
		return nil, fmt.Errorf("%s: inference.predict: %s:%d: %v", an.Source, rows.File, rows.Lines[i], err)
	}
	nr.Design = X
	if or.Data != nil {
		flagNewRows(an, or, nr)
	}
	return nr, nil
}

// sourceEffects gives the marginal effects of every source variable (raw
// column) of the outcome's design, averaged over the raw rows given (n x
// S): for a categorical column the discrete change from its reference to
// each coded level; for a numeric column taking two values in the data
// (0 and 1, 1 and 2: valuePair) the change from the lower to the higher;
// for any other numeric column the derivative,
// pushed through every design column the variable enters (transformation,
// polynomial, spline, interaction).
func sourceEffects(or *OutcomeResult, res *fit.Result, raw []float64, n int, off, w []float64, level float64) ([]fit.MarginalEffect, []string, error) {
	dz := or.Design
	S, K := len(dz.Sources), len(dz.Columns)
	var out []fit.MarginalEffect
	var notes []string
	for s, src := range dz.Sources {
		if pair := or.sourceValues(s); src.Cat != nil || pair.Two() {
			from, tos, labels := pair.v[0], []float64{pair.v[1]}, []string{pair.change()}
			if src.Cat != nil {
				kept, ref := dz.Coded(s)
				from, tos, labels = float64(dz.Level(s, ref)), nil, nil
				for _, l := range kept {
					if l != ref {
						tos = append(tos, float64(dz.Level(s, l)))
						labels = append(labels, ref+" to "+l)
					}
				}
			}
			// The rows at from and at each value to are made one at a time
			// in the effect, not held whole (each n x K); on an error, each
			// value's rows are checked in row order, from's first, so the
			// error is the first row's that fails, as when they were held.
			if len(tos) == 0 {
				if err := allRowsAt(dz, raw, n, s, from); err != nil {
					return nil, nil, err
				}
			}
			r := make([]float64, S)
			for t, to := range tos {
				at := [2]float64{from, to}
				effs, err := res.AverageDifferences(src.Name, 2, n, func(v, i int, x []float64) error {
					return rowAt(dz, raw, i, s, at[v], r, x)
				}, [][2]int{{0, 1}}, off, w, level)
				if err != nil {
					if t == 0 {
						if e := allRowsAt(dz, raw, n, s, from); e != nil {
							return nil, nil, e
						}
					}
					if e := allRowsAt(dz, raw, n, s, to); e != nil {
						return nil, nil, e
					}
					return nil, nil, err
				}
				eff := effs[0]
				for i := range eff {
					eff[i].Change = labels[t]
				}
				out = append(out, eff...)
			}
			continue
		}
		// The derivative is made row by row in the effect, neither the rows
		// nor their derivatives held whole (each n x K); the rows of weight
		// 0, which the effect does not read, after it. On an error every
		// row is checked in order (checkDerivatives), so the error, or the
		// rows where the derivative is infinite, are as when they were
		// held; those rows give a note instead of the effect.
		x, dx := make([]float64, K), make([]float64, K)
		derivative := func(i int) error {
			clear(x)
			clear(dx)
			return dz.Derivative(raw[i*S:(i+1)*S], s, x, dx)
		}
		notFinite := func() bool {
			return slices.ContainsFunc(dx, func(v float64) bool { return math.IsInf(v, 0) || math.IsNaN(v) })
		}
		checkDerivatives := func() (infinite int, err error) {
			for i := 0; i < n; i++ {
				if err := derivative(i); err != nil {
					return 0, err
				}
				if notFinite() {
					infinite++
				}
			}
			return infinite, nil
		}
		infinite := 0
		var rowErr error
		eff, err := res.AverageSlopeRows(src.Name, n, func(i int) ([]float64, []float64) {
			if rowErr == nil {
				if rowErr = derivative(i); rowErr == nil && notFinite() {
					infinite++
				}
			}
			return x, dx
		}, off, w, level)
		for i := 0; i < n && w != nil && err == nil && rowErr == nil; i++ {
			if w[i] == 0 {
				if rowErr = derivative(i); rowErr == nil && notFinite() {
					infinite++
				}
			}
		}
		if err != nil || rowErr != nil {
			if infinite, rowErr = checkDerivatives(); rowErr != nil {
				return nil, nil, rowErr
			}
		}
		if infinite > 0 {
			notes = append(notes, fmt.Sprintf("The effect of %s is not computed: its derivative is infinite at %d of the %d rows (a square root at 0); a log with a shift, or a change between stated values, gives a finite effect.", src.Name, infinite, n))
			continue
		}
		if err != nil {
			return nil, nil, err
		}
		for i := range eff {
			eff[i].Change = plan.WithUnit("per unit", src.Unit) // a derivative by the raw column, in its units
		}
		out = append(out, eff...)
	}
	return out, notes, nil
}

// sourceValues is the values numeric source s takes, when at most two
// (valuePair; categorical sources are read by their levels).
func (or *OutcomeResult) sourceValues(s int) valuePair {
	if or.Design.Sources[s].Cat != nil {
		return valuePair{n: 3}
	}
	return sourceValues(or.Design, or.Data, s)
}

// representative is one raw row: numeric columns at their (weighted)
// means over the rows used (usedRows: on imputed data the rows of every
// imputed set), categorical columns at their reference level, then the
// values of the plan's profile (withProfile). The one point of the
// prediction grid, of the effects at the means and at a profile, and of
// the new rows' profile.
func (or *OutcomeResult) representative(profile []plan.ProfileValue, withProfile bool) []float64 {
	dz := or.Design
	S := len(dz.Sources)
	raw := make([]float64, S)
	sets := or.usedRows()
	for s, src := range dz.Sources {
		if src.Cat != nil {
			_, ref := dz.Coded(s)
			raw[s] = float64(dz.Level(s, ref))
			continue
		}
		var col, w []float64
		for _, ds := range sets {
			for i := 0; i < ds.N; i++ {
				col = append(col, ds.X[i*S+s])
			}
			if ds.Weights != nil {
				w = append(w, ds.Weights...)
			}
		}
		raw[s] = weightedMean(col, w)
	}
	if withProfile {
		for _, a := range profile {
			s := dz.Source(a.Predictor)
			if s < 0 {
				continue
			}
			if a.Level != "" {
				raw[s] = float64(dz.Level(s, a.Level))
			} else {
				raw[s] = a.Value
			}
		}
	}
	return raw
}

// usedRows are the data sets whose rows the means of representative and
// meanOffset are over: every imputed set on imputed data (the same point
// for every set's fit, which pooling needs), else the rows used.
func (or *OutcomeResult) usedRows() []*data.Dataset {
	if or.Imputed != nil && len(or.Imputed.Data) > 0 {
		return or.Imputed.Data
	}
	return []*data.Dataset{or.Data}
}

// meanOffset is the (weighted) mean offset over usedRows.
func (or *OutcomeResult) meanOffset() float64 {
	var off, w []float64
	for _, ds := range or.usedRows() {
		off = append(off, ds.Offset...)
		if ds.Weights != nil {
			w = append(w, ds.Weights...)
		}
	}
	return weightedMean(off, w)
}

// atPoint is the raw row of marginal effects at one point, kind means or
// profile (representative), and its offset: the (weighted) mean offset
// over the rows used (meanOffset), nil without an offset.
func (or *OutcomeResult) atPoint(profile []plan.ProfileValue, kind string) ([]float64, []float64) {
	raw := or.representative(profile, kind == "profile")
	var off []float64
	if or.Data.Offset != nil {
		off = []float64{or.meanOffset()}
	}
	return raw, off
}

// levelsAt names the level of each categorical column of a raw row ("" for
// numeric columns).
func (or *OutcomeResult) levelsAt(raw []float64) []string {
	out := make([]string, len(raw))
	for s, src := range or.Design.Sources {
		if src.Cat != nil {
			out[s] = src.Cat.Levels[int(raw[s])]
		}
	}
	return out
}

func weightedMean(v, w []float64) float64 {
	s, tot := 0.0, 0.0
	for i, x := range v {
		wi := 1.0
		if w != nil {
			wi = w[i]
		}
		s += wi * x
		tot += wi
	}
	return s / tot
}

// hypothesisTests tests one hypothesis in every candidate model that has
// the parameters it names.
func hypothesisTests(h plan.Hypothesis, or *OutcomeResult, level float64) []HypothesisResult {
	var out []HypothesisResult
	var lastErr error
	for _, f := range or.Fits {
		if f.Auxiliary || !f.OK() {
			continue
		}
		hy, err := fit.ParseHypothesis(expandTermHypothesis(h.Text, or.Terms, f.Result.ParamNames), f.Result.ParamNames)
		if hy != nil {
			hy.Text = h.Text
		}
		if err != nil {
			lastErr = err
			if strings.Contains(err.Error(), "is not a parameter") {
				continue
			}
			out = append(out, HypothesisResult{Text: h.Text, Line: h.Line, Model: f.ID, Test: fit.Test{Name: fit.TestWald.String(), Reason: err.Error()}})
			continue
		}
		if f.Pooled != nil {
			out = append(out, HypothesisResult{Text: h.Text, Line: h.Line, Model: f.ID, Test: pooledLinear(f, hy), Contrasts: pooledContrasts(f, hy, level)})
			continue
		}
		out = append(out, HypothesisResult{Text: h.Text, Line: h.Line, Model: f.ID, Test: fit.WaldLinear(f.Result, hy), Contrasts: fit.Contrasts(f.Result, hy, level)})
	}
	if len(out) > 0 {
		where, part, basis := hypothesisHoldsAt(h.Text, or), partOfColumn(h.Text, or.Design), partOfBasis(h.Text, or.Design)
		for i := range out {
			out[i].HoldsAt, out[i].PartOfColumn, out[i].PartOfBasis = where, part, basis
		}
	}
	if len(out) == 0 {
		reason := "no fitted model has the parameters it names"
		if lastErr != nil {
			reason += ": " + lastErr.Error()
		}
		out = append(out, HypothesisResult{Text: h.Text, Line: h.Line, Test: fit.Test{Name: fit.TestWald.String(), Reason: reason}})
	}
	return out
}

// expandTermHypothesis rewrites each restriction "TERM = 0" that names a
// term of several columns (or a term whose column has one parameter per
// boundary) as "p = 0" for every parameter of the term's columns in the
// model: the joint hypothesis that the term has no effect. Other
// restrictions are left as written.
func expandTermHypothesis(text string, terms []fit.Term, params []string) string {
	parts := strings.Split(text, ";")
	for i, part := range parts {
		name, ok := fit.WholeTermPart(part)
		if !ok || slices.Contains(params, name) {
			continue
		}
		for _, t := range terms {
			if t.Name != name {
				continue
			}
			var eqs []string
			for _, p := range params {
				base, _, _ := strings.Cut(p, "[")
				if slices.Contains(t.Columns, base) {
					eqs = append(eqs, p+" = 0")
				}
			}
			if len(eqs) > 0 {
				parts[i] = " " + strings.Join(eqs, "; ")
			}
		}
	}
	return strings.Join(parts, ";")
}

// hypothesisHoldsAt says where a hypothesis's restrictions hold: for each
// term it names (by a column, a column's boundary, or as TERM = 0) that
// enters an interaction with other terms, holdsAt's words; the terms'
// columns are the same in every model of the outcome.
func hypothesisHoldsAt(text string, or *OutcomeResult) string {
	dz := or.Design
	if dz == nil {
		return ""
	}
	terms := hypothesisTerms(text, dz)
	var at []string
	ranges := or.fittedRanges()
	for _, k := range terms {
		if w := holdsAt(dz, k, ranges); w != "" {
			at = append(at, dz.Terms[k].Name+": "+w)
		}
	}
	if len(at) == 1 {
		_, w, _ := strings.Cut(at[0], ": ")
		return w
	}
	return strings.Join(at, "; ")
}

// partOfColumn lists the data columns of dz that make several terms
// (interactions aside) of which the hypothesis names some and not all, in
// the order of the columns; nil for none.
func partOfColumn(text string, dz *design.Design) []ColumnTerms {
	if dz == nil {
		return nil
	}
	named := hypothesisTerms(text, dz)
	var out []ColumnTerms
	for s, src := range dz.Sources {
		c := ColumnTerms{Column: src.Name}
		for k, t := range dz.Terms {
			if t.Kind == design.KindInteraction || t.Source != s {
				continue
			}
			c.Terms = append(c.Terms, t.Name)
			if slices.Contains(named, k) {
				c.Named = append(c.Named, t.Name)
			}
		}
		if len(c.Terms) > 1 && len(c.Named) > 0 && len(c.Named) < len(c.Terms) {
			out = append(out, c)
		}
	}
	return out
}

// hypothesisTerms are the terms of dz a hypothesis names, by a column, a
// column's boundary, or as TERM = 0, in the order named.
func hypothesisTerms(text string, dz *design.Design) []int {
	var terms []int
	add := func(k int) {
		if k >= 0 && !slices.Contains(terms, k) {
			terms = append(terms, k)
		}
	}
	for _, part := range strings.Split(text, ";") {
		if name, ok := fit.WholeTermPart(part); ok {
			if k := slices.IndexFunc(dz.Terms, func(t design.Term) bool { return t.Name == name }); k >= 0 {
				add(k)
				continue
			}
		}
		names, _ := fit.HypothesisNames(part)
		for _, n := range names {
			col, _, _ := strings.Cut(n, "[")
			add(slices.IndexFunc(dz.Terms, func(t design.Term) bool { return slices.Contains(t.Columns, col) }))
		}
	}
	return terms
}
