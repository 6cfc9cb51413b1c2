package chained

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"sync"
)

// Column is one column of the table: its values (NaN where missing; the
// level index 0..Levels-1 for categorical and ordered columns), its kind
// and, when the plan names one, its imputation model.
type Column struct {
	Name   string
	Kind   Kind
	Levels int // categorical and ordered: the number of levels
	Values []float64
	Method Method // Default: DefaultMethod
	// Bounds, for a numeric column, are what the plan's data dictionary
	// says it holds (nil: nothing declared); imputed values outside them
	// are counted, not changed.
	Bounds *Bounds
}

// Bounds are the values a numeric column may hold as the plan's data
// dictionary declares them: a range, or a list of allowed values.
type Bounds struct {
	Key    string    // where the dictionary declares them (dictionary.age)
	Range  []float64 // [min, max], inclusive; nil: any
	Values []float64 // allowed values; nil: any
}

// outside reports whether v lies outside the declared range or is not one
// of the declared values.
func (b *Bounds) outside(v float64) bool {
	if b == nil {
		return false
	}
	if b.Range != nil && (v < b.Range[0] || v > b.Range[1]) {
		return true
	}
	return b.Values != nil && !slices.Contains(b.Values, v)
}

// Config says how many sets to impute and how.
type Config struct {
	Sets       int    // imputed sets (at least 2)
	Iterations int    // cycles through the incomplete columns (at least 1)
	Seed       uint64 // with Stream and the set number, seeds each set's draws
	// Stream separates the draws of imputations of different tables under
	// one seed (the runner gives each outcome its own).
	Stream uint64
	Donors int // predictive mean matching: donors to draw from (default 5)
	// Workers impute sets at once (default 1); the sets do not depend on it.
	Workers int
	// Progress, when set, hears of every finished set (done of Sets); it
	// may be called from several goroutines, never at once.
	Progress func(done, total int)
}

// Model records how one column was imputed.
type Model struct {
	Column     string   `json:"column"`
	Kind       string   `json:"kind"`
	Method     Method   `json:"method"`
	Missing    int      `json:"missing"`    // rows imputed
	Predictors []string `json:"predictors"` // the columns its model reads
	// Of the Missing x sets values imputed in the final sets (numeric
	// columns): those outside the range or values the data dictionary
	// declares, and of the others those below 0 where every observed
	// value is 0 or more (a count, a duration: a value the data cannot
	// hold). Mean
	// matching imputes observed values and gives neither.
	OutsideDictionary int `json:"outside_dictionary,omitempty"`
	BelowObservedZero int `json:"below_zero,omitempty"`
}

// TracePoint summarises one column's imputed values after one iteration:
// the mean over the sets of their mean and of their standard deviation,
// and the standard deviation of the set means across the sets.
type TracePoint struct {
	Column     string  `json:"column"`
	Iteration  int     `json:"iteration"`
	Mean       float64 `json:"mean"`
	SD         float64 `json:"sd"`
	SpreadMean float64 `json:"sd_of_set_means"`
}

// Result holds the imputed sets and how they were made.
type Result struct {
	// Sets[s][c] is column c of imputed set s, complete.
	Sets   [][][]float64 `json:"-"`
	Visits []string      `json:"visits"` // the order the columns are visited in each iteration
	Models []Model       `json:"models"` // one per imputed column, in visit order
	Trace  []TracePoint  `json:"trace"`  // by column (visit order), then iteration
	Notes  []string      `json:"notes,omitempty"`
	// Unheld says, per column, how many imputed values the data cannot
	// hold (Model.OutsideDictionary, Model.BelowObservedZero).
	Unheld []string `json:"unheld,omitempty"`
}

// Impute fills the missing values of the columns Sets times. It is an
// error when a column is missing in every row, when a column's method
// cannot impute it, or when nothing is missing.
func Impute(cols []Column, cfg Config) (*Result, error) {
	visits, err := validate(cols, cfg)
	if err != nil {
		return nil, err
	}
	if cfg.Donors <= 0 {
		cfg.Donors = 5
	}
	res := &Result{Sets: make([][][]float64, cfg.Sets)}
	for _, c := range visits {
		res.Visits = append(res.Visits, cols[c].Name)
		res.Models = append(res.Models, Model{Column: cols[c].Name, Kind: cols[c].Kind.String(), Method: methodOf(cols[c]),
			Missing: countMissing(cols[c].Values), Predictors: others(cols, c)})
	}
	logs := make([]*setLog, cfg.Sets)
	runSets(cfg, func(s int) {
		res.Sets[s], logs[s] = imputeSet(cols, visits, cfg, s)
	})
	res.Trace = trace(cols, visits, logs, cfg.Iterations)
	res.Notes = mergeNotes(cols, visits, logs)
	for v := range visits {
		for _, l := range logs {
			res.Models[v].OutsideDictionary += l.outside[v]
			res.Models[v].BelowObservedZero += l.negative[v]
		}
	}
	res.Unheld = unheld(cols, visits, res.Models, cfg.Sets)
	return res, nil
}

// unheld says, per numeric column, how many of its imputed values lie
// outside what the data dictionary declares or below 0 where every
// observed value is 0 or more, and what to do about it.
func unheld(cols []Column, visits []int, models []Model, sets int) []string {
	var out []string
	for v, c := range visits {
		m := models[v]
		if m.OutsideDictionary == 0 && m.BelowObservedZero == 0 {
			continue
		}
		col := cols[c]
		var parts []string
		if m.OutsideDictionary > 0 {
			what := fmt.Sprintf("the range [%s, %s]", fmtNum(col.Bounds.Range[0]), fmtNum(col.Bounds.Range[1]))
			if col.Bounds.Range == nil {
				vs := make([]string, len(col.Bounds.Values))
				for i, x := range col.Bounds.Values {
					vs[i] = fmtNum(x)
				}
				what = "the values " + strings.Join(vs, ", ")
			} else if col.Bounds.Values != nil {
				what += " or its values"
			}
			parts = append(parts, fmt.Sprintf("%d (%s) are outside %s the data dictionary declares (%s)", m.OutsideDictionary, pct(m.OutsideDictionary, m.Missing*sets), what, col.Bounds.Key))
		}
		if m.BelowObservedZero > 0 {
			parts = append(parts, fmt.Sprintf("%d (%s) are below 0, where every observed value is 0 or more", m.BelowObservedZero, pct(m.BelowObservedZero, m.Missing*sets)))
		}
		remedy := "the analysis uses them as drawn"
		if m.Method == NormalDraw {
			remedy += fmt.Sprintf("; %s, which imputes values observed in the data, keeps every imputed value among them (data.imputation.column_models)", MeanMatching)
		}
		out = append(out, fmt.Sprintf("%s: of its %d imputed values (%d in each of the %d sets, by %s), %s: %s", col.Name, m.Missing*sets, m.Missing, sets, m.Method, strings.Join(parts, ", and "), remedy))
	}
	return out
}

func fmtNum(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// pct is k of n as a percentage with one decimal (at least 0.1%).
func pct(k, n int) string {
	return strconv.FormatFloat(max(math.Round(1000*float64(k)/float64(n))/10, 0.1), 'f', 1, 64) + "%"
}

// validate checks the table and the configuration and returns the
// incomplete columns in the order they are visited: fewest missing
// values first, ties in table order.
func validate(cols []Column, cfg Config) ([]int, error) {
	if cfg.Sets < 2 {
		return nil, fmt.Errorf("imputation needs at least 2 imputed sets, got %d", cfg.Sets)
	}
	if cfg.Iterations < 1 {
		return nil, fmt.Errorf("imputation needs at least 1 iteration, got %d", cfg.Iterations)
	}
	if len(cols) == 0 {
		return nil, fmt.Errorf("no columns to impute")
	}
	n := len(cols[0].Values)
	var visits []int
	for i, c := range cols {
		if len(c.Values) != n {
			return nil, fmt.Errorf("column %s has %d values, column %s has %d", c.Name, len(c.Values), cols[0].Name, n)
		}
		if c.Kind != Numeric && c.Levels < 2 {
			return nil, fmt.Errorf("column %s: a %s column needs at least 2 levels, got %d", c.Name, c.Kind, c.Levels)
		}
		if ok, why := Fits(c.Method, c.Kind, c.Levels); !ok {
			return nil, fmt.Errorf("column %s: %s", c.Name, why)
		}
		miss := countMissing(c.Values)
		switch {
		case miss == n:
			return nil, fmt.Errorf("column %s is missing in all %d rows: there is nothing to impute it from (drop it from the plan, or supply its values)", c.Name, n)
		case miss > 0 && n-miss < 2:
			return nil, fmt.Errorf("column %s is observed in %d row only: too few to impute its %d missing values from", c.Name, n-miss, miss)
		case miss > 0:
			visits = append(visits, i)
		}
		for r, v := range c.Values {
			if c.Kind != Numeric && !math.IsNaN(v) && (v != math.Trunc(v) || v < 0 || int(v) >= c.Levels) {
				return nil, fmt.Errorf("column %s, row %d: value %g is not a level index 0..%d", c.Name, r+1, v, c.Levels-1)
			}
			if math.IsInf(v, 0) {
				return nil, fmt.Errorf("column %s, row %d: value %g is not finite", c.Name, r+1, v)
			}
		}
	}
	if len(visits) == 0 {
		return nil, ErrNothingMissing
	}
	slices.SortStableFunc(visits, func(a, b int) int {
		return countMissing(cols[a].Values) - countMissing(cols[b].Values)
	})
	return visits, nil
}

// ErrNothingMissing is returned when no column has a missing value.
var ErrNothingMissing = fmt.Errorf("no value is missing: nothing to impute")

func countMissing(v []float64) int {
	n := 0
	for _, x := range v {
		if math.IsNaN(x) {
			n++
		}
	}
	return n
}

func methodOf(c Column) Method {
	if c.Method == Default {
		return DefaultMethod(c.Kind, c.Levels)
	}
	return c.Method
}

func others(cols []Column, c int) []string {
	out := []string{}
	for i, o := range cols {
		if i != c {
			out = append(out, o.Name)
		}
	}
	return out
}

// runSets runs impute for every set on cfg.Workers goroutines; each set
// writes only into its own slots.
func runSets(cfg Config, impute func(s int)) {
	workers := max(1, min(cfg.Workers, cfg.Sets))
	next := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for s := range next {
				impute(s)
				if cfg.Progress != nil {
					mu.Lock()
					done++
					cfg.Progress(done, cfg.Sets)
					mu.Unlock()
				}
			}
		}()
	}
	for s := 0; s < cfg.Sets; s++ {
		next <- s
	}
	close(next)
	wg.Wait()
}

// streamOf is the random stream of set s (0-based): the seed, and the
// stream and set number in one word.
func streamOf(cfg Config, s int) *rand.Rand {
	return rand.New(rand.NewPCG(cfg.Seed, cfg.Stream<<32^uint64(s+1)))
}

// setLog is what imputing one set records: per visited column and
// iteration the mean and SD of its imputed values, and the fallbacks its
// models needed.
type setLog struct {
	mean, sd [][]float64 // [visit][iteration]
	fallback []fallbacks // [visit]
	// imputed values of the final iteration outside the declared bounds,
	// and below 0 where every observed value is at least 0 [visit]
	outside, negative []int
}

// fallbacks counts the fits of one column's model that needed help.
type fallbacks struct {
	fits      int // fits of the model
	augmented int // refitted with pseudo-observations (no finite maximum or no convergence)
	marginal  int // imputed from the observed shares (the model could not be fitted)
	dropped   map[string]bool
}

// imputeSet makes imputed set s: start values drawn from each column's
// observed values, then Iterations cycles through the incomplete columns.
func imputeSet(cols []Column, visits []int, cfg Config, s int) ([][]float64, *setLog) {
	rng := streamOf(cfg, s)
	cur := make([][]float64, len(cols))
	for i, c := range cols {
		cur[i] = slices.Clone(c.Values)
	}
	log := &setLog{mean: make([][]float64, len(visits)), sd: make([][]float64, len(visits)), fallback: make([]fallbacks, len(visits))}
	for v, c := range visits {
		startValues(cols[c].Values, cur[c], rng)
		log.mean[v] = make([]float64, cfg.Iterations)
		log.sd[v] = make([]float64, cfg.Iterations)
		log.fallback[v].dropped = map[string]bool{}
	}
	for it := 0; it < cfg.Iterations; it++ {
		for v, c := range visits {
			imputeColumn(cols, cur, c, cfg, rng, &log.fallback[v])
			log.mean[v][it], log.sd[v][it] = imputedMoments(cols[c].Values, cur[c])
		}
	}
	log.outside, log.negative = make([]int, len(visits)), make([]int, len(visits))
	for v, c := range visits {
		if cols[c].Kind == Numeric {
			log.outside[v], log.negative[v] = unheldCounts(cols[c], cur[c])
		}
	}
	return cur, log
}

// unheldCounts counts the imputed values of a numeric column (its
// missing cells, imputed in cur) outside its declared bounds, and of the
// others those below 0 when every observed value is 0 or more.
func unheldCounts(col Column, cur []float64) (outside, negative int) {
	nonNegative := true
	for _, v := range col.Values {
		if v < 0 { // NaN compares false
			nonNegative = false
		}
	}
	for i, v := range col.Values {
		if !math.IsNaN(v) {
			continue
		}
		switch {
		case col.Bounds.outside(cur[i]):
			outside++
		case nonNegative && cur[i] < 0:
			negative++ // not declared otherwise, but no observed value is so
		}
	}
	return outside, negative
}

// startValues fills each missing cell with a value drawn from the
// column's observed values.
func startValues(orig, cur []float64, rng *rand.Rand) {
	var obs []float64
	for _, v := range orig {
		if !math.IsNaN(v) {
			obs = append(obs, v)
		}
	}
	for i, v := range orig {
		if math.IsNaN(v) {
			cur[i] = obs[rng.IntN(len(obs))]
		}
	}
}

// imputedMoments is the mean and SD (divisor n-1) of the imputed cells.
func imputedMoments(orig, cur []float64) (mean, sd float64) {
	n := 0.0
	for i, v := range orig {
		if math.IsNaN(v) {
			n++
			mean += cur[i]
		}
	}
	mean /= n
	for i, v := range orig {
		if math.IsNaN(v) {
			sd += (cur[i] - mean) * (cur[i] - mean)
		}
	}
	if n > 1 {
		sd = math.Sqrt(sd / (n - 1))
	} else {
		sd = 0
	}
	return mean, sd
}

// trace summarises the sets' moments per column and iteration.
func trace(cols []Column, visits []int, logs []*setLog, iterations int) []TracePoint {
	var out []TracePoint
	m := float64(len(logs))
	for v, c := range visits {
		for it := 0; it < iterations; it++ {
			tp := TracePoint{Column: cols[c].Name, Iteration: it + 1}
			for _, l := range logs {
				tp.Mean += l.mean[v][it] / m
				tp.SD += l.sd[v][it] / m
			}
			for _, l := range logs {
				d := l.mean[v][it] - tp.Mean
				tp.SpreadMean += d * d / (m - 1)
			}
			tp.SpreadMean = math.Sqrt(tp.SpreadMean)
			out = append(out, tp)
		}
	}
	return out
}

// mergeNotes turns the sets' fallbacks into one note per column.
func mergeNotes(cols []Column, visits []int, logs []*setLog) []string {
	var notes []string
	for v, c := range visits {
		var tot fallbacks
		dropped := map[string]bool{}
		name := cols[c].Name
		for _, l := range logs {
			f := l.fallback[v]
			tot.fits += f.fits
			tot.augmented += f.augmented
			tot.marginal += f.marginal
			for k := range f.dropped {
				dropped[k] = true
			}
		}
		if tot.augmented > 0 {
			notes = append(notes, fmt.Sprintf("%s: in %d of %d fits its imputation model had no finite maximum or did not converge (separation) and was refitted with weighted pseudo-observations", name, tot.augmented, tot.fits))
		}
		if tot.marginal > 0 {
			notes = append(notes, fmt.Sprintf("%s: in %d of %d fits its imputation model could not be fitted even so; those imputations were drawn from the observed shares of its levels", name, tot.marginal, tot.fits))
		}
		if len(dropped) > 0 {
			ks := make([]string, 0, len(dropped))
			for k := range dropped {
				ks = append(ks, k)
			}
			slices.Sort(ks)
			notes = append(notes, fmt.Sprintf("%s: predictor columns left out of its imputation model in some fits because they were constant or collinear among the rows where it is observed: %s", name, strings.Join(ks, ", ")))
		}
	}
	return notes
}
