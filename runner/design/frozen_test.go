package design

import (
	"bytes"
	"encoding/gob"
	"encoding/json"
	"math/rand/v2"
	"reflect"
	"testing"

	"ordplan/internal/jsonkeys"
)

// A design made again from its frozen constants, after a JSON and a gob
// round trip (as a queue job carries it), gives the same columns, records,
// notes and design rows, bit for bit, on rows other than those it was
// built on: every kind of term and constant (sample mean and SD, quantile
// knots, orthogonal polynomial, a dropped level, sum coding, interactions).
func TestFrozenDesignRoundTrip(t *testing.T) {
	spec := Spec{
		Sources: []Source{{Name: "age"}, {Name: "site", Cat: &Categorical{Levels: []string{"n", "e", "s", "w"}, Coding: Sum, Unobserved: UnobservedDrop}}, {Name: "dose"}},
		Terms: []TermSpec{
			{Name: "site", Source: "site"},
			{Name: "age.s", Source: "age", Transform: Transform{Centre: "mean", Scale: true, Quantiles: []float64{0.1, 0.5, 0.9}}},
			{Name: "dose.log", Source: "dose", Transform: Transform{Log: true, Shift: 1, Centre: "value", CentreAt: 1}},
			{Name: "age.p", Source: "age", Transform: Transform{Poly: 3}},
			{Name: "site&age.s", Interact: []string{"site", "age.s"}},
		},
	}
	rng := rand.New(rand.NewPCG(5, 6))
	rows := func(n int) []float64 {
		raw := make([]float64, n*3)
		for i := 0; i < n; i++ {
			raw[i*3] = 20 + 50*rng.Float64()
			raw[i*3+1] = float64(rng.IntN(3)) // level "w" never occurs: dropped
			raw[i*3+2] = float64(rng.IntN(5))
		}
		return raw
	}
	n := 60
	raw := rows(n)
	w := make([]float64, n)
	for i := range w {
		w[i] = 1 + float64(rng.IntN(3))
	}
	d, err := Build(spec, raw, n, w, nil)
	if err != nil {
		t.Fatal(err)
	}
	fz := d.Freeze(spec)
	js, err := json.Marshal(fz)
	if err != nil {
		t.Fatal(err)
	}
	if bad, err := jsonkeys.NotSnakeCase(js); err != nil || len(bad) > 0 {
		t.Errorf("frozen design JSON keys not in snake_case: %v %v\n%s", bad, err, js)
	}
	var viaJSON Frozen
	if err := json.Unmarshal(js, &viaJSON); err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := gob.NewEncoder(&buf).Encode(&viaJSON); err != nil {
		t.Fatal(err)
	}
	var viaGob Frozen
	if err := gob.NewDecoder(&buf).Decode(&viaGob); err != nil {
		t.Fatal(err)
	}
	again, err := viaGob.Design()
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(again.Columns, d.Columns) || !reflect.DeepEqual(again.Notes, d.Notes) || !reflect.DeepEqual(again.SourceScales(), d.SourceScales()) {
		t.Fatalf("columns, notes or scales differ:\n%v %v %v\n%v %v %v", again.Columns, again.Notes, again.SourceScales(), d.Columns, d.Notes, d.SourceScales())
	}
	a, _ := json.Marshal(again.Records())
	b, _ := json.Marshal(d.Records())
	if !bytes.Equal(a, b) {
		t.Fatalf("records differ:\n%s\n%s", a, b)
	}
	other := rows(40)
	x1, _, err1 := d.Matrix(other, 40)
	x2, _, err2 := again.Matrix(other, 40)
	if err1 != nil || err2 != nil || !reflect.DeepEqual(x1, x2) {
		t.Fatalf("design rows differ (%v, %v)", err1, err2)
	}
	if len(d.Notes) == 0 {
		t.Error("the dropped level left no note")
	}
}
