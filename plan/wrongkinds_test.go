package plan

import (
	"errors"
	"fmt"
	"regexp"
	"strings"
	"testing"
)

// wrongValues are values of another kind than a key of kind k holds, as
// YAML flow text: each must be refused at its place.
func wrongValues(k Kind) []string {
	switch k {
	case KindInteger, KindNumber, KindProbability:
		return []string{"wide", "{x: 1}", "[1, 2]", "true", "2024-01-01", "!!binary aGk="}
	case KindBoolean:
		return []string{"wide", "{x: 1}", "[true]", "1"}
	case KindText, KindName, KindWord:
		return []string{"{x: 1}", "[a, b]"}
	case KindWords, KindNames:
		return []string{"{x: 1}", "[{x: 1}]", "[[a]]"}
	case KindNumbers:
		return []string{"{x: 1}", "[wide]", "[{x: 1}]", "[[1]]", "[true]"}
	}
	return nil
}

// placed is the form of every message about a plan's value: its file,
// line and column, then its key.
var placed = regexp.MustCompile(`^bad\.yaml:\d+:\d+: \S+: \S`)

// A value of the wrong kind, at every key of the plan's sections, of the
// items of its lists of mappings (outcomes, subset, deviations), of the
// data dictionary and categorical entries, and of every rule's options
// (Spec: new keys are tried as they are added), is refused with its
// file:line:column and key, saying what is wanted in words (no YAML tags,
// no Go formatting).
func TestWrongKindsCarryTheirPlace(t *testing.T) {
	type trial struct{ key, src string }
	var trials []trial
	sectionOf := map[string]string{"data": "  file: d.csv\n", "models": "  partial:\n    free: [a]\n"}
	for _, s := range Spec.Keys {
		switch s.Kind {
		case KindMapping:
			for _, c := range s.Keys {
				for _, v := range wrongValues(c.Kind) {
					body := sectionOf[s.Name]
					if c.Name == "file" {
						body = ""
					}
					src := strings.Replace(base, s.Name+":\n"+sectionOf[s.Name], "", 1)
					if s.Name == "data" && c.Name != "file" {
						body = "  file: d.csv\n"
					}
					trials = append(trials, trial{s.Name + "." + c.Name, src + s.Name + ":\n" + body + "  " + c.Name + ": " + v + "\n"})
				}
			}
		case KindList:
			if s.Item == nil || s.Item.Kind != KindMapping {
				continue
			}
			for _, c := range s.Item.Keys {
				for _, v := range wrongValues(c.Kind) {
					src := base + s.Name + ":\n  - {" + c.Name + ": " + v + "}\n"
					switch s.Name {
					case "predictors":
						item := "  - {column: a, " + c.Name + ": " + v + "}\n"
						if c.Name == "column" {
							item = "  - {column: " + v + "}\n"
						}
						src = strings.Replace(base, "predictors: [a, b, c]\n", "predictors:\n"+item+"  - b\n  - c\n", 1)
					case "outcomes":
						item := "  - column: y\n    " + c.Name + ": " + v + "\n"
						if c.Name == "column" {
							item = "  - column: " + v + "\n"
						}
						src = strings.Replace(base, "  - column: y\n", item, 1)
					}
					trials = append(trials, trial{s.Name + "[0]." + c.Name, src})
				}
			}
		case KindMap:
			if len(s.Keys) != 1 || s.Keys[0].Kind != KindMapping {
				continue
			}
			for _, c := range s.Keys[0].Keys {
				for _, v := range wrongValues(c.Kind) {
					trials = append(trials, trial{s.Name + ".a." + c.Name, base + s.Name + ":\n  a: {" + c.Name + ": " + v + "}\n"})
				}
			}
		case KindRules:
			for _, r := range s.Variants {
				for _, c := range r.Keys {
					for _, v := range wrongValues(c.Kind) {
						rules := "rules:\n  - " + r.Name + ": {" + c.Name + ": " + v + "}\n"
						if r.Name != RuleChoose && r.Name != RulePreferSimpler {
							rules += "  - choose: {by: aic}\n"
						}
						trials = append(trials, trial{"rules[0]." + r.Name + "." + c.Name, strings.Replace(base, "rules:\n  - choose: {by: aic}\n", rules, 1)})
					}
				}
			}
		}
	}
	if len(trials) < 150 {
		t.Fatalf("only %d trials: the walk over Spec missed keys", len(trials))
	}
	for _, tr := range trials {
		_, err := Parse([]byte(tr.src), "bad.yaml")
		var es Errors
		if !errors.As(err, &es) {
			t.Errorf("%s: accepted or not a plan error (%v):\n%s", tr.key, err, tr.src)
			continue
		}
		found := false
		for _, e := range es {
			msg := e.Error()
			if !placed.MatchString(msg) {
				t.Errorf("%s: message without its place: %s\n%s", tr.key, msg, tr.src)
			}
			if strings.Contains(msg, "!!") || strings.Contains(msg, "%!") || strings.Contains(msg, "<nil>") {
				t.Errorf("%s: message in the parser's words: %s", tr.key, msg)
			}
			found = found || strings.HasPrefix(e.Key, tr.key)
		}
		if !found {
			t.Errorf("%s: no message at the key:\n%v\n%s", tr.key, err, tr.src)
		}
		if testing.Verbose() {
			fmt.Println(es[0].Error())
		}
	}
}
