package runner

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"

	"ordplan/runner/data"
	"ordplan/runner/design"
)

// MaxStabilityDraws is how many bootstrap draws one resample of
// selection_stability may take to hold everything the rows used hold
// (resampleNeeds); a resample none of whose draws does fails, saying why.
const MaxStabilityDraws = 100

// resampleNeeds is what every bootstrap resample of an outcome's rows
// must hold for the decision procedure to fit the same design: each
// category of the outcome, each level of each categorical predictor and
// each combination of levels that an interaction of two or more
// categorical predictors reads, that the rows drawn from hold. A draw
// that lacks one is set aside and another drawn from the same stream, so
// the resamples are the bootstrap's conditional on holding them all (a
// draw that holds them is kept as it is, so where none lacks anything the
// resamples are those of the plain bootstrap). Outcomes simulated from the
// chosen model (draw: chosen_model) keep the rows, so only the outcome's
// categories can be lacking: a set lacking one is set aside the same way
// (drawHolding).
type resampleNeeds struct {
	facets []needFacet
	// forced counts the units (rows, clusters, frequency-weighted units)
	// that alone hold something needed, so that every kept resample
	// draws them; units is the number of units drawn from. forced ==
	// units makes every kept resample the data again.
	forced, units int
}

// needFacet is one kind of thing a resample must hold: the outcome's
// categories, one categorical predictor's levels or the combinations of
// an interaction's categorical predictors.
type needFacet struct {
	names []string // each value held, for a reader ("site = z")
	row   []int32  // each row's value (index into names), -1 none
}

// needsOf finds what every resample of ds must hold, under design dz.
func needsOf(dz *design.Design, ds *data.Dataset, outcome string) *resampleNeeds {
	n := &resampleNeeds{}
	col := func(s int) int { return slices.Index(ds.Predictors, dz.Sources[s].Name) }
	// The outcome, first: lacking reads a draw's own outcomes there when
	// it draws new ones.
	f := needFacet{row: make([]int32, ds.N)}
	for i, y := range ds.Y {
		f.row[i] = -1
		if y >= 0 && (ds.Weights == nil || ds.Weights[i] > 0) {
			f.row[i] = int32(y)
		}
	}
	for _, c := range ds.Categories {
		f.names = append(f.names, fmt.Sprintf("%s = %s", outcome, c))
	}
	n.facets = append(n.facets, f)
	// Each categorical predictor, then each interaction of two or more.
	var groups [][]int
	for s, src := range dz.Sources {
		if src.Cat != nil && col(s) >= 0 {
			groups = append(groups, []int{s})
		}
	}
	for k, t := range dz.Terms {
		if t.Kind != design.KindInteraction {
			continue
		}
		var cats []int
		for _, name := range dz.TermSources(k) {
			if s := dz.Source(name); s >= 0 && dz.Sources[s].Cat != nil && col(s) >= 0 {
				cats = append(cats, s)
			}
		}
		if len(cats) >= 2 && !slices.ContainsFunc(groups, func(g []int) bool { return slices.Equal(g, cats) }) {
			groups = append(groups, cats)
		}
	}
	for _, g := range groups {
		f := needFacet{row: make([]int32, ds.N)}
		index := map[string]int32{}
		key := make([]byte, 0, 16)
		for i := 0; i < ds.N; i++ {
			f.row[i] = -1
			if ds.Weights != nil && !(ds.Weights[i] > 0) {
				continue
			}
			key = key[:0]
			ok := true
			for _, s := range g {
				v := ds.X[i*ds.K+col(s)]
				if math.IsNaN(v) || int(v) < 0 || int(v) >= len(dz.Sources[s].Cat.Levels) {
					ok = false
					break
				}
				key = strconv.AppendInt(append(key, ','), int64(v), 10)
			}
			if !ok {
				continue
			}
			id, seen := index[string(key)]
			if !seen {
				id = int32(len(f.names))
				index[string(key)] = id
				var parts []string
				for _, s := range g {
					parts = append(parts, fmt.Sprintf("%s = %s", dz.Sources[s].Name, dz.Sources[s].Cat.Levels[int(ds.X[i*ds.K+col(s)])]))
				}
				f.names = append(f.names, strings.Join(parts, " with "))
			}
			f.row[i] = id
		}
		n.facets = append(n.facets, f)
	}
	n.countForced(ds)
	return n
}

// countForced counts the units of ds that alone hold a value some facet
// needs (a row of frequency weight 1 counting as the one unit it is).
func (n *resampleNeeds) countForced(ds *data.Dataset) {
	unit, units := resampleUnit(ds)
	n.units = units
	unitOf := func(i int) (string, bool) {
		switch unit {
		case UnitClusters:
			return ds.Cluster[i], true
		case UnitWeighted:
			return strconv.Itoa(i), math.Round(ds.Weights[i]) == 1
		}
		return strconv.Itoa(i), true
	}
	forced := map[string]bool{}
	for _, f := range n.facets {
		holder := make([]string, len(f.names)) // the one unit holding each value so far
		many := make([]bool, len(f.names))
		for i, v := range f.row {
			if v < 0 || many[v] {
				continue
			}
			u, single := unitOf(i)
			switch {
			case !single || (holder[v] != "" && holder[v] != u):
				many[v] = true
			case holder[v] == "":
				holder[v] = u
			}
		}
		for v, u := range holder {
			if u != "" && !many[v] {
				forced[u] = true
			}
		}
	}
	n.forced = len(forced)
}

// aDraw is one draw of a repetition of selection_stability: the rows of
// the data drawn from that its rows are (indices, in its order), their
// weights (nil without) and, when the draw gives them new outcomes
// (simulated from the chosen model), those outcomes (nil: the rows' own).
type aDraw struct {
	rows    []int
	weights []float64
	y       []int
}

// lacking lists what draw d lacks of what n needs, at most max items (all
// when max <= 0).
func (n *resampleNeeds) lacking(d aDraw, max int) []string {
	var out []string
	for fi, f := range n.facets {
		seen := make([]bool, len(f.names))
		left := len(f.names)
		for k, i := range d.rows {
			v := f.row[i]
			if fi == 0 && d.y != nil { // the outcome's facet: the outcomes drawn
				v = int32(d.y[k])
			}
			if v >= 0 && !seen[v] && (d.weights == nil || d.weights[k] > 0) {
				seen[v] = true
				left--
				if left == 0 {
					break
				}
			}
		}
		for v, s := range seen {
			if !s {
				out = append(out, f.names[v])
				if max > 0 && len(out) == max {
					return out
				}
			}
		}
	}
	return out
}

// drawResample draws one bootstrap resample of ds from rng that holds
// everything n needs (nil n: the first draw), through drawHolding. A
// non-empty failed says no draw held it all, or none can vary.
func drawResample(ds *data.Dataset, n *resampleNeeds, rng *rand.Rand) (out *data.Dataset, lacked [][]string, failed string) {
	if n != nil && n.forced >= n.units && n.units > 0 {
		unit, _ := resampleUnit(ds)
		return nil, nil, fmt.Sprintf("each of the %d %s alone holds a category or level of the data (or a combination an interaction reads), so a resample holding them all is the data again and cannot vary: no resample is drawn", n.units, unit)
	}
	var cluster []string
	d, lacked, failed := n.drawHolding(drawnResamples, func() (aDraw, error) {
		rows, weights, c := resampleRows(ds, rng)
		cluster = c
		return aDraw{rows: rows, weights: weights}, nil
	})
	if failed != "" {
		return nil, lacked, failed
	}
	return resampleOf(ds, d.rows, d.weights, cluster), lacked, ""
}

// drawHolding makes draws (draw) until one holds everything n needs (nil
// n: the first is kept): a draw lacking something is set aside, what it
// lacked kept in lacked, and another made from the same stream, up to
// MaxStabilityDraws in all, so the repetitions are conditional on holding
// it all while a draw lacking nothing is kept as it was drawn. The one
// such loop, for bootstrap resamples (drawResample) and outcomes simulated
// from the chosen model (simulatedOutcome). A non-empty failed says no
// draw held it all (worded for what was drawn, kind), or a draw failed
// (its error).
func (n *resampleNeeds) drawHolding(kind drawKind, draw func() (aDraw, error)) (d aDraw, lacked [][]string, failed string) {
	for range MaxStabilityDraws {
		d, err := draw()
		if err != nil {
			return aDraw{}, lacked, err.Error()
		}
		if n != nil {
			if l := n.lacking(d, 0); len(l) > 0 {
				lacked = append(lacked, l)
				continue
			}
		}
		return d, lacked, ""
	}
	last := lacked[len(lacked)-1]
	some := strings.Join(last[:min(3, len(last))], ", ")
	if kind == drawnOutcomes {
		return aDraw{}, lacked, fmt.Sprintf("none of %d sets of outcomes drawn from the chosen model held every category of the outcome that the data hold (the last lacked %s), so no set was kept for this repetition", MaxStabilityDraws, some)
	}
	return aDraw{}, lacked, fmt.Sprintf("none of %d draws held every category and level of the data (the last lacked %s), so the resample was not drawn", MaxStabilityDraws, some)
}

// drawKind is what drawHolding draws, for the words of its failure.
type drawKind int

const (
	drawnResamples drawKind = iota // bootstrap resamples of the rows
	drawnOutcomes                  // outcomes simulated from the chosen model
)
