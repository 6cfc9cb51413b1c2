package plan

import (
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
		}
	}
}
