package render

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

func TestProfileGrid(t *testing.T) {
	ds := &data.Dataset{Predictors: []string{"b", "c", "k"}, Y: []int{0, 1, 1, 0}, N: 4, K: 3,
		X: []float64{0, 2, 5, 1, 8, 5, 1, 2, 5, 0, 4, 5}, Weights: []float64{1, 1, 1, 3}}
	spec := design.Spec{Sources: []design.Source{{Name: "b"}, {Name: "c"}, {Name: "k"}},
		Terms: []design.TermSpec{{Name: "b", Source: "b"}, {Name: "c", Source: "c"}, {Name: "k", Source: "k"}}}
	dz, err := design.Build(spec, ds.X, ds.N, ds.Weights, nil)
	if err != nil {
		t.Fatal(err)
	}
	or := &runner.OutcomeResult{Data: ds, Design: dz}
	pf, err := newProfile(or, "b", nil)
	if err != nil {
		t.Fatal(err)
	}
	if !pf.binary || fmt.Sprint(pf.grid(7)) != "[0 1]" {
		t.Errorf("0/1 predictor: binary %v, grid %v", pf.binary, pf.grid(7))
	}
	// Weighted means: b (0+1+1+0)/6 = 1/3, c (2+8+2+3*4)/6 = 4.
	pf, _ = newProfile(or, "c", nil)
	X, _, _ := pf.Rows([]float64{7})
	if math.Abs(X[0]-2.0/6) > 1e-15 || X[1] != 7 || X[2] != 5 {
		t.Errorf("row at c = 7: %v", X)
	}
	if pf.binary || fmt.Sprint(pf.grid(7)) != "[2 3 4 5 6 7 8]" {
		t.Errorf("continuous predictor: binary %v, grid %v", pf.binary, pf.grid(7))
	}
	pf, _ = newProfile(or, "k", nil)
	if fmt.Sprint(pf.grid(7)) != "[5]" {
		t.Errorf("constant predictor: grid %v", pf.grid(7))
	}
	if _, err := newProfile(or, "zz", nil); err == nil {
		t.Error("unknown focus predictor accepted")
	}
}

func TestValAndColors(t *testing.T) {
	if v := val(0.1234567891); v != 0.123457 {
		t.Errorf("val rounds to %v", v)
	}
	if v := val(math.NaN()); v != "-" {
		t.Errorf("val(NaN) = %v", v)
	}
	if b, _ := json.Marshal(val(math.Copysign(0, -1))); string(b) != "0" {
		t.Errorf("negative zero written as %s", b)
	}
	for _, c := range []struct {
		j, J int
		want string
	}{{0, 5, "#c9b24a"}, {2, 5, "#3e9a7a"}, {4, 5, "#2c2f6b"}, {0, 2, "#c9b24a"}, {1, 2, "#2c2f6b"}, {1, 3, "#3e9a7a"}} {
		if got := categoryColor(c.j, c.J); got != c.want {
			t.Errorf("categoryColor(%d, %d) = %s, want %s", c.j, c.J, got, c.want)
		}
	}
}

func TestBoundarySlopesNeedStandardErrors(t *testing.T) {
	res := &fit.Result{J: 3, Predictors: []string{"a"}, Effects: [][]float64{{1}, {2}},
		ParamNames: []string{"tau[1]", "tau[2]", "a[1]", "a[2]"}, StdErrors: []float64{1, 1, 0.5, 0.25}}
	est, se, ok := boundarySlopes(res, 0)
	if !ok || fmt.Sprint(est, se) != "[1 2] [0.5 0.25]" {
		t.Errorf("got %v %v %v", est, se, ok)
	}
	res.StdErrors[3] = math.NaN()
	if _, _, ok := boundarySlopes(res, 0); ok {
		t.Error("a slope without a standard error was drawn")
	}
}

// crossingFit is a cumulative nonparallel logit whose estimates are then
// set so that the two cumulative probabilities cross for x < -0.5:
// L_1 = -0.5 - x and L_2 = 0.5 + x.
func crossingFit(t *testing.T) (*fit.Data, *fit.Result) {
	t.Helper()
	d := &fit.Data{J: 3, Predictors: []string{"x"}}
	for i := 0; i < 60; i++ {
		x := -2 + 4*float64(i)/59
		d.X = append(d.X, x)
		d.Y = append(d.Y, (i*7)%3)
	}
	spec, err := runner.EffectsSpec(fit.Cumulative, false, fit.Logit, fit.NonparallelEffects, d.Predictors, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	m, err := spec.Model()
	if err != nil {
		t.Fatal(err)
	}
	res, err := fit.Fit(d, m, fit.Options{Workers: 1})
	if err != nil || !res.OK() {
		t.Fatalf("fit: %v %v", err, res)
	}
	set := map[string]float64{"tau[1]": -0.5, "tau[2]": 0.5, "x[1]": 1, "x[2]": -1}
	for i, n := range res.ParamNames {
		v, ok := set[n]
		if !ok {
			t.Fatalf("unexpected parameter %s", n)
		}
		res.Estimates[i] = v
	}
	return d, res
}

func TestPredictionsFlagNegativeProbabilities(t *testing.T) {
	d, res := crossingFit(t)
	r := &runner.Result{Plan: &plan.Plan{Predictors: []string{"x"}, Report: plan.Report{FocusPredictor: "x", ConfidenceLevel: 0.95}}}
	or := &runner.OutcomeResult{Outcome: plan.Outcome{Column: "y", Label: "y"}, FitData: d,
		Chosen: &runner.FitEntry{ID: "cumulative/nonparallel/logit", Approach: fit.Cumulative, Effects: fit.NonparallelEffects, Link: fit.Logit, Result: res}}
	doc := &doc{}
	writePredictions(doc, r, or)
	md := string(doc.markdown())
	// The grid is -2, -4/3, -2/3, 0, ..., 2: three points lie below -0.5.
	if got := strings.Count(md, "| **yes** |"); got != 3 {
		t.Errorf("%d grid rows flagged negative, want 3:\n%s", got, md)
	}
	if !strings.Contains(md, "**Warning:** at 3 of these 7 values of `x`") {
		t.Errorf("no warning:\n%s", md)
	}
	cs := doc.allCharts()
	if len(cs) != 2 || !strings.Contains(cs[0].caption, "some probability is negative") {
		t.Errorf("chart caption does not mention the negative probabilities: %+v", cs)
	}
}

var drawCall = regexp.MustCompile(`(?m)^ordplanDraw\("(chart-\d+)",(.*)\);$`)

// TestHTMLIsSelfContained checks the page of the golden run: every chart
// element has exactly one draw call with a valid option object, the chart
// library is inline, nothing is fetched, and report.md has a note for
// every chart group.
func TestHTMLIsSelfContained(t *testing.T) {
	files := renderPlan(t, goldenPlan, 2)
	page, md := string(files["report.html"]), string(files["report.md"])
	divs := regexp.MustCompile(`<div class="chart" id="(chart-\d+)"`).FindAllStringSubmatch(page, -1)
	calls := drawCall.FindAllStringSubmatch(page, -1)
	if len(divs) == 0 || len(divs) != len(calls) {
		t.Fatalf("%d chart elements, %d draw calls", len(divs), len(calls))
	}
	for i := range divs {
		want := fmt.Sprintf("chart-%d", i+1)
		if divs[i][1] != want || calls[i][1] != want {
			t.Errorf("chart %d: element %s, call %s, want %s", i+1, divs[i][1], calls[i][1], want)
		}
		var opt struct {
			Animation *bool             `json:"animation"`
			Series    []json.RawMessage `json:"series"`
		}
		if err := json.Unmarshal([]byte(calls[i][2]), &opt); err != nil {
			t.Errorf("%s: option is not JSON: %v", want, err)
			continue
		}
		if opt.Animation == nil || *opt.Animation || len(opt.Series) == 0 {
			t.Errorf("%s: animation %v, %d series", want, opt.Animation, len(opt.Series))
		}
	}
	if strings.Count(page, echartsJS) != 1 {
		t.Error("the chart library is not inline exactly once")
	}
	if regexp.MustCompile(`<script[^>]*\ssrc=|<link\s`).MatchString(page) {
		t.Error("the page loads a file")
	}
	charts := strings.Count(page, `<div class="chart" id=`)
	images := len(regexp.MustCompile(`(?m)^!\[Figure \d+\]\(figure-\d+\.svg\)$`).FindAllString(md, -1))
	if charts != images {
		t.Errorf("%d charts in report.html, %d figures in report.md", charts, images)
	}
	for _, h := range []string{"## Summary", "### The models", "### Tests of the parallel-lines assumption", "### Decision log",
		"### Effects across boundaries", "### Predicted probabilities", "### Average marginal effects", "## Assumptions and limits"} {
		if !strings.Contains(md, "\n"+h+"\n") {
			t.Errorf("report.md has no %q section", h)
		}
	}
}

// With report.timestamp the report and run.json carry the same start time;
// without it neither has one.
func TestTimestampOnlyWhenAsked(t *testing.T) {
	r := &runner.Result{Plan: &plan.Plan{Path: "p.yaml", Title: "t"}, Version: "x", Started: "2026-12-02T04:00:00Z"}
	d := build(r, runner.BuildDecisions(r), nil)
	if !strings.Contains(string(d.markdown()), "Run started at 2026-12-02T04:00:00Z") {
		t.Fatal("timestamp missing from the report")
	}
	r.Started = ""
	if strings.Contains(string(build(r, runner.BuildDecisions(r), nil).markdown()), "Run started") {
		t.Fatal("timestamp without being asked")
	}
}

// TestCategoryPaletteLightToDark: the colours of ordered categories get
// darker (lower relative luminance) from the first category to the last.
func TestCategoryPaletteLightToDark(t *testing.T) {
	lum := func(hex string) float64 {
		var r, g, b int
		fmt.Sscanf(hex, "#%02x%02x%02x", &r, &g, &b)
		lin := func(c int) float64 {
			v := float64(c) / 255
			if v <= 0.04045 {
				return v / 12.92
			}
			return math.Pow((v+0.055)/1.055, 2.4)
		}
		return 0.2126*lin(r) + 0.7152*lin(g) + 0.0722*lin(b)
	}
	for J := 2; J <= 10; J++ {
		prev := math.Inf(1)
		for j := 0; j < J; j++ {
			l := lum(categoryColor(j, J))
			if l >= prev {
				t.Errorf("J=%d: category %d (%s) is not darker than the one before", J, j+1, categoryColor(j, J))
			}
			prev = l
		}
	}
}

// A fallback model (every candidate rejected, the plan's fallback reported)
// is named as such in the chosen model's heading and in the methods
// paragraph, not only in the decision log.
func TestFallbackNamedWhereTheChosenModelIs(t *testing.T) {
	res := runPlan(t, goldenPlan, 2)
	or := res.Outcomes[0]
	if or.Chosen == nil {
		t.Fatal("the golden plan chose no model")
	}
	or.Fallback = true
	md := string(build(res, runner.BuildDecisions(res), nil).markdown())
	hasAll(t, "report.md", md,
		"### The chosen model: "+or.Chosen.ID+" (the plan's fallback)",
		"so the model reported is "+or.Chosen.ID+", the fallback the plan named for that case",
	)
}

// TestStackedLegendFollowsLayers: the legend of the stacked chart of
// cumulative probabilities in report.html lists the outcome's categories
// as its layers lie, from the highest at the top to the lowest at the
// bottom, one per line right of the plot, as the static figure does,
// each by a square of its layer's colour.
func TestStackedLegendFollowsLayers(t *testing.T) {
	files := renderPlan(t, goldenPlan, 2)
	found := false
	for _, c := range drawCall.FindAllStringSubmatch(string(files["report.html"]), -1) {
		var opt struct {
			Title  struct{ Text string } `json:"title"`
			Legend struct {
				Orient string `json:"orient"`
				Icon   string `json:"icon"`
				Data   []any  `json:"data"` // names, or objects (an entry drawn as its line alone)
			} `json:"legend"`
		}
		if err := json.Unmarshal([]byte(c[2]), &opt); err != nil {
			t.Fatal(err)
		}
		if !strings.HasPrefix(opt.Title.Text, "Cumulative probabilities by ") {
			continue
		}
		found = true
		want := "very_safe safe neutral unsafe very_unsafe"
		if opt.Legend.Orient != "vertical" || strings.Trim(fmt.Sprint(opt.Legend.Data), "[]") != want {
			t.Errorf("%s: legend %+v, want vertical %s", c[1], opt.Legend, want)
		}
		// Its icons are squares of the layers' colours, beside the plot
		// and below it (the narrow layouts change where the legend
		// stands, not its icon), not a line the chart does not draw.
		if opt.Legend.Icon != "rect" {
			t.Errorf("%s: legend icon %q, want rect", c[1], opt.Legend.Icon)
		}
	}
	if !found {
		t.Fatal("no stacked chart in the golden report")
	}
}

// TestChartLegendLinesAndAxisNames: in report.html the legend entries of
// the boundary charts' interval and parallel line, drawn without points,
// are their lines alone (the point hidden), the other entries as the
// library draws them; every y axis name above the plot starts at the axis
// (align left, so that a long name is not cut at the chart's left edge)
// and the plot leaves it room below the subtitle.
func TestChartLegendLinesAndAxisNames(t *testing.T) {
	files := renderPlan(t, goldenPlan, 2)
	boundaries, names := 0, 0
	for _, c := range drawCall.FindAllStringSubmatch(string(files["report.html"]), -1) {
		var opt struct {
			Title struct {
				Subtext string `json:"subtext"`
			} `json:"title"`
			Legend struct {
				Data []json.RawMessage `json:"data"`
			} `json:"legend"`
			Grid []struct {
				Top string `json:"top"`
			} `json:"grid"`
			YAxis []struct {
				Name          string `json:"name"`
				NameLocation  string `json:"nameLocation"`
				NameTextStyle struct {
					Align string `json:"align"`
				} `json:"nameTextStyle"`
			} `json:"yAxis"`
		}
		if err := json.Unmarshal([]byte(c[2]), &opt); err != nil {
			t.Fatal(err)
		}
		for _, y := range opt.YAxis {
			if y.Name == "" || y.NameLocation == "middle" {
				continue
			}
			names++
			if y.NameTextStyle.Align != "left" {
				t.Errorf("%s: y axis name %q aligned %q, want left", c[1], y.Name, y.NameTextStyle.Align)
			}
			if top, err := strconv.Atoi(opt.Grid[0].Top); err == nil && top < 60+yNameRoom {
				t.Errorf("%s: plot top %d leaves the y axis name no room below the subtitle", c[1], top)
			}
		}
		if !strings.HasPrefix(opt.Title.Subtext, "slope at each boundary") {
			continue
		}
		boundaries++
		hidden, band := map[string]bool{}, false
		for _, d := range opt.Legend.Data {
			var item struct {
				Name      string
				ItemStyle struct{ Opacity *float64 }
			}
			if json.Unmarshal(d, &item) == nil && item.ItemStyle.Opacity != nil && *item.ItemStyle.Opacity == 0 {
				hidden[item.Name] = true
				band = band || strings.HasSuffix(item.Name, "% interval")
			}
		}
		if !band || !hidden["parallel"] || hidden["nonparallel"] || len(opt.Legend.Data) < 3 {
			t.Errorf("%s: legend %s, want the interval and parallel entries as lines alone", c[1], opt.Legend.Data)
		}
	}
	if boundaries == 0 || names == 0 {
		t.Fatalf("golden report: %d boundary charts, %d y axis names above a plot", boundaries, names)
	}
}

// TestPanelsByGivesOnePanelPerLevel: report.panels_by names a categorical
// column of the design, and the predictions get one panel (a heading and
// a table) per level of it, each held at that level; a plan's name is
// matched as written (a code span is only how the report shows it).
func TestPanelsByGivesOnePanelPerLevel(t *testing.T) {
	qs, err := filepath.Abs(filepath.Join("..", "plans", "data", "quietstreets.csv"))
	if err != nil {
		t.Fatal(err)
	}
	src := `version: 1
data: {file: ` + qs + `}
outcomes: [{column: safety, categories: [very_unsafe, unsafe, neutral, safe, very_safe]}]
categorical:
  street_type: {levels: [residential, through_road, cul_de_sac]}
predictors: [pilot, age, street_type]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
report: {focus_predictor: age, panels_by: street_type}
`
	md := string(renderSource(t, t.TempDir(), src, 1)["report.md"])
	hasAll(t, "report.md", md, "One panel per level of `street_type` (report.panels_by)",
		"#### street_type = residential", "#### street_type = through_road", "#### street_type = cul_de_sac")
}

// A test of equal slopes that a stepwise step could not compute (here: more
// restrictions than the clusters less one) is shown as not computed, with
// its reason, never as chi2(0) = 0.000, p < 0.0001.
func TestStepwiseShowsTestsNotComputed(t *testing.T) {
	why := "6 restrictions need at least 7 clusters, and the data have 3: a cluster-robust covariance from G clusters has rank at most G-1"
	or := &runner.OutcomeResult{Stepwise: []runner.StepwiseRecord{{Approach: fit.Cumulative, Link: fit.Logit, Result: &fit.StepwiseResult{
		OK: true, Alpha: 0.05, Test: fit.TestWald,
		Steps: []fit.StepwiseStep{{Step: 1, LogLik: -681.46, Tests: []fit.Test{
			{Name: "dose", Reason: why},
			{Name: "age", OK: true, Chi2: 0.477, DF: 2, P: 0.7876},
		}}},
	}}}}
	d := &doc{}
	writeFreeSets(d, plan.Models{}, or)
	md := string(d.markdown())
	if !strings.Contains(md, "| dose not computed ("+why+"); age chi2(2) = 0.477, p = 0.7876 |") || strings.Contains(md, "chi2(0)") {
		t.Errorf("the step's tests:\n%s", md)
	}
}

// A plan whose models read no partial set (neither partial nor
// constrained effects) has no section "Partial sets" (it held a table of
// "(none)"); the golden report, whose plan fits partial models, keeps it.
func TestNoPartialSetsSectionWithoutPartialModels(t *testing.T) {
	qs, err := filepath.Abs(filepath.Join("..", "plans", "data", "quietstreets.csv"))
	if err != nil {
		t.Fatal(err)
	}
	src := `version: 1
data: {file: ` + qs + `}
outcomes: [{column: safety, categories: [very_unsafe, unsafe, neutral, safe, very_safe]}]
predictors: [pilot, age]
models: {approaches: [cumulative], effects: [parallel, nonparallel], links: [logit]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`
	md := string(renderSource(t, t.TempDir(), src, 1)["report.md"])
	if strings.Contains(md, "Partial sets") {
		t.Errorf("report.md has a section on partial sets that no model reads")
	}
	golden, err := os.ReadFile(filepath.Join("testdata", "golden", "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(golden), "### Partial sets") {
		t.Errorf("the golden report lost its section on partial sets")
	}
}
