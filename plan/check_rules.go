package plan

import (
	"fmt"
	"strconv"
	"strings"
)

// checkRules checks the order of the rules and that each one has
// something to act on.
func (d *decoder) checkRules(p *Plan) {
	if len(p.Rules) == 0 {
		return
	}
	// Final rules are found from the keys written, so a choose rule with
	// bad options still counts as present.
	var finals []int
	for i := range p.Rules {
		ip := itemPath("rules", i)
		if d.nodes[ip+"."+RuleChoose] != nil || d.nodes[ip+"."+RulePreferSimpler] != nil {
			finals = append(finals, i)
		}
	}
	switch {
	case len(finals) == 0 && d.clean("rules"):
		d.errAt("rules", "the last rule must be choose or prefer_simpler, and neither is given")
	case len(finals) > 0:
		first := finals[0]
		for _, j := range finals[1:] {
			d.errAt(itemPath("rules", j), "only one choose or prefer_simpler rule is allowed (the first is at line %d)", p.Rules[first].Line)
		}
		if last := finals[len(finals)-1]; last != len(p.Rules)-1 {
			n := len(p.Rules) - 1 - last
			d.errAt(itemPath("rules", last), "must be the last rule, but %d rule%s follow%s it", n, plural(n, "", "s"), plural(n, "s", ""))
		}
	}

	approachesOK := d.clean("models.approaches")
	seen := map[string]int{}
	for i, r := range p.Rules {
		ip := itemPath("rules", i)
		if r.Kind == "" || !d.clean(ip) {
			continue
		}
		sig := fmt.Sprintf("%s|%s|%s|%s|%s", r.Kind, r.Test, strconv.FormatFloat(r.Alpha, 'g', -1, 64), r.By, strconv.FormatFloat(r.Margin, 'g', -1, 64))
		if line, dup := seen[sig]; dup {
			d.errAt(ip, "repeats the rule at line %d", line)
			continue
		}
		seen[sig] = r.Line
		switch r.Kind {
		case RuleRejectNegativeProbabilities:
			if approachesOK && !p.Models.HasApproach("cumulative") {
				d.errAt(ip+"."+r.Kind, "applies only to cumulative fits, and models.approaches does not include cumulative")
			}
		case RuleRejectIfTestRejects:
			if d.clean("models.levels") && len(p.Models.Levels) < 2 {
				d.errAt(ip+"."+r.Kind, "compares neighbouring levels, but models.levels has only one (%s)", strings.Join(p.Models.Levels, ""))
			}
		}
	}
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
