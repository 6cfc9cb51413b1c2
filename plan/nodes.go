package plan

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"
)

// decoder walks the YAML tree of one plan file, collecting errors and
// remembering the node behind every key path so later checks can point
// at the right line.
type decoder struct {
	file string
	errs Errors
	// warns are the warnings of a plan that is read (warnAt)
	warns []*Error
	nodes map[string]*yaml.Node
	// badTerms are the names of predictor terms reported as bad, so that
	// later checks do not report them again as unknown
	badTerms []string
	// categorical are the columns declared under categorical, once read,
	// for the keys that take numbers of numeric columns only
	categorical map[string]bool
	// rows are those a simulation of the plan makes (nil: the plan is
	// read for no simulation in particular, so assumptions.n as stated)
	rows *Rows
	// derived: the plan read is a sensitivity analysis's (derivePlan)
	derived bool
}

func newDecoder(file string) *decoder {
	return &decoder{file: file, nodes: map[string]*yaml.Node{}}
}

// errorf records a problem at node n (which may be nil) under key path key.
func (d *decoder) errorf(n *yaml.Node, key, format string, args ...any) {
	e := &Error{File: d.file, Key: key, Msg: fmt.Sprintf(format, args...)}
	if n != nil {
		e.Line, e.Col = n.Line, n.Column
	}
	d.errs = append(d.errs, e)
}

// warnAt records a warning under key, placed as errAt places a problem:
// the plan is read, and check and run print it (Plan.Warnings).
func (d *decoder) warnAt(key, format string, args ...any) {
	n := d.near(key)
	e := &Error{File: d.file, Key: key, Msg: fmt.Sprintf(format, args...)}
	if n != nil {
		e.Line, e.Col = n.Line, n.Column
	}
	d.warns = append(d.warns, e)
}

// errAt records a problem under key, placed at the node recorded for key or
// its nearest recorded ancestor.
func (d *decoder) errAt(key, format string, args ...any) {
	d.errorf(d.near(key), key, format, args...)
}

func (d *decoder) near(key string) *yaml.Node {
	for k := key; ; k = parentPath(k) {
		if n := d.nodes[k]; n != nil {
			return n
		}
		if k == "" {
			return nil
		}
	}
}

// given reports whether key was written in the plan with a non-null value.
func (d *decoder) given(key string) bool {
	n := d.nodes[key]
	return n != nil && !isNull(n)
}

// clean reports whether no problem was recorded at key or below it.
func (d *decoder) clean(key string) bool {
	for _, e := range d.errs {
		if e.Key == key || strings.HasPrefix(e.Key, key+".") || strings.HasPrefix(e.Key, key+"[") {
			return false
		}
	}
	return true
}

// line gives the line recorded for key, or 0.
func (d *decoder) line(key string) int {
	if n := d.nodes[key]; n != nil {
		return n.Line
	}
	return 0
}

func childPath(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

func itemPath(path string, i int) string { return fmt.Sprintf("%s[%d]", path, i) }

func parentPath(path string) string {
	i := strings.LastIndexAny(path, ".[")
	if i < 0 {
		return ""
	}
	return path[:i]
}

// deref follows aliases to the node they name.
func deref(n *yaml.Node) *yaml.Node {
	for i := 0; n != nil && n.Kind == yaml.AliasNode && i < 16; i++ {
		n = n.Alias
	}
	return n
}

func isNull(n *yaml.Node) bool {
	n = deref(n)
	return n == nil || (n.Kind == yaml.ScalarNode && n.ShortTag() == "!!null")
}

// describe names what a node holds, for "want X, got Y" messages.
func describe(n *yaml.Node) string {
	n = deref(n)
	if n == nil {
		return "nothing"
	}
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.ScalarNode:
		switch n.ShortTag() {
		case "!!null":
			return "null"
		case "!!str":
			if n.Style&(yaml.DoubleQuotedStyle|yaml.SingleQuotedStyle) == 0 {
				// A number beyond the largest the YAML reader holds
				// (1e400) reads as text.
				if _, err := strconv.ParseFloat(strings.ReplaceAll(n.Value, "_", ""), 64); errors.Is(err, strconv.ErrRange) {
					return "number " + clip(n.Value) + ", too large for any number (beyond about 1.8e308)"
				}
			}
			return "string " + quote(n.Value)
		case "!!int", "!!float":
			return "number " + clip(n.Value)
		case "!!bool":
			return n.Value
		case "!!timestamp":
			return "the date " + quote(n.Value)
		}
		return quote(n.Value) + " marked as YAML type " + strings.TrimPrefix(n.ShortTag(), "!!")
	}
	return "an unsupported YAML node"
}

func clip(s string) string {
	// Walks at most 41 runes: a long text costs no more than a short one.
	n, cut := 0, 0
	for i := range s {
		if n == 37 {
			cut = i
		}
		if n == 40 {
			return s[:cut] + "..."
		}
		n++
	}
	return s
}

func quote(s string) string { return strconv.Quote(clip(s)) }

// record remembers n as the node behind path.
func (d *decoder) record(path string, n *yaml.Node) *yaml.Node {
	n = deref(n)
	if n != nil {
		d.nodes[path] = n
	}
	return n
}
