package runner

import (
	"slices"

	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// PartitionedChecks gives the checks of a fit summed over the partition
// files parts (whole: what the parts hold together), as FitOneChecked
// gives them for one file, reading one part at a time: the thresholds-only
// model is fitted to the category counts (without an offset its maximum
// reproduces the observed shares, as the fit to the rows does) or, with an
// offset, to the parts' outcomes, weights and offsets gathered here in
// part order (three numbers a row: the rows of the whole file, as a fit
// of it reads them), the spread of the linear predictor for
// McKelvey-Zavoina is gathered part by part; lz is the Lipsitz test made
// over the parts by the workers
// (queue.LipsitzPartitioned). Partitioned fits have no categorical
// predictors, so the Pulkstenis-Robinson tests are not computed, as for one
// file.
func PartitionedChecks(s SingleFit, res *fit.Result, parts []string, whole fit.Whole, lz *fit.Lipsitz) (*SingleChecks, error) {
	if res == nil || !res.OK() {
		return nil, nil
	}
	a, err := ResolveFit(s)
	if err != nil {
		return nil, err
	}
	dopt := a.Outcomes[0].Options
	var null *fit.Result
	if dopt.Offset == "" {
		counts := &fit.Data{J: whole.J, Categories: whole.Categories}
		for j, c := range whole.Counts {
			if c > 0 {
				counts.Y = append(counts.Y, j)
				counts.Weights = append(counts.Weights, c)
			}
		}
		if null, err = fit.FitNull(counts, res.Model, a.Fit); err != nil {
			return nil, err
		}
	}
	var spread fit.EtaSpread
	values := make([]valuePair, len(res.Predictors)) // the columns are plain (Partitioned)
	part, err := dopt.CodedAs(whole.Categories)
	if err != nil {
		return nil, err
	}
	part.Part = true   // its subset values were judged on all parts (queue.PartitionFiles)
	var rows *fit.Data // with an offset: the outcome, weights and offsets of every part
	if dopt.Offset != "" {
		rows = &fit.Data{J: whole.J, Categories: whole.Categories}
	}
	for _, p := range parts {
		ds, err := data.Load(p, part)
		if err != nil {
			return nil, err
		}
		if rows != nil {
			gatherNullRows(rows, ds)
		}
		spread.Add(FitData(ds), res)
		P := len(ds.Predictors)
		for k, name := range res.Predictors {
			c := slices.Index(ds.Predictors, name)
			if c < 0 {
				values[k].n = 3
				continue
			}
			values[k].merge(columnValues(ds.X, P, c))
		}
	}
	if rows != nil {
		if null, err = fit.FitNull(rows, res.Model, a.Fit); err != nil {
			return nil, err
		}
	}
	o := fit.OverallFitSpread(res, null, &spread)
	return &SingleChecks{
		Overall:      OverallRecord{Model: res.Name, Null: fit.ModelID(res.Model.ComparisonName(), "thresholds-only", res.Model.Link), Overall: o},
		Lipsitz:      lz,
		PatternSplit: &PatternSplitRecord{Predictors: []string{}, NotComputed: noCategorical},
		Readings:     plainReadings(res.Predictors, values),
	}, nil
}

// gatherNullRows appends to rows what a thresholds-only fit with an offset
// needs of part ds: its outcome, weights (ones when ds has none and rows
// already has weights, or the other way) and offsets.
func gatherNullRows(rows *fit.Data, ds *data.Dataset) {
	n := len(rows.Y)
	switch {
	case ds.Weights != nil && rows.Weights == nil:
		rows.Weights = make([]float64, n, n+len(ds.Y))
		for i := range rows.Weights {
			rows.Weights[i] = 1
		}
		fallthrough
	case ds.Weights != nil:
		rows.Weights = append(rows.Weights, ds.Weights...)
	case rows.Weights != nil:
		for range ds.Y {
			rows.Weights = append(rows.Weights, 1)
		}
	}
	rows.Y = append(rows.Y, ds.Y...)
	rows.Offset = append(rows.Offset, ds.Offset...)
}

// PartsCheck makes the checks of a fit of model m over parts held by
// workers that the whole data's counts and moments allow (fit.CheckWhole:
// more parameters than observations, a constant or collinear predictor,
// as the rank check of the rows read in one place), before any part is
// sent to a worker; a failure is said in the words of the flags (the terms
// of a plain-column design), ending, when more rows were dropped than
// kept, with why so few remain (kept: what the parts kept, from
// queue.PartitionFiles; PartsSummary.FewRowsSentence).
func (a *Analysis) PartsCheck(whole fit.Whole, m fit.Model, kept *data.PartsSummary) error {
	err := fit.CheckWhole(whole, m, fit.Options{})
	if err == nil {
		return nil
	}
	r := a.Outcomes[0]
	dz, derr := design.Build(r.Design, nil, 0, nil, nil)
	if derr != nil || !slices.Equal(dz.Columns, whole.Predictors) {
		dz = nil
	}
	return a.designError(r, dz, kept.FewRowsSentence(), err, "")
}

// PartsCollinearity checks a fit over parts for near-collinearity of its
// terms (fit.Result.CheckCollinearity), as CovariancePolicy.Settle checks
// a fit of the whole file: the terms are the fit's design's, or one per
// predictor column when the design cannot be built from the parts' columns.
func (a *Analysis) PartsCollinearity(res *fit.Result, whole fit.Whole) {
	if res == nil || !res.OK() {
		return
	}
	var terms []fit.Term
	dz, err := design.Build(a.Outcomes[0].Design, nil, 0, nil, nil)
	if err == nil && slices.Equal(dz.Columns, whole.Predictors) {
		terms = termsOf(dz)
	} else {
		for _, p := range whole.Predictors {
			terms = append(terms, fit.Term{Name: p, Columns: []string{p}})
		}
	}
	res.CheckCollinearity(terms)
}
