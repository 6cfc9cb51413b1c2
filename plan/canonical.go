package plan

import (
	"bytes"
	"encoding/json"

	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// Canonical gives the resolved plan, defaults included, as indented JSON
// with a fixed key order, for run records. The file's location and hash are
// left out (record Path and Hash beside it), so two plans that mean the same
// thing give the same bytes. Settings that cannot apply are left out too:
// the stage direction without the stage approach, the partial section
// without a level that uses it, the weight kind without weights. The
// output is itself a valid plan: parsing it gives the same Canonical.
func (p *Plan) Canonical() []byte {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(p.canonical()); err != nil {
		// Only strings, numbers, bools, slices and maps are encoded.
		panic("plan: canonical encoding failed: " + err.Error())
	}
	return buf.Bytes()
}

type canonPlan struct {
	Version     int              `json:"version"`
	Title       string           `json:"title"`
	Seed        uint64           `json:"seed"`
	Data        canonData        `json:"data"`
	Outcomes    []canonOutcome   `json:"outcomes"`
	Subset      []map[string]any `json:"subset,omitempty"`
	Categorical map[string]any   `json:"categorical,omitempty"`
	Predictors  []any            `json:"predictors"`
	Models      canonModels      `json:"models"`
	Tests       canonTests       `json:"tests"`
	Rules       []map[string]any `json:"rules"`
	Covariance  fit.Covariance   `json:"covariance"`
	// FewClusters is absent when none, so that plans without it keep
	// their canonical form (and registrations).
	FewClusters *fit.ClusterCorrection `json:"few_clusters,omitempty"`
	Report      canonReport            `json:"report"`
	Inference   canonInference         `json:"inference"`
	// SelectionStability is absent when not asked, so that plans
	// without it keep their canonical form.
	SelectionStability *canonStability `json:"selection_stability,omitempty"`
	Dictionary         map[string]any  `json:"dictionary,omitempty"`
	Assumptions        map[string]any  `json:"assumptions,omitempty"`
	// Sensitivity is absent when the plan has none, so that plans
	// without it keep their canonical form.
	Sensitivity []canonSensitivity `json:"sensitivity,omitempty"`
}

type canonData struct {
	File          *string          `json:"file"` // null when the data are parts
	Parts         []string         `json:"parts,omitempty"`
	Missing       string           `json:"missing"`
	MissingValues []string         `json:"missing_values"`
	Delimiter     string           `json:"delimiter,omitempty"`
	Decimal       string           `json:"decimal,omitempty"`
	Sheet         string           `json:"sheet,omitempty"`
	HeaderRow     int              `json:"header_row,omitempty"`
	Weights       *string          `json:"weights"`
	WeightKind    *string          `json:"weight_kind,omitempty"`
	Offset        *string          `json:"offset"`
	Cluster       *string          `json:"cluster"`
	Imputed       *canonImputed    `json:"imputed,omitempty"`
	Imputation    *canonImputation `json:"imputation,omitempty"`
}

type canonImputation struct {
	Sets             int               `json:"sets"`
	Iterations       int               `json:"iterations"`
	Seed             uint64            `json:"seed"`
	ColumnModels     map[string]string `json:"column_models,omitempty"`
	ConvergenceTable bool              `json:"convergence_table"`
}

type canonImputed struct {
	File   string   `json:"file,omitempty"`
	Column string   `json:"column,omitempty"`
	Files  []string `json:"files,omitempty"`
}

type canonOutcome struct {
	Column     string   `json:"column"`
	Categories []string `json:"categories"`
	Label      string   `json:"label"`
	Predictors []any    `json:"predictors,omitempty"`
}

type canonModels struct {
	Approaches []fit.Comparison `json:"approaches"`
	Direction  *string          `json:"direction,omitempty"`
	Effects    []fit.Structure  `json:"effects"`
	Links      []fit.Link       `json:"links"`
	Partial    *canonPartial    `json:"partial,omitempty"`
	// RunEveryStart is omitted when false: plans without it keep their
	// canonical form and hash.
	RunEveryStart bool `json:"run_every_start,omitempty"`
}

type canonPartial struct {
	Free   []string     `json:"free,omitempty"`
	Select *canonSelect `json:"select,omitempty"`
	Groups []canonGroup `json:"groups,omitempty"`
}

type canonSelect struct {
	Method string       `json:"method"`
	Alpha  float64      `json:"alpha"`
	Test   fit.TestKind `json:"test"`
}

type canonGroup struct {
	Name       string   `json:"name"`
	Predictors []string `json:"predictors"`
}

type canonTests struct {
	ParallelLines []fit.TestKind `json:"parallel_lines"`
	Alpha         float64        `json:"alpha"`
}

type canonReport struct {
	Title           string  `json:"title"`
	FocusPredictor  string  `json:"focus_predictor"`
	PanelsBy        string  `json:"panels_by,omitempty"`
	ConfidenceLevel float64 `json:"confidence_level"`
	Timestamp       bool    `json:"timestamp"`
}

func optional(s string) *string {
	if s == "" {
		return nil
	}
	return &s
}

func nonNil(s []string) []string { return nonNilOf(s) }

func nonNilOf[T any](s []T) []T {
	if s == nil {
		return []T{}
	}
	return s
}

func (p *Plan) canonical() canonPlan {
	c := canonPlan{
		Version:     1,
		Title:       p.Title,
		Seed:        p.Seed,
		Predictors:  canonTerms(p.Terms),
		Covariance:  p.Covariance,
		FewClusters: nonDefaultCorrection(p.FewClusters),
		Data: canonData{
			File:          optional(p.Data.File),
			Parts:         p.Data.Parts,
			Missing:       p.Data.Missing,
			MissingValues: p.Data.MissingValues,
			Delimiter:     nonDefault(p.Data.Delimiter, "comma"),
			Decimal:       nonDefault(p.Data.Decimal, "point"),
			Sheet:         p.Data.Sheet,
			HeaderRow:     headerRowCanon(p.Data.HeaderRow),
			Weights:       optional(p.Data.Weights),
			Offset:        optional(p.Data.Offset),
			Cluster:       optional(p.Data.Cluster),
		},
		Models: canonModels{
			Approaches: nonNilOf(p.Models.Approaches),
			Effects:    nonNilOf(p.Models.Effects),
			Links:      nonNilOf(p.Models.Links),
		},
		Tests: canonTests{ParallelLines: nonNilOf(p.Tests.ParallelLines), Alpha: p.Tests.Alpha},
		Report: canonReport{
			Title:           p.Report.Title,
			FocusPredictor:  p.Report.FocusPredictor,
			PanelsBy:        p.Report.PanelsBy,
			ConfidenceLevel: p.Report.ConfidenceLevel,
			Timestamp:       p.Report.Timestamp,
		},
		Inference:          p.Inference.canonical(),
		SelectionStability: p.SelectionStability.canonical(),
		Dictionary:         p.canonicalDictionary(),
		Assumptions:        p.Assumptions.canonical(),
		Sensitivity:        p.canonicalSensitivity(),
		Outcomes:           []canonOutcome{},
		Rules:              []map[string]any{},
	}
	if p.Data.Weights != "" {
		c.Data.WeightKind = optional(p.Data.WeightKind)
	}
	if im := p.Data.Imputed; im != nil {
		c.Data.Imputed = &canonImputed{File: im.File, Column: im.Column, Files: im.Files}
	}
	if im := p.Data.Imputation; im != nil {
		ci := &canonImputation{Sets: im.Sets, Iterations: im.Iterations, Seed: im.Seed, ConvergenceTable: im.ConvergenceTable}
		for _, m := range im.Models {
			if ci.ColumnModels == nil {
				ci.ColumnModels = map[string]string{}
			}
			ci.ColumnModels[m.Column] = m.Method.String()
		}
		c.Data.Imputation = ci
	}
	if p.Models.HasApproach(fit.Stage) {
		c.Models.Direction = optional(p.Models.Direction)
	}
	c.Models.RunEveryStart = p.Models.RunEveryStart
	if p.Models.HasEffects(fit.PartialEffects) || p.Models.HasEffects(fit.ConstrainedEffects) {
		pa := &canonPartial{Free: p.Models.Partial.Free}
		if s := p.Models.Partial.Select; s != nil {
			pa.Select = &canonSelect{Method: s.Method, Alpha: s.Alpha, Test: s.Test}
		}
		if p.Models.HasEffects(fit.ConstrainedEffects) {
			for _, g := range p.Models.Partial.Groups {
				pa.Groups = append(pa.Groups, canonGroup{Name: g.Name, Predictors: nonNil(g.Predictors)})
			}
		}
		c.Models.Partial = pa
	}
	for _, o := range p.Outcomes {
		co := canonOutcome{Column: o.Column, Categories: o.Categories, Label: o.Label}
		if o.Predictors != nil {
			co.Predictors = canonTerms(o.Terms)
		}
		c.Outcomes = append(c.Outcomes, co)
	}
	for _, k := range p.Subset {
		for _, o := range subsetOps {
			if o.op == k.Op {
				var v any = k.Number
				if k.Op == "in" || k.Op == "not_in" {
					v = k.Values
				}
				c.Subset = append(c.Subset, map[string]any{"column": k.Column, o.key: v})
			}
		}
	}
	if len(p.Categorical) > 0 {
		c.Categorical = map[string]any{}
	}
	for _, k := range p.Categorical {
		c.Categorical[k.Column] = map[string]any{"levels": k.Levels, "reference": k.Reference,
			"coding": k.Coding, "ordered": k.Ordered, "unobserved": k.Unobserved}
	}
	for _, r := range p.Rules {
		c.Rules = append(c.Rules, canonRule(r))
	}
	return c
}

// canonRule writes a rule as the one-key mapping used in plan files.
func canonRule(r Rule) map[string]any {
	var opts any = true
	switch r.Kind {
	case RuleRejectIfTestRejects:
		o := map[string]any{"test": r.Test.String(), "alpha": r.Alpha, "against": r.Against}
		if r.AppliesTo != nil {
			o["applies_to"] = names(r.AppliesTo)
		}
		opts = o
	case RuleChoose, RulePreferSimpler:
		opts = map[string]any{"by": r.By, "margin": r.Margin, "otherwise": r.Otherwise}
	case RuleRejectIfSimplerIsClose:
		o := map[string]any{"max_difference": r.MaxDifference}
		if r.Grid != nil {
			g := map[string]any{}
			for _, ax := range r.Grid {
				switch {
				case ax.AllLevels:
					g[ax.Predictor] = GridAllLevels
				case ax.Levels != nil:
					g[ax.Predictor] = ax.Levels
				default:
					g[ax.Predictor] = ax.Values
				}
			}
			o["grid"] = g
		}
		opts = o
	case RuleRejectIfSparse:
		o := map[string]any{}
		if r.PerParameter > 0 {
			o["per_parameter"] = r.PerParameter
		}
		if r.SmallestCategory > 0 {
			o["smallest_category"] = r.SmallestCategory
		}
		if r.Within != "" {
			o["within"] = r.Within
		}
		opts = o
	case RuleRejectIfUnstable:
		o := map[string]any{}
		if r.MaxCondition > 0 {
			o["max_condition"] = r.MaxCondition
		}
		if r.MinStartsAgreeing > 0 {
			o["min_starts_agreeing"] = r.MinStartsAgreeing
		}
		opts = o
	}
	return map[string]any{r.Kind: opts}
}

// canonTerms writes the terms as a plan's predictor list: a plain column
// as its name, any other term as a mapping.
func canonTerms(terms []design.TermSpec) []any {
	out := []any{}
	for _, t := range terms {
		tr := t.Transform
		if len(t.Interact) == 0 && tr.Empty() && t.Name == t.Source {
			out = append(out, t.Name)
			continue
		}
		m := map[string]any{"name": t.Name}
		if len(t.Interact) > 0 {
			m["interact"] = t.Interact
			out = append(out, m)
			continue
		}
		m["column"] = t.Source
		if tr.Log {
			m["log"] = map[string]any{"shift": tr.Shift}
		}
		if tr.Sqrt {
			m["sqrt"] = true
		}
		switch tr.Centre {
		case "mean":
			m["centre"] = "mean"
		case "value":
			m["centre"] = tr.CentreAt
		}
		if tr.Scale {
			m["scale"] = "sd"
		}
		if tr.Poly > 0 {
			basis := "orthogonal"
			if tr.PolyRaw {
				basis = "raw"
			}
			m["polynomial"] = map[string]any{"degree": tr.Poly, "basis": basis}
		}
		if tr.Knots != nil {
			m["spline"] = map[string]any{"knots": tr.Knots}
		}
		if tr.Quantiles != nil {
			m["spline"] = map[string]any{"quantiles": tr.Quantiles}
		}
		out = append(out, m)
	}
	return out
}

// nonDefault is s, or "" when s is the default (so that plans written
// before a key existed keep their canonical form).
func nonDefault(s, dflt string) string {
	if s == dflt {
		return ""
	}
	return s
}

// headerRowCanon is the header row, or 0 for the first row (the default).
func headerRowCanon(h int) int {
	if h <= 1 {
		return 0
	}
	return h
}

// nonDefaultCorrection is the few-cluster correction for the canonical
// form: nil for none.
func nonDefaultCorrection(c fit.ClusterCorrection) *fit.ClusterCorrection {
	if c == fit.NoCorrection {
		return nil
	}
	return &c
}

type canonStability struct {
	Resamples int    `json:"resamples"`
	Seed      uint64 `json:"seed"`
	// Draw is absent for the bootstrap, the default, so that plans
	// written before the key keep their canonical form.
	Draw string `json:"draw,omitempty"`
}

func (s *SelectionStability) canonical() *canonStability {
	if s == nil {
		return nil
	}
	c := &canonStability{Resamples: s.Resamples, Seed: s.Seed}
	if s.Draw != StabilityBootstrap && s.Draw != "" {
		c.Draw = s.Draw
	}
	return c
}
