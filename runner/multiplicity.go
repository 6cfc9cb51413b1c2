package runner

import (
	"fmt"
	"math"
	"ordplan/internal/words"
	"slices"
	"sort"
	"strings"

	"ordplan/plan"
)

// HolmAdjust returns Holm's step-down adjusted p-values, in the order
// given: with p sorted ascending p_(1) <= ... <= p_(m), the adjusted
// p_(i) is max over j <= i of min(1, (m - j + 1) p_(j)). Rejecting where
// the adjusted value is below alpha controls the family-wise error rate.
func HolmAdjust(p []float64) []float64 {
	m := len(p)
	idx := sortedIndex(p)
	out := make([]float64, m)
	run := 0.0
	for r, i := range idx {
		run = math.Max(run, math.Min(1, float64(m-r)*p[i]))
		out[i] = run
	}
	return out
}

// BHAdjust returns Benjamini and Hochberg's step-up adjusted p-values, in
// the order given: the adjusted p_(i) is min over j >= i of
// min(1, m p_(j) / j). Rejecting where the adjusted value is below q
// controls the false discovery rate at q (independent or positively
// dependent tests).
func BHAdjust(p []float64) []float64 {
	m := len(p)
	idx := sortedIndex(p)
	out := make([]float64, m)
	run := 1.0
	for r := m - 1; r >= 0; r-- {
		i := idx[r]
		run = math.Min(run, math.Min(1, float64(m)*p[i]/float64(r+1)))
		out[i] = run
	}
	return out
}

// MultiplicityName names a correction of inference.multiplicity in
// prose, with what it controls: the run's note and the power study's
// opening say it.
func MultiplicityName(method string) string {
	if method == plan.MultiplicityBH {
		return "the Benjamini-Hochberg step-up correction (false discovery rate)"
	}
	return "Holm's step-down correction (family-wise error rate)"
}

// adjustP adjusts p-values by the plan's correction method (holm or
// benjamini_hochberg), in the order given.
func adjustP(method string, ps []float64) []float64 {
	if method == plan.MultiplicityBH {
		return BHAdjust(ps)
	}
	return HolmAdjust(ps)
}

// adjustFamilies adjusts the p-values p(0..n-1) by method within each
// family, the items of one key, and returns them in the order given.
func adjustFamilies(method string, n int, key func(int) string, p func(int) float64) []float64 {
	out := make([]float64, n)
	members := map[string][]int{}
	var keys []string
	for i := 0; i < n; i++ {
		k := key(i)
		if _, ok := members[k]; !ok {
			keys = append(keys, k)
		}
		members[k] = append(members[k], i)
	}
	for _, k := range keys {
		ps := make([]float64, len(members[k]))
		for j, i := range members[k] {
			ps[j] = p(i)
		}
		for j, v := range adjustP(method, ps) {
			out[members[k][j]] = v
		}
	}
	return out
}

// sortedIndex orders the indices by p, ties in the order given.
func sortedIndex(p []float64) []int {
	idx := make([]int, len(p))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return p[idx[a]] < p[idx[b]] })
	return idx
}

// InFamily reports whether h, a hypothesis result of or, belongs to the
// family a multiplicity adjustment takes: tested, with a usable test, in
// the outcome's chosen model.
func (or *OutcomeResult) InFamily(h *HypothesisResult) bool {
	return or.Chosen != nil && h.Model == or.Chosen.ID && h.Test.OK
}

// adjustHypotheses corrects the p-values of the plan's hypotheses for
// multiplicity. The family is every hypothesis of every outcome, tested
// in that outcome's chosen model; tests in the other candidates are
// descriptive and keep their raw p-values only.
func adjustHypotheses(an *Analysis, res *Result) {
	method := an.Inference.Multiplicity
	if method == "" || method == plan.MultiplicityNone || len(an.Inference.Hypotheses) == 0 {
		return
	}
	type ref struct{ or, h int }
	var refs []ref
	var ps []float64
	left := 0
	for o, or := range res.Outcomes {
		for h := range or.Hypotheses {
			hr := &or.Hypotheses[h]
			if !or.InFamily(hr) {
				if or.Chosen != nil && hr.Model == or.Chosen.ID {
					left++ // in the chosen model, without a usable test
				}
				continue
			}
			refs = append(refs, ref{o, h})
			ps = append(ps, hr.Test.P)
		}
	}
	adj := adjustP(method, ps)
	for k, r := range refs {
		v := adj[k]
		hr := &res.Outcomes[r.or].Hypotheses[r.h]
		hr.Adjusted = &v
		hr.Adjustment = method
	}
	fam := &MultiplicityFamily{Method: method, Size: len(ps), NotComputed: left}
	// A hypothesis naming parameters the chosen model does not have is not
	// tested there, so it is not in the family either: say which, and
	// whether another candidate of the outcome tests it.
	for _, or := range res.Outcomes {
		if or.Chosen == nil {
			continue
		}
		for _, h := range an.Inference.Hypotheses {
			same := func(hr HypothesisResult) bool { return hr.Line == h.Line && hr.Text == h.Text }
			if slices.ContainsFunc(or.Hypotheses, func(hr HypothesisResult) bool { return same(hr) && hr.Model == or.Chosen.ID }) {
				continue
			}
			fam.Outside = append(fam.Outside, OutsideHypothesis{Text: h.Text, Line: h.Line, Model: or.Chosen.ID,
				Elsewhere: slices.ContainsFunc(or.Hypotheses, func(hr HypothesisResult) bool { return same(hr) && hr.Model != "" })})
		}
	}
	res.Multiplicity = fam
}

// MultiplicityFamily is the family of the plan's hypothesis tests whose
// p-values a run adjusts for multiplicity (Result.Multiplicity).
type MultiplicityFamily struct {
	Method      string // plan.MultiplicityHolm or plan.MultiplicityBH
	Size        int    // tests in the family
	NotComputed int    // hypothesis tests in a chosen model that could not be computed
	// Outside are the hypotheses a chosen model does not test, as it
	// lacks a parameter they name.
	Outside []OutsideHypothesis
}

// OutsideHypothesis is a hypothesis of the plan left out of the family
// since an outcome's chosen model does not have every parameter it names.
type OutsideHypothesis struct {
	Text  string // as the plan writes it
	Line  int    // of the plan
	Model string // the chosen model
	// Elsewhere: another fitted candidate of the outcome tests it.
	Elsewhere bool
}

// Note says what the family is, in one sentence: names (models) written
// by name and hypotheses by hypothesis, as they are in plain text
// (PlainText, strconv.Quote) or as the report writes them.
func (m *MultiplicityFamily) Note(name, hypothesis func(string) string) string {
	note := fmt.Sprintf("Multiplicity: the p-values of the plan's hypotheses in the chosen models are adjusted by %s over a family of %d tests (every hypothesis of every outcome with a chosen model)", MultiplicityName(m.Method), m.Size)
	if m.NotComputed > 0 {
		are := "are"
		if m.NotComputed == 1 {
			are = "is"
		}
		note += fmt.Sprintf("; %s in a chosen model could not be computed and %s not in the family", words.Count(m.NotComputed, "hypothesis test", "hypothesis tests"), are)
	}
	var elsewhere, nowhere []string
	for _, h := range m.Outside {
		what := fmt.Sprintf("%s (plan line %d) in %s", hypothesis(h.Text), h.Line, name(h.Model))
		if h.Elsewhere {
			elsewhere = append(elsewhere, what)
		} else {
			nowhere = append(nowhere, what)
		}
	}
	if len(elsewhere) > 0 {
		note += "; not in the family, since the chosen model does not have every parameter it names (it is tested only in the other candidates that have them, descriptively): " + strings.Join(elsewhere, ", ")
	}
	if len(nowhere) > 0 {
		note += "; not in the family, since no fitted candidate model of the outcome has every parameter it names (those that would have them did not fit, or the names are another outcome's): " + strings.Join(nowhere, ", ")
	}
	return note + "."
}

// RunNotes are the run's notes, in order: imputed sets that are copies,
// the run-level remarks (Notes) and the multiplicity family; text writes
// names and the remarks, hypothesis the plan's hypotheses. decisions.json
// takes them in plain text (PlainText, strconv.Quote), the report in
// Markdown with names escaped.
func (r *Result) RunNotes(text, hypothesis func(string) string) []string {
	out := words.Each(r.ImputedCopies, func(c ImputedCopy) string { return c.Note(text) })
	out = append(out, words.Each(r.Notes, text)...)
	if r.Multiplicity != nil {
		out = append(out, r.Multiplicity.Note(text, hypothesis))
	}
	return out
}
