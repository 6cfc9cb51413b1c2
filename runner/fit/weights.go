package fit

// Sampling weights (Options.Sampling) have no scale of their own: weights
// that sum to 1 describe the same sample as weights that sum to the
// population. A reader that knows they are sampling weights rescales them
// to sum to the rows (runner/data: data.Options.Sampling), so that the
// log-likelihood and everything read from it is on the scale of the
// sample whatever the weights' scale; what counts observations counts the
// rows, never the weights' sum. Observations is that one decision, for
// the fits, their tests and the rules alike.

// Observations is the number of observations of rows rows whose weights
// sum to weightSum: the sum of the frequency weights (the rows when
// unweighted), or under sampling weights the rows.
func Observations(rows int, weightSum float64, sampling bool) float64 {
	if sampling {
		return float64(rows)
	}
	return weightSum
}

// observations is Observations of the rows of d.
func (d *Data) observations(sampling bool) float64 {
	if sampling {
		return float64(d.N())
	}
	return d.NObs()
}

// CountWeights are the weights a count of observations adds row by row:
// w, or nil (each row counts one) under sampling weights.
func CountWeights(w []float64, sampling bool) []float64 {
	if sampling {
		return nil
	}
	return w
}
