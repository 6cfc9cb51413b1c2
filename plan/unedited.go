package plan

import (
	"fmt"
	"regexp"
	"sort"
	"strings"

	"gopkg.in/yaml.v3"
)

// EditMarker is the word `ordplan init` writes on every line of a plan
// skeleton that holds a guess the analyst must confirm (the order of the
// outcome's categories, the guessed outcome, levels and reference of a
// categorical predictor, a column's possible range) or a placeholder to
// replace (the title).
const EditMarker = "EDIT"

// markerWord finds the marker as a word of its own.
var markerWord = regexp.MustCompile(`\b` + EditMarker + `\b`)

// unedited lists the places of the plan src (parsed as root, with the
// decoder's key paths) that still carry EditMarker: a comment holding the
// word (except the skeleton's own instruction, "lines marked EDIT") or a
// scalar value that begins with it. Each is an Error naming the line, the
// column of the marker and the key written on that line, if any; they are
// sorted by line. The plan is valid with them (a skeleton checks as it is
// written); freeze refuses them and check and run warn.
func (d *decoder) unedited(src []byte, root *yaml.Node) []*Error {
	var out []*Error
	keyAt := keysByLine(root)
	lines := strings.Split(string(src), "\n")
	for i, line := range lines {
		at := commentStart(line)
		if at < 0 {
			continue
		}
		comment := line[at:]
		if strings.Contains(comment, "marked "+EditMarker) {
			continue
		}
		loc := markerWord.FindStringIndex(comment)
		if loc == nil {
			continue
		}
		// What the marker asks: from the marker on, or from the pointer
		// or parenthesis it sits in ("<- outcome (guessed: EDIT)").
		from := loc[0]
		if j := strings.LastIndex(comment[:from], "("); j >= 0 {
			from = j
			if k := strings.LastIndex(comment[:j], "<-"); k >= 0 {
				from = k
			} else {
				from = j + 1
			}
		}
		ask := strings.TrimSpace(comment[from:])
		for strings.HasSuffix(ask, ")") && strings.Count(ask, ")") > strings.Count(ask, "(") {
			ask = ask[:len(ask)-1] // the parenthesis the marker sits in
		}
		key := keyAt[i+1]
		if strings.TrimSpace(line[:at]) == "" {
			// A comment of its own: about the key right below it.
			for j := i + 1; j < len(lines); j++ {
				if c := commentStart(lines[j]); c < 0 || strings.TrimSpace(lines[j][:c]) != "" {
					key = keyAt[j+1]
					break
				}
			}
		}
		out = append(out, &Error{File: d.file, Line: i + 1, Col: at + loc[0] + 1, Key: key,
			Msg: "still marked by ordplan init (" + quoteAsk(ask) + "): check the line, then delete the marker"})
	}
	var walk func(n *yaml.Node)
	walk = func(n *yaml.Node) {
		if n == nil {
			return
		}
		if n.Kind == yaml.ScalarNode && markerWord.FindStringIndex(n.Value) != nil && markerWord.FindStringIndex(n.Value)[0] == 0 && n.Tag == "!!str" {
			out = append(out, &Error{File: d.file, Line: n.Line, Col: n.Column, Key: keyAt[n.Line],
				Msg: "still holds the placeholder of ordplan init (" + quoteAsk(n.Value) + "): replace it"})
		}
		for _, c := range n.Content {
			walk(c)
		}
	}
	walk(root)
	sort.SliceStable(out, func(a, b int) bool {
		if out[a].Line != out[b].Line {
			return out[a].Line < out[b].Line
		}
		return out[a].Col < out[b].Col
	})
	return out
}

// quoteAsk quotes what a marker asks, shortened to one readable line.
func quoteAsk(s string) string {
	const most = 70
	if r := []rune(s); len(r) > most {
		s = string(r[:most]) + "..."
	}
	return `"` + s + `"`
}

// keysByLine gives, for each line on which a key is written, the path of
// the first key there (the one the line is about: the dictionary entry
// rather than its range), in the form of the plan's messages
// (outcomes[0].categories).
func keysByLine(root *yaml.Node) map[int]string {
	out := map[int]string{}
	var walk func(n *yaml.Node, path string)
	walk = func(n *yaml.Node, path string) {
		switch n.Kind {
		case yaml.MappingNode:
			for i := 0; i+1 < len(n.Content); i += 2 {
				k := n.Content[i]
				p := k.Value
				if path != "" {
					p = path + "." + k.Value
				}
				if _, ok := out[k.Line]; !ok {
					out[k.Line] = p
				}
				walk(n.Content[i+1], p)
			}
		case yaml.SequenceNode:
			for i, c := range n.Content {
				p := fmt.Sprintf("%s[%d]", path, i)
				if _, ok := out[c.Line]; !ok && c.Kind != yaml.MappingNode {
					out[c.Line] = p
				}
				walk(c, p)
			}
		}
	}
	walk(root, "")
	return out
}

// commentStart is the byte offset of the '#' that starts a YAML comment on
// line (at the line's start or after a blank, outside quotes), or -1.
func commentStart(line string) int {
	var quote byte
	for i := 0; i < len(line); i++ {
		c := line[i]
		switch {
		case quote != 0:
			if c == quote {
				if quote == '\'' && i+1 < len(line) && line[i+1] == '\'' {
					i++ // '' inside single quotes
				} else {
					quote = 0
				}
			} else if c == '\\' && quote == '"' {
				i++
			}
		case c == '"' || c == '\'':
			if i == 0 || strings.ContainsRune(" \t[{,:-", rune(line[i-1])) {
				quote = c
			}
		case c == '#':
			if i == 0 || line[i-1] == ' ' || line[i-1] == '\t' {
				return i
			}
		}
	}
	return -1
}
