package data

import (
	"slices"
	"testing"
)

// A value of one_of or none_of written as another spelling of a number the
// column holds (3.0, 3e0 for 3; 1,0 for 1 under a decimal comma, in the
// value too: 1,00 names 1 there) names
// that number, as outcome codes 2.0 are the code 2: it keeps or drops the
// rows holding it, and no note says it matched no row. A different number
// or a boolean word matches nothing.
func TestSubsetListComparesNumbers(t *testing.T) {
	raw := []byte("y,a,w\n1,0.5,3\n2,1.5,1\n2,2.5,3\n1,0.1,2\n1,0.2,1.0\n2,0.3,true\n")
	semi := []byte("y;a;w\n1;0,5;3\n2;1,5;1\n2;2,5;3\n1;0,1;2\n1;0,2;1,0\n2;0,3;true\n")
	for _, c := range []struct {
		name   string
		raw    []byte
		dia    Dialect
		op     string
		values []string
		wantA  []float64
		notes  int
	}{
		{"none_of 3.0", raw, Dialect{}, "not_in", []string{"3.0"}, []float64{1.5, 0.1, 0.2, 0.3}, 0},
		{"one_of 1.0", raw, Dialect{}, "in", []string{"1.0"}, []float64{1.5, 0.2}, 0},
		{"one_of 3e0, 2", raw, Dialect{}, "in", []string{"3e0", "2"}, []float64{0.5, 2.5, 0.1}, 0},
		{"one_of 1 under a decimal comma", semi, Dialect{Delimiter: ';', DecimalComma: true}, "in", []string{"1"}, []float64{1.5, 0.2}, 0},
		{"one_of 1,00 and 3,0 in the file's decimal mark", semi, Dialect{Delimiter: ';', DecimalComma: true}, "in", []string{"1,00", "3,0"}, []float64{0.5, 1.5, 2.5, 0.2}, 0},
		{"none_of 1,00 in the file's decimal mark", semi, Dialect{Delimiter: ';', DecimalComma: true}, "not_in", []string{"1,00"}, []float64{0.5, 2.5, 0.1, 0.3}, 0},
		{"one_of 4.0: no row", raw, Dialect{}, "in", []string{"4.0", "2", "true"}, []float64{0.1, 0.3}, 1},
		{"one_of 1 is not the boolean true", raw, Dialect{}, "in", []string{"1"}, []float64{1.5, 0.2}, 0},
	} {
		opt := Options{Outcome: "y", Predictors: []string{"a"}, MissingTokens: []string{""}, Dialect: c.dia,
			Keep: []Condition{{Column: "w", Op: c.op, Values: c.values, Key: "subset[0]"}}}
		d, err := readBytes(c.raw, "d.csv", opt)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if !slices.Equal(d.X, c.wantA) || len(d.Notes) != c.notes {
			t.Errorf("%s: kept a = %v, want %v; notes %q", c.name, d.X, c.wantA, d.Notes)
		}
	}
}
