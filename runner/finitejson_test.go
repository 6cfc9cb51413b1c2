package runner

import (
	"math"
	"strings"
	"testing"
)

// Numbers that do not exist are written as null, in structs, pointers,
// slices, maps and interfaces, and the value is left as it was.
func TestMarshalStableNonFinite(t *testing.T) {
	type inner struct {
		X float64 `json:"x"`
	}
	type outer struct {
		A  float64            `json:"a"`
		B  []float64          `json:"b"`
		M  map[string]float64 `json:"m"`
		P  *inner             `json:"p"`
		I  any                `json:"i"`
		MS map[string]inner   `json:"ms"`
		inner
	}
	nan, inf := math.NaN(), math.Inf(1)
	v := outer{A: inf, B: []float64{1, nan, -inf}, M: map[string]float64{"k": nan, "ok": 2}, P: &inner{X: -inf},
		I: inner{X: nan}, MS: map[string]inner{"z": {X: inf}}, inner: inner{X: nan}}
	b, err := MarshalStable(v)
	if err != nil {
		t.Fatal(err)
	}
	s := string(b)
	for _, w := range []string{`"a": null`, "1,\n    null,\n    null", `"k": null`, `"ok": 2`, `"x": null`} {
		if !strings.Contains(s, w) {
			t.Errorf("want %q in\n%s", w, s)
		}
	}
	if strings.Contains(s, "e-3") || strings.Count(s, "null") != 8 {
		t.Errorf("sentinel left or nulls missing:\n%s", s)
	}
	if !math.IsInf(v.A, 1) || !math.IsNaN(v.B[1]) || !math.IsNaN(v.M["k"]) || !math.IsInf(v.P.X, -1) || !math.IsInf(v.MS["z"].X, 1) || !math.IsNaN(v.inner.X) {
		t.Errorf("the value was changed: %+v", v)
	}
	if b, err := MarshalStable(map[string]float64{"a": 1.5}); err != nil || string(b) != "{\n  \"a\": 1.5\n}\n" {
		t.Errorf("finite: %q %v", b, err)
	}
}
