package queue

import (
	"fmt"
	"path/filepath"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// PartitionFiles reads partition files one at a time (so no more than one
// partition is in memory) to describe the whole data set: category counts,
// rows, the spread of the predictors, and a reference to each file by its
// hash. Every file must have the same columns; dopt.Categories must give the
// categories in order, since a partition may lack some. It also returns the number of data rows read.
func PartitionFiles(paths []string, dopt data.Options) (fit.Whole, []PartitionRef, int, error) {
	var whole fit.Whole
	read := 0
	if len(dopt.Categories) < 2 {
		return whole, nil, 0, fmt.Errorf("a partitioned fit needs the outcome's categories in order (--categories a,b,c): a partition may lack some")
	}
	whole.J = len(dopt.Categories)
	whole.Categories = dopt.Categories
	whole.Predictors = dopt.Predictors
	whole.Counts = make([]float64, whole.J)
	whole.Spread = &fit.Spread{}
	var refs []PartitionRef
	for _, p := range paths {
		ds, err := data.Load(p, dopt)
		if err != nil {
			return whole, nil, 0, err
		}
		read += ds.RowsRead
		for j, c := range ds.Counts {
			whole.Counts[j] += c
		}
		whole.Rows += ds.N
		whole.Spread.Merge(fit.SpreadOf(runner.FitData(ds)))
		h, err := HashFile(p)
		if err != nil {
			return whole, nil, 0, err
		}
		refs = append(refs, PartitionRef{Name: filepath.Base(p), Hash: h, Path: p})
	}
	return whole, refs, read, nil
}
