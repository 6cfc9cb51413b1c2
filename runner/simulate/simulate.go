package simulate

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"

	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// CalibrationRows is the size of the predictor sample the cutpoints are
// solved on (and the design constants frozen on): rows drawn from the
// assumptions that the plan's subset keeps.
const CalibrationRows = 100_000

// maxCalibrationDraws bounds the rows drawn to find CalibrationRows that
// the subset keeps: a subset that keeps under 5% of the drawn rows is
// refused (its simulated data sets would keep under 5% of their rows).
const maxCalibrationDraws = 20 * CalibrationRows

// probeDraws is the first draw from which a subset is refused early: one
// whose kept count there is below 5% of it by more than four standard
// deviations of a count (keptFarBelow) would be refused after
// maxCalibrationDraws all the same, and is refused at once.
const probeDraws = CalibrationRows / 5

// keptFarBelow reports whether kept rows of drawn put the subset's share
// of rows clearly under 1/20: even kept + 4 sqrt(kept) + 4, an upper bound
// of a binomial count at about four standard deviations, is under drawn/20.
func keptFarBelow(kept, drawn int) bool {
	k := float64(kept)
	return 20*(k+4*math.Sqrt(k)+4) < float64(drawn)
}

// Predictor is how one raw column is drawn.
type Predictor struct {
	Column      string
	Kind        string    // "levels" (categorical or listed values), "normal" or "uniform"
	Values      []string  // levels or values, as written
	Numbers     []float64 // the values as numbers (numeric columns with values)
	Categorical bool      // levels of a categorical column (the design reads the level index)
	Proportions []float64
	Mean, SD    float64
	Range       []float64 // nil = unbounded
	whole       bool      // drawn over the whole numbers of Range (frequency weights)
}

// Outcome is one outcome's generating model.
type Outcome struct {
	Column      string
	Categories  []string
	Proportions []float64
	Cut         []float64 // J-1 cutpoints solved on the calibration sample
	// Design makes the outcome's design columns from the raw columns, its
	// constants frozen on the calibration sample; Sources[s] is the
	// simulated column of its raw column s.
	Design  *design.Design
	Sources []int
	// Beta[m][c]: coefficient of design column c at boundary m.
	Beta [][]float64
}

// Sim draws data sets from a plan.
type Sim struct {
	Plan       *plan.Plan
	Link       fit.Link
	Comparison fit.Comparison
	Backward   bool // stage comparison from the top category
	Predictors []Predictor
	Outcomes   []Outcome
	// Correlated lists the predictors drawn together through a Gaussian
	// copula, chol the lower Cholesky factor of their correlation matrix.
	Correlated []int
	chol       []float64
	// Keep is the plan's subset; keepCol[i] the predictor Keep[i] reads.
	Keep    []data.Condition
	keepCol []int
	// Missing is the stated missingness, column by column.
	Missing []missingColumn
	// blankMarker is written in the first cell of a row missing every
	// column (blankMarker).
	blankMarker string
	Weights     string // the weights column, drawn as weight says
	// weight is how the weights column is drawn: from the dictionary's
	// values (equally often) or uniformly over its range; nil when the
	// dictionary states neither: every weight is 1.
	weight  *Predictor
	Offset  string // written as 0
	Cluster string
	// The clusters of the cluster column: clusterNumber of them at every
	// size, or (0) runs of clusterRows consecutive rows; each adds a
	// normal intercept of SD clusterSD to its rows' linear predictors.
	// calibU are the intercepts of the calibration rows (nil when
	// clusterSD is 0), one independent draw per row.
	clusterNumber, clusterRows int
	clusterSD                  float64
	calibU                     []float64
	// perCluster are the predictors drawn once per cluster (indexes).
	perCluster []int
	seed       uint64
}

// New prepares the simulation of a plan with assumptions.
func New(p *plan.Plan) (*Sim, error) {
	a := p.Assumptions
	if a == nil {
		return nil, fmt.Errorf("%s: the plan has no assumptions section: state the category proportions and the effects to simulate from (see the README, \"Rehearse and size the study\")", p.Path)
	}
	if im := p.Data.Imputed; im != nil {
		sets := im.File
		if sets == "" {
			sets = strings.Join(im.Files, ", ")
		}
		return nil, fmt.Errorf("%s: data.imputed names imputed sets made elsewhere from the real data (%s); simulated data have no such sets, so the plan's pooled analysis cannot be run on them: to rehearse it, use a copy of the plan with data.missing: impute in place of data.imputed (the program then imputes the simulated data itself) and the expected missing values under assumptions.missing", p.Path, sets)
	}
	link, err := fit.ParseLink(a.Link)
	if err != nil {
		return nil, fmt.Errorf("%s: assumptions.link: %v", p.Path, err)
	}
	cmp, err := fit.ParseComparison(a.Comparison)
	if err != nil {
		return nil, fmt.Errorf("%s: assumptions.comparison: %v", p.Path, err)
	}
	s := &Sim{Plan: p, Link: link, Comparison: cmp, Backward: a.Direction == "backward",
		Weights: p.Data.Weights, Offset: p.Data.Offset, Cluster: p.Data.Cluster, seed: p.Seed}
	// Predictors: the raw columns of the terms and of the subset.
	for _, u := range p.UsedColumns() {
		if u.Role != plan.RolePredictor && u.Role != plan.RoleSubset {
			continue
		}
		pr, err := predictorOf(p, u.Column)
		if err != nil {
			return nil, err
		}
		s.Predictors = append(s.Predictors, pr)
	}
	if s.Cluster == "" {
		// A cluster column only a sensitivity analysis uses (for
		// clustered errors): runs of rows without a cluster effect, as
		// without assumptions.clusters.
		for _, u := range p.UsedColumns() {
			if u.Role == plan.RoleCluster {
				s.Cluster = u.Column
				break
			}
		}
	}
	if s.Cluster != "" {
		s.clusterRows = plan.DefaultClusterRows
		if c := a.Clusters; c != nil {
			s.clusterNumber, s.clusterRows = c.Number, c.RowsEach
		}
		s.clusterSD = a.Clusters.InterceptSD(link)
	}
	if c := a.Clusters; c != nil && s.Cluster != "" {
		for _, col := range c.PerCluster {
			k := slices.IndexFunc(s.Predictors, func(pr Predictor) bool { return pr.Column == col })
			if k < 0 {
				return nil, fmt.Errorf("%s: %s.per_cluster: column %q is not simulated", p.Path, c.Key, col)
			}
			s.perCluster = append(s.perCluster, k)
		}
	}
	if err := s.correlate(a.Correlations); err != nil {
		return nil, err
	}
	if err := s.prepareWeights(); err != nil {
		return nil, err
	}
	for _, c := range p.Subset {
		k := slices.IndexFunc(s.Predictors, func(pr Predictor) bool { return pr.Column == c.Column })
		if k < 0 {
			return nil, fmt.Errorf("%s: %s: column %q is not simulated", p.Path, c.Key, c.Column)
		}
		s.Keep, s.keepCol = append(s.Keep, c), append(s.keepCol, k)
	}
	rows, err := s.calibrationSample()
	if err != nil {
		return nil, err
	}
	if s.clusterSD > 0 {
		// The population the proportions describe: every row with its
		// cluster's intercept, drawn here once per calibration row.
		rng := rand.New(rand.NewPCG(s.seed, 0xc1a5ca11b))
		s.calibU = make([]float64, len(rows))
		for i := range s.calibU {
			s.calibU[i] = s.clusterSD * rng.NormFloat64()
		}
	}
	for _, oc := range p.Outcomes {
		o, err := s.outcome(oc, rows)
		if err != nil {
			return nil, err
		}
		s.Outcomes = append(s.Outcomes, o)
	}
	if err := s.prepareMissing(rows); err != nil {
		return nil, err
	}
	return s, nil
}

// prepareWeights says how the weights column is drawn: from the
// dictionary's values or range when it states one (each row
// independently of every other column), else 1 in every row. The plan's
// check has refused values or a range below 0 (A24, checkSimulatedWeights).
func (s *Sim) prepareWeights() error {
	p, w := s.Plan, s.Weights
	if w == "" || slices.ContainsFunc(s.Predictors, func(pr Predictor) bool { return pr.Column == w }) {
		return nil
	}
	e := p.EntryOf(w)
	if e == nil || (e.Values == nil && e.Range == nil) {
		return nil
	}
	pr, err := predictorOf(p, w)
	if err != nil {
		return err
	}
	// A range or values below 0 are refused by the plan's check (A24),
	// and so are frequency weights (counts) whose values are not whole
	// numbers or whose range holds none (D36).
	if p.Data.WeightKind != "sampling" && pr.Kind == "uniform" {
		// Frequency weights are counts, as the reader asks (D33): drawn
		// over the whole numbers of the range.
		pr.Range, pr.whole = []float64{math.Ceil(pr.Range[0]), math.Floor(pr.Range[1])}, true
	}
	s.weight = &pr
	return nil
}

// WeightsRecord says how the weights were simulated (nil: the plan has
// no weights column).
func (s *Sim) WeightsRecord() *runner.SimulatedWeights {
	if s.Weights == "" {
		return nil
	}
	rec := &runner.SimulatedWeights{Column: s.Weights, Kind: s.Plan.Data.WeightKind}
	if pr := s.weight; pr != nil {
		rec.Drawn = true
		if pr.Kind == "uniform" {
			rec.Range, rec.Whole = slices.Clone(pr.Range), pr.whole
		} else {
			rec.Values, rec.Proportions = slices.Clone(pr.Values), slices.Clone(pr.Proportions)
		}
	}
	return rec
}

// TruncationRecord lists the normal columns drawn truncated to their
// dictionary range; with w (a rehearsal's data, Sim.WriteCounted of n
// rows) the draws made and those drawn again, outside the range.
func (s *Sim) TruncationRecord(w *Written, n int) []runner.SimulatedTruncation {
	var out []runner.SimulatedTruncation
	for k, pr := range s.Predictors {
		if pr.Kind != "normal" || pr.Range == nil {
			continue
		}
		t := plan.TruncatedNormal(pr.Mean, pr.SD, pr.Range[0], pr.Range[1])
		rec := runner.SimulatedTruncation{Column: pr.Column, StatedMean: pr.Mean, StatedSD: pr.SD, Range: slices.Clone(pr.Range),
			Outside: t.Outside, Mean: t.Mean, SD: t.SD, Copula: slices.Contains(s.Correlated, k)}
		if w != nil && k < len(w.Redrawn) {
			redrawn := w.Redrawn[k]
			rec.Drawn, rec.Redrawn = n+redrawn, &redrawn
		}
		if w != nil && k < len(w.Values) && w.Values[k].N > 1 {
			m := w.Values[k]
			sd := m.SD()
			rec.Values, rec.ValuesMean, rec.ValuesSD = m.N, &m.Mean, &sd
		}
		out = append(out, rec)
	}
	return out
}

// GeneratingModel names the generating model in words, e.g. "cumulative
// logit" or "stage (backward) probit".
func (s *Sim) GeneratingModel() string {
	c := s.Comparison.String()
	if s.Comparison == fit.Stage {
		c += " (" + s.Plan.Assumptions.Direction + ")"
	}
	return c + " " + s.Link.String()
}

// Truth gives each outcome's generating model for a report.
func (s *Sim) Truth() []runner.SimulatedModel {
	var out []runner.SimulatedModel
	for _, o := range s.Outcomes {
		t := runner.SimulatedModel{Outcome: o.Column, Cutpoints: slices.Clone(o.Cut), Columns: slices.Clone(o.Design.Columns)}
		for m := range o.Cut {
			t.Boundaries = append(t.Boundaries, fit.BoundaryLabel(o.Categories, m))
		}
		for c := range o.Design.Columns {
			col := make([]float64, len(o.Beta))
			for m := range o.Beta {
				col[m] = o.Beta[m][c]
			}
			t.Coefficients = append(t.Coefficients, col)
		}
		out = append(out, t)
	}
	return out
}

// outcome builds one outcome's generating model on the calibration sample.
func (s *Sim) outcome(oc plan.Outcome, rows []row) (Outcome, error) {
	p := s.Plan
	var oa *plan.OutcomeAssumption
	for i := range p.Assumptions.Outcomes {
		if p.Assumptions.Outcomes[i].Column == oc.Column {
			oa = &p.Assumptions.Outcomes[i]
		}
	}
	if oa == nil {
		return Outcome{}, fmt.Errorf("%s: assumptions.outcomes: outcome %q has no assumptions", p.Path, oc.Column)
	}
	o := Outcome{Column: oc.Column, Categories: oc.Categories, Proportions: oa.Proportions}
	J := len(oa.Proportions)
	if o.Categories == nil {
		for j := 1; j <= J; j++ {
			o.Categories = append(o.Categories, strconv.Itoa(j))
		}
	}
	// The design, frozen on the calibration sample as a run freezes it on
	// the data.
	spec := p.DesignSpec(oc)
	for _, src := range spec.Sources {
		k := slices.IndexFunc(s.Predictors, func(pr Predictor) bool { return pr.Column == src.Name })
		if k < 0 {
			return o, fmt.Errorf("%s: assumptions: column %q is not simulated", p.Path, src.Name)
		}
		o.Sources = append(o.Sources, k)
	}
	S := len(o.Sources)
	raw := make([]float64, len(rows)*S)
	for i := range rows {
		o.raw(&rows[i], raw[i*S:(i+1)*S])
	}
	dz, err := design.Build(spec, raw, len(rows), nil, nil)
	if err != nil {
		return o, fmt.Errorf("%s: the predictors' design cannot be built on the simulated columns (outcome %q): %v", p.Path, oc.Column, err)
	}
	o.Design = dz
	if err := s.coefficients(&o, oa, raw[:S]); err != nil {
		return o, err
	}
	X, _, err := dz.Matrix(raw, len(rows))
	if err != nil {
		return o, fmt.Errorf("%s: outcome %q: %v", p.Path, oc.Column, err)
	}
	return o, s.calibrate(&o, X, len(rows))
}

// raw fills the outcome's raw design row from a drawn row: level indices
// for categorical columns, numbers for the others.
func (o *Outcome) raw(r *row, out []float64) {
	for s, k := range o.Sources {
		if r.cat[k] {
			out[s] = float64(r.level[k])
		} else {
			out[s] = r.x[k]
		}
	}
}

// eta fills e (J-1) with the linear predictors x'b_m of a design row x.
func (o *Outcome) eta(x, e []float64) {
	for m, b := range o.Beta {
		t := 0.0
		for c, v := range x {
			t += b[c] * v
		}
		e[m] = t
	}
}

// coefficients turns the stated effects into coefficients of the design
// columns, boundary by boundary. base is a raw design row in which one
// term's own columns are varied.
func (s *Sim) coefficients(o *Outcome, oa *plan.OutcomeAssumption, base []float64) error {
	dz := o.Design
	q := len(o.Proportions) - 1
	o.Beta = make([][]float64, q)
	for m := range o.Beta {
		o.Beta[m] = make([]float64, len(dz.Columns))
	}
	for _, te := range oa.Terms {
		k := dz.Term(te.Term)
		if k < 0 {
			return fmt.Errorf("%s: %s: %q is not a term of outcome %q", s.Plan.Path, te.Key, te.Term, o.Column)
		}
		t := &dz.Terms[k]
		var per [][]float64
		for _, e := range te.Boundaries {
			b, err := s.termCoefficients(dz, t, e, base)
			if err != nil {
				return err
			}
			per = append(per, b)
		}
		for m := 0; m < q; m++ {
			b := per[0]
			if te.Nonparallel {
				b = per[m]
			}
			copy(o.Beta[m][t.First:t.First+len(t.Columns)], b)
		}
	}
	return nil
}

// termCoefficients gives the coefficients of term t's design columns that
// make the stated effect e.
func (s *Sim) termCoefficients(dz *design.Design, t *design.Term, e plan.Effect, base []float64) ([]float64, error) {
	C := len(t.Columns)
	b := make([]float64, C)
	where := fmt.Sprintf("%s:%d: %s", s.Plan.Path, e.Line, e.Key)
	switch {
	case e.Form == plan.EffectNumber:
		b[0] = e.Number
		return b, nil
	case e.Form == plan.EffectNamed && e.Levels == nil:
		for _, name := range e.Order {
			c := slices.Index(t.Columns, name)
			if c < 0 {
				// The plan's check knows every declared level; a level
				// the simulated population lacks loses its columns.
				return nil, fmt.Errorf("%s.%s: the design column %q is not made on the %s: %s", where, name, name, s.population(false), droppedLevels(dz))
			}
			b[c] = e.Named[name]
		}
		return b, nil
	case e.Form == plan.EffectNamed:
		for _, lv := range e.Order {
			if !slices.Contains(t.Kept, lv) {
				return nil, fmt.Errorf("%s.%s: level %q of %s occurs in no %s, so the design drops its column (unobserved: drop) and its effect cannot be simulated: remove the effect, or make the level occur (its proportion, the subset)",
					where, lv, lv, dz.Sources[t.Source].Name, s.population(true))
			}
		}
	}
	// Levels and points: the term's columns at chosen raw values, solved
	// with a constant (which the cutpoints absorb) for the stated values.
	var at, want []float64
	if e.Form == plan.EffectNamed {
		for _, lv := range t.Kept {
			l := dz.Level(t.Source, lv)
			at, want = append(at, float64(l)), append(want, e.Levels[l])
		}
	} else {
		at, want = e.At, e.Values
	}
	A := make([]float64, 0, len(at)*(C+1))
	x := make([]float64, len(dz.Columns))
	r := slices.Clone(base)
	for _, v := range at {
		r[t.Source] = v
		if err := dz.Row(r, x); err != nil {
			return nil, fmt.Errorf("%s: at %s: %v", where, strconv.FormatFloat(v, 'g', -1, 64), err)
		}
		A = append(A, x[t.First:t.First+C]...)
		A = append(A, 1)
	}
	sol, ok := solveSquare(A, want)
	if !ok {
		return nil, fmt.Errorf("%s: the points %s do not determine the curve of %s's %d design columns (%s): spread them over the range the columns bend in%s",
			where, numList(at), t.Name, C, strings.Join(t.Columns, ", "), knotText(t))
	}
	return sol[:C], nil
}

// population names the rows the design is built on: "simulated rows",
// and with a subset "simulated rows the subset keeps" ("row" when one).
func (s *Sim) population(one bool) string {
	w := "simulated rows"
	if one {
		w = "simulated row"
	}
	if len(s.Keep) > 0 {
		w += " the subset keeps"
	}
	return w
}

// droppedLevels names the levels the design dropped, as "level "east" of
// site occurs in none of them".
func droppedLevels(dz *design.Design) string {
	var out []string
	for _, t := range dz.Terms {
		for _, lv := range t.Dropped {
			out = append(out, fmt.Sprintf("level %q of %s", lv, dz.Sources[t.Source].Name))
		}
	}
	if out == nil {
		return "the design's columns differ from the plan's"
	}
	return strings.Join(out, ", ") + " occurs in none of them"
}

func knotText(t *design.Term) string {
	if t.Knots == nil {
		return ""
	}
	return " (knots at " + numList(t.Knots) + " on the transformed scale)"
}

func numList(xs []float64) string {
	parts := make([]string, len(xs))
	for i, x := range xs {
		parts[i] = strconv.FormatFloat(x, 'g', 6, 64)
	}
	return "[" + strings.Join(parts, ", ") + "]"
}

// solveSquare solves A x = y (A n x n, row-major) by Gaussian elimination
// with partial pivoting on the columns scaled to unit size; ok is false
// when A is singular or nearly so.
func solveSquare(A, y []float64) ([]float64, bool) {
	n := len(y)
	a := slices.Clone(A)
	x := slices.Clone(y)
	scale := make([]float64, n)
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			scale[j] = math.Max(scale[j], math.Abs(a[i*n+j]))
		}
		if scale[j] == 0 {
			return nil, false
		}
		for i := 0; i < n; i++ {
			a[i*n+j] /= scale[j]
		}
	}
	for c := 0; c < n; c++ {
		piv := c
		for i := c + 1; i < n; i++ {
			if math.Abs(a[i*n+c]) > math.Abs(a[piv*n+c]) {
				piv = i
			}
		}
		if math.Abs(a[piv*n+c]) < 1e-9 {
			return nil, false
		}
		if piv != c {
			for j := 0; j < n; j++ {
				a[c*n+j], a[piv*n+j] = a[piv*n+j], a[c*n+j]
			}
			x[c], x[piv] = x[piv], x[c]
		}
		for i := c + 1; i < n; i++ {
			f := a[i*n+c] / a[c*n+c]
			for j := c; j < n; j++ {
				a[i*n+j] -= f * a[c*n+j]
			}
			x[i] -= f * x[c]
		}
	}
	for i := n - 1; i >= 0; i-- {
		t := x[i]
		for j := i + 1; j < n; j++ {
			t -= a[i*n+j] * x[j]
		}
		x[i] = t / a[i*n+i]
	}
	for j := range x {
		x[j] /= scale[j]
	}
	return x, true
}

// predictorOf says how a raw column is drawn.
func predictorOf(p *plan.Plan, col string) (Predictor, error) {
	pr := Predictor{Column: col}
	var pa *plan.PredictorAssumption
	for i := range p.Assumptions.Predictors {
		if p.Assumptions.Predictors[i].Column == col {
			pa = &p.Assumptions.Predictors[i]
		}
	}
	e := p.EntryOf(col)
	if e != nil {
		pr.Range = e.Range
	}
	switch c := p.CategoricalOf(col); {
	case c != nil:
		pr.Kind, pr.Values, pr.Categorical = "levels", c.Levels, true
	case e != nil && e.Values != nil:
		pr.Kind, pr.Values = "levels", e.Values
		for _, v := range e.Values {
			x, _ := strconv.ParseFloat(v, 64)
			pr.Numbers = append(pr.Numbers, x)
		}
	case pa != nil && pa.SD > 0:
		// Truncated to the range, if any: the plan's check has refused
		// a range that leaves out more than plan.MaxOutsideRange of it.
		pr.Kind, pr.Mean, pr.SD = "normal", pa.Mean, pa.SD
	case e != nil && e.Range != nil:
		pr.Kind = "uniform"
	default:
		return pr, fmt.Errorf("%s: assumptions.predictors: say how to draw %q: mean and sd, or give it a range or values in the dictionary", p.Path, col)
	}
	if pr.Kind == "levels" {
		pr.Proportions = make([]float64, len(pr.Values))
		for i := range pr.Proportions {
			pr.Proportions[i] = 1 / float64(len(pr.Values))
		}
		if pa != nil && pa.Proportions != nil {
			pr.Proportions = pa.Proportions
		}
	}
	return pr, nil
}

func normalCDF(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }

// draw gives one value of the predictor: its index among the levels (or
// -1) and its number. A normal column with a range is drawn from the
// normal truncated to the range: a draw outside it is drawn again, from
// the same stream, and counted in redrawn (when not nil).
func (pr *Predictor) draw(rng *rand.Rand, redrawn *int) (int, float64) {
	switch pr.Kind {
	case "levels":
		return pr.fromUniform(rng.Float64())
	case "normal":
		for {
			x := pr.Mean + pr.SD*rng.NormFloat64()
			if pr.Range == nil || (x >= pr.Range[0] && x <= pr.Range[1]) {
				return -1, x
			}
			if redrawn != nil {
				*redrawn++
			}
		}
	case "uniform":
		return -1, pr.Range[0] + (pr.Range[1]-pr.Range[0])*rng.Float64()
	}
	return -1, 0
}

// fromUniform gives the value at probability u of the predictor's
// distribution (its quantile function): a level whose cumulative share
// passes u, the normal quantile within the range, or the point u of the
// range.
func (pr *Predictor) fromUniform(u float64) (int, float64) {
	switch pr.Kind {
	case "levels":
		acc := 0.0
		for i, q := range pr.Proportions {
			acc += q
			if u < acc || i == len(pr.Proportions)-1 {
				x := 0.0
				if pr.Numbers != nil {
					x = pr.Numbers[i]
				}
				return i, x
			}
		}
	case "normal":
		lo, hi := 0.0, 1.0
		if r := pr.Range; r != nil {
			lo, hi = normalCDF((r[0]-pr.Mean)/pr.SD), normalCDF((r[1]-pr.Mean)/pr.SD)
		}
		x := pr.Mean + pr.SD*normalQuantile(lo+u*(hi-lo))
		if r := pr.Range; r != nil {
			x = math.Min(math.Max(x, r[0]), r[1])
		}
		return -1, x
	case "uniform":
		return -1, pr.Range[0] + (pr.Range[1]-pr.Range[0])*u
	}
	return -1, 0
}

// normalQuantile is the standard normal quantile function.
func normalQuantile(p float64) float64 { return -math.Sqrt2 * math.Erfcinv(2*p) }

// row is one drawn row of the simulated columns.
type row struct {
	level []int
	x     []float64
	cat   []bool
	z     []float64 // scratch: the copula's normal scores
	// redrawn counts, per predictor, the draws outside its range that
	// were drawn again (Predictor.draw).
	redrawn []int
}

func (s *Sim) newRow() row {
	k := len(s.Predictors)
	r := row{level: make([]int, k), x: make([]float64, k), cat: make([]bool, k), z: make([]float64, len(s.Correlated)), redrawn: make([]int, k)}
	for i, pr := range s.Predictors {
		r.cat[i] = pr.Categorical
	}
	return r
}

// drawRow draws one row: the correlated columns from the copula (their
// normal scores first), the others one by one.
func (s *Sim) drawRow(rng *rand.Rand, r *row) {
	c := len(s.Correlated)
	for i := 0; i < c; i++ {
		r.z[i] = rng.NormFloat64()
	}
	for i := c - 1; i >= 0; i-- { // z = L n, in place from the bottom
		t := 0.0
		for j := 0; j <= i; j++ {
			t += s.chol[i*c+j] * r.z[j]
		}
		r.z[i] = t
	}
	next := 0
	for k := range s.Predictors {
		if next < c && s.Correlated[next] == k {
			r.level[k], r.x[k] = s.Predictors[k].fromUniform(normalCDF(r.z[next]))
			next++
			continue
		}
		r.level[k], r.x[k] = s.Predictors[k].draw(rng, &r.redrawn[k])
	}
}

// correlate prepares the copula of the stated correlations.
func (s *Sim) correlate(cs []plan.Correlation) error {
	if len(cs) == 0 {
		return nil
	}
	var cols []string
	for k, pr := range s.Predictors {
		for _, c := range cs {
			if (c.A == pr.Column || c.B == pr.Column) && !slices.Contains(cols, pr.Column) {
				cols = append(cols, pr.Column)
				s.Correlated = append(s.Correlated, k)
			}
		}
	}
	R, _ := plan.CorrelationMatrix(cs, cols)
	n := len(cols)
	L := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			t := R[i*n+j]
			for k := 0; k < j; k++ {
				t -= L[i*n+k] * L[j*n+k]
			}
			if i == j {
				if !(t > 0) {
					return fmt.Errorf("%s: assumptions.correlations: the correlations of %s are not positive definite", s.Plan.Path, strings.Join(cols, ", "))
				}
				L[i*n+i] = math.Sqrt(t)
			} else {
				L[i*n+j] = t / L[j*n+j]
			}
		}
	}
	s.chol = L
	return nil
}

// calibrationSample draws the seeded sample the design constants and the
// cutpoints are set on: CalibrationRows rows that the plan's subset keeps,
// so that the stated proportions describe the population the plan
// analyses (all rows drawn, without a subset).
func (s *Sim) calibrationSample() ([]row, error) {
	rng := rand.New(rand.NewPCG(s.seed, 0xca11b4a7e))
	rows := make([]row, 0, CalibrationRows)
	r := s.newRow()
	drawn := 0
	early := false
	for len(rows) < CalibrationRows && drawn < maxCalibrationDraws {
		s.drawRow(rng, &r)
		drawn++
		if s.inSubset(&r) {
			rows = append(rows, r)
			r = s.newRow()
		}
		if drawn == probeDraws && keptFarBelow(len(rows), drawn) {
			early = true
			break
		}
	}
	if len(rows) < CalibrationRows {
		conds := make([]string, len(s.Keep))
		for i, c := range s.Keep {
			conds[i] = c.String()
		}
		first := ""
		if early {
			first = "first "
		}
		return nil, fmt.Errorf("%s: subset: the plan's subset (%s) keeps %d of the %s%d rows drawn from the assumptions (%.2g%%, under 5%%): the stated proportions cannot be set on the rows it keeps, and simulated data would have almost none; check the subset against the assumptions and the dictionary",
			s.Plan.Path, strings.Join(conds, "; "), len(rows), first, drawn, 100*float64(len(rows))/float64(drawn))
	}
	return rows, nil
}

// value is the text of predictor k in a drawn row, as the simulated file
// holds it (before CSV quoting).
func (s *Sim) value(r *row, k int) string {
	if r.level[k] >= 0 {
		return s.Predictors[k].Values[r.level[k]]
	}
	return strconv.FormatFloat(r.x[k], 'g', 7, 64)
}

// inSubset reports whether the plan's subset keeps a drawn row, judged on
// the values as the file holds them, as the reader judges them.
func (s *Sim) inSubset(r *row) bool {
	for i, c := range s.Keep {
		if !c.Keeps(s.value(r, s.keepCol[i])) {
			return false
		}
	}
	return true
}

// notOutside reports whether the reader leaves a drawn row, missing the
// columns missed of s.Missing, out of the rows the subset excludes: no
// condition fails on a value the file holds. A condition on a value
// written as missing is not judged (the reader counts such a row as a row
// with a missing value, not as outside the subset).
func (s *Sim) notOutside(r *row, missed []int) bool {
	for i, c := range s.Keep {
		k := s.keepCol[i]
		if slices.ContainsFunc(missed, func(mi int) bool { return s.Missing[mi].outcome < 0 && s.Missing[mi].pred == k }) {
			continue
		}
		if !c.Keeps(s.value(r, k)) {
			return false
		}
	}
	return true
}

// calibrate solves the cutpoints so that the category proportions over the
// calibration sample (design matrix X, n rows) are the stated ones, and
// checks that a cumulative model's probabilities never cross.
func (s *Sim) calibrate(o *Outcome, X []float64, n int) error {
	q := len(o.Proportions) - 1
	C := len(o.Design.Columns)
	etas := make([]float64, n*q) // row-major n x q
	for i := 0; i < n; i++ {
		o.eta(X[i*C:(i+1)*C], etas[i*q:(i+1)*q])
		if s.calibU != nil {
			for m := 0; m < q; m++ {
				etas[i*q+m] += s.calibU[i]
			}
		}
	}
	cum := make([]float64, q)
	acc := 0.0
	for m := 0; m < q; m++ {
		acc += o.Proportions[m]
		cum[m] = acc
	}
	if s.Comparison == fit.Cumulative {
		o.Cut = s.cumulativeCuts(etas, n, cum)
		for m := 1; m < q; m++ {
			for i := 0; i < n; i++ {
				if o.Cut[m]-etas[i*q+m] < o.Cut[m-1]-etas[i*q+m-1]-1e-12 {
					return fmt.Errorf("%s: assumptions.outcomes.%s.nonparallel: the stated effects make P(y <= %s) fall below P(y <= %s) for some predictor values (a negative probability of category %s): make the effects at neighbouring boundaries closer",
						s.Plan.Path, o.Column, o.Categories[m], o.Categories[m-1], o.Categories[m])
				}
			}
		}
		return nil
	}
	cut, err := s.newtonCuts(etas, n, cum)
	if err != nil {
		return fmt.Errorf("%s: assumptions.outcomes.%s: %v", s.Plan.Path, o.Column, err)
	}
	o.Cut = cut
	return nil
}

// cumulativeCuts solves each cutpoint of a cumulative model on its own:
// the mean of F(tau_m - eta_m) is the stated P(y <= m).
func (s *Sim) cumulativeCuts(etas []float64, n int, cum []float64) []float64 {
	q := len(cum)
	cut := make([]float64, q)
	for m := 0; m < q; m++ {
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := 0; i < n; i++ {
			lo, hi = math.Min(lo, etas[i*q+m]), math.Max(hi, etas[i*q+m])
		}
		mean := func(c float64) float64 {
			t := 0.0
			for i := 0; i < n; i++ {
				t += s.Link.CDF(c - etas[i*q+m])
			}
			return t / float64(n)
		}
		cut[m] = solve(func(c float64) float64 { return mean(c) - cum[m] }, lo+s.Link.Quantile(cum[m])-1, hi+s.Link.Quantile(cum[m])+1)
	}
	return cut
}

// cumShares gives the mean over the sample of P(y <= m), m = 1..J-1, at
// cutpoints cut.
func (s *Sim) cumShares(etas []float64, n int, cut []float64) []float64 {
	q := len(cut)
	L, p := make([]float64, q), make([]float64, q+1)
	out := make([]float64, q)
	for i := 0; i < n; i++ {
		for m := 0; m < q; m++ {
			L[m] = cut[m] - etas[i*q+m]
		}
		fit.CategoryProbabilities(s.Comparison, s.Backward, s.Link, L, p)
		acc := 0.0
		for m := 0; m < q; m++ {
			acc += p[m]
			out[m] += acc
		}
	}
	for m := range out {
		out[m] /= float64(n)
	}
	return out
}

// newtonCuts solves the cutpoints of a stage or adjacent model, where each
// share depends on several cutpoints, by Newton's method on the J-1 shares
// P(y <= m) (each increases with its own cutpoint). Newton runs first on
// a tenth of the sample; its Jacobian then serves the few steps on the
// whole sample (made again only if a step does not cut the miss tenfold).
func (s *Sim) newtonCuts(etas []float64, n int, cum []float64) ([]float64, error) {
	q := len(cum)
	// Start: the cutpoints that give the proportions at eta = its mean.
	cut := make([]float64, q)
	prev := 0.0
	for m := 0; m < q; m++ {
		pm := cum[m] - prev
		next := 1 - cum[m]
		if m+1 < q {
			next = cum[m+1] - cum[m]
		}
		var f float64
		switch {
		case s.Comparison == fit.Adjacent:
			f = pm / (pm + next)
		case s.Backward:
			f = cum[m] / (cum[m] + next)
		default:
			f = pm / (1 - prev)
		}
		mean := 0.0
		for i := 0; i < n; i++ {
			mean += etas[i*q+m]
		}
		cut[m] = s.Link.Quantile(f) + mean/float64(n)
		prev = cum[m]
	}
	cut, Jac, _ := s.newton(etas, max(n/10, 1), cum, cut, nil)
	cut, _, worst := s.newton(etas, n, cum, cut, Jac)
	if worst > 1e-9 {
		return nil, fmt.Errorf("the cutpoints that give the stated proportions cannot be found (the closest miss a share by %.2g; the effects may be too large for them)", worst)
	}
	return cut, nil
}

// newton runs Newton's method for the cutpoints on the first n rows from
// cut, starting with the Jacobian Jac (nil: made at cut). It gives the
// cutpoints, the last Jacobian and the largest miss.
func (s *Sim) newton(etas []float64, n int, cum, cut, Jac []float64) ([]float64, []float64, float64) {
	q := len(cum)
	miss := func(c []float64) ([]float64, float64) {
		sh := s.cumShares(etas, n, c)
		worst := 0.0
		for m := range sh {
			sh[m] -= cum[m]
			worst = math.Max(worst, math.Abs(sh[m]))
		}
		return sh, worst
	}
	jacobian := func(r []float64) []float64 {
		const h = 1e-6
		J := make([]float64, q*q)
		for l := 0; l < q; l++ {
			c := slices.Clone(cut)
			c[l] += h
			rl, _ := miss(c)
			for m := 0; m < q; m++ {
				J[m*q+l] = (rl[m] - r[m]) / h
			}
		}
		return J
	}
	r, worst := miss(cut)
	fresh := false
	for it := 0; it < 100 && worst > 1e-12; it++ {
		if Jac == nil {
			Jac, fresh = jacobian(r), true
		}
		step, ok := solveSquare(Jac, r)
		t := 1.0
		for ok && t > 1e-6 {
			c := slices.Clone(cut)
			for m := range c {
				c[m] -= t * step[m]
			}
			if rc, wc := miss(c); wc < worst {
				if t < 1 || wc > worst/10 {
					Jac = nil
				}
				cut, r, worst = c, rc, wc
				break
			}
			t /= 2
		}
		if !ok || t <= 1e-6 {
			if fresh {
				break // a fresh Jacobian found no better point
			}
			Jac = nil
			continue
		}
		fresh = false
	}
	if Jac == nil {
		Jac = jacobian(r)
	}
	return cut, Jac, worst
}

// solve finds the root of the increasing function g in [a, b] by the
// Illinois variant of regula falsi (widening the bracket first if needed).
func solve(g func(float64) float64, a, b float64) float64 {
	ga, gb := g(a), g(b)
	for i := 0; ga > 0 && i < 60; i++ {
		a -= (b - a)
		ga = g(a)
	}
	for i := 0; gb < 0 && i < 60; i++ {
		b += (b - a)
		gb = g(b)
	}
	side := 0
	for it := 0; it < 200; it++ {
		c := (a*gb - b*ga) / (gb - ga)
		if !(c > a && c < b) {
			c = 0.5 * (a + b)
		}
		gc := g(c)
		if gc == 0 || b-a < 1e-13*(1+math.Abs(c)) || math.Abs(gc) < 1e-15 {
			return c
		}
		if gc < 0 {
			a, ga = c, gc
			if side == -1 {
				gb /= 2
			}
			side = -1
		} else {
			b, gb = c, gc
			if side == 1 {
				ga /= 2
			}
			side = 1
		}
	}
	return 0.5 * (a + b)
}

// Header gives the columns of a simulated file.
func (s *Sim) Header() []string {
	var h []string
	for _, o := range s.Outcomes {
		h = append(h, o.Column)
	}
	for _, pr := range s.Predictors {
		h = append(h, pr.Column)
	}
	for _, c := range []string{s.Weights, s.Offset, s.Cluster} {
		if c != "" && !slices.Contains(h, c) {
			h = append(h, c)
		}
	}
	return h
}

// Write writes a simulated data set of n rows as CSV. Replicate r of a
// sample size gives the same rows whatever else is simulated.
func (s *Sim) Write(w io.Writer, n int, replicate uint64) error {
	_, err := s.WriteCounted(w, n, replicate)
	return err
}

// Written counts what Write wrote. Missing[i] is how many values of
// column Missing[i] it wrote as missing in the rows the plan's subset
// does not exclude, as the reader judges them (notOutside): the rows that
// meet it, and those whose subset column was written missing. Kept is how
// many rows meet the subset, their subset columns written (all n rows
// without a subset), as the reader counts them.
type Written struct {
	Missing []int
	Kept    int
	// Redrawn counts, per predictor (Sim.Predictors), the draws of a
	// normal column outside its range that were drawn again.
	Redrawn []int
	// Values, per predictor, are the count, mean and sum of squared
	// deviations of the values of a normal column with a range as the
	// file holds them (written to 7 digits; those made missing left out).
	Values []Moments
}

// Moments are running moments of a column's values (Welford's updates).
type Moments struct {
	N        int
	Mean, M2 float64
}

func (m *Moments) add(x float64) {
	m.N++
	d := x - m.Mean
	m.Mean += d / float64(m.N)
	m.M2 += d * (x - m.Mean)
}

// SD is the standard deviation of the values (n - 1 in the divisor), NaN
// below two values.
func (m Moments) SD() float64 {
	if m.N < 2 {
		return math.NaN()
	}
	return math.Sqrt(m.M2 / float64(m.N-1))
}

// WriteCounted is Write, giving also what it wrote (Written). The
// missing values are drawn from a stream of their own, so the values
// that stay are those of the same data set without missingness.
func (s *Sim) WriteCounted(w io.Writer, n int, replicate uint64) (Written, error) {
	rng := rand.New(rand.NewPCG(s.seed, uint64(n)<<32^replicate^0x5eed))
	mrng := rand.New(rand.NewPCG(s.seed, uint64(n)<<32^replicate^0x6d155))
	wrng := rand.New(rand.NewPCG(s.seed, uint64(n)<<32^replicate^0x3e1647))
	var u []float64 // the clusters' intercepts (nil: no cluster effect)
	if s.Cluster != "" {
		G, err := s.Clusters(n)
		if err != nil {
			return Written{}, err
		}
		u = s.intercepts(n, replicate, G)
	}
	// The columns drawn once per cluster come from a stream of their own,
	// the row's own draws of them (from rng, kept so that the other
	// columns are those drawn without per_cluster) replaced.
	crng := rand.New(rand.NewPCG(s.seed, uint64(n)<<32^replicate^0xc1a55e7))
	clusterLevel, clusterX := make([]int, len(s.perCluster)), make([]float64, len(s.perCluster))
	counts := make([]int, len(s.Missing))
	met := 0
	ys := make([]int, len(s.Outcomes))
	bw := bufio.NewWriter(w)
	h := s.Header()
	for i, c := range h {
		if i > 0 {
			bw.WriteByte(',')
		}
		bw.WriteString(csvCell(c))
	}
	bw.WriteByte('\n')
	r := s.newRow()
	type scratch struct{ raw, x, e, L, p []float64 }
	sc := make([]scratch, len(s.Outcomes))
	for oi, o := range s.Outcomes {
		q := len(o.Proportions) - 1
		sc[oi] = scratch{make([]float64, len(o.Sources)), make([]float64, len(o.Design.Columns)), make([]float64, q), make([]float64, q), make([]float64, q+1)}
	}
	cells := make([]string, 0, len(h))
	var missed []int // the columns of s.Missing the current row misses
	values := make([]Moments, len(s.Predictors))
	for i := 0; i < n; i++ {
		s.drawRow(rng, &r)
		if len(s.perCluster) > 0 {
			if i == 0 || s.clusterOf(i, n) != s.clusterOf(i-1, n) {
				for j, k := range s.perCluster {
					clusterLevel[j], clusterX[j] = s.Predictors[k].draw(crng, nil)
				}
			}
			for j, k := range s.perCluster {
				r.level[k], r.x[k] = clusterLevel[j], clusterX[j]
			}
		}
		cells = cells[:0]
		kept := s.inSubset(&r)
		for oi := range s.Outcomes {
			o, c := &s.Outcomes[oi], &sc[oi]
			o.raw(&r, c.raw)
			if err := o.Design.Row(c.raw, c.x); err != nil {
				return Written{}, fmt.Errorf("%s: simulated row %d: %v", s.Plan.Path, i+1, err)
			}
			o.eta(c.x, c.e)
			for m := range c.L {
				c.L[m] = o.Cut[m] - c.e[m]
			}
			if u != nil {
				ug := u[s.clusterOf(i, n)]
				for m := range c.L {
					c.L[m] -= ug
				}
			}
			fit.CategoryProbabilities(s.Comparison, s.Backward, s.Link, c.L, c.p)
			valid := true
			for j, pj := range c.p {
				if pj < 0 && kept {
					// The calibration sample did not reach these predictor
					// values; a row there must not get a category anyway.
					return Written{}, fmt.Errorf("%s: assumptions.outcomes.%s.nonparallel: simulated row %d gets a negative probability of category %s: the stated effects make neighbouring boundaries cross at its predictor values; make the effects at neighbouring boundaries closer or give the predictors a range",
						s.Plan.Path, o.Column, i+1, o.Categories[j])
				}
				valid = valid && pj >= 0
			}
			u := rng.Float64()
			ys[oi] = -1
			if !valid {
				// A row the subset leaves out is never analysed; where the
				// model has no valid probabilities there it gets no category.
				cells = append(cells, "")
				continue
			}
			y := fit.DrawCategory(c.p, u)
			ys[oi] = y
			cells = append(cells, csvCell(o.Categories[y]))
		}
		for k := range s.Predictors {
			cells = append(cells, csvCell(s.value(&r, k)))
		}
		missed = missed[:0]
		for mi := range s.Missing {
			mc := &s.Missing[mi]
			if mrng.Float64() >= mc.prob(&r, ys) {
				continue
			}
			at := mc.outcome
			if at < 0 {
				at = len(s.Outcomes) + mc.pred
			}
			cells[at] = csvCell(mc.marker)
			missed = append(missed, mi)
		}
		for k, pr := range s.Predictors {
			if pr.Kind != "normal" || pr.Range == nil || slices.ContainsFunc(missed, func(mi int) bool {
				return s.Missing[mi].outcome < 0 && s.Missing[mi].pred == k
			}) {
				continue
			}
			x, _ := strconv.ParseFloat(cells[len(s.Outcomes)+k], 64)
			values[k].add(x)
		}
		if s.notOutside(&r, missed) {
			for _, mi := range missed {
				counts[mi]++
			}
		}
		if kept && !slices.ContainsFunc(missed, func(mi int) bool {
			return s.Missing[mi].outcome < 0 && slices.Contains(s.keepCol, s.Missing[mi].pred)
		}) {
			met++
		}
		if s.Weights != "" {
			cells = append(cells, s.drawWeight(wrng))
		}
		if s.Offset != "" {
			cells = append(cells, "0")
		}
		if s.Cluster != "" {
			cells = append(cells, "c"+strconv.Itoa(s.clusterOf(i, n)+1))
		}
		if s.blankMarker != "" && !slices.ContainsFunc(cells, func(c string) bool { return c != "" }) {
			// Missing every column: a line of delimiters alone would be
			// read as a blank line, no row (blankMarker).
			cells[0] = csvCell(s.blankMarker)
		}
		for j, c := range cells {
			if j > 0 {
				bw.WriteByte(',')
			}
			bw.WriteString(c)
		}
		bw.WriteByte('\n')
	}
	return Written{Missing: counts, Kept: met, Redrawn: slices.Clone(r.redrawn), Values: values}, bw.Flush()
}

// drawWeight gives one row's weight as the file holds it: 1 when the
// dictionary states nothing to draw it from.
func (s *Sim) drawWeight(rng *rand.Rand) string {
	pr := s.weight
	if pr == nil {
		return "1"
	}
	l, x := pr.draw(rng, nil)
	if l >= 0 {
		return csvCell(pr.Values[l])
	}
	if pr.whole {
		// Uniform over lo, lo+1, ..., hi: the point drawn over [lo, hi+1).
		x = min(math.Floor(pr.Range[0]+(x-pr.Range[0])*(pr.Range[1]-pr.Range[0]+1)/max(pr.Range[1]-pr.Range[0], 1)), pr.Range[1])
		return strconv.FormatFloat(x, 'f', 0, 64)
	}
	return strconv.FormatFloat(x, 'g', 7, 64)
}

func csvCell(s string) string {
	for _, r := range s {
		if r == ',' || r == '"' || r == '\n' || r == '\r' {
			return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
		}
	}
	return s
}
