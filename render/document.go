package render

import (
	"bytes"
	"fmt"
	"regexp"
	"slices"
	"strings"
	"unicode"
	"unicode/utf8"

	"ordplan/internal/words"
	"ordplan/runner/fit"
)

// doc is a report being written: Markdown text with chart groups between
// the paragraphs. report.md gets the text and, in place of each chart
// group, a line saying where the charts are in report.html; report.html
// gets the text as HTML and the charts themselves.
type doc struct {
	parts  []part
	b      bytes.Buffer // Markdown since the last chart group
	nChart int          // charts so far, for their fixed ids
	nTable int          // tables so far, for their numbers

	heads   []heading       // level 2 and 3 headings, for the table of contents
	slugs   map[string]bool // anchors given so far
	lastH   string          // the latest heading: the default table caption
	caption string          // the caption of the next table, when set
	// mark opens every chart's title, interactive and static, as its own
	// first line: SimulatedMark in a report made from simulated data.
	mark string
}

// part is a run of Markdown, the table of contents, or one group of
// charts shown side by side.
type part struct {
	md     string
	charts []*chart
	note   string // what report.md says in place of the charts
	toc    bool
}

// heading is one entry of the table of contents.
type heading struct {
	level       int
	title, slug string
}

func (d *doc) p(format string, a ...any) { fmt.Fprintf(&d.b, format+"\n\n", a...) }

func (d *doc) h(level int, title string) {
	fmt.Fprintf(&d.b, "%s %s\n\n", strings.Repeat("#", level), title)
	if d.slugs == nil {
		d.slugs = map[string]bool{}
	}
	// The anchor a Markdown viewer derives from the heading: lower case,
	// letters, digits, '-' and '_' kept, spaces to '-', a number added to
	// a repeat. report.html uses the same anchors.
	base := slugify(title)
	slug := base
	for i := 1; d.slugs[slug]; i++ {
		slug = fmt.Sprintf("%s-%d", base, i)
	}
	d.slugs[slug] = true
	d.heads = append(d.heads, heading{level, title, slug})
	d.lastH = strings.Trim(title, "*` ")
}

// slugify is the anchor of a heading before repeats are numbered.
func slugify(title string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(title) {
		switch {
		case unicode.IsLetter(r) || unicode.IsDigit(r) || r == '-' || r == '_':
			b.WriteRune(r)
		case r == ' ':
			b.WriteByte('-')
		}
	}
	return b.String()
}

// toc places the table of contents here (levels 2 and 3 of the whole
// report, known once it is written).
func (d *doc) toc() {
	d.flush()
	d.parts = append(d.parts, part{toc: true})
}

// tocMarkdown is the table of contents as a nested Markdown list.
func (d *doc) tocMarkdown() string {
	var b strings.Builder
	b.WriteString("**Contents**\n\n")
	for _, h := range d.heads {
		if h.level < 2 || h.level > 3 {
			continue
		}
		fmt.Fprintf(&b, "%s- [%s](#%s)\n", strings.Repeat("  ", h.level-2), strings.ReplaceAll(h.title, "`", ""), h.slug)
	}
	b.WriteString("\n")
	return b.String()
}

// captioned sets the caption of the next table (else the latest heading).
func (d *doc) captioned(caption string) *doc {
	d.caption = caption
	return d
}

// list writes a bulleted list.
func (d *doc) list(items []string) {
	for _, it := range items {
		fmt.Fprintf(&d.b, "- %s\n", it)
	}
	d.b.WriteString("\n")
}

// table writes a numbered Markdown table under its caption; cells are
// escaped for pipes, and columns whose cells are all numbers, and every
// column of p-values (pColumn), are right-aligned; columns of one-character
// marks (markColumn) are centred, and report.html keeps them narrow.
func (d *doc) table(head []string, rows [][]string) {
	d.nTable++
	caption := d.caption
	if caption == "" {
		caption = d.lastH
	}
	d.caption = ""
	fmt.Fprintf(&d.b, "**Table %d.** %s\n\n", d.nTable, caption)
	esc := func(s string) string {
		if m, ok := strings.CutPrefix(s, mdMark); ok {
			return strings.ReplaceAll(m, "|", `\|`)
		}
		return mdText(s)
	}
	cells := make([]string, len(head))
	var align strings.Builder
	for i, h := range head {
		cells[i] = esc(h)
		if numericColumn(rows, i) || pColumn(h) {
			align.WriteString("---:|")
		} else if markColumn(rows, i) {
			align.WriteString(":---:|")
		} else {
			align.WriteString("---|")
		}
	}
	fmt.Fprintf(&d.b, "| %s |\n|%s\n", strings.Join(cells, " | "), align.String())
	rows, notes := clusteredNotComputed(head, rows)
	for _, r := range rows {
		cells = cells[:0]
		for _, c := range r {
			cells = append(cells, esc(c))
		}
		fmt.Fprintf(&d.b, "| %s |\n", strings.Join(cells, " | "))
	}
	d.b.WriteString("\n")
	for _, n := range notes {
		d.p("%s", n)
	}
}

// notComputedPrefix opens the cell of a test or quantity not computed,
// before its reason.
const notComputedPrefix = "not computed: "

// clusteredCell stands in a table for the reason a test was not computed
// when that reason is a fit's fit.NotEstimable (the same long sentence in
// many cells): clusteredNotComputed states it once below the table.
const clusteredCell = "not computed (clustered errors, see below)"

// clusteredNotComputed returns rows with every cell "not computed: " +
// a reason of fit.NotEstimable written clusteredCell, and the paragraphs
// that state each such reason once below the table: with the models it
// concerns when the table has a Model column and several reasons.
func clusteredNotComputed(head []string, rows [][]string) ([][]string, []string) {
	model := slices.Index(head, "Model")
	var reasons []string
	models := map[string][]string{}
	var out [][]string
	for i, r := range rows {
		for j, c := range r {
			why, ok := strings.CutPrefix(c, notComputedPrefix)
			if !ok || !fit.IsNotEstimableReason(why) {
				continue
			}
			if out == nil {
				out = make([][]string, len(rows))
				for k := range rows {
					out[k] = slices.Clone(rows[k])
				}
			}
			out[i][j] = clusteredCell
			if _, seen := models[why]; !seen {
				reasons = append(reasons, why)
				models[why] = nil
			}
			if model >= 0 && model < len(r) && !slices.Contains(models[why], r[model]) {
				models[why] = append(models[why], r[model])
			}
		}
	}
	if out == nil {
		return rows, nil
	}
	var notes []string
	for _, why := range reasons {
		in := ""
		if len(reasons) > 1 && len(models[why]) > 0 {
			in = " in " + words.AndList(models[why])
		}
		notes = append(notes, fmt.Sprintf("Not computed (clustered errors)%s: %s.", mdText(in), mdText(why)))
	}
	return out, notes
}

// mdMark begins a table cell that is Markdown already (md); any other cell
// is text, shown as it is (mdText).
const mdMark = "\uE000"

// md marks a table cell as Markdown (a code span, bold), which table
// writes as it is; other cells are text, escaped by table.
func md(s string) string { return mdMark + s }

// mdText is text shown literally in Markdown: a name, label, category,
// level or title from the plan or the data, or a message quoting them.
// Every character that could start Markdown or HTML is escaped: '\', '*',
// '|', '_' unless inside a word, '<' before what could open a tag or an
// autolink, '&' beginning a character reference, ']' before what would
// make a link; a backtick is written as its character reference (a
// backslash before it would be taken as the end of a code span by a
// reader that strips backticks, such as the table of contents); a line
// break becomes a space. Plain names ("very_unsafe", "pilot&street_type",
// "tau[1]", "<0.001") are left as they are.
func mdText(s string) string {
	if !strings.ContainsAny(s, "\\*|_<&]`\n\r") {
		return s
	}
	rs := []rune(s)
	word := func(i int) bool {
		return i >= 0 && i < len(rs) && (unicode.IsLetter(rs[i]) || unicode.IsDigit(rs[i]))
	}
	var b strings.Builder
	for i, r := range rs {
		next := rune(0)
		if i+1 < len(rs) {
			next = rs[i+1]
		}
		switch {
		case r == '\\' || r == '*' || r == '|':
			b.WriteByte('\\')
		case r == '_' && !(word(i-1) && word(i+1)):
			b.WriteByte('\\')
		case r == '<' && (next == '/' || next == '!' || next == '?' || unicode.IsLetter(next)):
			b.WriteByte('\\')
		case r == '&' && entityRef.MatchString(string(rs[i:])):
			b.WriteByte('\\')
		case r == ']' && (next == '(' || next == '[' || next == ':'):
			b.WriteByte('\\')
		case r == '`':
			b.WriteString("&#96;")
			continue
		case r == '\n' || r == '\r':
			b.WriteByte(' ')
			continue
		}
		b.WriteRune(r)
	}
	return b.String()
}

// entityRef matches text beginning with an HTML character reference.
var entityRef = regexp.MustCompile(`^&(#[0-9]{1,7}|#[xX][0-9a-fA-F]{1,6}|[A-Za-z][A-Za-z0-9]{0,31});`)

// mdCode is s as a Markdown code span, literal whatever it holds: fenced
// by one backtick more than its longest run of backticks, padded with a
// space where it begins or ends with one; line breaks become spaces.
func mdCode(s string) string {
	s = strings.NewReplacer("\r\n", " ", "\n", " ", "\r", " ").Replace(s)
	longest, run := 0, 0
	for _, r := range s {
		if r == '`' {
			run++
			longest = max(longest, run)
		} else {
			run = 0
		}
	}
	fence := strings.Repeat("`", longest+1)
	if strings.HasPrefix(s, "`") || strings.HasSuffix(s, "`") {
		s = " " + s + " "
	}
	return fence + s + fence
}

// numberCell matches a cell that reads as a number: a sign, digits, a
// decimal point, an exponent, a percent sign, "<" before a small p-value,
// a value in brackets after it, or a range of two numbers; a count "k of
// n" and a mean's ", n rows" (the predictors by outcome category); a rate
// of none or all replicates with its bound in brackets ("0.000 (0 of 20;
// below 0.139 with 95% confidence)", simulate.Rate.Text), so that a power
// table's column of rates stays right-aligned when one of them is 0.
var numberCell = regexp.MustCompile(`^(<|−|-)?[0-9][0-9,]*(\.[0-9]+)?(e[-+]?[0-9]+)?%?( of [0-9][0-9,.]*)?( \((-|−)?[0-9.]+(e[-+]?[0-9]+)?%?\)| \([0-9]+ of [0-9]+; (below|above) [0-9.]+ with 95% confidence\))?(, [0-9][0-9,.]* rows)?(–-?[0-9.]+)?$`)

// numericColumn reports whether every non-empty cell of column i is a
// number, "inf" included (placeholders such as "—" and "n/a" allowed) and
// one at least is.
func numericColumn(rows [][]string, i int) bool {
	seen := false
	for _, r := range rows {
		if i >= len(r) {
			continue
		}
		c := strings.TrimSpace(r[i])
		switch {
		case c == "" || c == "—" || c == "n/a":
		case numberCell.MatchString(c) || c == "inf": // inf: infinite degrees of freedom (dfCell)
			seen = true
		default:
			return false
		}
	}
	return seen
}

// markColumn reports whether column i holds marks, such as the x of a
// missing value in a pattern: every cell empty or one character (a column
// of the patterns table may have no mark at all). report.html does not
// widen such cells to the 8em of text cells, so a table of many of them
// (one per used column) fits the page.
func markColumn(rows [][]string, i int) bool {
	for _, r := range rows {
		if i < len(r) && utf8.RuneCountInString(strings.TrimSpace(r[i])) > 1 {
			return false
		}
	}
	return len(rows) > 0
}

// pColumn reports whether a column headed h holds p-values ("p", "p,
// Holm", "p (one-sided)"): right-aligned like the other numbers although a
// cell may say why a test has none ("not computed: ...").
func pColumn(h string) bool {
	return h == "p" || strings.HasPrefix(h, "p, ") || strings.HasPrefix(h, "p (")
}

// chartID returns the id of the next chart: fixed by its place in the
// report, so the same run gives the same page.
// frame gives fr the next chart id and the document's mark.
func (d *doc) frame(fr chartFrame) *chartFrame {
	fr.id, fr.mark = d.chartID(), d.mark
	return &fr
}

func (d *doc) chartID() string {
	d.nChart++ // the figure number too
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
		switch {
		case pt.toc:
			out.WriteString(d.tocMarkdown())
		case pt.charts == nil:
			out.WriteString(pt.md)
		default:
			all := true
			for _, c := range pt.charts {
				if c.static != nil {
					fmt.Fprintf(&out, "![Figure %d](%s)\n\n", c.number, figureFile(c.number))
				} else {
					all = false
				}
				fmt.Fprintf(&out, "**Figure %d.** %s\n\n", c.number, mdText(c.caption))
			}
			if !all {
				fmt.Fprintf(&out, "*%s*\n\n", pt.note)
			}
		}
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

// codeList is names as code spans separated by commas.
func codeList(names []string) string {
	spans := make([]string, len(names))
	for i, n := range names {
		spans[i] = mdCode(n)
	}
	return strings.Join(spans, ", ")
}
