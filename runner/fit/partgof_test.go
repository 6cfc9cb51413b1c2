package fit

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// localParts answers the queries of LipsitzOverParts from partitions
// held here, as workers answer them for their parts.
type localParts struct {
	parts []*Data
	shift []float64 // Whole.Shift
	asked int       // queries of the cut and the table
	keys  int       // score keys sent by the parts
}

func (l *localParts) Ask(q *ScoreQuery) ([]*ScoreAnswer, error) {
	l.asked++
	var out []*ScoreAnswer
	for _, p := range l.parts {
		a, err := q.Answer(p)
		if err != nil {
			return nil, err
		}
		if err := a.CheckShape(q, p.J); err != nil {
			return nil, err
		}
		for _, k := range a.Keys {
			l.keys += len(k)
		}
		out = append(out, a)
	}
	return out, nil
}

func (l *localParts) Sums(cut *ScoreQuery, m Model, theta []float64, order int) (*Sums, error) {
	total := &Sums{}
	for _, p := range l.parts {
		d, err := cut.Indicators(p)
		if err == nil {
			d, err = d.Centred(l.shift)
		}
		if err != nil {
			return nil, err
		}
		s, err := PartitionSums(d, m, theta, order)
		if err != nil {
			return nil, err
		}
		total.Add(s)
	}
	return total, nil
}

func (l *localParts) Diag(cut *ScoreQuery, m Model, theta []float64) (int, float64, error) {
	neg, minP := 0, math.Inf(1)
	for _, p := range l.parts {
		d, err := cut.Indicators(p)
		if err == nil {
			d, err = d.Centred(l.shift)
		}
		if err != nil {
			return 0, 0, err
		}
		k, mp, err := PartitionDiagnostics(d, m, theta)
		if err != nil {
			return 0, 0, err
		}
		neg += k
		minP = math.Min(minP, mp)
	}
	return neg, minP, nil
}

// The Lipsitz test over parts groups the rows as LipsitzTest groups them
// on all rows, row for row, and gives its statistic: without weights,
// with whole weights and with other weights, the cut from one round of
// rows or from several rounds of counts (General Social Survey extract,
// Long 1997; the weights invented).
func TestLipsitzOverPartsEqualsLocal(t *testing.T) {
	base := gssData(t)
	whole := make([]float64, base.N())
	other := make([]float64, base.N())
	for i := range whole {
		whole[i] = float64(1 + i%3)
		other[i] = 0.25 + float64(i%5)/3
	}
	for _, weights := range [][]float64{nil, whole, other} {
		d := *base
		d.Weights = weights
		for _, m := range metaModels[:2] {
			r := fitOK(t, &d, m)
			local, err := LipsitzTest(&d, r, 0, Options{})
			if err != nil || !local.Test.OK {
				t.Fatalf("%s: local test %v %+v", m.Name(), err, local)
			}
			for _, fine := range []bool{false, true} {
				parts, w := splitParts(&d, 3)
				lp := &localParts{parts: parts, shift: w.Shift}
				b, g := rangeBuckets, gatherBelow
				if fine {
					// Small ranges and buckets: several rounds of counts.
					rangeBuckets, gatherBelow = 4, 8
				}
				got, err := LipsitzOverParts(r, w, lp, 0, Options{})
				rangeBuckets, gatherBelow = b, g
				if err != nil {
					t.Fatalf("%s: %v", m.Name(), err)
				}
				name := m.Name()
				if weights != nil {
					name += " weighted"
				}
				t.Logf("%s (fine %v): %d queries to the parts; chi2 %.10g here, %.10g over the parts", name, fine, lp.asked, local.Test.Chi2, got.Test.Chi2)
				lt, gt := local.Table, got.Table
				cuts, _, err := cutOverParts(ScoreQuery{Model: r.Model, Estimates: r.Estimates}, lp, 0, d.J, false)
				_, score, err2 := (&ScoreQuery{Model: r.Model, Estimates: r.Estimates, Step: StepTable}).scores(&d)
				if err != nil || err2 != nil || !slices.Equal(groupsOf(score, cuts), lt.group) {
					t.Errorf("%s: the rows' groups under the cut are not LipsitzTest's (%v %v)", name, err, err2)
				}
				if gt == nil || gt.Groups != lt.Groups {
					t.Fatalf("%s: %+v groups, want %d", name, got, lt.Groups)
				}
				for g := 0; g < lt.Groups; g++ {
					// Whole weights add up exactly in any order; others
					// to rounding.
					if math.Abs(gt.Weight[g]-lt.Weight[g]) > 1e-12*lt.Weight[g] || weights == nil && gt.Weight[g] != lt.Weight[g] || gt.Low[g] != lt.Low[g] || gt.High[g] != lt.High[g] {
						t.Errorf("%s group %d: weight %v [%v, %v], want %v [%v, %v]", name, g+1, gt.Weight[g], gt.Low[g], gt.High[g], lt.Weight[g], lt.Low[g], lt.High[g])
					}
					for j := range lt.Observed[g] {
						if math.Abs(gt.Observed[g][j]-lt.Observed[g][j]) > 1e-9*lt.Weight[g] || math.Abs(gt.Expected[g][j]-lt.Expected[g][j]) > 1e-9*lt.Weight[g] {
							t.Errorf("%s group %d category %d: %v %v, want %v %v", name, g+1, j+1, gt.Observed[g][j], gt.Expected[g][j], lt.Observed[g][j], lt.Expected[g][j])
						}
					}
				}
				if !got.Test.OK || got.Test.DF != local.Test.DF || math.Abs(got.Test.Chi2-local.Test.Chi2) > 1e-6 {
					t.Errorf("%s: %+v, want %+v", name, got.Test, local.Test)
				}
			}
		}
	}
}

// Rows that share a score stay together over the parts as in one place,
// and the test says the same where the groups are too few or their
// indicators a combination of the predictors (General Social Survey
// extract, Long 1997: predictors with few values).
func TestLipsitzOverPartsTies(t *testing.T) {
	rs := loadRef(t, "gsswarm")
	for _, cols := range [][]string{{"yr89", "male", "white", "ed"}, {"yr89", "male"}, {"male"}} {
		d := rs.data(cols)
		m := Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(len(cols), Parallel)}
		r := fitOK(t, d, m)
		local, err := LipsitzTest(d, r, 0, Options{})
		if err != nil {
			t.Fatal(err)
		}
		parts, w := splitParts(d, 4)
		got, err := LipsitzOverParts(r, w, &localParts{parts: parts, shift: w.Shift}, 0, Options{})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("%v: %+v here; %+v over the parts", cols, local.Test, got.Test)
		if local.Table.Groups != got.Table.Groups || !slices.Equal(local.Table.Weight, got.Table.Weight) {
			t.Errorf("%v: groups %v, want %v", cols, got.Table.Weight, local.Table.Weight)
		}
		if got.Test.OK != local.Test.OK || got.Test.Reason != local.Test.Reason || math.Abs(got.Test.Chi2-local.Test.Chi2) > 1e-6 {
			t.Errorf("%v: %+v, want %+v", cols, got.Test, local.Test)
		}
		if strings.Contains(got.Test.Reason, indicatorPrefix) {
			t.Errorf("%v: the reason names an indicator by its internal name: %s", cols, got.Test.Reason)
		}
	}
}

// With discrete predictors many rows share each score, and a run of equal
// scores across a cut is placed from its total weight: the groups are
// LipsitzTest's row for row, and the parts send (almost) no score keys
// (General Social Survey extract, Long 1997, its rows repeated 50 times:
// 114,650 rows).
func TestLipsitzOverPartsDiscreteSendsFewKeys(t *testing.T) {
	rs := loadRef(t, "gsswarm")
	for _, cols := range [][]string{{"male"}, {"yr89", "male"}, {"yr89", "male", "white"}, {"yr89", "male", "white", "ed"}} {
		one := rs.data(cols)
		d := *one
		d.Y, d.X = nil, nil
		for range 50 {
			d.Y = append(d.Y, one.Y...)
			d.X = append(d.X, one.X...)
		}
		m := Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(len(cols), Parallel)}
		r := fitOK(t, &d, m)
		local, err := LipsitzTest(&d, r, 0, Options{})
		if err != nil {
			t.Fatal(err)
		}
		parts, w := splitParts(&d, 4)
		lp := &localParts{parts: parts, shift: w.Shift}
		got, err := LipsitzOverParts(r, w, lp, 0, Options{})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("%v: %d rows, %d queries, %d keys sent; %+v", cols, d.N(), lp.asked, lp.keys, got.Test)
		if local.Table.Groups != got.Table.Groups || !slices.Equal(local.Table.Weight, got.Table.Weight) {
			t.Errorf("%v: groups %v, want %v", cols, got.Table.Weight, local.Table.Weight)
		}
		if got.Test.OK != local.Test.OK || got.Test.Reason != local.Test.Reason || math.Abs(got.Test.Chi2-local.Test.Chi2) > 1e-6 {
			t.Errorf("%v: %+v, want %+v", cols, got.Test, local.Test)
		}
		if strings.Contains(got.Test.Reason, indicatorPrefix) {
			t.Errorf("%v: the reason names an indicator by its internal name: %s", cols, got.Test.Reason)
		}
		if lp.keys > 1000 {
			t.Errorf("%v: the parts sent %d score keys", cols, lp.keys)
		}
	}
}

// A part refuses a score query whose ranges are out of order, overlap or
// ask more buckets in all than it counts, and the coordinator refuses an
// answer with negative weights, a span whose keys run backwards or a
// table score that is not a number.
func TestScoreQueryAndAnswerChecks(t *testing.T) {
	for _, c := range []struct {
		rs   []KeyRange
		want string
	}{
		{[]KeyRange{{Lo: 10, Hi: 20, Rows: true}, {Lo: 0, Hi: 5, Rows: true}}, "out of order or overlapping"},
		{[]KeyRange{{Lo: 0, Hi: 20, Rows: true}, {Lo: 20, Hi: 30, Rows: true}}, "out of order or overlapping"},
		{[]KeyRange{{Lo: 0, Hi: maxBuckets - 1}, {Lo: maxBuckets, Hi: maxBuckets}}, "buckets in all"},
	} {
		q := &ScoreQuery{Step: StepRanges, Ranges: c.rs}
		if err := q.check(); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%v: %v, want %q", c.rs, err, c.want)
		}
	}
	ok := &ScoreQuery{Step: StepRanges, Ranges: []KeyRange{{Lo: 0, Hi: 3}, {Lo: 4, Hi: 9, Rows: true}}}
	if err := ok.check(); err != nil {
		t.Fatal(err)
	}
	ranges := func(counts []float64, keys []uint64, w []float64) *ScoreAnswer {
		return &ScoreAnswer{Counts: [][]float64{counts, nil}, Keys: [][]uint64{nil, keys}, Weight: [][]float64{nil, w}}
	}
	table := func(low, n, obs float64) *ScoreAnswer {
		return &ScoreAnswer{Table: &ScoreGroups{Groups: 1, Low: []float64{low}, High: []float64{2}, Weight: []float64{n},
			Observed: [][]float64{{obs, 1}}, Expected: [][]float64{{1, 1}}}}
	}
	tq := &ScoreQuery{Step: StepTable}
	for _, c := range []struct {
		q    *ScoreQuery
		a    *ScoreAnswer
		want string
	}{
		{ok, ranges([]float64{1, 0, 2, 1}, []uint64{5}, []float64{2}), ""},
		{ok, ranges([]float64{1, -1, 2, 1}, []uint64{5}, []float64{2}), "negative weight"},
		{ok, ranges([]float64{1, 0, 2, 1}, []uint64{5}, []float64{-2}), "negative weight"},
		{&ScoreQuery{Step: StepSpan}, &ScoreAnswer{Span: ScoreSpan{Rows: 2, Weight: 2, Lo: 9, Hi: 3}}, "span of keys 9..3"},
		{tq, table(1, 2, 1), ""},
		{tq, table(math.NaN(), 2, 1), "not a number"},
		{tq, table(1, -2, 1), "non-negative"},
		{tq, table(1, 2, -1), "non-negative"},
	} {
		err := c.a.CheckShape(c.q, 2)
		if c.want == "" && err != nil || c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)) {
			t.Errorf("%+v: %v, want %q", c.a, err, c.want)
		}
	}
}

// A part that keeps no row (a subset or missing values can empty one)
// changes nothing: the partitioned fit, its diagnostics and the Lipsitz
// test over the parts with an empty part among them equal those without
// it (General Social Survey extract, Long 1997), and no question to the
// empty part fails.
func TestEmptyPartChangesNothing(t *testing.T) {
	d := gssData(t)
	m := metaModels[0]
	r := fitOK(t, d, m)
	parts, w := splitParts(d, 3)
	empty := &Data{J: d.J, Predictors: d.Predictors, Categories: d.Categories, Y: []int{}, X: []float64{}}
	with := []*Data{parts[0], empty, parts[1], parts[2]}
	if n, mp, err := PartitionDiagnostics(empty, m, r.Estimates); err != nil || n != 0 || !math.IsInf(mp, 1) {
		t.Errorf("diagnostics of an empty part: %d rows, smallest probability %v, %v; want 0, +Inf", n, mp, err)
	}
	base, err := LipsitzOverParts(r, w, &localParts{parts: parts, shift: w.Shift}, 0, Options{})
	if err != nil {
		t.Fatal(err)
	}
	got, err := LipsitzOverParts(r, w, &localParts{parts: with, shift: w.Shift}, 0, Options{})
	if err != nil {
		t.Fatalf("with an empty part: %v", err)
	}
	if !got.Test.OK || got.Test.Chi2 != base.Test.Chi2 || got.Test.DF != base.Test.DF {
		t.Errorf("with an empty part: %+v, without: %+v", got.Test, base.Test)
	}
}
