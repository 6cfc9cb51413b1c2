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
	"ordplan/runner/fit"
)

// CalibrationRows is the size of the predictor sample the cutpoints are
// solved on.
const CalibrationRows = 100_000

// Predictor is how one raw column is drawn.
type Predictor struct {
	Column      string
	Kind        string    // "levels" (categorical or listed values), "normal" or "uniform"
	Values      []string  // levels or values, as written
	Numbers     []float64 // the values as numbers (numeric columns with values)
	Proportions []float64
	Mean, SD    float64
	Range       []float64 // nil = unbounded
}

// Outcome is one outcome's generating model.
type Outcome struct {
	Column      string
	Categories  []string
	Proportions []float64
	Cut         []float64 // J-1 cutpoints solved on the calibration sample
	// Slope[m][k]: slope of predictor column k at boundary m; for a
	// categorical column, LevelSlope[k][level] is used instead.
	Slope      [][]float64
	LevelSlope map[int][]float64
}

// Sim draws data sets from a plan.
type Sim struct {
	Plan       *plan.Plan
	Link       fit.Link
	Predictors []Predictor
	Outcomes   []Outcome
	Weights    string // columns written with constant values
	Offset     string
	Cluster    string
	seed       uint64
}

// New prepares the simulation of a plan with assumptions.
func New(p *plan.Plan) (*Sim, error) {
	a := p.Assumptions
	if a == nil {
		return nil, fmt.Errorf("%s: the plan has no assumptions section: state the category proportions and the effects to simulate from (see the README, \"Rehearse and size the study\")", p.Path)
	}
	if len(p.Subset) > 0 {
		return nil, fmt.Errorf("%s: subset: simulated data do not include the subset columns; remove the subset to rehearse the plan", p.Path)
	}
	link, err := fit.ParseLink(a.Link)
	if err != nil {
		return nil, fmt.Errorf("%s: assumptions.link: %v", p.Path, err)
	}
	s := &Sim{Plan: p, Link: link, Weights: p.Data.Weights, Offset: p.Data.Offset, Cluster: p.Data.Cluster, seed: p.Seed}
	// Predictors.
	for _, u := range p.UsedColumns() {
		if u.Role != plan.RolePredictor {
			continue
		}
		pr, err := predictorOf(p, u.Column)
		if err != nil {
			return nil, err
		}
		s.Predictors = append(s.Predictors, pr)
	}
	// Outcomes.
	for _, oc := range p.Outcomes {
		var oa *plan.OutcomeAssumption
		for i := range a.Outcomes {
			if a.Outcomes[i].Column == oc.Column {
				oa = &a.Outcomes[i]
			}
		}
		if oa == nil {
			return nil, fmt.Errorf("%s: assumptions.outcomes: outcome %q has no assumptions", p.Path, oc.Column)
		}
		o := Outcome{Column: oc.Column, Categories: oc.Categories, Proportions: oa.Proportions, LevelSlope: map[int][]float64{}}
		J := len(oa.Proportions)
		if o.Categories == nil {
			for j := 1; j <= J; j++ {
				o.Categories = append(o.Categories, strconv.Itoa(j))
			}
		}
		o.Slope = make([][]float64, J-1)
		for m := range o.Slope {
			o.Slope[m] = make([]float64, len(s.Predictors))
		}
		for _, t := range oa.EffectOrder {
			src := sourceOf(p, oc, t)
			k := slices.IndexFunc(s.Predictors, func(pr Predictor) bool { return pr.Column == src })
			if k < 0 {
				return nil, fmt.Errorf("%s: assumptions: term %q reads no simulated column", p.Path, t)
			}
			switch {
			case oa.Levels[t] != nil:
				o.LevelSlope[k] = oa.Levels[t]
			case oa.Nonparallel[t] != nil:
				for m := range o.Slope {
					o.Slope[m][k] = oa.Nonparallel[t][m]
				}
			default:
				for m := range o.Slope {
					o.Slope[m][k] = oa.Effects[t]
				}
			}
		}
		s.Outcomes = append(s.Outcomes, o)
	}
	if err := s.calibrate(); err != nil {
		return nil, err
	}
	return s, nil
}

func sourceOf(p *plan.Plan, oc plan.Outcome, term string) string {
	terms := p.Terms
	if oc.Terms != nil {
		terms = oc.Terms
	}
	for _, t := range terms {
		if t.Name == term {
			return t.Source
		}
	}
	return ""
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
		pr.Kind, pr.Values = "levels", c.Levels
	case e != nil && e.Values != nil:
		pr.Kind, pr.Values = "levels", e.Values
		for _, v := range e.Values {
			x, _ := strconv.ParseFloat(v, 64)
			pr.Numbers = append(pr.Numbers, x)
		}
	case pa != nil && pa.SD > 0:
		pr.Kind, pr.Mean, pr.SD = "normal", pa.Mean, pa.SD
		if r := pr.Range; r != nil {
			// The chance that a draw falls in the range; refuse a range
			// the distribution almost never reaches.
			z := func(x float64) float64 { return 0.5 * math.Erfc(-(x-pa.Mean)/(pa.SD*math.Sqrt2)) }
			if z(r[1])-z(r[0]) < 0.01 {
				return pr, fmt.Errorf("%s: %s: a normal distribution with mean %g and sd %g falls in the dictionary's range [%g, %g] less than 1%% of the time", p.Path, pa.Key, pa.Mean, pa.SD, r[0], r[1])
			}
		}
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

// draw gives one value of the predictor: its index among the levels (or
// -1) and its number.
func (pr *Predictor) draw(rng *rand.Rand) (int, float64) {
	switch pr.Kind {
	case "levels":
		u := rng.Float64()
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
		for {
			x := pr.Mean + pr.SD*rng.NormFloat64()
			if pr.Range == nil || (x >= pr.Range[0] && x <= pr.Range[1]) {
				return -1, x
			}
		}
	case "uniform":
		return -1, pr.Range[0] + (pr.Range[1]-pr.Range[0])*rng.Float64()
	}
	return -1, 0
}

// row is one drawn row of predictors.
type row struct {
	level []int
	x     []float64
}

func (s *Sim) drawRow(rng *rand.Rand, r *row) {
	for k := range s.Predictors {
		r.level[k], r.x[k] = s.Predictors[k].draw(rng)
	}
}

// eta gives the linear predictor of row r at boundary m.
func (o *Outcome) eta(r *row, m int) float64 {
	e := 0.0
	for k, b := range o.Slope[m] {
		if ls, ok := o.LevelSlope[k]; ok {
			e += ls[r.level[k]]
			continue
		}
		e += b * r.x[k]
	}
	return e
}

// calibrate solves the cutpoints on a large seeded predictor sample and
// checks that the cumulative probabilities never cross.
func (s *Sim) calibrate() error {
	rng := rand.New(rand.NewPCG(s.seed, 0xca11b4a7e))
	rows := make([]row, CalibrationRows)
	for i := range rows {
		rows[i] = row{level: make([]int, len(s.Predictors)), x: make([]float64, len(s.Predictors))}
		s.drawRow(rng, &rows[i])
	}
	for oi := range s.Outcomes {
		o := &s.Outcomes[oi]
		J := len(o.Proportions)
		o.Cut = make([]float64, J-1)
		etas := make([][]float64, J-1)
		cum := 0.0
		for m := 0; m < J-1; m++ {
			cum += o.Proportions[m]
			etas[m] = make([]float64, len(rows))
			lo, hi := math.Inf(1), math.Inf(-1)
			for i := range rows {
				etas[m][i] = o.eta(&rows[i], m)
				lo, hi = math.Min(lo, etas[m][i]), math.Max(hi, etas[m][i])
			}
			mean := func(c float64) float64 {
				t := 0.0
				for _, e := range etas[m] {
					t += s.Link.CDF(c - e)
				}
				return t / float64(len(rows))
			}
			o.Cut[m] = solve(func(c float64) float64 { return mean(c) - cum }, lo+s.Link.Quantile(cum)-1, hi+s.Link.Quantile(cum)+1)
		}
		for m := 1; m < J-1; m++ {
			for i := range rows {
				if o.Cut[m]-etas[m][i] < o.Cut[m-1]-etas[m-1][i]-1e-12 {
					return fmt.Errorf("%s: assumptions.outcomes.%s.nonparallel: the stated slopes make P(y <= %s) fall below P(y <= %s) for some predictor values (a negative probability of category %s): make the slopes of neighbouring boundaries closer",
						s.Plan.Path, o.Column, o.Categories[m], o.Categories[m-1], o.Categories[m])
				}
			}
		}
	}
	return nil
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
	rng := rand.New(rand.NewPCG(s.seed, uint64(n)<<32^replicate^0x5eed))
	bw := bufio.NewWriter(w)
	h := s.Header()
	for i, c := range h {
		if i > 0 {
			bw.WriteByte(',')
		}
		bw.WriteString(csvCell(c))
	}
	bw.WriteByte('\n')
	r := row{level: make([]int, len(s.Predictors)), x: make([]float64, len(s.Predictors))}
	cells := make([]string, 0, len(h))
	for i := 0; i < n; i++ {
		s.drawRow(rng, &r)
		cells = cells[:0]
		for oi := range s.Outcomes {
			o := &s.Outcomes[oi]
			u := rng.Float64()
			y := len(o.Proportions) - 1
			for m := range o.Cut {
				if u < s.Link.CDF(o.Cut[m]-o.eta(&r, m)) {
					y = m
					break
				}
			}
			cells = append(cells, csvCell(o.Categories[y]))
		}
		for k, pr := range s.Predictors {
			if r.level[k] >= 0 {
				cells = append(cells, csvCell(pr.Values[r.level[k]]))
			} else {
				cells = append(cells, strconv.FormatFloat(r.x[k], 'g', 7, 64))
			}
		}
		if s.Weights != "" {
			cells = append(cells, "1")
		}
		if s.Offset != "" {
			cells = append(cells, "0")
		}
		if s.Cluster != "" {
			cells = append(cells, "c"+strconv.Itoa(i/10+1))
		}
		for j, c := range cells {
			if j > 0 {
				bw.WriteByte(',')
			}
			bw.WriteString(c)
		}
		bw.WriteByte('\n')
	}
	return bw.Flush()
}

func csvCell(s string) string {
	for _, r := range s {
		if r == ',' || r == '"' || r == '\n' || r == '\r' {
			return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
		}
	}
	return s
}
