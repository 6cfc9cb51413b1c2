package queue

import (
	"fmt"
	"maps"
	"path/filepath"
	"slices"
	"strconv"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// PartitionFiles reads partition files one at a time (so no more than one
// partition is in memory), each once, to describe the whole data set:
// category counts, rows, the spread of the predictors, and a reference to
// each file by its hash. Every file must have the same columns. Categories
// are dopt.Categories, in order (a partition may lack some); without them
// the outcome holds integer codes and the categories are the codes any
// partition has, sorted (read as numbers: +2 and 02 are 2), which
// FitPartitioned passes on to the workers (data.Options.Codes). It also
// returns what the parts kept and dropped (the rows read, the drops by
// reason), judged on the whole data. The values of one_of and none_of
// subset conditions are judged once on all parts (data.CheckListValues);
// whole.Notes has the notes.
func PartitionFiles(paths []string, dopt data.Options) (fit.Whole, []PartitionRef, *data.PartsSummary, error) {
	var whole fit.Whole
	coded := len(dopt.Categories) == 0 && len(dopt.Codes) == 0
	if len(dopt.Categories) == 1 {
		return whole, nil, nil, fmt.Errorf("a partitioned fit needs at least two outcome categories; one is given (%s)", dopt.Categories[0])
	}
	whole.Predictors = dopt.Predictors
	whole.Moments = &fit.Moments{}
	counts := map[int64]float64{} // coded: weight per code
	if !coded {
		whole.Counts = make([]float64, max(len(dopt.Categories), len(dopt.Codes)))
	}
	var refs []PartitionRef
	var seen data.ListValues   // the values of one_of/none_of columns over all parts
	var kept data.PartsSummary // the rows each part keeps, judged on the whole data
	part := dopt
	part.Part = true
	// Sampling weights are rescaled by the whole data's total, known
	// once every part is read: the parts are read here as they are, and
	// the counts and spread rescaled after (wholeSampling).
	part.Unscaled, part.WholeWeights = true, nil
	for _, p := range paths {
		ds, err := data.Load(p, part)
		if err != nil {
			return whole, nil, nil, err
		}
		kept.Add(ds)
		if seen == nil {
			seen = ds.ListSeen
		} else {
			seen.Add(ds.ListSeen)
		}
		if coded {
			for j, c := range ds.Counts {
				code, err := strconv.ParseInt(ds.Categories[j], 10, 64)
				if err != nil {
					return whole, nil, nil, fmt.Errorf("%s: outcome category %q is not an integer code", p, ds.Categories[j])
				}
				counts[code] += c
			}
		} else {
			for j, c := range ds.Counts {
				whole.Counts[j] += c
			}
		}
		whole.Rows += ds.N
		whole.Moments.Merge(fit.MomentsOf(runner.FitData(ds)))
		h, err := HashFile(p)
		if err != nil {
			return whole, nil, nil, err
		}
		refs = append(refs, PartitionRef{Name: filepath.Base(p), Hash: h, Path: p})
	}
	// The values of a one_of or none_of condition are judged on the whole
	// data, as for one file: a part may lack a value the others hold.
	notes, err := data.CheckListValues(data.PartsName(paths), dopt, seen)
	if err != nil {
		return whole, nil, nil, err
	}
	whole.Notes = notes
	switch {
	case coded:
		codes := slices.Sorted(maps.Keys(counts))
		for _, c := range codes {
			whole.Categories = append(whole.Categories, strconv.FormatInt(c, 10))
			whole.Counts = append(whole.Counts, counts[c])
		}
		if n := data.CodeGapNote(dopt.Outcome, whole.Categories); n != "" {
			whole.Notes = append(whole.Notes, n)
		}
	case len(dopt.Categories) > 0:
		whole.Categories = dopt.Categories
	default:
		for _, c := range dopt.Codes {
			whole.Categories = append(whole.Categories, strconv.FormatInt(c, 10))
		}
	}
	whole.J = len(whole.Categories)
	if whole.Moments.Weight == 0 {
		K := len(whole.Predictors)
		whole.Moments = &fit.Moments{Mean: make([]float64, K), Cross: make([]float64, K*K)}
	}
	if dopt.Sampling {
		wholeSampling(&whole, kept.Weights())
	}
	whole.Spread = whole.Moments.Spread()
	// Predictors far from zero for their spread are fitted centred, as
	// in a fit of the rows in one place (judged on the whole data).
	whole.Shift = whole.Spread.Shift()
	if err := kept.Check(data.PartsName(paths), dopt, whole.Categories, whole.Counts); err != nil {
		return whole, nil, nil, err
	}
	return whole, refs, &kept, nil
}

// wholeSampling puts the whole data's weighted counts and moments, read
// with the weights as they are, on the scale of sampling weights rescaled
// to sum to the rows (data.Options.Sampling).
func wholeSampling(whole *fit.Whole, t *data.WeightTotal) {
	if !(t.Sum > 0) {
		return
	}
	f := float64(t.Rows) / t.Sum
	for j := range whole.Counts {
		whole.Counts[j] *= f
	}
	if m := whole.Moments; m != nil {
		m.Weight *= f
		for k := range m.Cross {
			m.Cross[k] *= f
		}
	}
}

// PartOptions are the options a part is read with alone: dopt, with the
// whole data's total of sampling weights (kept from PartitionFiles) by
// which each part's are rescaled.
func PartOptions(dopt data.Options, kept *data.PartsSummary) data.Options {
	if dopt.Sampling {
		dopt.WholeWeights = kept.Weights()
	}
	return dopt
}
