package render

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"html"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/extension"
)

// oddNames are names a plan or a data file can give: Markdown and HTML
// syntax, quotes, separators, formula-like cells, other scripts.
var oddNames = []string{
	"very bad, really", `says "ok"`, "a|b *c* _d_", "<script>alert(1)</script> & `x`", "=1+1",
	"+cmd|' /C calc'!A0", "Über-gut é", "很好 非常", "ممتاز جدا", "<b>bold</b>", "**x**", "__init__",
	`back\slash\*`, "[link](http://x)", "&amp; &#65; &lt;", "``two``", "` edge", "tau[1]", "<0.001",
	"pilot&street_type", "very_unsafe", "x_", "_x", "![i](j)", "[ref]: http://x", "a\nb",
}

// visibleText is the text a browser shows of an HTML fragment: tags
// dropped, character references resolved.
func visibleText(h string) string {
	return html.UnescapeString(regexp.MustCompile(`<[^>]*>`).ReplaceAllString(h, ""))
}

// goldmarkHTML converts Markdown as report.html does.
func goldmarkHTML(t *testing.T, md string) string {
	t.Helper()
	var b bytes.Buffer
	if err := goldmark.New(goldmark.WithExtensions(extension.Table)).Convert([]byte(md), &b); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

// User text written with mdText (running text and table cells) and mdCode
// shows in report.html exactly as written (a line break as a space): the
// reference is CommonMark's rendering by the converter report.html uses.
// Markdown and HTML in names were taken as such: "<b>bold</b>" was dropped
// as raw HTML, "*c*" shown in italics.
func TestNamesShownLiterally(t *testing.T) {
	for _, s := range oddNames {
		want := strings.ReplaceAll(s, "\n", " ")
		if got := visibleText(goldmarkHTML(t, "Before "+mdText(s)+" after.")); strings.TrimSpace(got) != "Before "+want+" after." {
			t.Errorf("paragraph of %q shows %q", s, got)
		}
		d := &doc{}
		d.table([]string{"Name", "Code"}, [][]string{{s, md(mdCode(s))}})
		h := goldmarkHTML(t, d.b.String())
		cells := regexp.MustCompile(`(?s)<td[^>]*>(.*?)</td>`).FindAllStringSubmatch(h, -1)
		if len(cells) != 2 {
			t.Errorf("table of %q has %d cells, not 2:\n%s", s, len(cells), h)
			continue
		}
		if got := visibleText(cells[0][1]); got != want {
			t.Errorf("table cell of %q shows %q", s, got)
		}
		if got := visibleText(cells[1][1]); strings.TrimSpace(got) != strings.TrimSpace(want) || !strings.HasPrefix(cells[1][1], "<code>") {
			t.Errorf("code cell of %q shows %q (%s)", s, got, cells[1][1])
		}
	}
	// Plain names stay readable in report.md.
	for _, s := range []string{"very_unsafe", "pilot&street_type.through_road", "tau[1]", "<0.001", "age (years)", "région.a_b"} {
		if mdText(s) != s {
			t.Errorf("mdText(%q) = %q: a plain name is escaped", s, mdText(s))
		}
	}
}

// A run whose title, outcome label, categories, levels and predictor name
// hold Markdown, HTML, quotes, commas and other scripts: report.html shows
// them as written and holds no HTML from them; every CSV output reads back
// (encoding/csv, as R's read.csv reads RFC 4180) to rows of its header's
// width with the categories exactly; decisions.json is valid JSON holding
// them exactly.
func TestOddNamesThroughTheReport(t *testing.T) {
	cats := []string{"very bad, really", `says "ok"`, "a|b *c* _d_", "<script>alert(1)</script> & `x`", "=1+1", "很好 ممتاز"}
	levels := []string{"<b>bold</b>", "x|y", "q\"uote", "Über"}
	dir := t.TempDir()
	var data strings.Builder
	data.WriteString("\"sc,ore\",\"<i>dose</i>\",\"région\"\n")
	q := func(s string) string { return `"` + strings.ReplaceAll(s, `"`, `""`) + `"` }
	for i := 0; i < 240; i++ {
		x := float64((i*37)%100) / 20
		c := (i*7 + int(x)) % len(cats)
		fmt.Fprintf(&data, "%s,%g,%s\n", q(cats[c]), x, q(levels[(i*5)%len(levels)]))
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(data.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	list := func(xs []string) string {
		b, _ := json.Marshal(xs)
		return string(b)
	}
	src := fmt.Sprintf(`version: 1
title: "Odd <names> & `+"`things`"+` | *here*"
data: {file: d.csv}
outcomes:
  - column: "sc,ore"
    categories: %s
    label: "Score <u>label</u> & | *x*"
categorical:
  "région": {levels: %s}
predictors: ["<i>dose</i>", "région"]
dictionary:
  "<i>dose</i>": {range: [0, 5]}
  "région": {label: "R <i>é</i>"}
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`, list(cats), list(levels))
	files := renderSource(t, dir, src, 1)
	page := string(files["report.html"])
	if d := os.Getenv("ORDPLAN_ODD_DIR"); d != "" {
		for n, b := range files {
			_ = os.WriteFile(filepath.Join(d, n), b, 0o644)
		}
	}
	if strings.Contains(page, "raw HTML omitted") {
		t.Errorf("report.html dropped names as raw HTML")
	}
	for _, tag := range []string{"<script>alert", "<b>bold", "<i>dose", "<u>label", "<em>"} {
		if strings.Contains(page, tag) {
			t.Errorf("report.html holds %q from a name", tag)
		}
	}
	// A level's column whose name lost the level's letters is followed by
	// the level in the table of estimates.
	if md := string(files["report.md"]); !strings.Contains(md, `| région.\_ber (Über) |`) {
		t.Errorf("report.md's estimates do not name the level of région._ber")
	}
	text := visibleText(page)
	for _, s := range append(append(slices.Clone(cats), levels...), "<i>dose</i>", "Odd <names> & `things` | *here*", "Score <u>label</u> & | *x*") {
		if !strings.Contains(text, s) {
			t.Errorf("report.html does not show %q", s)
		}
	}
	for name, b := range files {
		switch {
		case strings.HasSuffix(name, ".csv"):
			recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
			if err != nil {
				t.Errorf("%s: %v", name, err)
				continue
			}
			for _, r := range recs {
				if len(r) != len(recs[0]) {
					t.Errorf("%s: a row of %d fields under a header of %d", name, len(r), len(recs[0]))
				}
			}
			if k := slices.Index(recs[0], "category"); k >= 0 {
				for _, r := range recs[1:] {
					if r[k] != "" && r[k] != "all" && !slices.Contains(cats, r[k]) {
						t.Errorf("%s: category %q is none of the data's", name, r[k])
					}
				}
			}
		case name == "decisions.json":
			var v any
			if err := json.Unmarshal(b, &v); err != nil {
				t.Errorf("decisions.json: %v", err)
			}
			found := map[string]bool{}
			var walk func(any)
			walk = func(v any) {
				switch v := v.(type) {
				case map[string]any:
					for _, x := range v {
						walk(x)
					}
				case []any:
					for _, x := range v {
						walk(x)
					}
				case string:
					found[v] = true
				}
			}
			walk(v)
			for _, s := range cats {
				if !found[s] {
					t.Errorf("decisions.json lacks %q", s)
				}
			}
		}
	}
}

// TestBacktickNamesInCodeSpans: a data file and a cluster column whose
// names hold backticks are shown whole in report.html, in code spans
// fenced by more backticks than the name holds (CommonMark's code-span
// rule), not cut into pieces by their own backticks.
func TestBacktickNamesInCodeSpans(t *testing.T) {
	dir := t.TempDir()
	var data strings.Builder
	data.WriteString("y,x,\"g`rp\"\n")
	for i := 0; i < 240; i++ {
		x := float64((i*37)%100) / 20
		fmt.Fprintf(&data, "%d,%g,%d\n", (i*7+int(x))%3, x, i%30)
	}
	if err := os.WriteFile(filepath.Join(dir, "d`1.csv"), []byte(data.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := "version: 1\ndata: {file: \"d`1.csv\", cluster: \"g`rp\"}\n" +
		"outcomes:\n  - column: y\n    categories: [\"0\", \"1\", \"2\"]\n" +
		"predictors: [x]\ncovariance: clustered\n" +
		"models: {approaches: [cumulative], effects: [parallel], links: [logit]}\n" +
		"tests: {parallel_lines: []}\nrules:\n  - choose: {by: aic}\n"
	files := renderSource(t, dir, src, 1)
	md := string(files["report.md"])
	for _, want := range []string{"``d`1.csv``", "``g`rp``"} {
		if !strings.Contains(md, want) {
			t.Errorf("report.md lacks the code span %s", want)
		}
	}
	text := visibleText(string(files["report.html"]))
	for _, want := range []string{"d`1.csv", "clusters of g`rp"} {
		if !strings.Contains(text, want) {
			t.Errorf("report.html does not show %q", want)
		}
	}
}
