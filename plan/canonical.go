package plan

import (
	"bytes"
	"encoding/json"
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
	Version    int              `json:"version"`
	Title      string           `json:"title"`
	Seed       uint64           `json:"seed"`
	Data       canonData        `json:"data"`
	Outcomes   []canonOutcome   `json:"outcomes"`
	Predictors []string         `json:"predictors"`
	Models     canonModels      `json:"models"`
	Tests      canonTests       `json:"tests"`
	Rules      []map[string]any `json:"rules"`
	Covariance string           `json:"covariance"`
	Report     canonReport      `json:"report"`
	Inference  canonInference   `json:"inference"`
}

type canonData struct {
	File          string   `json:"file"`
	Missing       string   `json:"missing"`
	MissingValues []string `json:"missing_values"`
	Weights       *string  `json:"weights"`
	WeightKind    *string  `json:"weight_kind,omitempty"`
	Offset        *string  `json:"offset"`
	Cluster       *string  `json:"cluster"`
}

type canonOutcome struct {
	Column     string   `json:"column"`
	Categories []string `json:"categories"`
	Label      string   `json:"label"`
}

type canonModels struct {
	Approaches []string      `json:"approaches"`
	Direction  *string       `json:"direction,omitempty"`
	Levels     []string      `json:"levels"`
	Links      []string      `json:"links"`
	Partial    *canonPartial `json:"partial,omitempty"`
}

type canonPartial struct {
	Free   []string     `json:"free,omitempty"`
	Select *canonSelect `json:"select,omitempty"`
	Groups []canonGroup `json:"groups,omitempty"`
}

type canonSelect struct {
	Method string  `json:"method"`
	Alpha  float64 `json:"alpha"`
	Test   string  `json:"test"`
}

type canonGroup struct {
	Name       string   `json:"name"`
	Predictors []string `json:"predictors"`
}

type canonTests struct {
	ParallelLines []string `json:"parallel_lines"`
	Alpha         float64  `json:"alpha"`
}

type canonReport struct {
	Title           string  `json:"title"`
	FocusPredictor  string  `json:"focus_predictor"`
	ConfidenceLevel float64 `json:"confidence_level"`
	Timestamp       bool    `json:"timestamp"`
}

func optional(s string) *string {
	if s == "" {
		return nil
	}
	return &s
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

func (p *Plan) canonical() canonPlan {
	c := canonPlan{
		Version:    1,
		Title:      p.Title,
		Seed:       p.Seed,
		Predictors: nonNil(p.Predictors),
		Covariance: p.Covariance,
		Data: canonData{
			File:          p.Data.File,
			Missing:       p.Data.Missing,
			MissingValues: p.Data.MissingValues,
			Weights:       optional(p.Data.Weights),
			Offset:        optional(p.Data.Offset),
			Cluster:       optional(p.Data.Cluster),
		},
		Models: canonModels{
			Approaches: nonNil(p.Models.Approaches),
			Levels:     nonNil(p.Models.Levels),
			Links:      nonNil(p.Models.Links),
		},
		Tests: canonTests{ParallelLines: nonNil(p.Tests.ParallelLines), Alpha: p.Tests.Alpha},
		Report: canonReport{
			Title:           p.Report.Title,
			FocusPredictor:  p.Report.FocusPredictor,
			ConfidenceLevel: p.Report.ConfidenceLevel,
			Timestamp:       p.Report.Timestamp,
		},
		Inference: p.Inference.canonical(),
		Outcomes:  []canonOutcome{},
		Rules:     []map[string]any{},
	}
	if p.Data.Weights != "" {
		c.Data.WeightKind = optional(p.Data.WeightKind)
	}
	if p.Models.HasApproach("stage") {
		c.Models.Direction = optional(p.Models.Direction)
	}
	if p.Models.HasLevel("partial") || p.Models.HasLevel("constrained") {
		pa := &canonPartial{Free: p.Models.Partial.Free}
		if s := p.Models.Partial.Select; s != nil {
			pa.Select = &canonSelect{Method: s.Method, Alpha: s.Alpha, Test: s.Test}
		}
		if p.Models.HasLevel("constrained") {
			for _, g := range p.Models.Partial.Groups {
				pa.Groups = append(pa.Groups, canonGroup{Name: g.Name, Predictors: nonNil(g.Predictors)})
			}
		}
		c.Models.Partial = pa
	}
	for _, o := range p.Outcomes {
		c.Outcomes = append(c.Outcomes, canonOutcome{Column: o.Column, Categories: o.Categories, Label: o.Label})
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
		opts = map[string]any{"test": r.Test, "alpha": r.Alpha}
	case RuleChoose, RulePreferSimpler:
		opts = map[string]any{"by": r.By, "margin": r.Margin}
	}
	return map[string]any{r.Kind: opts}
}
