package lock

import "testing"

// FuzzDiff compares two arbitrary texts as canonical forms (a lock's frozen
// form is JSON a hand may have edited). Diff must never panic; a text
// compared with itself has no change; every change it lists changes
// something (a value, or an item's place in its list).
func FuzzDiff(f *testing.F) {
	f.Add([]byte(`{"a": 1, "b": [1, 2]}`), []byte(`{"b": [2], "a": 1, "c": null}`))
	f.Add([]byte(`{"rules": [{"choose": {"by": "aic"}}, {"x": true}]}`), []byte(`{"rules": [{"x": true}, {"choose": {"by": "bic"}}]}`))
	f.Add([]byte(`[[1], {"a": []}, "s", 1e400]`), []byte(`[{"a": [{}]}, [1, [2]]]`))
	f.Add([]byte(`{"a": {"a": {"a": 1}}}`), []byte(`{"a": {"a": 2}} x`))
	f.Fuzz(func(t *testing.T, a, b []byte) {
		if _, err := parseValue(a); err == nil {
			same, err := Diff(a, a)
			if err != nil || len(same) != 0 {
				t.Fatalf("a text against itself: %v %v", same, err)
			}
		}
		changes, err := Diff(a, b)
		if err != nil {
			return
		}
		for _, c := range changes {
			if c.From == c.To && c.Moved == "" {
				t.Fatalf("change %+v changes nothing", c)
			}
		}
	})
}
