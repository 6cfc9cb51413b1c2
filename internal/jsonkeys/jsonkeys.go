// Package jsonkeys checks the project's JSON convention for tests: every
// object key is snake_case (lower-case words joined by underscores).
package jsonkeys

import (
	"encoding/json"
	"regexp"
	"slices"
)

var snake = regexp.MustCompile(`^[a-z][a-z0-9]*(_[a-z0-9]+)*$`)

// NotSnakeCase returns, sorted and without repeats, the object keys at any
// depth of the JSON document js that are not snake_case.
func NotSnakeCase(js []byte) ([]string, error) {
	var v any
	if err := json.Unmarshal(js, &v); err != nil {
		return nil, err
	}
	var bad []string
	var walk func(any)
	walk = func(v any) {
		switch x := v.(type) {
		case map[string]any:
			for k, e := range x {
				if !snake.MatchString(k) {
					bad = append(bad, k)
				}
				walk(e)
			}
		case []any:
			for _, e := range x {
				walk(e)
			}
		}
	}
	walk(v)
	slices.Sort(bad)
	return slices.Compact(bad), nil
}
