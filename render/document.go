package render

import (
	"bytes"
	"fmt"
	"strings"
)

// doc is a report being written: Markdown text with chart groups between
// the paragraphs. report.md gets the text and, in place of each chart
// group, a line saying where the charts are in report.html; report.html
// gets the text as HTML and the charts themselves.
type doc struct {
	parts  []part
	b      bytes.Buffer // Markdown since the last chart group
	nChart int          // charts so far, for their fixed ids
}

// part is a run of Markdown or one group of charts shown side by side.
type part struct {
	md     string
	charts []*chart
	note   string // what report.md says in place of the charts
}

func (d *doc) p(format string, a ...any) { fmt.Fprintf(&d.b, format+"\n\n", a...) }

func (d *doc) h(level int, title string) {
	fmt.Fprintf(&d.b, "%s %s\n\n", strings.Repeat("#", level), title)
}

// list writes a bulleted list.
func (d *doc) list(items []string) {
	for _, it := range items {
		fmt.Fprintf(&d.b, "- %s\n", it)
	}
	d.b.WriteString("\n")
}

// table writes a Markdown table; cells are escaped for pipes.
func (d *doc) table(head []string, rows [][]string) {
	esc := func(s string) string { return strings.ReplaceAll(s, "|", `\|`) }
	cells := make([]string, len(head))
	for i, h := range head {
		cells[i] = esc(h)
	}
	fmt.Fprintf(&d.b, "| %s |\n|%s\n", strings.Join(cells, " | "), strings.Repeat("---|", len(head)))
	for _, r := range rows {
		cells = cells[:0]
		for _, c := range r {
			cells = append(cells, esc(c))
		}
		fmt.Fprintf(&d.b, "| %s |\n", strings.Join(cells, " | "))
	}
	d.b.WriteString("\n")
}

// chartID returns the id of the next chart: fixed by its place in the
// report, so the same run gives the same page.
func (d *doc) chartID() string {
	d.nChart++
	return fmt.Sprintf("chart-%d", d.nChart)
}

// charts places a group of charts here; note stands in for them in
// report.md.
func (d *doc) charts(note string, cs ...*chart) {
	if len(cs) == 0 {
		return
	}
	d.flush()
	d.parts = append(d.parts, part{charts: cs, note: note})
}

func (d *doc) flush() {
	if d.b.Len() > 0 {
		d.parts = append(d.parts, part{md: d.b.String()})
		d.b.Reset()
	}
}

// markdown returns report.md.
func (d *doc) markdown() []byte {
	d.flush()
	var out bytes.Buffer
	for _, pt := range d.parts {
		if pt.charts == nil {
			out.WriteString(pt.md)
			continue
		}
		fmt.Fprintf(&out, "*%s*\n\n", pt.note)
	}
	return out.Bytes()
}

// allCharts lists the charts in page order.
func (d *doc) allCharts() []*chart {
	var out []*chart
	for _, pt := range d.parts {
		out = append(out, pt.charts...)
	}
	return out
}
