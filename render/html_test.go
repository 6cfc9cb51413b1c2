package render

import (
	"strings"
	"testing"

	"ordplan/runner"
)

// TestNameBreaks: long names in table cells may break after "_", ".",
// "&" and "/" and at camel-case joins (not after a name's short prefix,
// McFadden), never inside a word, a number, a character reference or
// n/a, and text outside tables is left as goldmark writes
// it. The expected HTML is written out by hand.
func TestNameBreaks(t *testing.T) {
	d := &doc{}
	d.b.WriteString("Prose keeps long_names_whole and a.b as they are.\n\n")
	d.b.WriteString("| Term | Estimate |\n|---|---:|\n")
	d.b.WriteString("| years_lived.through_road | 0.2045 |\n")
	d.b.WriteString("| " + mdCode("pilot&street_type") + " | -1.5e-07 |\n")
	d.b.WriteString("| cumulative/constrained/logit | 12.5% |\n")
	d.b.WriteString("| yearsLived &amp; x | 3 |\n")
	d.b.WriteString("| McFadden, McKelvey-Zavoina | 4 |\n")
	d.b.WriteString("| n/a | y/n/a |\n")
	got, err := d.html("t")
	if err != nil {
		t.Fatal(err)
	}
	h := string(got)
	for _, want := range []string{
		"<p>Prose keeps long_names_whole and a.b as they are.</p>",
		"<td>years_<wbr>lived.<wbr>through_<wbr>road</td>",
		"<td style=\"text-align:right\">0.2045</td>",
		"<td><code>pilot&amp;<wbr>street_<wbr>type</code></td>",
		"<td style=\"text-align:right\">-1.5e-07</td>",
		"<td>cumulative/<wbr>constrained/<wbr>logit</td>",
		"<td>years<wbr>Lived &amp; x</td>",
		"<td>McFadden, McKelvey-Zavoina</td>", // a name's prefix is no camel-case join
		"<td>n/a</td>",                        // not available stays whole
		"<td style=\"text-align:right\">y/<wbr>n/a</td>",
	} {
		if !strings.Contains(h, want) {
			t.Errorf("report.html lacks %q", want)
		}
	}
}

// A p column's "not computed: ..." is set in a box in which it wraps, so
// that the column stays as wide as its numbers (it was as wide as the
// sentence, the p-values far from their rows); numbers, with a "<", are
// left as they are.
func TestNumberColumnProseWraps(t *testing.T) {
	var d doc
	d.table([]string{"Test", "Chi-square", "df", "p"}, [][]string{
		{"Brant (all predictors)", "", "", "not computed: defined for the cumulative logit model only"},
		{"Likelihood ratio (all predictors)", "54.037", "30", "<0.0001"},
		{"Wald: pilot", "6.536", "3", "0.0883"},
	})
	got, err := d.html("t")
	if err != nil {
		t.Fatal(err)
	}
	h := string(got)
	for _, want := range []string{
		`<td style="text-align:right"><span class="why">not computed: defined for the cumulative logit model only</span></td>`,
		`<td style="text-align:right">&lt;0.0001</td>`,
		`<td style="text-align:right">0.0883</td>`,
		`.why{display:inline-block;max-width:16em;white-space:normal}`,
	} {
		if !strings.Contains(h, want) {
			t.Errorf("report.html lacks %q", want)
		}
	}
	if strings.Count(h, `class="why"`) != 1 {
		t.Errorf("%d cells boxed, want 1", strings.Count(h, `class="why"`))
	}
}

// A power table's column of rates stays right-aligned when a rate is 0 or
// 1 and its cell gives the count and the exact bound (simulate.Rate.Text);
// report.html sets that cell's words in the wrapping box.
func TestRateBoundCellsRightAligned(t *testing.T) {
	var d doc
	d.table([]string{"Replicates with", "n = 150", "n = 300"}, [][]string{
		{"a candidate fit without a finite maximum (separation)", "0.650 (0.107)", "0.000 (0 of 20; below 0.139 with 95% confidence)"},
		{"a plan that could not be run", "1.000 (20 of 20; above 0.861 with 95% confidence)", "0.250 (0.097)"},
	})
	if !strings.Contains(d.b.String(), "\n|---|---:|---:|\n") {
		t.Errorf("the rate columns are not right-aligned:\n%s", d.b.String())
	}
	got, err := d.html("t")
	if err != nil {
		t.Fatal(err)
	}
	if want := `<td style="text-align:right"><span class="why">0.000 (0 of 20; below 0.139 with 95% confidence)</span></td>`; !strings.Contains(string(got), want) {
		t.Errorf("report.html lacks %q", want)
	}
}

// Header cells wrap at their spaces ("Std. error", "95% high", "p, Holm"):
// kept on one line, the headers of the hypotheses table (twelve columns)
// made it wider than the page, its last column cut off behind the scroll.
func TestHeadersMayWrap(t *testing.T) {
	if strings.Contains(css, "th{background:#f2f2f2;white-space:nowrap}") || !strings.Contains(css, "th{background:#f2f2f2}") {
		t.Errorf("header cells are kept on one line: %s", css)
	}
}

// A chart of a level's column whose name lost the level's accents and
// spaces is titled by the term and the level as declared.
func TestLevelShownNamesUnspelledLevels(t *testing.T) {
	for _, c := range []struct {
		r    runner.ColumnReading
		want string
	}{
		{runner.ColumnReading{Column: "street_type.through_road", Term: "street_type", Level: "through_road"}, "street_type.through_road"},
		{runner.ColumnReading{Column: "region.R_gion_nord", Term: "region", Level: "Région nord"}, "region = Région nord"},
		{runner.ColumnReading{Column: "age", Term: "age"}, "age"},
		{runner.ColumnReading{Column: "a&b.x", Term: "a&b"}, "a&b.x"},
	} {
		if got := levelShown(c.r); got != c.want {
			t.Errorf("levelShown(%+v) = %q, want %q", c.r, got, c.want)
		}
	}
}

// A right-aligned cell of words wraps in its box; a cell of numbers with a
// count after them ("49.048 (13.463), 126 rows") stays one line.
func TestNumberColumnProse(t *testing.T) {
	for _, c := range []struct {
		cell  string
		prose bool
	}{
		{"not computed: defined for the cumulative logit model only", true},
		{"0.000 (0 of 20; below 0.139 with 95% confidence)", true},
		{"49.048 (13.463), 126 rows", false},
		{"27.371 (7.900), 68 weighted rows", false},
		{"0.350 (0.107)", false},
		{"&lt;0.0001", false},
		{"short words here", false},
	} {
		h := rightCell + c.cell + "</td>"
		got := strings.Contains(wrapNumberColumnProse(h), `class="why"`)
		if got != c.prose {
			t.Errorf("%q: wrapped %v, want %v", c.cell, got, c.prose)
		}
	}
}

// Every table of report.html scrolls in its own box (a wide table does not
// widen the page), and on a phone's width a column of words may be as
// narrow as 5em, so that a table of three such columns (model, verdict,
// why) fits without scrolling.
func TestTablesScrollAndFitPhones(t *testing.T) {
	d := &doc{}
	d.table([]string{"Model", "Verdict", "Why"}, [][]string{{"cumulative/parallel/logit", "kept", "a long reason in words"}})
	page, err := d.html("t")
	if err != nil {
		t.Fatal(err)
	}
	h := string(page)
	if strings.Count(h, `<div class="table-wrap"><table>`) != 1 || strings.Count(h, "</table></div>") != 1 {
		t.Errorf("the table is not in a scroll box:\n%s", h)
	}
	if !strings.Contains(css, `@media (max-width:600px){td:not([style*="right"]):not([style*="center"]){min-width:5em}}`) {
		t.Errorf("no narrower word columns on small screens")
	}
	// A table wider than its box says so: the page's script marks the box
	// (scrolls), which shows a note above the table and fades its right
	// edge until the box is scrolled to its end (at-end); report.md is
	// not touched. A page without tables has no such script.
	if !strings.Contains(h, tableScript) || !strings.Contains(css, `.table-wrap.scrolls::before{content:"Scroll sideways for more columns`) ||
		!strings.Contains(css, `.table-wrap.scrolls:not(.at-end){-webkit-mask-image:linear-gradient(to right,`) {
		t.Errorf("no cue that a wide table scrolls sideways")
	}
	// Where scripts do not run, the box shades the edge beyond which the
	// table goes on: shadows fixed at the box's edges (scroll) under white
	// that moves with the table (local) and hides a shadow where the table
	// ends; the cells let the shadow through. In the head, within
	// noscript, so that the script's cue alone shows where it runs.
	head, _, _ := strings.Cut(h, "</head>")
	if !strings.Contains(head, "<noscript><style>"+noScriptCSS+"</style></noscript>") ||
		!strings.Contains(noScriptCSS, ".table-wrap{background:linear-gradient(to right,#fff 40%,rgba(255,255,255,0)) left/3em 100% no-repeat local,") ||
		!strings.Contains(noScriptCSS, "radial-gradient(farthest-side at 100% 50%,rgba(0,0,0,0.3),rgba(0,0,0,0)) right/1em 100% no-repeat scroll}") ||
		!strings.Contains(noScriptCSS, ".table-wrap tr:nth-child(even) td{background:rgba(0,0,0,0.02)}") {
		t.Errorf("no cue without scripts that a wide table scrolls sideways:\n%s", head)
	}
	if strings.Contains(string(d.markdown()), "Scroll sideways") {
		t.Errorf("report.md has the cue of report.html")
	}
	e := &doc{}
	e.p("No table here.")
	if page, err := e.html("t"); err != nil || strings.Contains(string(page), tableScript) {
		t.Errorf("a page without tables has the tables' script (%v)", err)
	}
}
