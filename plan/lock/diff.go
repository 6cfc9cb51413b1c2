package lock

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"strconv"
)

// Change is one difference between two canonical forms.
type Change struct {
	Path string `json:"key"`  // key path, as in plan messages: "rules[2].choose.by"
	From string `json:"from"` // JSON text of the frozen value, or "(absent)"
	To   string `json:"to"`   // JSON text of the current value, or "(absent)"
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
		n := max(len(a.items), len(b.items))
		for i := 0; i < n; i++ {
			var x, y *value
			if i < len(a.items) {
				x = a.items[i]
			}
			if i < len(b.items) {
				y = b.items[i]
			}
			diffValues(fmt.Sprintf("%s[%d]", path, i), x, y, out)
		}
		return
	}
	*out = append(*out, Change{Path: path, From: a.text, To: b.text})
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
