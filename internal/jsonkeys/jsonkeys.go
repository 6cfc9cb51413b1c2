package jsonkeys

import (
	"encoding/json"
	"regexp"
	"slices"
)

var snake = regexp.MustCompile(`^[a-z][a-z0-9]*(_[a-z0-9]+)*$`)

// NotSnakeCase returns, sorted and without repeats, the object keys at any
// depth of the JSON document js that are not snake_case. The keys of an
// object under a key in byName (directly, or as the elements of an array
// there) are names from the data, such as parameter or model names (the
// map of estimates by parameter): they are not checked, the keys of the
// objects they hold are.
func NotSnakeCase(js []byte, byName ...string) ([]string, error) {
	var v any
	if err := json.Unmarshal(js, &v); err != nil {
		return nil, err
	}
	var bad []string
	var walk func(v any, named bool)
	walk = func(v any, named bool) {
		switch x := v.(type) {
		case map[string]any:
			for k, e := range x {
				if !named && !snake.MatchString(k) {
					bad = append(bad, k)
				}
				walk(e, !named && slices.Contains(byName, k))
			}
		case []any:
			for _, e := range x {
				walk(e, named)
			}
		}
	}
	walk(v, false)
	slices.Sort(bad)
	return slices.Compact(bad), nil
}
