package plan

import (
	"fmt"
	"math"
	"strconv"

	"gopkg.in/yaml.v3"

	"ordplan/runner/data"
)

// scalar checks that n is a non-null scalar and gives its text.
func (d *decoder) scalar(n *yaml.Node, path, want string) (string, bool) {
	n = deref(n)
	if n == nil || n.Kind != yaml.ScalarNode || n.ShortTag() == "!!null" {
		d.errorf(n, path, "want %s, got %s", want, describe(n))
		return "", false
	}
	return n.Value, true
}

// name reads a column, predictor, category or group name: non-empty text
// without control characters.
func (d *decoder) name(n *yaml.Node, path string) (string, bool) {
	s, ok := d.scalar(n, path, "a name")
	if !ok {
		return "", false
	}
	if s == "" {
		d.errorf(deref(n), path, "name is empty")
		return "", false
	}
	return s, d.printable(n, path, s, false)
}

// token reads one line of text that may be empty, such as a missing-value
// marker or the name of a lone constraint group.
func (d *decoder) token(n *yaml.Node, path string) (string, bool) {
	s, ok := d.scalar(n, path, "a name")
	if !ok {
		return "", false
	}
	return s, d.printable(n, path, s, false)
}

// missingCode reads a missing-value code (token), refusing one that is
// a number but for a typeset minus sign (data.MissingCodeHint).
func (d *decoder) missingCode(n *yaml.Node, path string) (string, bool) {
	s, ok := d.token(n, path)
	if ok {
		if h := data.MissingCodeHint(s); h != "" {
			d.errorf(deref(n), path, "missing-value code %s%s", quote(s), h)
			return s, false
		}
	}
	return s, ok
}

// text reads free text such as a title: may be empty, may hold tabs and
// line breaks but no other control characters.
func (d *decoder) text(n *yaml.Node, path string) (string, bool) {
	s, ok := d.scalar(n, path, "text")
	if !ok {
		return "", false
	}
	return s, d.printable(n, path, s, true)
}

// printable rejects characters a plan cannot sensibly hold.
func (d *decoder) printable(n *yaml.Node, path, s string, lines bool) bool {
	for _, r := range s {
		ok := (r >= 0x20 && r <= 0x7e) || (r >= 0xa0 && r <= 0xd7ff) ||
			(r >= 0xe000 && r <= 0xfffd && r != 0xfeff) || (r >= 0x10000 && r <= 0x10ffff) ||
			(lines && (r == '\t' || r == '\n'))
		if !ok {
			d.errorf(deref(n), path, "contains the control or non-printable character U+%04X", r)
			return false
		}
	}
	return true
}

// word reads a value that must be one of words.
func (d *decoder) word(n *yaml.Node, path, what string, words []string) (string, bool) {
	s, ok := d.scalar(n, path, orList(words))
	if !ok {
		return "", false
	}
	for _, w := range words {
		if s == w {
			return s, true
		}
	}
	d.errorf(deref(n), path, "%s", unknownWord(what, s, words))
	return "", false
}

// integer reads a whole number.
func (d *decoder) integer(n *yaml.Node, path string) (int64, bool) {
	return d.integerWant(n, path, "a whole number")
}

// integerWant reads a whole number, saying "want " + want when the value
// is not one.
func (d *decoder) integerWant(n *yaml.Node, path, want string) (int64, bool) {
	n = deref(n)
	var v int64
	if n == nil || n.Kind != yaml.ScalarNode || n.ShortTag() != "!!int" || n.Decode(&v) != nil {
		d.errorf(n, path, "want %s, got %s%s%s", want, describe(n), numberTextHint(n), wholeHint(n))
		return 0, false
	}
	return v, true
}

// wholeHint is what follows the message for a whole number written as a
// decimal or with an exponent (1000.0, 1e3), which YAML reads as a float
// and a key taking whole numbers refuses: how to write it. It said "want
// a whole number, got number 1e3".
func wholeHint(n *yaml.Node) string {
	if n == nil || n.Kind != yaml.ScalarNode || n.ShortTag() != "!!float" {
		return ""
	}
	var x float64
	if n.Decode(&x) != nil || x != math.Trunc(x) || math.Abs(x) >= 1<<63 {
		return ""
	}
	return fmt.Sprintf(" (a whole number, written as a decimal or with an exponent: write it %d)", int64(x))
}

// numberTextHint is what follows the message for a value that is not a
// number where one is wanted, when it is text that would be a number
// written with a plan's ASCII minus and decimal point (data.PlanNumberHint).
func numberTextHint(n *yaml.Node) string {
	if n == nil || n.Kind != yaml.ScalarNode || n.ShortTag() != "!!str" {
		return ""
	}
	return data.PlanNumberHint(n.Value)
}

// unsigned reads a whole number from 0 to 2^64-1.
func (d *decoder) unsigned(n *yaml.Node, path string) (uint64, bool) {
	n = deref(n)
	var v uint64
	if n == nil || n.Kind != yaml.ScalarNode || n.ShortTag() != "!!int" || n.Decode(&v) != nil {
		d.errorf(n, path, "want a whole number from 0 to %d, got %s%s", uint64(math.MaxUint64), describe(n), wholeHint(n))
		return 0, false
	}
	return v, true
}

// number reads a finite number.
func (d *decoder) number(n *yaml.Node, path string) (float64, bool) {
	return d.numberWant(n, path, "a number")
}

// numberWant reads a finite number, saying "want " + want when the value
// is not one (want names its range when the key has one).
func (d *decoder) numberWant(n *yaml.Node, path, want string) (float64, bool) {
	n = deref(n)
	var v float64
	if n == nil || n.Kind != yaml.ScalarNode || (n.ShortTag() != "!!int" && n.ShortTag() != "!!float") || n.Decode(&v) != nil {
		d.errorf(n, path, "want %s, got %s%s", want, describe(n), numberTextHint(n))
		return 0, false
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		d.errorf(n, path, "want a finite number, got %s", n.Value)
		return 0, false
	}
	if data.Underflows(n.Value, v) {
		d.errorf(n, path, "%s is too small for a number: it is not zero, but smaller in size than the smallest number held (about 4.9e-324), and would be read as 0; write 0 if zero is meant", n.Value)
		return 0, false
	}
	return v, true
}

// probability reads a number strictly between 0 and 1.
func (d *decoder) probability(n *yaml.Node, path string) (float64, bool) {
	const want = "a number strictly between 0 and 1"
	v, ok := d.numberWant(n, path, want)
	if !ok {
		return 0, false
	}
	if v <= 0 || v >= 1 {
		d.errorf(deref(n), path, "%v is out of range (want %s)", v, want)
		return 0, false
	}
	return v, true
}

// boolean reads true or false.
func (d *decoder) boolean(n *yaml.Node, path string) (bool, bool) {
	n = deref(n)
	var v bool
	if n == nil || n.Kind != yaml.ScalarNode || n.ShortTag() != "!!bool" || n.Decode(&v) != nil {
		d.errorf(n, path, "want true or false, got %s", describe(n))
		return false, false
	}
	return v, true
}

// list checks that n is a list, records its items and returns them.
func (d *decoder) list(n *yaml.Node, path string) ([]*yaml.Node, bool) {
	n = deref(n)
	if n == nil || n.Kind != yaml.SequenceNode {
		hint := ""
		switch {
		case n != nil && n.Kind == yaml.ScalarNode && n.Value == "" && n.ShortTag() == "!!str":
			// [] is a list of none, the opposite of the one empty text.
			hint = `; write [""] for a list of one item, the empty text ([] is a list of none)`
		case n != nil && n.Kind == yaml.ScalarNode && n.Style&(yaml.DoubleQuotedStyle|yaml.SingleQuotedStyle) != 0:
			hint = "; write [" + strconv.Quote(clip(n.Value)) + "] for a list of one"
		case n != nil && n.Kind == yaml.ScalarNode:
			hint = "; write [" + clip(n.Value) + "] for a list of one"
		}
		d.errorf(n, path, "want a list, got %s%s", describe(n), hint)
		return nil, false
	}
	items := make([]*yaml.Node, len(n.Content))
	for i, it := range n.Content {
		items[i] = d.record(itemPath(path, i), it)
	}
	return items, true
}

// readList reads a list of strings with read, dropping bad items and
// reporting duplicates. It returns a non-nil slice when n is a list.
func (d *decoder) readList(n *yaml.Node, path string, read func(*yaml.Node, string) (string, bool)) ([]string, bool) {
	items, ok := d.list(n, path)
	if !ok {
		return nil, false
	}
	out := make([]string, 0, len(items))
	seen := map[string]int{}
	for i, it := range items {
		p := itemPath(path, i)
		s, ok := read(it, p)
		if !ok {
			continue
		}
		if line, dup := seen[s]; dup {
			d.errorf(it, p, "%s is listed twice (first at line %d)", quote(s), line)
			continue
		}
		seen[s] = it.Line
		out = append(out, s)
	}
	return out, true
}

func (d *decoder) names(n *yaml.Node, path string) ([]string, bool) {
	return d.readList(n, path, d.name)
}

func (d *decoder) words(n *yaml.Node, path, what string, words []string) ([]string, bool) {
	return d.readList(n, path, func(n *yaml.Node, p string) (string, bool) {
		return d.word(n, p, what, words)
	})
}

// nonEmpty reports an empty list written in the plan.
func (d *decoder) nonEmpty(n *yaml.Node, path, what string) bool {
	n = deref(n)
	if n != nil && n.Kind == yaml.SequenceNode && len(n.Content) == 0 {
		d.errorf(n, path, "list is empty; give at least one %s", what)
		return false
	}
	return true
}
