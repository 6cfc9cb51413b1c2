package lock

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"maps"
	"math"
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
	// analysis) that moved, its key in the frozen list: Path is its key
	// now, From and To its whole text then and now (the same text when
	// it moved unchanged).
	Moved string `json:"moved_from,omitempty"`
	// Keys are, for an item that moved and changed, the keys that changed
	// in it, each relative to the item (reject_if_sparse.per_parameter).
	Keys []Change `json:"changed_keys,omitempty"`
}

// Transition writes what changed at the key, as messages and records
// list it: "FROM -> TO", or for an item that moved "moved from KEY,
// unchanged: TEXT" or "moved from KEY, changed: K1 FROM -> TO; K2 ...".
func (c Change) Transition() string {
	if c.Moved == "" {
		return c.From + " -> " + c.To
	}
	if len(c.Keys) == 0 {
		return "moved from " + c.Moved + ", unchanged: " + c.To
	}
	keys := make([]string, len(c.Keys))
	for i, k := range c.Keys {
		keys[i] = k.Path + " " + k.Transition()
	}
	return "moved from " + c.Moved + ", changed: " + strings.Join(keys, "; ")
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
// change of every item after it. Of the items left, one of the frozen list
// and one of the current list are the same item (sameItems):
//   - with the same text: the item moved unchanged;
//   - otherwise, for items with a name (a sensitivity analysis's name, a
//     predictor's; an outcome's column), the same name;
//   - for items without one (rules), the same kind (the same keys) with
//     at least as many of their values unchanged as changed, each the
//     other's only best match (no other item of either list as close).
//
// Such a pair whose place among the items kept changed (its two items lie
// after different numbers of kept items, or it crosses another pair of
// the same item changed) moved: one change
// (Change.Moved) at the current index, naming the frozen index and the
// keys that changed in it (Change.Keys). A pair that kept its place is
// compared key by key under its index in the current list. Of the items
// left over between two kept items, as many on each side are compared in
// pairs, key by key; otherwise items with the same keys are matched as the
// kept items are and compared key by key, and the rest are removed (named
// by their index in the frozen list) or added (by their index in the
// current one). A rule removed and another of its kind added elsewhere,
// sharing fewer values than they differ in, stay one removed and one added.
func diffItems(path string, a, b []*value, out *[]Change) {
	at := func(i int) string { return fmt.Sprintf("%s[%d]", path, i) }
	same := func(x, y *value) bool { return x.text == y.text }
	alike := func(x, y *value) bool { return x.object && y.object && slices.Equal(sortedKeys(x), sortedKeys(y)) }
	pa, pb := unpaired(len(a)), unpaired(len(b))
	walk(a, b, same, func(i, j int) {
		if i >= 0 && j >= 0 {
			pa[i], pb[j] = j, i
		}
	})
	// gap numbers the stretches between kept items: an item lies in the
	// stretch after as many kept items as come before it.
	gap := func(p []int) []int {
		g, k := make([]int, len(p)), 0
		for i, q := range p {
			g[i] = k
			if q >= 0 {
				k++
			}
		}
		return g
	}
	ga, gb := gap(pa), gap(pb)
	moved := map[int]bool{} // by index in b
	var kept [][2]int       // the same item changed in its place
	for _, q := range sameItems(a, b, pa, pb) {
		i, j := q[0], q[1]
		if a[i].text == b[j].text || ga[i] != gb[j] {
			moved[j] = true
			continue
		}
		kept = append(kept, q)
	}
	for _, q := range kept {
		for _, r := range kept {
			if (r[0]-q[0])*(r[1]-q[1]) < 0 {
				moved[q[1]] = true
			}
		}
	}
	// The items of one stretch left unmatched: compared as before.
	rest := func(ai, bj []int) {
		if len(ai) == len(bj) {
			for k := range ai {
				diffValues(at(bj[k]), a[ai[k]], b[bj[k]], out)
			}
			return
		}
		as, bs := pick(a, ai), pick(b, bj)
		walk(as, bs, alike, func(i, j int) {
			switch {
			case i < 0:
				diffValues(at(bj[j]), nil, b[bj[j]], out)
			case j < 0:
				diffValues(at(ai[i]), a[ai[i]], nil, out)
			default:
				diffValues(at(bj[j]), a[ai[i]], b[bj[j]], out)
			}
		})
	}
	ngaps := 1
	for _, q := range pa {
		if q >= 0 {
			ngaps++
		}
	}
	for g := range ngaps {
		var ai, bj []int
		for i := range a {
			if ga[i] == g && pa[i] < 0 {
				ai = append(ai, i)
			}
		}
		for j := range b {
			if gb[j] == g && pb[j] < 0 {
				bj = append(bj, j)
			}
		}
		rest(ai, bj)
		for j := range b {
			i := pb[j]
			if gb[j] != g || i < 0 || a[i].text == b[j].text && !moved[j] {
				continue
			}
			if !moved[j] {
				diffValues(at(j), a[i], b[j], out)
				continue
			}
			c := Change{Path: at(j), From: a[i].text, To: b[j].text, Moved: at(i)}
			if a[i].text != b[j].text {
				diffValues("", a[i], b[j], &c.Keys)
			}
			*out = append(*out, c)
		}
	}
}

// sameItems pairs the items of a and b not paired yet (pa, pb: the index
// of each item's partner in the other list, or -1), as diffItems
// describes: first items of the same text, in order, then items with the
// same name, then items of the same kind sharing at least as many values
// as they differ in, each the other's only best match. It records the pairs in pa
// and pb and returns them, in the order of b.
func sameItems(a, b []*value, pa, pb []int) [][2]int {
	var out [][2]int
	pair := func(i, j int) {
		pa[i], pb[j] = j, i
		out = append(out, [2]int{i, j})
	}
	for j := range b {
		for i := range a {
			if pb[j] < 0 && pa[i] < 0 && a[i].text == b[j].text {
				pair(i, j)
			}
		}
	}
	bestOfA := make([]int, len(a))
	for i := range a {
		bestOfA[i] = -1
		if pa[i] < 0 {
			bestOfA[i] = closest(len(b), func(j int) int {
				if pb[j] >= 0 {
					return 0
				}
				return sameness(a[i], b[j])
			})
		}
	}
	for j := range b {
		if pb[j] >= 0 {
			continue
		}
		i := closest(len(a), func(i int) int {
			if pa[i] >= 0 {
				return 0
			}
			return sameness(a[i], b[j])
		})
		if i >= 0 && bestOfA[i] == j {
			pair(i, j)
		}
	}
	slices.SortFunc(out, func(x, y [2]int) int { return x[1] - y[1] })
	return out
}

// sameness is how close two items of a list are to being one item
// changed: for named items (itemName) the most when the names are the
// same, else 0; for others, of the same keys, the number of plain values
// they share when it is at least the number they differ in, else 0.
func sameness(x, y *value) int {
	if !x.object || !y.object {
		return 0
	}
	nx, ny := itemName(x), itemName(y)
	switch {
	case nx != "" || ny != "":
		if nx == ny {
			return math.MaxInt
		}
		return 0
	case !slices.Equal(sortedKeys(x), sortedKeys(y)):
		return 0
	}
	lx, ly := leaves("", x), leaves("", y)
	equal, all := 0, len(lx)
	for k, t := range ly {
		if u, ok := lx[k]; !ok {
			all++
		} else if u == t {
			equal++
		}
	}
	if equal == 0 || 2*equal < all {
		return 0
	}
	return equal
}

// closest is the index k < n of the only largest score(k) above 0, or -1
// when none is above 0 or several share the largest.
func closest(n int, score func(k int) int) int {
	top, at := 0, -1
	for k := range n {
		switch v := score(k); {
		case v > top:
			top, at = v, k
		case v == top && v > 0:
			at = -1
		}
	}
	return at
}

// itemName is the name of an item of a list: its name (a sensitivity
// analysis, a predictor written as a mapping) or else its column (an
// outcome); "" when it has neither.
func itemName(v *value) string {
	for _, k := range []string{"name", "column"} {
		if f, ok := v.fields[k]; ok && !f.object && !f.array {
			return k + "=" + f.text
		}
	}
	return ""
}

// leaves maps the key paths of a value's plain values (a list counted as
// one value) to their text.
func leaves(path string, v *value) map[string]string {
	out := map[string]string{}
	if !v.object {
		out[path] = v.text
		return out
	}
	for _, k := range v.keys {
		maps.Copy(out, leaves(child(path, k), v.fields[k]))
	}
	return out
}

// unpaired is n indices with no partner (-1).
func unpaired(n int) []int {
	p := make([]int, n)
	for i := range p {
		p[i] = -1
	}
	return p
}

// pick is the items of v at the indices.
func pick(v []*value, idx []int) []*value {
	out := make([]*value, len(idx))
	for k, i := range idx {
		out[k] = v[i]
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
