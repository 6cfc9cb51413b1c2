package plan

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"
	"gopkg.in/yaml.v3"
)

// compiledSchema compiles Schema with a general-purpose JSON Schema
// validator (draft 2020-12).
func compiledSchema(t *testing.T) *jsonschema.Schema {
	t.Helper()
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(Schema()))
	if err != nil {
		t.Fatalf("the schema is not JSON: %v", err)
	}
	c := jsonschema.NewCompiler()
	if err := c.AddResource("plan.schema.json", doc); err != nil {
		t.Fatal(err)
	}
	s, err := c.Compile("plan.schema.json")
	if err != nil {
		t.Fatalf("the schema does not compile: %v", err)
	}
	return s
}

// asJSON reads YAML as the JSON value an editor would check.
func asJSON(t *testing.T, src []byte) any {
	t.Helper()
	var v any
	if err := yaml.Unmarshal(src, &v); err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	out, err := jsonschema.UnmarshalJSON(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// The schema accepts the example plans and refuses a plan with an unknown
// key, a word that is not allowed, or a missing required key.
func TestSchemaAgainstPlans(t *testing.T) {
	s := compiledSchema(t)
	for _, name := range []string{"example.yaml", "kneepain.yaml"} {
		src, err := os.ReadFile(filepath.Join("..", "plans", name))
		if err != nil {
			t.Fatal(err)
		}
		if err := s.Validate(asJSON(t, src)); err != nil {
			t.Errorf("%s: %v", name, err)
		}
	}
	src, _ := os.ReadFile(filepath.Join("..", "plans", "example.yaml"))
	for _, c := range []struct{ name, from, to, want string }{
		{"unknown key", "seed: 20261202", "seed: 20261202\nsede: 3", "sede"},
		{"unknown key inside a section", "  missing: drop", "  missing: drop\n  colour: red", "colour"},
		{"word not allowed", "links: [logit]", "links: [tanh]", "/models/links/0"},
		{"old word", "covariance: observed", "covariance: oim", "/covariance"},
		{"required key missing", "version: 1", "", "version"},
	} {
		bad := strings.Replace(string(src), c.from, c.to, 1)
		if bad == string(src) {
			t.Fatalf("%s: %q is not in the example plan", c.name, c.from)
		}
		err := s.Validate(asJSON(t, []byte(bad)))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: got %v, want an error naming %q", c.name, err, c.want)
		}
	}
}

// Every key the decoder allows is in Spec (the decoder takes its lists
// from Spec), and the help lists every key of Spec.
func TestKeyHelpListsEveryKey(t *testing.T) {
	help := KeyHelp()
	for _, path := range []string{"version", "data.weight_kind", "models.effects", "models.partial.select.test",
		"rules[i].reject_if_test_rejects.against", "inference.profile", "outcomes[i].categories", "covariance"} {
		if !strings.Contains(help, "\n"+path+"\n") && !strings.HasPrefix(help, path+"\n") {
			t.Errorf("help plan does not list %s", path)
		}
	}
	for _, w := range []string{"observed | expected | sandwich | sandwich_plain | clustered", "frequency | sampling",
		"logit | probit | cloglog | loglog | cauchy", "default parallel, partial, constrained, nonparallel"} {
		if !strings.Contains(help, w) {
			t.Errorf("help plan lacks %q", w)
		}
	}
	if got := strings.Join(keysAt("models"), ","); got != "approaches,direction,effects,links,partial,run_every_start" {
		t.Errorf("models keys %s", got)
	}
}

// Every number option of a rule with a lower bound is refused at the
// bound by the decoder exactly when the schema refuses it (exclusiveMinimum
// for a bound the value must exceed, minimum otherwise) and when `ordplan
// help plan` says "more than", and both take a value above the bound; a
// whole-number option with a range is refused just outside it by both and
// taken at its ends, and the help gives the range: the bound is written
// once, in Spec (Key.Min, Key.MinOpen, Key.Max).
func TestRuleBoundsAsTheSchema(t *testing.T) {
	s := compiledSchema(t)
	src, err := os.ReadFile(filepath.Join("..", "plans", "example.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	const line = "  - reject_if_sparse: {per_parameter: 10, smallest_category: 5, within: pilot}"
	if !strings.Contains(string(src), line) {
		t.Fatalf("%q is not in the example plan", line)
	}
	help := KeyHelp()
	tried := 0
	for _, rule := range Spec.find("rules").Variants {
		for _, x := range rule.Keys {
			whole := x.Kind == KindInteger && x.Max != nil
			if x.Kind != KindNumber && !whole || x.Min == nil {
				continue
			}
			tried++
			path := "rules[2]." + rule.Name + "." + x.Name + ":"
			where := "/rules/2/" + rule.Name + "/" + x.Name
			values := []float64{*x.Min, *x.Min + 1}
			if whole {
				values = []float64{*x.Min - 1, *x.Min, *x.Max, *x.Max + 1}
			}
			for _, v := range values {
				bad := strings.Replace(string(src), line, fmt.Sprintf("  - %s: {%s: %v}", rule.Name, x.Name, v), 1)
				_, perr := Parse([]byte(bad), "bounds.yaml")
				decRefused := perr != nil && strings.Contains(perr.Error(), path)
				serr := s.Validate(asJSON(t, []byte(bad)))
				schemaRefused := serr != nil && strings.Contains(serr.Error(), where)
				want := v == *x.Min && x.MinOpen || v < *x.Min || x.Max != nil && v > *x.Max
				if decRefused != want || schemaRefused != want {
					t.Errorf("%s = %v: refused by the decoder %v (%v), by the schema %v (%v); want %v", where, v, decRefused, perr, schemaRefused, serr, want)
				}
			}
			text := fmt.Sprintf("number, at least %g", *x.Min)
			switch {
			case whole:
				text = fmt.Sprintf("whole number, %g to %g", *x.Min, *x.Max)
			case x.MinOpen:
				text = fmt.Sprintf("number, more than %g", *x.Min)
			}
			if !strings.Contains(help, text) {
				t.Errorf("%s: the help does not say %q", where, text)
			}
		}
	}
	if tried < 6 { // margin (choose, prefer_simpler), per_parameter, smallest_category, max_condition, min_starts_agreeing
		t.Fatalf("only %d bounded rule options", tried)
	}
}
