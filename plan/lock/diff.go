package lock

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
)

// Change is one difference between two canonical forms.
type Change struct {
	Path string `json:"key"`  // key path, as in plan messages: "rules[2].choose.by"
	From string `json:"from"` // JSON text of the frozen value, or "(absent)"
	To   string `json:"to"`   // JSON text of the current value, or "(absent)"
	// Follows is, for a key the plan does not write whose value it takes
	// from another key that changed too (report.title from title), that
	// key: the change is part of that key's, whose reason it takes.
	Follows string `json:"follows,omitempty"`
	// Moved is, for an item of a list of mappings (a rule, a sensitivity
	// analysis) that moved unchanged, its key in the frozen list: Path is
	// its key now, and From and To are the same text.
	Moved string `json:"moved_from,omitempty"`
}

// Transition writes what changed at the key, as messages and records
// list it: "FROM -> TO", or for an item that moved unchanged "moved from
// KEY, unchanged: TEXT".
func (c Change) Transition() string {
	if c.Moved != "" {
		return "moved from " + c.Moved + ", unchanged: " + c.To
	}
	return c.From + " -> " + c.To
}

// Absent marks a key that one side does not have.
const Absent = "(absent)"

// value is a JSON value that keeps the order of object keys.
type value struct {
	keys   []string // object keys in order (nil for other kinds)
	fields map[string]*value
	items  []*value // arrays
	text   string   // compact JSON of the whole value
	object bool
	array  bool
}

// Diff lists the differences between two canonical forms, key by key, in
// the order of the keys (frozen form first, then keys only the current
// form has). Lists of plain values (predictors, categories) are compared
// as wholes; lists of mappings (outcomes, rules) item by item.
func Diff(frozen, current []byte) ([]Change, error) {
	a, err := parseValue(frozen)
	if err != nil {
		return nil, fmt.Errorf("frozen canonical form: %v", err)
	}
	b, err := parseValue(current)
	if err != nil {
		return nil, fmt.Errorf("current canonical form: %v", err)
	}
	var out []Change
	diffValues("", a, b, &out)
	return out, nil
}

func diffValues(path string, a, b *value, out *[]Change) {
	switch {
	case a == nil && b == nil:
		return
	case a == nil:
		*out = append(*out, Change{Path: path, From: Absent, To: b.text})
		return
	case b == nil:
		*out = append(*out, Change{Path: path, From: a.text, To: Absent})
		return
	case a.text == b.text:
		return
	case a.object && b.object:
		for _, k := range a.keys {
			diffValues(child(path, k), a.fields[k], b.fields[k], out)
		}
		for _, k := range b.keys {
			if _, ok := a.fields[k]; !ok {
				diffValues(child(path, k), nil, b.fields[k], out)
			}
		}
		return
	case a.array && b.array && (hasObjects(a) || hasObjects(b)):
		diffItems(path, a.items, b.items, out)
		return
	}
	*out = append(*out, Change{Path: path, From: a.text, To: b.text})
}

// diffItems compares two lists of mappings item by item. Items equal in
// both lists are matched first (a longest common subsequence), so that a
// removed or inserted item reads as one item removed or added, not as a
// change of every item after it. Between matched items, as many items on
// each side are compared in pairs, key by key; otherwise items with the
// same keys (rules of one kind, outcomes) are matched the same way and
// compared key by key, under their index in the current list, and the
// items left over are removed (named by their index in the frozen list)
// or added (by their index in the current one).
func diffItems(path string, a, b []*value, out *[]Change) {
	start := len(*out)
	defer func() { *out = append((*out)[:start], moves((*out)[start:], path)...) }()
	at := func(i int) string { return fmt.Sprintf("%s[%d]", path, i) }
	same := func(x, y *value) bool { return x.text == y.text }
	alike := func(x, y *value) bool { return x.object && y.object && slices.Equal(sortedKeys(x), sortedKeys(y)) }
	// gap compares a[i0:i1] with b[j0:j1], which share no equal item.
	gap := func(i0, i1, j0, j1 int) {
		if i1-i0 == j1-j0 {
			for k := range i1 - i0 {
				diffValues(at(j0+k), a[i0+k], b[j0+k], out)
			}
			return
		}
		walk(a[i0:i1], b[j0:j1], alike, func(i, j int) {
			switch {
			case i < 0:
				diffValues(at(j0+j), nil, b[j0+j], out)
			case j < 0:
				diffValues(at(i0+i), a[i0+i], nil, out)
			default:
				diffValues(at(j0+j), a[i0+i], b[j0+j], out)
			}
		})
	}
	i0, j0 := 0, 0
	walk(a, b, same, func(i, j int) {
		if i >= 0 && j >= 0 {
			gap(i0, i, j0, j)
			i0, j0 = i+1, j+1
		}
	})
	gap(i0, len(a), j0, len(b))
}

// moves joins, among the changes of the list at path, an item removed
// and an item added with the same text into one change: the item moved
// (Change.Moved), at the added item's place. An item the plan moved is
// the same item, not one removed and another added (a sensitivity
// analysis moved is not one added after freezing); the move is still a
// change of the list, whose order is that of the rules and the report.
func moves(cs []Change, path string) []Change {
	item := func(c Change) bool {
		return strings.HasPrefix(c.Path, path+"[") && !strings.ContainsAny(c.Path[len(path)+1:], ".[")
	}
	gone := map[int]bool{}
	for j, c := range cs {
		if c.From != Absent || !item(c) {
			continue
		}
		for i, r := range cs {
			if !gone[i] && r.To == Absent && item(r) && r.From == c.To {
				gone[i] = true
				cs[j].From, cs[j].Moved = r.From, r.Path
				break
			}
		}
	}
	out := cs[:0:0]
	for i, c := range cs {
		if !gone[i] {
			out = append(out, c)
		}
	}
	return out
}

// walk aligns two lists by a longest common subsequence of items that eq
// matches, and calls visit in list order: (i, j) for a matched pair, (i,
// -1) for an item of a alone, (-1, j) for an item of b alone.
func walk(a, b []*value, eq func(x, y *value) bool, visit func(i, j int)) {
	n, m := len(a), len(b)
	common := make([][]int, n+1) // common[i][j]: of a[i:] and b[j:]
	for i := range common {
		common[i] = make([]int, m+1)
	}
	for i := n - 1; i >= 0; i-- {
		for j := m - 1; j >= 0; j-- {
			if eq(a[i], b[j]) {
				common[i][j] = common[i+1][j+1] + 1
			} else {
				common[i][j] = max(common[i+1][j], common[i][j+1])
			}
		}
	}
	i, j := 0, 0
	for i < n && j < m {
		switch {
		case eq(a[i], b[j]) && common[i][j] == common[i+1][j+1]+1:
			visit(i, j)
			i, j = i+1, j+1
		case common[i+1][j] >= common[i][j+1]:
			visit(i, -1)
			i++
		default:
			visit(-1, j)
			j++
		}
	}
	for ; i < n; i++ {
		visit(i, -1)
	}
	for ; j < m; j++ {
		visit(-1, j)
	}
}

// sortedKeys lists an object's keys in sorted order.
func sortedKeys(v *value) []string {
	k := slices.Clone(v.keys)
	slices.Sort(k)
	return k
}

func child(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

func hasObjects(v *value) bool {
	for _, it := range v.items {
		if it.object || it.array {
			return true
		}
	}
	return false
}

func parseValue(b []byte) (*value, error) {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	v, err := readValue(dec)
	if err != nil {
		return nil, err
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, fmt.Errorf("trailing data")
	}
	return v, nil
}

func readValue(dec *json.Decoder) (*value, error) {
	tok, err := dec.Token()
	if err != nil {
		return nil, err
	}
	switch t := tok.(type) {
	case json.Delim:
		switch t {
		case '{':
			v := &value{object: true, fields: map[string]*value{}}
			for dec.More() {
				kt, err := dec.Token()
				if err != nil {
					return nil, err
				}
				k, _ := kt.(string)
				f, err := readValue(dec)
				if err != nil {
					return nil, err
				}
				if _, dup := v.fields[k]; !dup {
					v.keys = append(v.keys, k)
				}
				v.fields[k] = f
			}
			if _, err := dec.Token(); err != nil {
				return nil, err
			}
			v.text = compactObject(v)
			return v, nil
		case '[':
			v := &value{array: true}
			for dec.More() {
				it, err := readValue(dec)
				if err != nil {
					return nil, err
				}
				v.items = append(v.items, it)
			}
			if _, err := dec.Token(); err != nil {
				return nil, err
			}
			v.text = compactArray(v)
			return v, nil
		}
		return nil, fmt.Errorf("unexpected %v", t)
	case string:
		return &value{text: quoteJSON(t)}, nil
	case json.Number:
		return &value{text: t.String()}, nil
	case bool:
		return &value{text: strconv.FormatBool(t)}, nil
	case nil:
		return &value{text: "null"}, nil
	}
	return nil, fmt.Errorf("unexpected token %v", tok)
}

func quoteJSON(s string) string {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	_ = enc.Encode(s)
	return string(bytes.TrimSpace(buf.Bytes()))
}

func compactObject(v *value) string {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, k := range v.keys {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(quoteJSON(k))
		b.WriteString(": ")
		b.WriteString(v.fields[k].text)
	}
	b.WriteByte('}')
	return b.String()
}

func compactArray(v *value) string {
	var b bytes.Buffer
	b.WriteByte('[')
	for i, it := range v.items {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(it.text)
	}
	b.WriteByte(']')
	return b.String()
}
