package plan

import (
	"fmt"
	"slices"
	"strings"

	"ordplan/runner/impute/chained"
)

// checkImputation checks data.missing: impute against the other keys:
// not with data.imputed or sampling weights, the seed's default, and every column
// model names an imputed column of a kind its model can impute.
func (d *decoder) checkImputation(p *Plan) {
	im := p.Data.Imputation
	if !p.Data.Imputes() {
		if p.Data.Imputed != nil && p.Data.Missing == "refuse" {
			// The data file holds the original data, whose missing values
			// the imputed sets fill in; the sets are refused if incomplete
			// (I6) whatever data.missing says (P62).
			d.errAt("data.missing", "refuse does not apply to imputed sets made elsewhere (data.imputed): the data file %s holds the original data, whose missing values the imputed sets fill in and the report describes, and every imputed set must be complete in the columns the plan uses whatever data.missing says; remove data.missing", quote(p.Data.Name()))
		}
		if im != nil {
			d.errAt("data.imputation", "is used only with data.missing: impute (data.missing is %s)", quote(p.Data.Missing))
		}
		return
	}
	if p.Data.Imputed != nil {
		d.errAt("data.missing", "impute makes the imputed sets, while data.imputed names sets made elsewhere; give one or the other")
	}
	if p.Data.Sampling() {
		d.errAt("data.weight_kind", "imputation by chained equations (data.missing: impute) takes frequency weights (counts of identical units, each imputed on its own), not sampling weights: these are no counts, and imputing under a sampling design needs the design in the imputation models; impute elsewhere and name the sets under data.imputed, or remove data.weights")
	}
	if !d.given("data.imputation.seed") {
		im.Seed = p.Seed
	}
	if !d.predictorsKnown(p) {
		return
	}
	var imputed []string
	kinds := map[string][2]int{} // column -> kind, levels (0: not known before the data)
	for _, o := range p.Outcomes {
		if o.Column != "" && !slices.Contains(imputed, o.Column) {
			imputed = append(imputed, o.Column)
			kinds[o.Column] = [2]int{int(chained.Ordered), len(o.Categories)}
		}
		for _, s := range p.DesignSpec(o).Sources {
			if slices.Contains(imputed, s.Name) {
				continue
			}
			imputed = append(imputed, s.Name)
			switch {
			case s.Cat == nil:
				kinds[s.Name] = [2]int{int(chained.Numeric), 0}
			case s.Cat.Ordered:
				kinds[s.Name] = [2]int{int(chained.Ordered), len(s.Cat.Levels)}
			default:
				kinds[s.Name] = [2]int{int(chained.Categorical), len(s.Cat.Levels)}
			}
		}
	}
	for _, cm := range im.Models {
		kl, ok := kinds[cm.Column]
		if !ok {
			d.errAt(cm.Key, "%s is not an imputed column; the imputed columns are the outcomes and the columns the terms read: %s", quote(cm.Column), strings.Join(imputed, ", "))
			continue
		}
		kind := chained.Kind(kl[0])
		if kl[1] == 0 && kind != chained.Numeric {
			continue // an outcome whose categories come from the data: checked when they are read
		}
		if ok, why := chained.Fits(cm.Method, kind, kl[1]); !ok {
			d.errAt(cm.Key, "%s", why)
			continue
		}
		if cm.Method == chained.NormalDraw {
			d.checkDrawDomain(p, cm)
			d.checkDrawValues(p, cm)
		}
	}
}

// checkDrawValues refuses normal draws for a column whose allowed values
// the data dictionary lists (codes such as 0/1 or 1 to 5): a draw from a
// normal distribution is almost never one of them, so nearly every
// imputed value would be one the column cannot hold. (A declared range is
// not refused: draws outside it are counted and reported.)
func (d *decoder) checkDrawValues(p *Plan, cm ColumnModel) {
	for _, e := range p.Dictionary {
		if e.Column != cm.Column || e.Values == nil {
			continue
		}
		d.errAt(cm.Key, "normal_draw draws %s from a normal distribution, whose values are almost never among the values %s that the data dictionary allows (%s.values): nearly every imputed value would be one the column cannot hold; impute %s by %s (the default), which imputes values observed in the data, or declare it categorical with its levels to impute it by %s or %s",
			cm.Column, strings.Join(e.Values, ", "), e.Key, cm.Column, chained.MeanMatching, chained.Logistic, chained.Multinomial)
		return
	}
}

// checkDrawDomain refuses normal draws for a column that a term takes the
// logarithm or square root of: a normal draw can fall where the
// transformation is undefined (the design is made from the imputed
// columns), and the run would stop on the first such draw, at a seed's
// whim. Mean matching imputes values observed in the data.
func (d *decoder) checkDrawDomain(p *Plan, cm ColumnModel) {
	seen := map[string]bool{}
	for _, o := range append([]Outcome{{}}, p.Outcomes...) {
		if o.Column != "" && o.Terms == nil {
			continue // the plan's own terms, already seen
		}
		for _, t := range p.DesignSpec(o).Terms {
			if t.Source != cm.Column || !(t.Log || t.Sqrt) || seen[t.Key] {
				continue
			}
			seen[t.Key] = true
			bound, how := "values below 0", t.ValueText(cm.Column)
			if t.Log {
				// 0 - shift: never "-0"
				bound = fmt.Sprintf("values at or below %s", fmtNum(0-t.Shift))
			}
			d.errAt(cm.Key, "normal_draw draws %s from a normal distribution, which can give %s, where %s of the term %s (%s) is undefined: a run would stop on the first such draw; impute %s by %s (the default), which imputes values observed in the data", cm.Column, bound, how, t.Name, t.Key, cm.Column, chained.MeanMatching)
			return
		}
	}
}
