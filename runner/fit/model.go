package fit

import (
	"fmt"
	"strconv"
	"strings"

	"ordplan/internal/words"
)

// Effect is the effect structure of one predictor across the J-1 equations.
type Effect int

// The effect structures.
const (
	Parallel    Effect = iota // b_mk = b_k
	Nonparallel               // b_mk free
	Constrained               // b_mk = phi_m * g_k, phi_1 = 1
)

var effectNames = []string{"parallel", "nonparallel", "constrained"}

func (e Effect) String() string {
	if int(e) < len(effectNames) {
		return effectNames[e]
	}
	return fmt.Sprintf("effect(%d)", int(e))
}

// Model describes one model of the typology, independent of the data.
type Model struct {
	Comparison Comparison `json:"comparison"`
	Backward   bool       `json:"backward"` // stage comparison only: P(y <= m | y <= m+1)
	Link       Link       `json:"link"`
	// Effects gives the structure of each predictor, in predictor order.
	Effects []Effect `json:"effects"`
	// Groups gives, for each constrained predictor, the index of its
	// constraint group in GroupNames (ignored for other predictors). With a
	// nil Groups every constrained predictor is in group 0.
	Groups     []int    `json:"groups"`
	GroupNames []string `json:"group_names"`
}

// Structure is the effect structure of a whole model: a column of the
// typology of models (a plan's models.effects).
type Structure int

// The effect structures of models.
const (
	ParallelEffects    Structure = iota // every predictor parallel
	PartialEffects                      // some predictors nonparallel, the others parallel
	ConstrainedEffects                  // some predictors constrained, the others parallel
	NonparallelEffects                  // every predictor nonparallel
	StereotypeEffects                   // adjacent comparison, every predictor in one constrained group
)

// StructureWords is the vocabulary of effect structures, in the order of
// the constants.
var StructureWords = words.New[Structure]("effect structure", "parallel", "partial", "constrained", "nonparallel", "stereotype")

func (s Structure) String() string { return StructureWords.Name(s) }

// MarshalText writes the structure's word.
func (s Structure) MarshalText() ([]byte, error) { return StructureWords.Text(s) }

// UnmarshalText reads a structure's word.
func (s *Structure) UnmarshalText(b []byte) (err error) {
	*s, err = StructureWords.Parse(string(b))
	return err
}

// TauName is the name of boundary parameter m (1-based): "tau[m]", indexed
// like the nonparallel slopes x[m] of the same boundary.
func TauName(m int) string { return IndexedName(tauBase, m) }

// IndexedName is the name of the parameter of base at boundary (or
// category) m, 1-based: "base[m]". Every per-boundary name the models make
// is written by it.
func IndexedName(base string, m int) string { return fmt.Sprintf("%s[%d]", base, m) }

// The bases of the names this package makes besides the design columns':
// the thresholds tau[m], the common factors phi[m] and phi.GROUP[m] of
// constrained and stereotype models, the intercepts alpha[m] of the
// baseline-category and stereotype forms, and the group indicators
// score_group_G of the goodness-of-fit refit.
const (
	tauBase         = "tau"
	phiBase         = "phi"
	alphaBase       = "alpha"
	indicatorPrefix = "score_group_"
)

// ReservedName says why a design column cannot be called name, or "" when
// it can: a name written NAME[m] is the form of every per-boundary
// parameter (a threshold, a nonparallel slope, a common factor), and a
// column called tau, phi, phi.GROUP or alpha would, made nonparallel, give
// the names tau[m], phi[m], alpha[m] of other parameters; score_group_G is
// the name of a goodness-of-fit indicator. A column named so would take
// the place of another parameter in estimates, hypotheses and tests.
func ReservedName(name string) string {
	if base, idx, ok := strings.Cut(name, "["); ok && strings.HasSuffix(idx, "]") && allDigits(strings.TrimSuffix(idx, "]")) {
		return fmt.Sprintf("%s has the form NAME[m] of the models' per-boundary parameters (thresholds %s, slopes of a nonparallel column %s[m], common factors %s)", strconv.Quote(name), IndexedName(tauBase, 1), base, IndexedName(phiBase, 2))
	}
	switch {
	case name == tauBase:
		return fmt.Sprintf("%q is the name of the thresholds (%s, %s, ...): the column's nonparallel slopes would have their names", name, TauName(1), TauName(2))
	case name == phiBase || strings.HasPrefix(name, phiBase+"."):
		return fmt.Sprintf("%q is the name of the common factors of constrained models (%s, %s, ...): the column's nonparallel slopes would have their names", name, IndexedName(name, 2), IndexedName(name, 3))
	case name == alphaBase:
		return fmt.Sprintf("%q is the name of the intercepts of the baseline-category form (%s, %s, ...): the column's slopes in that form would have their names", name, IndexedName(name, 1), IndexedName(name, 2))
	case strings.HasPrefix(name, indicatorPrefix) && allDigits(strings.TrimPrefix(name, indicatorPrefix)):
		return fmt.Sprintf("%q is the name of a group indicator of the goodness-of-fit test", name)
	}
	return ""
}

// allDigits reports whether s is one or more ASCII digits.
func allDigits(s string) bool {
	return s != "" && strings.Trim(s, "0123456789") == ""
}

// BoundaryLabel labels boundary m (0-based) between two categories by
// their labels, lower first: "SD/D".
func BoundaryLabel(categories []string, m int) string {
	return categories[m] + "/" + categories[m+1]
}

// ModelID is the identifier approach/effects/link of a model, the one way
// models are named in tables, logs, JSON and rules. approach is the
// comparison's word with its direction (ComparisonName); effects is an
// effect structure's word or the name of an auxiliary fit.
func ModelID(approach, effects string, l Link) string {
	return approach + "/" + effects + "/" + l.String()
}

// Name is the model's identifier, such as "cumulative/partial/logit".
func (m Model) Name() string {
	return ModelID(m.ComparisonName(), m.Structure().String(), m.Link)
}

// ComparisonName includes the stage direction.
func (m Model) ComparisonName() string {
	if m.Comparison == Stage && m.Backward {
		return "stage_backward"
	}
	return m.Comparison.String()
}

// Structure gives the column of the typology the model belongs to.
func (m Model) Structure() Structure {
	var np, cons, par int
	for _, e := range m.Effects {
		switch e {
		case Nonparallel:
			np++
		case Constrained:
			cons++
		default:
			par++
		}
	}
	switch {
	case len(m.Effects) == 0 || (np == 0 && cons == 0):
		return ParallelEffects
	case cons == 0 && par == 0:
		return NonparallelEffects
	case cons == 0:
		return PartialEffects
	case np == 0 && par == 0 && m.Comparison == Adjacent && len(m.groupNames()) == 1:
		return StereotypeEffects
	default:
		return ConstrainedEffects
	}
}

func (m Model) group(k int) int {
	if m.Groups == nil || k >= len(m.Groups) {
		return 0
	}
	return m.Groups[k]
}

func (m Model) groupNames() []string {
	used := map[int]bool{}
	for k, e := range m.Effects {
		if e == Constrained {
			used[m.group(k)] = true
		}
	}
	var out []string
	n := len(m.GroupNames)
	if n == 0 {
		n = 1
	}
	for g := 0; g < n; g++ {
		if used[g] {
			name := ""
			if g < len(m.GroupNames) {
				name = m.GroupNames[g]
			}
			out = append(out, name)
		}
	}
	return out
}

// paramKind says what one free parameter is.
type paramKind int

const (
	pCut paramKind = iota
	pParallel
	pFree  // nonparallel slope for one equation
	pGamma // g_k of a constrained predictor
	pPhi   // phi_m of a constraint group, m >= 2
)

// param is one free parameter: its kind, predictor (k), equation (m,
// 0-based) and constraint group.
type param struct {
	kind  paramKind
	k, m  int
	group int // dense index among used groups
	name  string
}

// layout is the parameter vector of a model for given J and predictors.
type layout struct {
	J, K     int
	params   []param
	cut      []int   // index of cut m
	slope    []int   // predictor k: index of its parallel slope / gamma, or of its equation-1 free slope
	groups   [][]int // used group -> predictor indices
	gnames   []string
	groupOf  []int   // predictor -> dense group index (-1 if not constrained)
	phiIndex [][]int // group -> equation m (0-based) -> parameter index (-1 for m = 0)
}

func newLayout(m Model, J int, predictors []string) (*layout, error) {
	K := len(predictors)
	if len(m.Effects) != K {
		return nil, fmt.Errorf("model has %d effect structures for %d predictors", len(m.Effects), K)
	}
	q := J - 1
	ly := &layout{J: J, K: K, groupOf: make([]int, K), slope: make([]int, K)}
	for j := 0; j < q; j++ {
		ly.cut = append(ly.cut, len(ly.params))
		ly.params = append(ly.params, param{kind: pCut, m: j, name: TauName(j + 1)})
	}
	// dense group indices in order of first use
	dense := map[int]int{}
	for k, e := range m.Effects {
		ly.groupOf[k] = -1
		if e != Constrained {
			continue
		}
		g := m.group(k)
		d, ok := dense[g]
		if !ok {
			d = len(ly.groups)
			dense[g] = d
			ly.groups = append(ly.groups, nil)
			name := ""
			if g < len(m.GroupNames) {
				name = m.GroupNames[g]
			}
			ly.gnames = append(ly.gnames, name)
		}
		ly.groupOf[k] = d
		ly.groups[d] = append(ly.groups[d], k)
	}
	for k, e := range m.Effects {
		name := predictors[k]
		ly.slope[k] = len(ly.params)
		switch e {
		case Parallel:
			ly.params = append(ly.params, param{kind: pParallel, k: k, name: name})
		case Nonparallel:
			for j := 0; j < q; j++ {
				ly.params = append(ly.params, param{kind: pFree, k: k, m: j, name: IndexedName(name, j+1)})
			}
		case Constrained:
			ly.params = append(ly.params, param{kind: pGamma, k: k, group: ly.groupOf[k], name: name})
		default:
			return nil, fmt.Errorf("predictor %q: unknown effect structure %d", name, e)
		}
	}
	multi := len(ly.groups) > 1
	for d := range ly.groups {
		idx := make([]int, q)
		idx[0] = -1
		for j := 1; j < q; j++ {
			idx[j] = len(ly.params)
			name := IndexedName(phiBase, j+1)
			if multi || ly.gnames[d] != "" {
				gn := ly.gnames[d]
				if gn == "" {
					gn = fmt.Sprintf("g%d", d+1)
				}
				name = IndexedName(phiBase+"."+gn, j+1)
			}
			ly.params = append(ly.params, param{kind: pPhi, m: j, group: d, name: name})
		}
		ly.phiIndex = append(ly.phiIndex, idx)
	}
	return ly, nil
}

func (ly *layout) names() []string {
	out := make([]string, len(ly.params))
	for i, p := range ly.params {
		out[i] = p.name
	}
	return out
}

// phi returns the common factor of group d (length J-1, phi[0] = 1).
func (ly *layout) phi(theta []float64, d int) []float64 {
	q := ly.J - 1
	out := make([]float64, q)
	out[0] = 1
	for j := 1; j < q; j++ {
		out[j] = theta[ly.phiIndex[d][j]]
	}
	return out
}

// effects returns the (J-1) x K slopes matrix b_mk, row-major.
func (ly *layout) effects(theta []float64, eff []Effect) []float64 {
	q := ly.J - 1
	B := make([]float64, q*ly.K)
	phis := make([][]float64, len(ly.groups))
	for d := range ly.groups {
		phis[d] = ly.phi(theta, d)
	}
	for k, e := range eff {
		s := ly.slope[k]
		for j := 0; j < q; j++ {
			switch e {
			case Parallel:
				B[j*ly.K+k] = theta[s]
			case Nonparallel:
				B[j*ly.K+k] = theta[s+j]
			case Constrained:
				B[j*ly.K+k] = phis[ly.groupOf[k]][j] * theta[s]
			}
		}
	}
	return B
}

// effectsString renders the structure compactly for messages.
func effectsString(eff []Effect, predictors []string) string {
	var b strings.Builder
	for k, e := range eff {
		if k > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%s:%s", predictors[k], e)
	}
	return b.String()
}
