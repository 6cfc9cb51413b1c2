package plan

import (
	"strings"
	"testing"

	"ordplan/runner/data"
)

// The suggestion path costs no memory per header name, and clipping a long
// name does not copy it: a header of long names is as cheap as a short one.
func TestSuggestionBoundedMemory(t *testing.T) {
	long := strings.Repeat("é", 1<<16)
	longer := long + "x"
	header := []string{"y", long, "Age_Group", longer}
	near := []string{long}
	if a := testing.AllocsPerRun(10, func() { data.NearColumn(longer, near) }); a != 0 {
		t.Errorf("data.NearColumn allocates %v times", a)
	}
	if got := columnHint("age-group", header); got != `; did you mean "Age_Group"?` {
		t.Errorf("hint %q", got)
	}
	a := testing.AllocsPerRun(5, func() { _ = columnHint("nothing", header) })
	if a > 20 {
		t.Errorf("columnHint allocates %v times", a)
	}
	if c := clip(long); len(c) > 40*4 || !strings.HasSuffix(c, "...") {
		t.Errorf("clip gives %d bytes", len(c))
	}
	if clip("short") != "short" || clip(strings.Repeat("a", 40)) != strings.Repeat("a", 40) || clip(strings.Repeat("a", 41)) != strings.Repeat("a", 37)+"..." {
		t.Error("clip changed short texts")
	}
	es := make(Errors, 100)
	for i := range es {
		es[i] = &Error{File: "p.yaml", Line: i + 1, Msg: "x"}
	}
	if s := es.Error(); strings.Count(s, "\n") != MaxShown || !strings.HasSuffix(s, "p.yaml: ... and 60 more problems") {
		t.Errorf("capped list:\n%s", s)
	}
}
