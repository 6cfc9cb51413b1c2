package data

import "errors"

// Sampling weights have no scale of their own: weights that sum to 1
// describe the same sample as weights that sum to the population, and
// every number the program prints from them (log-likelihoods, criteria,
// weighted counts, descriptive tables, the design's constants) must be the
// same for w and c*w. The convention, applied here once as the rows are
// read (Options.Sampling), is that the weights are rescaled to sum to the
// rows kept: w_i n / sum(w). Every later step (the design, the fits, the
// tests, the report) reads the rescaled weights, so none rescales again;
// what counts observations under sampling weights counts rows
// (fit.Observations). Data held as parts and read part by part are
// rescaled by the whole data's rows and sum (PartsSummary.Weights), the
// sum taken in the same row order as for the parts read as one.

// WeightTotal is the rows kept and the sum of their weights, in row
// order.
type WeightTotal struct {
	Rows int     `json:"rows"`
	Sum  float64 `json:"sum"`
}

// add counts rows of weights w after those already counted.
func (t *WeightTotal) add(w []float64) {
	t.Rows += len(w)
	for _, x := range w {
		t.Sum += x
	}
}

// weightTotal is the total of the weights w of one data set.
func weightTotal(w []float64) WeightTotal {
	var t WeightTotal
	t.add(w)
	return t
}

// errPartSampling refuses the rescaling of one part read alone without
// the whole data's total.
var errPartSampling = errors.New("sampling weights are rescaled to sum to the rows of the whole data, whose total a part read alone was not given")

// rescaleSampling rescales sampling weights w to the total t, each weight
// computed as w_i * n / sum(w) (the product first, so that weights
// proportional to these, whose products and sum are exact, give the same
// bits).
func rescaleSampling(w []float64, t WeightTotal) {
	if !(t.Sum > 0) {
		return
	}
	n := float64(t.Rows)
	for i, x := range w {
		w[i] = x * n / t.Sum
	}
}
