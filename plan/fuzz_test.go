package plan

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzParse feeds arbitrary bytes to Parse. It must never panic; a failure
// must be a non-empty Errors list naming the file; a success must be a plan
// whose canonical form parses again to the same canonical form.
func FuzzParse(f *testing.F) {
	if src, err := os.ReadFile(filepath.Join("..", "plans", "example.yaml")); err == nil {
		f.Add(src)
	}
	f.Add([]byte(base))
	f.Add([]byte(base + "seed: 18446744073709551615\nreport: {title: \"t\\u00e9\", confidence_level: 0.5}\n"))
	f.Add([]byte("version: 1\nrules: [{choose: true}]\npredictors: &p [a]\nmodels: {effects: [parallel]}\noutcomes: [{column: y, categories: [1, 2]}]\ndata: {file: x}\n"))
	f.Add([]byte(termsPlanSrc))
	f.Add([]byte("a: &a [*a]\n"))
	f.Add([]byte("- [\n"))
	f.Fuzz(CheckParse)
}

// CheckParse is the property of FuzzParse and FuzzPlanShapes: Parse never
// panics; a failure is a non-empty Errors list naming the file; a success
// is a plan whose canonical form parses again to the same canonical form.
func CheckParse(t *testing.T, src []byte) {
	p, err := Parse(src, "f.yaml")
	if err != nil {
		var es Errors
		if !errors.As(err, &es) || len(es) == 0 {
			t.Fatalf("error %T %v is not a non-empty Errors", err, err)
		}
		for _, e := range es {
			if e.File != "f.yaml" || e.Msg == "" {
				t.Fatalf("malformed error %+v", e)
			}
			if (e.Line == 0 || e.Col == 0) && !strings.HasPrefix(e.Msg, "not valid YAML") && !strings.HasPrefix(e.Msg, "plan file is empty") {
				t.Fatalf("TMPCHECK error without its place: %v\n%s", e, src)
			}
		}
		return
	}
	if p == nil {
		t.Fatal("nil plan without error")
	}
	c := p.Canonical()
	q, err := Parse(c, "g.yaml")
	if err != nil {
		t.Fatalf("canonical form of an accepted plan is rejected: %v\n%s", err, c)
	}
	if c2 := q.Canonical(); !bytes.Equal(c, c2) {
		t.Fatalf("canonical form changed on reparse:\n%s\nvs\n%s", c, c2)
	}
}
