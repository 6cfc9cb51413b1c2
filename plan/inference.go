package plan

import (
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strings"

	"gopkg.in/yaml.v3"

	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// Inference is the optional `inference` section: what to report beyond the
// model choice.
type Inference struct {
	// Hypotheses are linear restrictions on parameters, as text, each
	// tested by a Wald test in every candidate model that has the named
	// parameters, e.g. "pilot[1] = pilot[2] = pilot[3] = pilot[4]".
	Hypotheses []Hypothesis
	// Multiplicity is the correction of the hypotheses' p-values for
	// testing several (over every outcome, in its chosen model):
	// MultiplicityNone (default), MultiplicityHolm or MultiplicityBH.
	Multiplicity string
	// MarginalEffects lists the kinds of marginal effects reported for the
	// chosen model: average (over the rows), means (at the means of the
	// predictors), profile (at the predictor values of Profile). Default
	// [average].
	MarginalEffects []string
	// Profile gives predictor values for marginal effects "profile";
	// predictors not listed are held at their means.
	Profile []ProfileValue
	// LevelPairs asks for comparisons between every pair of levels of
	// some categorical predictors (nil: none).
	LevelPairs *LevelPairs
	// Predict names a CSV file of new rows (predictor columns) whose
	// predictions by the chosen model are written to predictions.csv.
	Predict     string
	PredictPath string // resolved against the plan's folder
	// TermTests is which tests of each term of the chosen model are
	// computed: TermTestsBoth (default), TermTestsWald, TermTestsLR or
	// TermTestsNone (the likelihood-ratio test costs a refit per term,
	// and per imputed set).
	TermTests string
}

// The words of inference.term_tests.
const (
	TermTestsBoth = "both" // the Wald and the likelihood-ratio test
	TermTestsWald = "wald" // the Wald test only: no refits
	TermTestsLR   = "lr"   // the likelihood-ratio test only
	TermTestsNone = "none" // no test of each term
)

// WantsTermWald and WantsTermLR say whether the plan asks for the Wald
// and the likelihood-ratio test of each term.
func (inf Inference) WantsTermWald() bool {
	return inf.TermTests == "" || inf.TermTests == TermTestsBoth || inf.TermTests == TermTestsWald
}

func (inf Inference) WantsTermLR() bool {
	return inf.TermTests == "" || inf.TermTests == TermTestsBoth || inf.TermTests == TermTestsLR
}

// LevelPairs is inference.level_pairs: the categorical columns whose
// levels are compared pair by pair, and the correction of the p-values of
// each family of pairs (one predictor's pairs for one outcome category, or
// at one boundary): MultiplicityHolm by default.
type LevelPairs struct {
	Predictors   []string
	Multiplicity string
}

// Multiplicity corrections.
const (
	MultiplicityNone = "none"
	MultiplicityHolm = "holm"               // family-wise error rate (Holm's step-down)
	MultiplicityBH   = "benjamini_hochberg" // false discovery rate (step-up)
)

// Hypothesis is one hypothesis of the plan, with its line.
type Hypothesis struct {
	Text      string
	Line, Col int
}

// ProfileValue is one predictor value of the profile at which marginal
// effects "profile" are computed.
type ProfileValue struct {
	Predictor string  // a column the terms read
	Value     float64 // numeric columns
	Level     string  // categorical columns: the level
	// written is the text of a value the plan writes as a number or a
	// boolean: the level, when the column is categorical (grade: 2 names
	// the level "2", as levels: [1, 2, 3] lists it).
	written string
}

var (
	inferenceKeys       = keysAt("inference")
	marginalEffectWords = []string{"average", "means", "profile"}
	multiplicityWords   = []string{MultiplicityNone, MultiplicityHolm, MultiplicityBH}
	termTestWords       = []string{TermTestsBoth, TermTestsWald, TermTestsLR, TermTestsNone}
)

// unnamable says, of a hypothesis that cannot be read, which terms it
// names hold a character that breaks a hypothesis's names (a term of a
// column named with a space is allowed, its name being the column's), and
// how to name them; "" when none does.
func unnamable(text string, terms []design.TermSpec) string {
	var out []string
	for _, t := range terms {
		if bad := design.BadNameChars(t.Name); bad != "" && strings.Contains(text, t.Name) {
			out = append(out, fmt.Sprintf("; term %s holds %s, which a hypothesis cannot name: give the term a name of its own, {name: NAME, column: %s}, and use that name", quote(t.Name), bad, quote(t.Source)))
		}
	}
	return strings.Join(out, "")
}

// decodeInference reads the inference section; terms are the plan's
// terms, which a hypothesis that cannot be read may name (unnamable).
func (d *decoder) decodeInference(n *yaml.Node, inf *Inference, dir string, terms []design.TermSpec) {
	inf.MarginalEffects = []string{"average"}
	inf.Multiplicity = MultiplicityNone
	inf.TermTests = TermTestsBoth
	m := d.mapping(n, "inference", inferenceKeys)
	if m == nil {
		return
	}
	m.word("term_tests", "choice of term tests", termTestWords, &inf.TermTests)
	m.word("multiplicity", "multiplicity correction", multiplicityWords, &inf.Multiplicity)
	if inf.Multiplicity != MultiplicityNone && m.get("hypotheses") == nil {
		d.errAt(m.at("multiplicity"), "corrects the p-values of the plan's hypotheses, and inference.hypotheses is not given")
	}
	if v := m.get("hypotheses"); v != nil {
		items, ok := d.list(v, m.at("hypotheses"))
		if ok {
			for i, it := range items {
				path := itemPath(m.at("hypotheses"), i)
				if s, ok := d.text(it, path); ok {
					// What no model's parameters can mend (syntax,
					// numbers beyond the largest) is refused here; a
					// name that no candidate model can have, by
					// checkHypothesisNames; a name some candidates have
					// and others not is tested in those that have it.
					if err := fit.CheckHypothesisText(s); err != nil {
						d.errorf(deref(it), path, "%v%s", err, unnamable(s, terms))
					}
					inf.Hypotheses = append(inf.Hypotheses, Hypothesis{Text: s, Line: deref(it).Line, Col: deref(it).Column})
				}
			}
		}
	}
	m.words("marginal_effects", "marginal effect", marginalEffectWords, true, &inf.MarginalEffects)
	if v := m.get("profile"); v != nil {
		an := deref(v)
		if an.Kind != yaml.MappingNode {
			d.errorf(an, m.at("profile"), "want a mapping of predictor: value, got %s", describe(an))
		} else {
			seen := map[string]bool{}
			for i := 0; i+1 < len(an.Content); i += 2 {
				k, val := deref(an.Content[i]), an.Content[i+1]
				path := childPath(m.at("profile"), k.Value)
				if seen[k.Value] {
					d.errorf(k, path, "predictor is given twice")
					continue
				}
				seen[k.Value] = true
				dv := deref(d.record(path, val))
				switch {
				case dv != nil && dv.Kind == yaml.ScalarNode && (dv.ShortTag() == "!!str" || dv.ShortTag() == "!!bool"):
					inf.Profile = append(inf.Profile, ProfileValue{Predictor: k.Value, Level: dv.Value})
				case dv != nil && dv.Kind == yaml.ScalarNode && (dv.ShortTag() == "!!int" || dv.ShortTag() == "!!float"):
					// A number, or the level of a categorical column written
					// as one: which, checkInference says.
					var x float64
					if dv.Decode(&x) != nil || math.IsInf(x, 0) {
						x = math.NaN() // not a finite number: checkInference says so
					}
					inf.Profile = append(inf.Profile, ProfileValue{Predictor: k.Value, Value: x, written: dv.Value})
				default:
					d.numberWant(dv, path, "a number, or a level of a categorical column") // says what was given instead
				}
			}
		}
	}
	if v := m.get("level_pairs"); v != nil {
		inf.LevelPairs = d.decodeLevelPairs(v, m.at("level_pairs"))
	}
	if v := m.get("predict"); v != nil {
		if s, ok := d.text(v, m.at("predict")); ok {
			inf.Predict = s
			inf.PredictPath = s
			if !filepath.IsAbs(s) {
				inf.PredictPath = filepath.Join(dir, s)
			}
		}
	}
}

// decodeLevelPairs reads inference.level_pairs.
func (d *decoder) decodeLevelPairs(n *yaml.Node, path string) *LevelPairs {
	lp := &LevelPairs{Multiplicity: MultiplicityHolm}
	m := d.mapping(n, path, keysAt("inference.level_pairs"))
	if m == nil {
		return nil
	}
	if v := m.required("predictors"); v != nil && d.nonEmpty(v, m.at("predictors"), "categorical column") {
		if names, ok := d.names(v, m.at("predictors")); ok {
			lp.Predictors = names
		}
	}
	m.word("multiplicity", "multiplicity correction", multiplicityWords, &lp.Multiplicity)
	return lp
}

// checkLevelPairs checks that each column of inference.level_pairs is a
// categorical column the predictors read with three or more levels the
// subset keeps.
func (d *decoder) checkLevelPairs(p *Plan) {
	lp := p.Inference.LevelPairs
	if lp == nil || !d.clean("inference.level_pairs.predictors") {
		return
	}
	for i, col := range lp.Predictors {
		key := itemPath("inference.level_pairs.predictors", i)
		c := p.categorical(col)
		if !slices.Contains(p.SourceColumns(), col) || c == nil {
			if !d.clean("predictors") || !d.clean("categorical") {
				continue
			}
			var cats []string
			for _, cc := range p.Categorical {
				if slices.Contains(p.SourceColumns(), cc.Column) {
					cats = append(cats, cc.Column)
				}
			}
			what := "is not a column the predictors read"
			if slices.Contains(p.SourceColumns(), col) {
				what = "is a numeric column"
			}
			d.errAt(key, "%s %s: level pairs compare the levels of a categorical column the predictors read (%s)", quote(col), what, listOrNone(cats))
			continue
		}
		var kept, out []string
		for _, l := range c.Levels {
			if sc := excludedBy(p, col, l); sc != nil {
				out = append(out, fmt.Sprintf("%s leaves out %s", sc.Key, quote(l)))
			} else {
				kept = append(kept, l)
			}
		}
		if len(kept) < 3 {
			why := ""
			if len(out) > 0 {
				why = "; " + strings.Join(out, ", ")
			}
			d.errAt(key, "%s has %d levels the rows used can have (%s%s): its only pair is the level against the reference, which the marginal effects and odds ratios already give; level pairs need three or more levels", quote(col), len(kept), strings.Join(kept, ", "), why)
		}
	}
}

// listOrNone joins names with commas, or says there are none.
func listOrNone(names []string) string {
	if len(names) == 0 {
		return "there is none"
	}
	return strings.Join(names, ", ")
}

// checkInference checks the section against the predictors.
func (d *decoder) checkInference(p *Plan) {
	inf := &p.Inference
	for i := range inf.Profile {
		a := &inf.Profile[i]
		key := childPath("inference.profile", a.Predictor)
		c := p.categorical(a.Predictor)
		if c != nil && a.written != "" {
			a.Level, a.Value = a.written, 0
		}
		switch {
		case !slices.Contains(p.SourceColumns(), a.Predictor) && d.clean("predictors"):
			d.errAt(key, "%s is not a column the predictors read (%s)", quote(a.Predictor), strings.Join(p.SourceColumns(), ", "))
		case c != nil && !slices.Contains(c.Levels, a.Level):
			d.errAt(key, "%s is not a level of %s, which is categorical: give one of its levels (%s)", quote(a.Level), quote(a.Predictor), strings.Join(c.Levels, ", "))
		case c != nil && d.clean("subset") && excludedBy(p, a.Predictor, a.Level) != nil:
			sc := excludedBy(p, a.Predictor, a.Level)
			d.errAt(key, "%s is a level the subset leaves out (%s: %s): no row used has it, so the fitted model has no effect of it; give a level the rows used have (%s)", quote(a.Level), sc.Key, sc.String(), strings.Join(subsetKeeps(p, c), ", "))
		case c == nil && a.Level != "":
			d.errAt(key, "%s is numeric: give a number, got %s", quote(a.Predictor), quote(a.Level))
		case c == nil && math.IsNaN(a.Value):
			d.errAt(key, "want a finite number, got %s", quote(a.written))
		}
	}
	if inf.TermTests == TermTestsLR && p.Data.Sampling() && d.clean("data") {
		d.errAt("inference.term_tests", "the likelihood-ratio test needs a likelihood, but with sampling weights (data.weight_kind: sampling) the fits maximize a pseudo-likelihood, so no term would be tested; use wald (or both, which shows the likelihood-ratio tests as not computed)")
	}
	d.checkLevelPairs(p)
	d.checkHypothesisNames(p)
	hasProfile := slices.Contains(inf.MarginalEffects, "profile")
	if hasProfile && len(inf.Profile) == 0 {
		d.errAt("inference.marginal_effects", "marginal effects at a profile need inference.profile (predictor: value, ...)")
	}
	if !hasProfile && len(inf.Profile) > 0 {
		d.errAt("inference.profile", "inference.profile is used only with marginal_effects: [profile]; add profile there or remove inference.profile")
	}
}

// canonInference is the canonical form of the section.
type canonInference struct {
	Hypotheses      []string       `json:"hypotheses"`
	Multiplicity    string         `json:"multiplicity"`
	MarginalEffects []string       `json:"marginal_effects"`
	Profile         map[string]any `json:"profile,omitempty"`
	Predict         *string        `json:"predict"`
	LevelPairs      *canonPairs    `json:"level_pairs,omitempty"`
	// TermTests is left out when it is the default (both), so that the
	// canonical form of a plan written before the key existed is unchanged.
	TermTests string `json:"term_tests,omitempty"`
}

// canonPairs is the canonical form of inference.level_pairs.
type canonPairs struct {
	Predictors   []string `json:"predictors"`
	Multiplicity string   `json:"multiplicity"`
}

func (inf *Inference) canonical() canonInference {
	c := canonInference{Hypotheses: []string{}, Multiplicity: inf.Multiplicity, MarginalEffects: inf.MarginalEffects}
	for _, h := range inf.Hypotheses {
		c.Hypotheses = append(c.Hypotheses, h.Text)
	}
	if len(inf.Profile) > 0 {
		c.Profile = map[string]any{}
		for _, a := range inf.Profile {
			c.Profile[a.Predictor] = a.Value
			if a.Level != "" {
				c.Profile[a.Predictor] = a.Level
			}
		}
	}
	if lp := inf.LevelPairs; lp != nil {
		c.LevelPairs = &canonPairs{Predictors: lp.Predictors, Multiplicity: lp.Multiplicity}
	}
	if inf.TermTests != TermTestsBoth {
		c.TermTests = inf.TermTests
	}
	if inf.Predict != "" {
		s := inf.Predict
		c.Predict = &s
	}
	return c
}
