package runner

import (
	"math"
	"slices"

	"ordplan/runner/fit"
)

// OddsRatioRow is exp(b) of one model column at one boundary (a logit
// fit), with what it compares: the change one unit of the column is, and
// where it holds when the column's term enters an interaction.
type OddsRatioRow struct {
	fit.OddsRatio
	Change  string `json:"change"`
	HoldsAt string `json:"holds_at"`
}

// OddsRatioTable is what the report, its CSV and `ordplan fit` show of a
// logit fit's odds ratios: the rows, and the terms left out.
type OddsRatioTable struct {
	Rows []OddsRatioRow
	// Omitted names, in design order, the terms whose columns have no odds
	// ratio of their own (polynomial and spline bases, products with them,
	// terms whose data column also makes another term).
	Omitted []string
}

// OddsRatios decides the odds-ratio table of fit r from the readings of
// its model columns (ColumnReadings, or SingleChecks.Readings): each
// column with a reading of its own gets its rows with that reading, every
// other column is left out and its term named. A column without a reading
// (none given) reads per unit of itself.
func OddsRatios(r *fit.Result, readings []ColumnReading, level float64) (OddsRatioTable, error) {
	ors, err := r.OddsRatios(level)
	if err != nil {
		return OddsRatioTable{}, err
	}
	byCol := map[string]ColumnReading{}
	for _, c := range readings {
		byCol[c.Column] = c
	}
	var t OddsRatioTable
	for _, o := range ors {
		c, ok := byCol[o.Predictor]
		if !ok {
			c = ColumnReading{Column: o.Predictor, Term: o.Predictor, Change: "per unit of " + o.Predictor, Alone: true}
		}
		if !c.Alone {
			if !slices.Contains(t.Omitted, c.Term) {
				t.Omitted = append(t.Omitted, c.Term)
			}
			continue
		}
		t.Rows = append(t.Rows, OddsRatioRow{OddsRatio: o, Change: c.Change, HoldsAt: c.Where})
	}
	return t, nil
}

// OddsRatiosRecord is the odds ratios of `ordplan fit --json` (under
// checks), the rows its text prints: those of OddsRatios at the level of
// the intervals, the terms left out, or why they were not computed.
type OddsRatiosRecord struct {
	Level       float64        `json:"level"`
	Rows        []OddsRatioRow `json:"rows"`
	Omitted     []string       `json:"omitted,omitempty"`
	NotComputed string         `json:"not_computed,omitempty"`
}

// AddOddsRatios gives the checks of the logit fit r (with predictors) its
// odds ratios at the level of the intervals, from the readings of its
// columns; other fits have none.
func (c *SingleChecks) AddOddsRatios(r *fit.Result, level float64) {
	if r.Model.Link != fit.Logit || len(r.Predictors) == 0 {
		return
	}
	c.OddsRatios = &OddsRatiosRecord{Level: level, Rows: []OddsRatioRow{}}
	tab, err := OddsRatios(r, c.Readings, level)
	if err != nil {
		c.OddsRatios.NotComputed = err.Error()
		return
	}
	c.OddsRatios.Rows, c.OddsRatios.Omitted = tab.Rows, tab.Omitted
	if tab.Rows == nil {
		c.OddsRatios.Rows = []OddsRatioRow{}
	}
}

// plainReadings reads plain numeric columns: 1 against 0 (2 against 1)
// for a column that takes only those values (values[i], valuePair), per
// unit otherwise.
func plainReadings(columns []string, values []valuePair) []ColumnReading {
	out := make([]ColumnReading, len(columns))
	for i, c := range columns {
		out[i] = ColumnReading{Column: c, Term: c, Change: "per unit of " + c, Alone: true}
		if values[i].oneApart() {
			out[i].Change, out[i].named = values[i].against(), true
		}
	}
	return out
}

// UnshownOdds names, in table order, the predictors an odds ratio or a bound
// of whose interval lies beyond what a number holds (exp(b) infinite, or 0
// for b far below 0) though b is finite: a column whose unit is far larger
// than its values vary (values about 1e-12, b about 1e11). The tables show
// such a ratio as inf or 0, and the report and ordplan fit say why.
func UnshownOdds(rows []OddsRatioRow) []string {
	var out []string
	for _, o := range rows {
		bad := func(x float64) bool { return math.IsInf(x, 0) || x == 0 }
		if !math.IsInf(o.Log, 0) && !math.IsNaN(o.Log) && (bad(o.Ratio) || bad(o.Low) || bad(o.High)) && !slices.Contains(out, o.Predictor) {
			out = append(out, o.Predictor)
		}
	}
	return out
}
