package fit

import (
	"cmp"
	"errors"
	"fmt"
	"maps"
	"math"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"

	"ordplan/internal/words"
)

// Goodness of fit by groups of the ordinal score (see docs/models.md,
// "Goodness of fit"). Phases: (1) the score of every row, sum_j j P(y=j),
// at the fitted parameters; (2) rows sorted by score and cut into groups
// of about equal weight, ties kept together; (3) observed and expected
// counts per group and category; (4) the Lipsitz test: the model refitted
// with G-1 group indicators as parallel predictors, likelihood ratio
// against the model.

// ScoreGroups is the calibration table: for each group of rows formed by
// the predicted ordinal score, the observed count of each category and the
// sum of its predicted probabilities.
type ScoreGroups struct {
	Groups     int         `json:"groups"`
	Categories []string    `json:"categories"`
	Low        []float64   `json:"score_low"`  // smallest score in the group
	High       []float64   `json:"score_high"` // largest score in the group
	Weight     []float64   `json:"n"`          // observations (sum of weights) in the group
	Observed   [][]float64 `json:"observed"`   // [group][category]
	Expected   [][]float64 `json:"expected"`   // [group][category]
	group      []int       // row -> group
}

// Lipsitz is the Lipsitz test of a fit with its calibration table.
type Lipsitz struct {
	Test  Test         `json:"test"`
	Table *ScoreGroups `json:"table"`
}

// DefaultScoreGroups is the number of groups used when the caller asks
// for 0: 10, but no more than the observations allow with about five
// expected per category and group (N / (5 J)), and at least 2.
func DefaultScoreGroups(nobs float64, J int) int {
	g := int(math.Floor(nobs / (5 * float64(J))))
	return max(2, min(10, g))
}

// GroupByScore forms the calibration table of fit r on its data d with
// about groups groups (0: DefaultScoreGroups). Fewer groups result when
// many rows share a score.
func GroupByScore(d *Data, r *Result, groups int) (*ScoreGroups, error) {
	pr, err := r.problem()
	if err != nil {
		return nil, err
	}
	if d.J != r.J || len(d.Predictors) != len(r.Predictors) {
		return nil, fmt.Errorf("the data do not match %s", r.Name)
	}
	n, J := d.N(), d.J
	if groups <= 0 {
		groups = DefaultScoreGroups(d.NObs(), J)
	}
	w := d.weightOf
	// Phase 1: scores and probabilities.
	probs, score := scoresOf(d, r.Estimates, pr)
	// Phase 2: groups of about equal weight; a run of equal scores goes
	// to the group of its weighted midpoint.
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	raw := make([]int, n) // the group of each row, renumbered in place below
	cutByScore(order, score, d.Weights, groups, raw)
	order = nil
	// Renumber the groups that received weight: 0, 1, ...
	used := make([]float64, groups)
	for i := 0; i < n; i++ {
		used[raw[i]] += w(i)
	}
	dense := make([]int, groups)
	G := 0
	for g := range used {
		dense[g] = -1
		if used[g] > 0 {
			dense[g] = G
			G++
		}
	}
	t := newScoreTable(G, J)
	t.Categories, t.group = r.Categories, raw
	// Phase 3: observed and expected counts.
	for i := 0; i < n; i++ {
		g := dense[raw[i]]
		if g < 0 {
			g = 0 // a zero-weight row in an empty group: counts nothing
		}
		t.group[i] = g
		t.count(d, i, g, score, probs)
	}
	return t, nil
}

// newScoreTable is an empty calibration table of G groups and J
// categories.
func newScoreTable(G, J int) *ScoreGroups {
	t := &ScoreGroups{Groups: G, Low: make([]float64, G), High: make([]float64, G), Weight: make([]float64, G),
		Observed: make([][]float64, G), Expected: make([][]float64, G)}
	for g := 0; g < G; g++ {
		t.Low[g], t.High[g] = math.Inf(1), math.Inf(-1)
		t.Observed[g], t.Expected[g] = make([]float64, J), make([]float64, J)
	}
	return t
}

// count adds row i of d, of the given scores and probabilities (n x J),
// to group g (a row of weight 0 counts nothing).
func (t *ScoreGroups) count(d *Data, i, g int, score, probs []float64) {
	wi, J := d.weightOf(i), d.J
	if wi == 0 {
		return
	}
	s := score[i]
	t.Low[g], t.High[g] = min(t.Low[g], s), max(t.High[g], s)
	t.Weight[g] += wi
	t.Observed[g][d.Y[i]] += wi
	e := t.Expected[g][:J]
	for j, v := range probs[i*J : (i+1)*J] {
		e[j] += wi * v
	}
}

// LipsitzTest is the Lipsitz test of fit r on its data d: rows grouped by
// the ordinal score (GroupByScore), the model refitted with indicators of
// groups 1..G-1 as parallel predictors, and the likelihood ratio of that fit against r on G-1
// degrees of freedom. A small p-value says the model misses a pattern
// along its own predicted score.
func LipsitzTest(d *Data, r *Result, groups int, opt Options) (*Lipsitz, error) {
	if groups <= 0 {
		groups = DefaultScoreGroups(d.observations(opt.Sampling), d.J)
	}
	t, err := GroupByScore(d, r, groups)
	if err != nil {
		return nil, err
	}
	out := &Lipsitz{Table: t}
	G := t.Groups
	if G < 2 {
		out.Test = failedTest("lipsitz", "every row has the same predicted score, so there is only one group")
		return out, nil
	}
	// Phase 4: the model with group indicators.
	full, err := lipsitzRefit(d, r, t, opt)
	out.Test = lipsitzVerdict(r, full, G, err)
	return out, nil
}

// lipsitzVerdict is the Lipsitz test of fit r against full, its refit with
// the indicators of G score groups (or why the refit failed, err), on the
// rows in one place or summed over parts alike. A reason never names an
// indicator by its internal name (refitWords).
func lipsitzVerdict(r, full *Result, G int, err error) Test {
	if err != nil {
		return refitFailed(refitColumns(full, r, G), G, err)
	}
	if r.OK() && full != nil && !full.OK() {
		// The refit alone failed: say so, not that the model did.
		return failedTest("lipsitz", "the model with indicators of the %d groups of predicted score %s", G, refitWords(refitFailure(full)))
	}
	t := LRTest(r, full)
	t.Name = "lipsitz"
	return t
}

// refitColumns is the columns of full, the refit of r with the indicators
// of G groups, or when there is no refit (nil), r's followed by the
// indicators.
func refitColumns(full, r *Result, G int) []string {
	if full != nil {
		return full.Predictors
	}
	return append(slices.Clone(r.Predictors), indicatorNames(G)...)
}

// lipsitzRefit fits the model of r with the indicators of t's groups
// 2..G on r's data d, from r's estimates and 0 for the indicators, for
// its maximized log-likelihood alone (Options.maximumOnly): X's rank sums
// come from the fit of r, and the first evaluation's sums from its last
// (refitsums.go).
func lipsitzRefit(d *Data, r *Result, t *ScoreGroups, opt Options) (*Result, error) {
	ad, am, start, err := withIndicators(d, r, t)
	if err != nil {
		return nil, err
	}
	opt.Start = start
	opt.Settle = nil
	opt.maximumOnly = true
	var first *firstSums
	if r.last != nil {
		first = &firstSums{theta: start, base: r.last}
	}
	return fitFromWith(ad, am, opt, r.rank, first)
}

// refitFailed is the Lipsitz test whose refit with the indicators of G
// groups failed with err; names are the refit's columns, r's predictors
// and then the indicators.
func refitFailed(names []string, G int, err error) Test {
	var in *InputError
	if errors.As(err, &in) && in.Collinear != nil && in.Collinear.Predictor < len(names) {
		c := in.Collinear
		what := refitWords(names[c.Predictor])
		if c.Constant {
			return failedTest("lipsitz", "not defined for these data: %s takes one value, %g, in every row, so its effect cannot be estimated beside the thresholds", what, c.Value)
		}
		var with []string
		for _, k := range c.With {
			with = append(with, names[k])
		}
		return failedTest("lipsitz", "not defined for these data: the score groups coincide with values of the predictors (too few distinct predictor patterns for %d groups), so %s is a combination of %s", G, what, words.AndList(append(refitNames(with, strconv.Quote), "the constant")))
	}
	return failedTest("lipsitz", "the model with group indicators could not be fitted: %s", refitWords(err.Error()))
}

// refitNames is a list of the refit's parameters or columns in the user's
// terms: the model's own names as they are (or as quote writes them), each
// run of indicators as one item (indicatorPhrase).
func refitNames(names []string, quote func(string) string) []string {
	var out, groups []string
	flush := func() {
		if len(groups) > 0 {
			out = append(out, indicatorPhrase(groups))
			groups = nil
		}
	}
	for _, name := range names {
		if g, ok := indicatorGroup(name); ok {
			groups = append(groups, g)
			continue
		}
		flush()
		if quote != nil {
			name = quote(name)
		}
		out = append(out, name)
	}
	flush()
	return out
}

// indicatorGroup is the group number of an indicator's name
// score_group_G, if name is one.
func indicatorGroup(name string) (string, bool) {
	g, ok := strings.CutPrefix(name, indicatorPrefix)
	return g, ok && allDigits(g)
}

// indicatorPhrase names the indicators of the groups listed (their
// numbers, increasing) as the user knows them: "the indicator of group 3
// of predicted score", "the indicators of groups 2 to 10 of predicted
// score".
func indicatorPhrase(groups []string) string {
	if len(groups) == 1 {
		return "the indicator of group " + groups[0] + " of predicted score"
	}
	run := true
	for i := 1; i < len(groups); i++ {
		a, _ := strconv.Atoi(groups[i-1])
		b, _ := strconv.Atoi(groups[i])
		run = run && b == a+1
	}
	if run {
		return "the indicators of groups " + groups[0] + " to " + groups[len(groups)-1] + " of predicted score"
	}
	return "the indicators of groups " + words.AndList(groups) + " of predicted score"
}

// indicatorRun is a list of indicator names, quoted or not, in a message.
var indicatorRun = regexp.MustCompile(`"?` + regexp.QuoteMeta(indicatorPrefix) + `\d+"?(?:, "?` + regexp.QuoteMeta(indicatorPrefix) + `\d+"?)*`)

// refitWords is a message about the refit with every list of indicator
// names in it said in the user's terms (indicatorPhrase): those names are
// the program's own, seen nowhere else.
func refitWords(msg string) string {
	return indicatorRun.ReplaceAllStringFunc(msg, func(run string) string {
		var groups []string
		for _, name := range strings.Split(run, ", ") {
			g, _ := indicatorGroup(strings.Trim(name, `"`))
			groups = append(groups, g)
		}
		return indicatorPhrase(groups)
	})
}

// refitFailure says why the refit full with score-group indicators has no
// usable maximum, naming what diverges.
func refitFailure(full *Result) string {
	s := full.Separation
	switch {
	case full.Status == StatusFlatMaximum:
		return fmt.Sprintf("has a finite but nearly flat maximum, some of its estimates not determined (%s)", full.Message)
	case full.Status != StatusNoFiniteMaximum:
		return fmt.Sprintf("did not converge (%s)", full.Message)
	case s != nil && !s.Proved:
		return fmt.Sprintf("has no finite maximum found (%s), so the likelihood ratio has no finite value", full.Message)
	}
	why := "the log-likelihood keeps rising as parameters diverge"
	if s != nil && len(s.Parameters) > 0 {
		why = fmt.Sprintf("the log-likelihood keeps rising as %s diverge", words.AndList(refitNames(s.Parameters, nil)))
	}
	return "has no finite maximum (separation: " + why + ", as when an outcome category is missing from some of the groups), so the likelihood ratio has no finite value"
}

// withIndicators is the data and model of fit r's Lipsitz refit, with the
// indicators of t's groups 2..G held as each row's group (Data.ind)
// beside the rows of d as parallel predictors, and its start: r's
// estimates, 0 for the indicators.
func withIndicators(d *Data, r *Result, t *ScoreGroups) (*Data, Model, []float64, error) {
	ad := indicatorData(d, t.group, t.Groups)
	am, start, err := indicatorModel(r, t.Groups)
	if err != nil {
		return nil, Model{}, nil, err
	}
	return ad, am, start, nil
}

// indicatorData is d with the indicators of groups 2..G (group: each
// row's group, 0..G-1) held as each row's group beside its predictors.
func indicatorData(d *Data, group []int, G int) *Data {
	return &Data{Y: d.Y, J: d.J, Categories: d.Categories, Weights: d.Weights, Offset: d.Offset,
		Predictors: append(slices.Clone(d.Predictors), indicatorNames(G)...), X: d.X, ind: &indicators{group: group, count: G - 1}}
}

// indicatorNames names the indicators of groups 2..G.
func indicatorNames(G int) []string {
	var names []string
	for g := 1; g < G; g++ {
		names = append(names, indicatorPrefix+strconv.Itoa(g+1))
	}
	return names
}

// indicatorModel is fit r's model with the indicators of G groups as
// parallel predictors after its own, and the refit's start: r's
// estimates, 0 for the indicators.
func indicatorModel(r *Result, G int) (Model, []float64, error) {
	am := r.Model
	am.Effects = append(append([]Effect(nil), r.Model.Effects...), allEffects(G-1, Parallel)...)
	if r.Model.Groups != nil {
		am.Groups = append(append([]int(nil), r.Model.Groups...), make([]int, G-1)...)
	}
	ly, err := newLayout(am, r.J, append(slices.Clone(r.Predictors), indicatorNames(G)...))
	if err != nil {
		return Model{}, nil, err
	}
	start := make([]float64, len(ly.params))
	for i, name := range ly.names() {
		if v, ok := r.Estimate(name); ok {
			start[i] = v
		}
	}
	return am, start, nil
}

// weightOf is row i's weight (1 without weights).
func (d *Data) weightOf(i int) float64 {
	if d.Weights == nil {
		return 1
	}
	return d.Weights[i]
}

// scoresOf gives every row's predicted probabilities (n x J, row-major)
// and its ordinal score sum_j j P(y=j) (categories scored 1..J), blocks of
// rows in parallel (each row's values are its own).
func scoresOf(d *Data, estimates []float64, pr *problem) (probs, score []float64) {
	n, K, J := d.N(), len(d.Predictors), d.J
	probs = make([]float64, n*J)
	score = make([]float64, n)
	c := pr.coefs(estimates)
	forBlocks(n, 0, func(_, lo, hi int) {
		L := make([]float64, pr.q)
		for i := lo; i < hi; i++ {
			off := 0.0
			if d.Offset != nil {
				off = d.Offset[i]
			}
			p := probs[i*J : (i+1)*J]
			pr.rowProbs(c, d.X[i*K:(i+1)*K], off, L, p)
			for j, v := range p {
				score[i] += float64(j+1) * v
			}
		}
	})
	return probs, score
}

// cutByScore cuts the rows listed in order into groups of about equal
// weight by score (weights: nil for 1 each), writing each row's group
// (0..groups-1) into out: the rows sorted by score, a run of equal scores
// goes, whole, to the group of its weighted midpoint (groupOf), so groups
// may stay empty. order may be left in another order. Long lists of rows
// of weight 1 are cut by counts (cutByCounts), without a sort.
func cutByScore(order []int, score []float64, weights []float64, groups int, out []int) {
	if weights == nil && len(order) >= cutByCountsFrom && len(order) <= math.MaxInt32 && !slices.ContainsFunc(order, func(i int) bool { return math.IsNaN(score[i]) }) {
		cutByCounts(order, score, groups, out)
		return
	}
	w := func(i int) float64 {
		if weights == nil {
			return 1
		}
		return weights[i]
	}
	sortByScore(order, score)
	total := 0.0
	for _, i := range order {
		total += w(i)
	}
	cum := 0.0
	for a := 0; a < len(order); {
		b := a
		tw := 0.0
		for b < len(order) && score[order[b]] == score[order[a]] {
			tw += w(order[b])
			b++
		}
		g := groupOf(cum, tw, total, groups)
		for c := a; c < b; c++ {
			out[order[c]] = g
		}
		cum += tw
		a = b
	}
}

// groupOf is the group of a run of equal scores of weight tw after
// rows of weight cum, of total: that of its weighted midpoint.
func groupOf(cum, tw, total float64, groups int) int {
	if total <= 0 {
		return 0
	}
	return min(groups-1, int(math.Floor(float64(groups)*(cum+tw/2)/total)))
}

// cutByCountsFrom is the number of rows from which cutByScore cuts rows
// of weight 1 by counts.
const cutByCountsFrom = 1 << 12

// cutByCounts is cutByScore for rows of weight 1 and scores that are not
// NaN. A run's group depends only on the number of rows of lower score
// (cum) and of its score (tw), and grows with the score; so the rows are
// counted in buckets of keys (the scores' bits in order, orderedBits): a
// bucket whose first and last possible midpoints fall in one group gives
// that group to all its rows, and only the rows of the few buckets that
// straddle a cut are sorted (resolveRuns). Counts are exact, so the groups
// are those of the sort, row for row.
func cutByCounts(order []int, score []float64, groups int, out []int) {
	keys := make([]uint64, len(order))
	for j, i := range order {
		keys[j] = orderedBits(score[i])
	}
	total := float64(len(order))
	pos := make([]int32, len(order))
	for j := range pos {
		pos[j] = int32(j)
	}
	var resolve func(pos []int32, cum int)
	resolve = func(pos []int32, cum int) {
		lo, hi := keys[pos[0]], keys[pos[0]]
		for _, p := range pos {
			lo, hi = min(lo, keys[p]), max(hi, keys[p])
		}
		if len(pos) <= 1<<10 || lo == hi {
			resolveRuns(pos, keys, order, cum, total, groups, out)
			return
		}
		// Buckets of keys (key - lo) >> shift, at most 1<<16 of them.
		const bits = 16
		shift := 0
		for (hi-lo)>>shift >= 1<<bits {
			shift++
		}
		count := make([]int, ((hi-lo)>>shift)+2)
		for _, p := range pos {
			count[(keys[p]-lo)>>shift+1]++
		}
		// count[b]: rows before bucket b; group[b]: the bucket's group, or
		// -1 when it straddles a cut.
		group := make([]int, len(count)-1)
		for b := range group {
			count[b+1] += count[b]
			first, last := float64(cum+count[b]), float64(cum+count[b+1])
			group[b] = groupOf(first, 1, total, groups)
			if count[b+1] > count[b] && groupOf(last-1, 1, total, groups) != group[b] {
				group[b] = -1
			}
		}
		var straddle map[int][]int32
		for _, p := range pos {
			b := int((keys[p] - lo) >> shift)
			if g := group[b]; g >= 0 {
				out[order[p]] = g
				continue
			}
			if straddle == nil {
				straddle = map[int][]int32{}
			}
			straddle[b] = append(straddle[b], p)
		}
		for _, b := range slices.Sorted(maps.Keys(straddle)) {
			resolve(straddle[b], cum+count[b])
		}
	}
	resolve(pos, 0)
}

// resolveRuns gives the rows at positions pos of order (keys: their
// scores' ordered bits), after cum rows of lower score, the groups of
// their runs of equal scores.
func resolveRuns(pos []int32, keys []uint64, order []int, cum int, total float64, groups int, out []int) {
	slices.SortFunc(pos, func(a, b int32) int { return cmp.Compare(keys[a], keys[b]) })
	for a := 0; a < len(pos); {
		b := a
		for b < len(pos) && keys[pos[b]] == keys[pos[a]] {
			b++
		}
		g := groupOf(float64(cum+a), float64(b-a), total, groups)
		for _, p := range pos[a:b] {
			out[order[p]] = g
		}
		a = b
	}
}

// sortByScore sorts the rows listed in order by score, stably (rows of
// equal score keep their order; -0 equals 0). Long lists of finite scores
// are sorted by a radix sort of the scores' bits, which gives the same
// order as a stable comparison sort in linear time.
func sortByScore(order []int, score []float64) {
	finite := true
	for _, i := range order {
		if math.IsNaN(score[i]) {
			finite = false
			break
		}
	}
	if len(order) < 512 || !finite || len(order) > math.MaxInt32 {
		sort.SliceStable(order, func(a, b int) bool { return score[order[a]] < score[order[b]] })
		return
	}
	n := len(order)
	keys, keys2 := make([]uint64, n), make([]uint64, n)
	pos, pos2 := make([]int32, n), make([]int32, n) // positions in order
	for j, i := range order {
		keys[j], pos[j] = orderedBits(score[i]), int32(j)
	}
	// Least significant digit first; each pass is stable, so rows of equal
	// key keep their order.
	const bits = 11
	const mask = 1<<bits - 1
	count := make([]int, 1<<bits)
	for shift := 0; shift < 64; shift += bits {
		clear(count)
		for _, k := range keys {
			count[k>>shift&mask]++
		}
		if count[keys[0]>>shift&mask] == n {
			continue // one digit for every row: the pass would not move any
		}
		sum := 0
		for d, c := range count {
			count[d] = sum
			sum += c
		}
		for j, k := range keys {
			d := k >> shift & mask
			keys2[count[d]], pos2[count[d]] = k, pos[j]
			count[d]++
		}
		keys, keys2, pos, pos2 = keys2, keys, pos2, pos
	}
	rows := keys2 // free after the passes: the rows in sorted order
	for j, p := range pos {
		rows[j] = uint64(order[p])
	}
	for j, r := range rows {
		order[j] = int(r)
	}
}

// orderedBits maps a float64 that is not NaN to a uint64 in the same
// order (-0 and 0 to the same value).
func orderedBits(v float64) uint64 {
	if v == 0 {
		v = 0
	}
	u := math.Float64bits(v)
	if u>>63 != 0 {
		return ^u
	}
	return u | 1<<63
}
