package fit

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
)

// The Lipsitz test of a fit made over parts of the data held elsewhere
// (FitFromSums), the rows staying where they are: the phases of
// LipsitzTest, each part answering for its own rows. (1) Every part
// scores its rows at the fit's estimates and says how many there are and
// the range of their scores (ScoreSpan). (2) The groups of about equal
// weight are cut from counts of the parts' scores by ranges of keys (the
// scores' bits in order, as cutByCounts counts them): a range whose
// possible midpoints all fall in one group gets it whole, a range across
// a cut is counted again finer, and a range with few rows is resolved
// from its rows' scores. Counts of whole weights are exact in any order,
// so the groups are those of LipsitzTest on all rows in one place, row
// for row; other weights are resolved from every row's score and weight,
// in the parts' order, by cutByScore itself. The cut is the lowest score
// key of each group after the first. (3) Each part sums its observed and
// expected counts by group, added in part order. (4) The model with the
// group indicators is fitted by FitFromSums, each part forming its rows'
// indicators from the cut, and compared with the fit by LRTest.

// ScoreStep is what a ScoreQuery asks of a part.
type ScoreStep string

// Steps of a score query.
const (
	StepSpan   ScoreStep = "span"   // weight, rows and range of the scores
	StepRanges ScoreStep = "ranges" // counts or rows in ranges of keys
	StepTable  ScoreStep = "table"  // observed and expected counts by group
	// StepMoments asks for the moments of the columns with the group
	// indicators (the refit's rank check).
	StepMoments ScoreStep = "moments"
)

// ScoreQuery asks one part of the data about its rows' ordinal scores at
// the estimates of a fit of Model. Cuts, when set, give the groups: a
// row's group is the number of cuts at or below its score's key.
type ScoreQuery struct {
	Model     Model      `json:"model"`
	Estimates []float64  `json:"estimates"`
	Step      ScoreStep  `json:"step"`
	Ranges    []KeyRange `json:"ranges,omitempty"`
	Cuts      []uint64   `json:"cuts,omitempty"`
}

// KeyRange is a range of score keys (orderedBits) Lo..Hi: counted by
// buckets of keys (key-Lo)>>Shift, or with Rows, the rows themselves;
// with Rows and Distinct, each key once, in order, with its rows' total
// weight.
type KeyRange struct {
	Lo       uint64 `json:"lo"`
	Hi       uint64 `json:"hi"`
	Shift    uint   `json:"shift"`
	Rows     bool   `json:"rows"`
	Distinct bool   `json:"distinct,omitempty"`
}

// ScoreAnswer is a part's answer to a ScoreQuery.
type ScoreAnswer struct {
	Span   ScoreSpan    `json:"span"`
	Counts [][]float64  `json:"counts,omitempty"`  // per counted range: weight per bucket
	Keys   [][]uint64   `json:"keys,omitempty"`    // per range of rows: their keys, in row order
	Weight [][]float64  `json:"weights,omitempty"` // and their weights (none without weights)
	Table  *ScoreGroups `json:"table,omitempty"`
	// Moments of the part's columns with the group indicators.
	Moments *Moments `json:"moments,omitempty"`
}

// Moments are the total weight, the weighted means and the centred
// cross-products (K x K) of K columns over a set of rows. The moments of
// parts merge into those of their union.
type Moments struct {
	Weight float64   `json:"weight"`
	Mean   []float64 `json:"mean"`
	Cross  []float64 `json:"cross"`
}

// Merge adds the rows summarized by o to m (the pairwise update of means
// and cross-products, exact up to rounding).
func (m *Moments) Merge(o *Moments) {
	if o.Weight == 0 {
		return
	}
	if m.Weight == 0 {
		*m = Moments{Weight: o.Weight, Mean: slices.Clone(o.Mean), Cross: slices.Clone(o.Cross)}
		return
	}
	K, tot := len(m.Mean), m.Weight+o.Weight
	f := m.Weight * o.Weight / tot
	delta := make([]float64, K)
	for k := range delta {
		delta[k] = o.Mean[k] - m.Mean[k]
	}
	for a := 0; a < K; a++ {
		for b := 0; b < K; b++ {
			m.Cross[a*K+b] += o.Cross[a*K+b] + delta[a]*delta[b]*f
		}
	}
	for k := range m.Mean {
		m.Mean[k] += delta[k] * o.Weight / tot
	}
	m.Weight = tot
}

// MomentsOf is the moments of d's predictor columns (its indicators
// included), in the two passes of the rank check: a part's share of
// Whole.Moments.
func MomentsOf(d *Data) *Moments {
	K := len(d.Predictors)
	if d.N() == 0 {
		// A part that keeps no row: the identity of Merge.
		return &Moments{Mean: make([]float64, K), Cross: make([]float64, K*K)}
	}
	cs := d.columnSums(0, nil, 0, nil)
	m := &Moments{Weight: cs.tot, Mean: make([]float64, K)}
	if cs.tot == 0 {
		m.Cross = make([]float64, K*K)
		return m
	}
	for k := range m.Mean {
		m.Mean[k] = cs.sum[k] / cs.tot
	}
	m.Cross = d.columnSums(0, m.Mean, cs.tot, nil).cross
	return m
}

// ScoreSpan is the weight, the rows and the range of the score keys of a
// part's rows. Whole says every weight is a whole number of at least 1.
type ScoreSpan struct {
	Weight float64 `json:"weight"`
	Rows   int     `json:"rows"`
	Whole  bool    `json:"whole"`
	NaN    bool    `json:"nan"`
	Lo     uint64  `json:"lo"`
	Hi     uint64  `json:"hi"`
}

// Bounds on what one query may ask of a part.
const (
	maxKeyRanges = 1 << 10
	maxBuckets   = 1 << 16
)

// What LipsitzOverParts asks: a range counted in at most rangeBuckets
// buckets, or its rows when they weigh at most gatherBelow (variables
// for the tests).
var (
	rangeBuckets         = 1 << 12
	gatherBelow  float64 = 1 << 14
)

// check refuses a query a part should not answer.
func (q *ScoreQuery) check() error {
	if len(q.Ranges) > maxKeyRanges || len(q.Cuts) > maxKeyRanges {
		return fmt.Errorf("a score query with %d ranges and %d cuts", len(q.Ranges), len(q.Cuts))
	}
	buckets := 0
	for j, r := range q.Ranges {
		if r.Hi < r.Lo || r.Shift > 63 || !r.Rows && r.buckets() > maxBuckets {
			return fmt.Errorf("a score query's range %d..%d by %d bits", r.Lo, r.Hi, r.Shift)
		}
		if j > 0 && r.Lo <= q.Ranges[j-1].Hi {
			return fmt.Errorf("a score query's ranges out of order or overlapping (%d..%d after %d..%d)", r.Lo, r.Hi, q.Ranges[j-1].Lo, q.Ranges[j-1].Hi)
		}
		if !r.Rows {
			if buckets += r.buckets(); buckets > maxBuckets {
				return fmt.Errorf("a score query of more than %d buckets in all", maxBuckets)
			}
		}
	}
	if !slices.IsSorted(q.Cuts) {
		return errors.New("a score query's cuts are not in order")
	}
	switch q.Step {
	case StepSpan, StepRanges, StepTable, StepMoments:
	default:
		return fmt.Errorf("a score query of unknown step %q", q.Step)
	}
	return nil
}

// buckets is the number of buckets of a counted range.
func (r KeyRange) buckets() int { return int((r.Hi-r.Lo)>>r.Shift) + 1 }

// scores gives the probabilities and scores of d's rows at q's estimates.
func (q *ScoreQuery) scores(d *Data) (probs, score []float64, err error) {
	if err := q.check(); err != nil {
		return nil, nil, err
	}
	ly, err := newLayout(q.Model, d.J, d.Predictors)
	if err != nil {
		return nil, nil, err
	}
	if len(q.Estimates) != len(ly.params) {
		return nil, nil, fmt.Errorf("%d estimates for %d parameters", len(q.Estimates), len(ly.params))
	}
	pr := newProblem(&design{K: len(d.Predictors)}, q.Model, ly, 1)
	probs, score = scoresOf(d, q.Estimates, pr)
	return probs, score, nil
}

// Answer is the part d's answer to q.
func (q *ScoreQuery) Answer(d *Data) (*ScoreAnswer, error) {
	probs, score, err := q.scores(d)
	if err != nil {
		return nil, err
	}
	a := &ScoreAnswer{}
	switch q.Step {
	case StepSpan:
		a.Span = spanOf(d, score)
	case StepRanges:
		a.ranges(d, score, q.Ranges)
	case StepTable:
		a.Table = tableOf(d, score, probs, q.Cuts)
	case StepMoments:
		a.Moments = MomentsOf(indicatorData(d, groupsOf(score, q.Cuts), len(q.Cuts)+1))
	}
	return a, nil
}

// spanOf is the span of the scores of d's rows.
func spanOf(d *Data, score []float64) ScoreSpan {
	s := ScoreSpan{Rows: len(score), Whole: true, Lo: math.MaxUint64}
	for i, v := range score {
		w := d.weightOf(i)
		s.Weight += w
		s.Whole = s.Whole && w >= 1 && w == math.Trunc(w)
		if math.IsNaN(v) {
			s.NaN = true
			continue
		}
		k := orderedBits(v)
		s.Lo, s.Hi = min(s.Lo, k), max(s.Hi, k)
	}
	return s
}

// ranges counts the rows of each range by bucket, or lists them.
func (a *ScoreAnswer) ranges(d *Data, score []float64, rs []KeyRange) {
	a.Counts, a.Keys, a.Weight = make([][]float64, len(rs)), make([][]uint64, len(rs)), make([][]float64, len(rs))
	for j, r := range rs {
		if !r.Rows {
			a.Counts[j] = make([]float64, r.buckets())
		}
	}
	for i, v := range score {
		if math.IsNaN(v) {
			continue
		}
		k := orderedBits(v)
		for j, r := range rs {
			if k < r.Lo || k > r.Hi {
				continue
			}
			if !r.Rows {
				a.Counts[j][(k-r.Lo)>>r.Shift] += d.weightOf(i)
				continue
			}
			a.Keys[j] = append(a.Keys[j], k)
			if d.Weights != nil || r.Distinct {
				a.Weight[j] = append(a.Weight[j], d.weightOf(i))
			}
		}
	}
	for j, r := range rs {
		if r.Distinct {
			a.Keys[j], a.Weight[j] = distinctKeys(a.Keys[j], a.Weight[j])
		}
	}
}

// distinctKeys is each of keys once, in order, with the total of its
// weights (whole weights: exact in any order).
func distinctKeys(keys []uint64, weights []float64) ([]uint64, []float64) {
	order := make([]int, len(keys))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(keys[a], keys[b]) })
	var dk []uint64
	var dw []float64
	for _, i := range order {
		if n := len(dk); n > 0 && dk[n-1] == keys[i] {
			dw[n-1] += weights[i]
			continue
		}
		dk, dw = append(dk, keys[i]), append(dw, weights[i])
	}
	return dk, dw
}

// groupOfKey is the group of a score key under cuts.
func groupOfKey(cuts []uint64, k uint64) int {
	return sort.Search(len(cuts), func(g int) bool { return cuts[g] > k })
}

// groupsOf is the group of every row of d under cuts.
func groupsOf(score []float64, cuts []uint64) []int {
	group := make([]int, len(score))
	for i, v := range score {
		group[i] = groupOfKey(cuts, orderedBits(v))
	}
	return group
}

// tableOf is the calibration table of d's rows grouped by cuts (phase 3
// of GroupByScore, on one part).
func tableOf(d *Data, score, probs []float64, cuts []uint64) *ScoreGroups {
	t := newScoreTable(len(cuts)+1, d.J)
	for i, g := range groupsOf(score, cuts) {
		t.count(d, i, g, score, probs)
	}
	return t
}

// add adds the counts of part table o to t.
func (t *ScoreGroups) add(o *ScoreGroups) {
	for g := range t.Weight {
		t.Low[g], t.High[g] = math.Min(t.Low[g], o.Low[g]), math.Max(t.High[g], o.High[g])
		t.Weight[g] += o.Weight[g]
		addTo(t.Observed[g], o.Observed[g])
		addTo(t.Expected[g], o.Expected[g])
	}
}

// Indicators is the part d with its rows' group indicators under q's
// cuts, for the refit of the Lipsitz test (the predictors of the model
// with indicators, in order).
func (q *ScoreQuery) Indicators(d *Data) (*Data, error) {
	_, score, err := q.scores(d)
	if err != nil {
		return nil, err
	}
	return indicatorData(d, groupsOf(score, q.Cuts), len(q.Cuts)+1), nil
}

// CheckShape checks that a is an answer to q from a part of a data set of
// J categories: one list per range of the size asked, a table of the
// groups asked, finite weights.
func (a *ScoreAnswer) CheckShape(q *ScoreQuery, J int) error {
	switch q.Step {
	case StepSpan:
		if a.Span.Rows < 0 || math.IsNaN(a.Span.Weight) || math.IsInf(a.Span.Weight, 0) || a.Span.Weight < 0 {
			return fmt.Errorf("a span of %d rows of weight %g", a.Span.Rows, a.Span.Weight)
		}
		if a.Span.Rows > 0 && !a.Span.NaN && a.Span.Lo > a.Span.Hi {
			return fmt.Errorf("a span of keys %d..%d", a.Span.Lo, a.Span.Hi)
		}
	case StepRanges:
		if len(a.Counts) != len(q.Ranges) || len(a.Keys) != len(q.Ranges) || len(a.Weight) != len(q.Ranges) {
			return fmt.Errorf("answers for %d, %d and %d ranges where %d were asked", len(a.Counts), len(a.Keys), len(a.Weight), len(q.Ranges))
		}
		for j, r := range q.Ranges {
			switch {
			case !r.Rows && len(a.Counts[j]) != r.buckets():
				return fmt.Errorf("range %d: %d counts for %d buckets", j+1, len(a.Counts[j]), r.buckets())
			case r.Rows && len(a.Weight[j]) != 0 && len(a.Weight[j]) != len(a.Keys[j]):
				return fmt.Errorf("range %d: %d weights for %d rows", j+1, len(a.Weight[j]), len(a.Keys[j]))
			case !finite(a.Counts[j]) || !finite(a.Weight[j]):
				return fmt.Errorf("range %d: a weight that is not a finite number", j+1)
			case !nonNegative(a.Counts[j]) || !nonNegative(a.Weight[j]):
				return fmt.Errorf("range %d: a negative weight", j+1)
			}
			for _, k := range a.Keys[j] {
				if k < r.Lo || k > r.Hi {
					return fmt.Errorf("range %d: a row outside it", j+1)
				}
			}
		}
	case StepTable:
		t := a.Table
		G := len(q.Cuts) + 1
		if t == nil || t.Groups != G || len(t.Low) != G || len(t.High) != G || len(t.Weight) != G || len(t.Observed) != G || len(t.Expected) != G {
			return fmt.Errorf("a calibration table without its %d groups", G)
		}
		for g := 0; g < G; g++ {
			if len(t.Observed[g]) != J || len(t.Expected[g]) != J || !finite(t.Observed[g]) || !finite(t.Expected[g]) || !nonNegative(t.Observed[g]) || !nonNegative(t.Expected[g]) {
				return fmt.Errorf("group %d of the calibration table without its %d finite non-negative counts", g+1, J)
			}
			if math.IsNaN(t.Low[g]) || math.IsNaN(t.High[g]) {
				return fmt.Errorf("group %d of the calibration table with a score that is not a number", g+1)
			}
		}
		if !finite(t.Weight) || !nonNegative(t.Weight) {
			return errors.New("a calibration table weight that is not a finite non-negative number")
		}
	case StepMoments:
		m := a.Moments
		if m == nil || len(m.Cross) != len(m.Mean)*len(m.Mean) || !finite(m.Mean) || !finite(m.Cross) || !finite([]float64{m.Weight}) {
			return errors.New("the moments of the columns without their means and cross-products")
		}
	}
	return nil
}

// nonNegative says no value of v is below 0.
func nonNegative(v []float64) bool {
	for _, x := range v {
		if x < 0 {
			return false
		}
	}
	return true
}

// ScoreParts asks the parts of a data set, in their order, what the
// Lipsitz test of a fit over them needs.
type ScoreParts interface {
	// Ask gives every part's answer to q, in part order.
	Ask(q *ScoreQuery) ([]*ScoreAnswer, error)
	// Sums and Diag are PartitionSums and PartitionDiagnostics of model m
	// summed over the parts, each part's rows with their indicators
	// under cut's cuts (ScoreQuery.Indicators), then centred by the
	// Whole.Shift of the fit's whole data (Data.Centred; the indicators
	// are never shifted), theta in those centred coordinates.
	Sums(cut *ScoreQuery, m Model, theta []float64, order int) (*Sums, error)
	Diag(cut *ScoreQuery, m Model, theta []float64) (int, float64, error)
}

// LipsitzOverParts is LipsitzTest of fit r, made over parts (whole: what
// they hold together), asking the parts for what needs their rows. The
// groups are those LipsitzTest forms on all rows in one place; the
// counts, the refit and the statistic equal its own to rounding.
func LipsitzOverParts(r *Result, w Whole, parts ScoreParts, groups int, opt Options) (*Lipsitz, error) {
	if !r.OK() {
		return nil, fmt.Errorf("%s has no usable estimates (%s)", r.Name, r.Status)
	}
	base := ScoreQuery{Model: r.Model, Estimates: r.Estimates}
	// Phases 1 and 2: the cut.
	cuts, why, err := cutOverParts(base, parts, groups, r.J, opt.Sampling)
	if err != nil {
		return nil, err
	}
	if why != "" {
		return &Lipsitz{Test: failedTest("lipsitz", "%s", why)}, nil
	}
	base.Cuts = cuts
	G := len(cuts) + 1
	// Phase 3: observed and expected counts.
	q := base
	q.Step = StepTable
	answers, err := parts.Ask(&q)
	if err != nil {
		return nil, err
	}
	t := newScoreTable(G, r.J)
	t.Categories = r.Categories
	for _, a := range answers {
		t.add(a.Table)
	}
	out := &Lipsitz{Table: t}
	if G < 2 {
		out.Test = failedTest("lipsitz", "every row has the same predicted score, so there is only one group")
		return out, nil
	}
	// Phase 4: the model with group indicators, over the parts, after the
	// rank check of its columns (from the parts' moments).
	am, start, err := indicatorModel(r, G)
	if err != nil {
		return nil, err
	}
	aw := w
	aw.Predictors = append(slices.Clone(w.Predictors), indicatorNames(G)...)
	aw.Moments = nil // the refit's rank check is made below, from mo
	mq := base
	mq.Step = StepMoments
	if answers, err = parts.Ask(&mq); err != nil {
		return nil, err
	}
	var mo Moments
	for _, a := range answers {
		if len(a.Moments.Mean) != len(aw.Predictors) {
			return nil, fmt.Errorf("the moments of %d columns where there are %d", len(a.Moments.Mean), len(aw.Predictors))
		}
		mo.Merge(a.Moments)
	}
	if _, err := rankVerdict(aw.Predictors, mo.Mean, mo.Weight, mo.Cross); err != nil {
		out.Test = refitFailed(aw.Predictors, G, err)
		return out, nil
	}
	if w.Spread != nil {
		aw.Spread = indicatorSpread(w.Spread, t)
	}
	opt.Start = start
	opt.Settle = nil
	cut := q
	full, err := FitFromSums(aw, am,
		func(theta []float64, order int) (*Sums, error) { return parts.Sums(&cut, am, theta, order) },
		func(theta []float64) (int, float64, error) { return parts.Diag(&cut, am, theta) }, opt)
	out.Test = lipsitzVerdict(r, full, G, err)
	return out, nil
}

// indicatorSpread is s with the spread of the indicators of groups 2..G
// of table t after its predictors.
func indicatorSpread(s *Spread, t *ScoreGroups) *Spread {
	o := &Spread{Weight: s.Weight, Mean: slices.Clone(s.Mean), SS: slices.Clone(s.SS)}
	for g := 1; g < t.Groups; g++ {
		p := t.Weight[g] / s.Weight
		o.Mean = append(o.Mean, p)
		o.SS = append(o.SS, t.Weight[g]*(1-p))
	}
	return o
}

// cutOverParts forms the groups of LipsitzTest over the parts (phases 1
// and 2): the cuts, or why there are none.
func cutOverParts(base ScoreQuery, parts ScoreParts, groups, J int, sampling bool) ([]uint64, string, error) {
	q := base
	q.Step = StepSpan
	answers, err := parts.Ask(&q)
	if err != nil {
		return nil, "", err
	}
	total, whole, lo, hi := 0.0, true, uint64(math.MaxUint64), uint64(0)
	rows := 0
	for _, a := range answers {
		s := a.Span
		rows += s.Rows
		if s.NaN {
			return nil, "a predicted score is not a number", nil
		}
		total += s.Weight
		whole = whole && s.Whole
		if s.Rows > 0 {
			lo, hi = min(lo, s.Lo), max(hi, s.Hi)
		}
	}
	if total <= 0 {
		return nil, "no rows", nil
	}
	if groups <= 0 {
		groups = DefaultScoreGroups(Observations(rows, total, sampling), J) // as LipsitzTest
	}
	c := &partCut{parts: parts, base: base, groups: groups, total: total}
	if whole && total <= 1<<53 {
		err = c.byCounts(lo, hi)
	} else {
		err = c.byRows(lo, hi)
	}
	if err != nil {
		return nil, "", err
	}
	return c.cuts(), "", nil
}

// partCut forms the groups of scores held by parts: segments of keys
// with their group (raw, before empty groups are left out).
type partCut struct {
	parts    ScoreParts
	base     ScoreQuery
	groups   int
	total    float64
	segments []keySegment
}

type keySegment struct {
	lo, hi uint64
	group  int
}

// pendingRange is a range of keys across a cut: the weight of the rows
// below it and its own.
type pendingRange struct {
	lo, hi      uint64
	cum, weight float64
}

// ask asks the parts for the ranges rs.
func (c *partCut) ask(rs []KeyRange) ([]*ScoreAnswer, error) {
	q := c.base
	q.Step, q.Ranges = StepRanges, rs
	return c.parts.Ask(&q)
}

// byCounts cuts rows of whole weights (at least 1), their keys in
// lo..hi: ranges counted by buckets, then finer where a bucket lies
// across a cut, and resolved from their rows once they weigh little.
func (c *partCut) byCounts(lo, hi uint64) error {
	pending := []pendingRange{{lo: lo, hi: hi, weight: c.total}}
	for len(pending) > 0 {
		// A range of one key is one run of equal scores whose weight is
		// known: it goes whole to the group of its weighted midpoint, with
		// no question to the parts.
		pending = slices.DeleteFunc(pending, func(p pendingRange) bool {
			if p.lo == p.hi {
				c.segments = append(c.segments, keySegment{p.lo, p.hi, groupOf(p.cum, p.weight, c.total, c.groups)})
			}
			return p.lo == p.hi
		})
		if len(pending) == 0 {
			break
		}
		rs := make([]KeyRange, len(pending))
		for j, p := range pending {
			rs[j] = KeyRange{Lo: p.lo, Hi: p.hi, Rows: p.weight <= gatherBelow, Distinct: p.weight <= gatherBelow}
			for !rs[j].Rows && rs[j].buckets() > rangeBuckets {
				rs[j].Shift++
			}
		}
		answers, err := c.ask(rs)
		if err != nil {
			return err
		}
		var next []pendingRange
		for j, p := range pending {
			if rs[j].Rows {
				keys, weights := gathered(answers, j)
				c.resolve(keys, weights, p.cum)
				continue
			}
			counts := make([]float64, rs[j].buckets())
			for _, a := range answers {
				addTo(counts, a.Counts[j])
			}
			cum := p.cum
			for b, n := range counts {
				if n == 0 {
					continue
				}
				blo := p.lo + uint64(b)<<rs[j].Shift
				bhi := p.hi
				if span := uint64(1)<<rs[j].Shift - 1; blo <= p.hi-span {
					bhi = blo + span
				}
				// With weights of at least 1, the midpoints of the runs of
				// this bucket lie from cum+1/2 to cum+n-1/2.
				g := groupOf(cum, 1, c.total, c.groups)
				if groupOf(cum+n-1, 1, c.total, c.groups) == g {
					c.segments = append(c.segments, keySegment{blo, bhi, g})
				} else {
					next = append(next, pendingRange{lo: blo, hi: bhi, cum: cum, weight: n})
				}
				cum += n
			}
		}
		pending = next
	}
	return nil
}

// gathered is the keys and weights (nil: 1 each) of the rows of range j
// from every part, in part order.
func gathered(answers []*ScoreAnswer, j int) ([]uint64, []float64) {
	var keys []uint64
	var weights []float64
	for _, a := range answers {
		w := a.Weight[j]
		if w == nil && weights != nil || w != nil && weights == nil && len(keys) > 0 {
			if weights == nil {
				weights = make([]float64, len(keys))
				for i := range weights {
					weights[i] = 1
				}
			}
			if w == nil {
				w = make([]float64, len(a.Keys[j]))
				for i := range w {
					w[i] = 1
				}
			}
		}
		keys = append(keys, a.Keys[j]...)
		weights = append(weights, w...)
	}
	return keys, weights
}

// resolve gives the runs of equal keys of rows (whole weights) after
// rows of weight cum the groups of their weighted midpoints.
func (c *partCut) resolve(keys []uint64, weights []float64, cum float64) {
	order := make([]int, len(keys))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		switch {
		case keys[a] < keys[b]:
			return -1
		case keys[a] > keys[b]:
			return 1
		}
		return 0
	})
	w := func(i int) float64 {
		if weights == nil {
			return 1
		}
		return weights[i]
	}
	for a := 0; a < len(order); {
		b, tw := a, 0.0
		for b < len(order) && keys[order[b]] == keys[order[a]] {
			tw += w(order[b])
			b++
		}
		k := keys[order[a]]
		c.segments = append(c.segments, keySegment{k, k, groupOf(cum, tw, c.total, c.groups)})
		cum += tw
		a = b
	}
}

// byRows cuts rows of any weights from every row's score and weight, in
// the parts' order, by cutByScore: the order and sums of LipsitzTest's
// own cut.
func (c *partCut) byRows(lo, hi uint64) error {
	answers, err := c.ask([]KeyRange{{Lo: lo, Hi: hi, Rows: true}})
	if err != nil {
		return err
	}
	keys, weights := gathered(answers, 0)
	score := make([]float64, len(keys))
	order := make([]int, len(keys))
	for i, k := range keys {
		score[i], order[i] = keyScore(k), i
	}
	raw := make([]int, len(keys))
	cutByScore(order, score, weights, c.groups, raw)
	for i, k := range keys {
		if weights == nil || weights[i] > 0 {
			c.segments = append(c.segments, keySegment{k, k, raw[i]})
		}
	}
	return nil
}

// cuts is the lowest key of each group after the first that received
// rows: groups that received none are left out, as GroupByScore leaves
// them out.
func (c *partCut) cuts() []uint64 {
	slices.SortFunc(c.segments, func(a, b keySegment) int {
		switch {
		case a.lo < b.lo:
			return -1
		case a.lo > b.lo:
			return 1
		}
		return 0
	})
	var cuts []uint64
	for i, s := range c.segments {
		if i > 0 && s.group != c.segments[i-1].group {
			cuts = append(cuts, s.lo)
		}
	}
	return cuts
}

// keyScore is the score whose key is k (orderedBits's inverse; 0 for the
// key of -0 and 0).
func keyScore(k uint64) float64 {
	if k>>63 != 0 {
		return math.Float64frombits(k &^ (1 << 63))
	}
	return math.Float64frombits(^k)
}
