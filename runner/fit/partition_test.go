package fit

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// splitParts cuts the rows of d into nparts partitions in order, with
// what they hold together.
func splitParts(d *Data, nparts int) ([]*Data, Whole) {
	K := len(d.Predictors)
	n := d.N()
	var parts []*Data
	for p := 0; p < nparts; p++ {
		lo, hi := p*n/nparts, (p+1)*n/nparts
		part := &Data{J: d.J, Predictors: d.Predictors, Categories: d.Categories, Y: d.Y[lo:hi], X: d.X[lo*K : hi*K]}
		if d.Weights != nil {
			part.Weights = d.Weights[lo:hi]
		}
		if d.Offset != nil {
			part.Offset = d.Offset[lo:hi]
		}
		parts = append(parts, part)
	}
	counts := make([]float64, d.J)
	for i, y := range d.Y {
		counts[y] += d.weightOf(i)
	}
	w := Whole{J: d.J, Predictors: d.Predictors, Categories: d.Categories, Counts: counts, Rows: n, Spread: &Spread{}, Moments: &Moments{}}
	for _, p := range parts {
		w.Spread.Merge(SpreadOf(p))
		w.Moments.Merge(MomentsOf(p))
	}
	w.Shift = w.Spread.Shift()
	return parts, w
}

// partitioned fits d by FitFromSums with the log-likelihood summed over
// nparts partitions of its rows, as a queue of workers would.
func partitioned(t *testing.T, d *Data, m Model, nparts int, opt Options) *Result {
	t.Helper()
	parts, w := splitParts(d, nparts)
	for i, p := range parts {
		c, err := p.Centred(w.Shift)
		if err != nil {
			t.Fatal(err)
		}
		parts[i] = c
	}
	sums := func(theta []float64, order int) (*Sums, error) {
		total := &Sums{}
		for _, p := range parts {
			s, err := PartitionSums(p, m, theta, order)
			if err != nil {
				return nil, err
			}
			total.Add(s)
		}
		return total, nil
	}
	diag := func(theta []float64) (int, float64, error) {
		neg, minP := 0, math.Inf(1)
		for _, p := range parts {
			k, mp, err := PartitionDiagnostics(p, m, theta)
			if err != nil {
				return 0, 0, err
			}
			neg += k
			minP = math.Min(minP, mp)
		}
		return neg, minP, nil
	}
	r, err := FitFromSums(w, m, sums, diag, opt)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// A fit whose log-likelihood is summed over four partitions equals the
// local fit to 1e-8 (General Social Survey extract, Long 1997).
func TestPartitionedFitEqualsLocal(t *testing.T) {
	d := gssData(t)
	for _, m := range metaModels[:2] {
		local := fitOK(t, d, m)
		r := partitioned(t, d, m, 4, Options{})
		if !r.OK() || math.Abs(r.LogLik-local.LogLik) > 1e-8 {
			t.Fatalf("%s: %s ll %v vs %v", m.Name(), r.Status, r.LogLik, local.LogLik)
		}
		for i := range r.Estimates {
			if math.Abs(r.Estimates[i]-local.Estimates[i]) > 1e-8 || math.Abs(r.StdErrors[i]-local.StdErrors[i]) > 1e-8 {
				t.Errorf("%s: %v (%v) vs %v (%v)", r.ParamNames[i], r.Estimates[i], r.StdErrors[i], local.Estimates[i], local.StdErrors[i])
			}
		}
	}
}

// A local and a partitioned fit that fail the same way end with the same
// status and the same words: both are finished by the same code, except
// that a separation is proved where the rows are at hand (the local fit)
// and said not to be proved over parts (unprovenWords takes the
// difference out). Cases: the
// iteration limit (General Social Survey extract, Long 1997), and a
// continuous predictor that separates the categories completely (invented
// rows; a predictor with more than ten values gives no category-at-one-value
// evidence, which only a local fit could list).
func TestLocalAndPartitionedFailuresSayTheSame(t *testing.T) {
	sep := &Data{J: 3, Predictors: []string{"dose"}}
	for i := 0; i < 60; i++ {
		sep.Y = append(sep.Y, i/20)
		sep.X = append(sep.X, float64(i)+0.5*float64(i%3))
	}
	cases := []struct {
		name string
		d    *Data
		m    Model
		opt  Options
		want Status
	}{
		{"iteration limit", gssData(t), metaModels[0], Options{MaxIter: 2}, StatusNotConverged},
		{"separation", sep, Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{Parallel}}, Options{}, StatusNoFiniteMaximum},
	}
	// The partitions' spreads merge into the spread of the whole data.
	for _, c := range cases {
		whole, merged := SpreadOf(c.d), &Spread{}
		for p := 0; p < 3; p++ {
			lo, hi := p*c.d.N()/3, (p+1)*c.d.N()/3
			K := len(c.d.Predictors)
			merged.Merge(SpreadOf(&Data{J: c.d.J, Predictors: c.d.Predictors, Y: c.d.Y[lo:hi], X: c.d.X[lo*K : hi*K]}))
		}
		for k, sd := range whole.SD() {
			if got := merged.SD()[k]; math.Abs(got-sd) > 1e-12*sd {
				t.Errorf("%s: merged sd of %s %v, whole %v", c.name, c.d.Predictors[k], got, sd)
			}
		}
	}
	for _, c := range cases {
		local, err := Fit(c.d, c.m, c.opt)
		if err != nil {
			t.Fatal(err)
		}
		part := partitioned(t, c.d, c.m, 3, c.opt)
		if local.Status != c.want || part.Status != c.want {
			t.Errorf("%s: status local %s, partitioned %s, want %s", c.name, local.Status, part.Status, c.want)
		}
		lm, pm := local.Message, part.Message
		if c.want == StatusNoFiniteMaximum {
			// Only the local fit has the rows for the programme that proves
			// the separation: the partitioned one says it is not proved.
			if local.Separation == nil || !local.Separation.Proved || part.Separation == nil || part.Separation.Proved {
				t.Errorf("%s: proved locally %v, over parts %v; want true, false", c.name, local.Separation, part.Separation)
			}
			lm, pm = unprovenWords(lm), unprovenWords(pm)
		}
		if lm != pm {
			t.Errorf("%s: the messages differ:\nlocal:       %s\npartitioned: %s", c.name, local.Message, part.Message)
		}
	}
}

// A fit summed over parts of data whose predictors lie far from zero for
// their spread runs centred as a fit of the rows in one place does, and
// gives its result: the published gsswarm data (Long 1997, ch. 5; checked
// against the published values in reference_test.go) with age and ed
// moved by 1e6, whose fit in one place TestPredictorFarFromZero checks by
// the linear predictor's identity against the fit of the data as
// published (and the far-from-zero check of TestAgainstR against glm).
// Summed over parts without centring, these fits reported no finite
// maximum. The Lipsitz test over the parts gives the test of the rows in
// one place too.
func TestPartitionedFarFromZero(t *testing.T) {
	d := gssData(t)
	far := *d
	far.X = slices.Clone(d.X)
	K := len(d.Predictors)
	for i := range far.X {
		if name := d.Predictors[i%K]; name == "age" || name == "ed" {
			far.X[i] += 1e6
		}
	}
	if _, w := splitParts(&far, 3); len(w.Shift) != K || w.Shift[3] == 0 || w.Shift[4] == 0 || w.Shift[0] != 0 {
		t.Fatalf("shift %v: want age and ed shifted alone", w.Shift)
	}
	models := []Model{metaModels[0], metaModels[1],
		{Comparison: Stage, Backward: true, Link: Cloglog, Effects: []Effect{Parallel, Parallel, Parallel, Nonparallel, Nonparallel, Parallel}},
		{Comparison: Adjacent, Link: Cauchy, Effects: allEffects(K, Parallel)},
	}
	for _, m := range models {
		want := fitOK(t, &far, m)
		got := partitioned(t, &far, m, 3, Options{})
		if !got.OK() {
			t.Fatalf("%s over parts: %s: %s", m.Name(), got.Status, got.Message)
		}
		if math.Abs(got.LogLik-want.LogLik) > 1e-9*math.Abs(want.LogLik) {
			t.Errorf("%s: log-likelihood %.12f, want %.12f", m.Name(), got.LogLik, want.LogLik)
		}
		for i, name := range got.ParamNames {
			if math.Abs(got.Estimates[i]-want.Estimates[i]) > 1e-6*math.Max(want.StdErrors[i], 1e-3*math.Abs(want.Estimates[i])) {
				t.Errorf("%s %s: %.12g, want %.12g", m.Name(), name, got.Estimates[i], want.Estimates[i])
			}
			if math.Abs(got.StdErrors[i]-want.StdErrors[i]) > 1e-6*want.StdErrors[i] {
				t.Errorf("%s %s: error %.12g, want %.12g", m.Name(), name, got.StdErrors[i], want.StdErrors[i])
			}
		}
		local, err := LipsitzTest(&far, want, 0, Options{})
		if err != nil {
			t.Fatal(err)
		}
		parts, w := splitParts(&far, 3)
		lz, err := LipsitzOverParts(got, w, &localParts{parts: parts, shift: w.Shift}, 0, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if !local.Test.OK || lz.Test.OK != local.Test.OK || math.Abs(lz.Test.Chi2-local.Test.Chi2) > 1e-6*local.Test.Chi2 {
			t.Errorf("%s: Lipsitz over parts %+v, in one place %+v", m.Name(), lz.Test, local.Test)
		}
	}
}

// A fit summed over parts refuses a constant predictor, or one collinear
// with others and the constant, in the words of a fit of the rows in one
// place (the rank check, from the parts' merged moments), where it
// reported no finite maximum (General Social Survey extract, Long 1997,
// with a constant column and a copy of ed, 2 ed + 1).
func TestPartitionedRankCheckAsLocal(t *testing.T) {
	d := gssData(t)
	K := len(d.Predictors)
	for _, extra := range []string{"constant", "ed2"} {
		e := &Data{J: d.J, Categories: d.Categories, Y: d.Y, Predictors: append(slices.Clone(d.Predictors), extra)}
		for i := range d.Y {
			row := d.X[i*K : (i+1)*K]
			v := 5.0
			if extra == "ed2" {
				v = 2*row[4] + 1
			}
			e.X = append(append(e.X, row...), v)
		}
		m := Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(K+1, Parallel)}
		_, want := Fit(e, m, Options{})
		parts, w := splitParts(e, 3)
		_, got := FitFromSums(w, m, func([]float64, int) (*Sums, error) {
			t.Fatal("the parts were asked for sums")
			return nil, nil
		}, nil, Options{})
		if want == nil || got == nil || got.Error() != want.Error() {
			t.Errorf("%s: over %d parts %v, in one place %v", extra, len(parts), got, want)
		}
	}
}

// unprovenWords is a separation message with its first clause, the label
// of the direction's parameters and the verb of the log-likelihood taken
// out: what a proved and an
// unproved separation of the same fit say alike.
func unprovenWords(msg string) string {
	if i := strings.Index(msg, "; predictors involved"); i >= 0 {
		msg = msg[i:]
	}
	msg = strings.Replace(msg, "(diverging: ", "(", 1)
	msg = strings.Replace(msg, "[log-likelihood approaches ", "[log-likelihood ", 1)
	msg = strings.Replace(msg, "[log-likelihood reached ", "[log-likelihood ", 1)
	msg = strings.Replace(msg, "(with no curvature where the iterations stopped: ", "(", 1)
	return strings.Replace(msg, "(along that direction: ", "(", 1)
}
