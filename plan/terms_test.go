package plan

import (
	"strings"
	"testing"
)

const termsPlanSrc = `version: 1
data: {file: d.csv}
subset:
  - {column: age, at_least: 18}
  - {column: site, one_of: [north, east]}
outcomes:
  - column: y
  - column: z
    predictors: [treat, {column: dose, sqrt: true}]
categorical:
  treat: {levels: [placebo, drug]}
  site: {levels: [north, east, south], reference: east, coding: sum, unobserved: drop}
  grade: {levels: ["1", "2", "3"], ordered: true, coding: successive}
predictors:
  - treat
  - site
  - grade
  - {column: age, centre: 40, scale: sd, spline: {quantiles: [0.1, 0.5, 0.9]}, name: age_s}
  - {column: dose, log: {shift: 1}, centre: mean}
  - {column: bmi, polynomial: {degree: 2, basis: raw}}
  - {interact: [treat, age_s]}
models: {approaches: [cumulative], effects: [parallel, partial], partial: {free: [treat, site]}}
rules:
  - choose: {by: aic}
report: {panels_by: treat}
inference:
  marginal_effects: [profile]
  profile: {site: north, age: 50}
`

// A plan with every kind of term, a subset and an outcome's own predictor
// list reads into the design vocabulary, and its canonical form is itself
// a plan with the same canonical form (what a lock records).
func TestTermsDecodeAndCanonical(t *testing.T) {
	p, err := Parse([]byte(termsPlanSrc), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(p.Predictors, " "); got != "treat site grade age_s dose.log.c bmi.polynomial treat&age_s" {
		t.Errorf("terms %q", got)
	}
	if got := strings.Join(p.SourceColumns(), " "); got != "treat site grade age dose bmi" {
		t.Errorf("columns %q", got)
	}
	if c := p.CategoricalOf("site"); c == nil || c.Reference != "east" || c.Coding != "sum" || c.Unobserved != "drop" {
		t.Errorf("site %+v", c)
	}
	if len(p.Subset) != 2 || p.Subset[0].Op != ">=" || p.Subset[1].Op != "in" {
		t.Errorf("subset %+v", p.Subset)
	}
	if o := p.Outcomes[1]; strings.Join(o.Predictors, " ") != "treat dose.sqrt" {
		t.Errorf("own predictors %v", o.Predictors)
	}
	if a := p.Inference.Profile; len(a) != 2 || a[0].Level != "north" || a[1].Value != 50 {
		t.Errorf("at %+v", a)
	}
	q, err := Parse(p.Canonical(), "p.yaml")
	if err != nil {
		t.Fatalf("canonical form does not parse: %v\n%s", err, p.Canonical())
	}
	if string(q.Canonical()) != string(p.Canonical()) {
		t.Errorf("canonical round trip differs:\n%s\n%s", p.Canonical(), q.Canonical())
	}
}

// Bad terms are reported at their keys.
func TestBadTerms(t *testing.T) {
	for _, c := range []struct{ edit, want string }{
		{"  - {column: bmi, polynomial: {degree: 2, basis: raw}}\n", "  - {column: bmi, polynomial: {degree: 12}}\n"},
		{"coding: successive}", "coding: successive, reference: \"2\"}"},
		{"ordered: true, ", ""},
		{"reference: east", "reference: west"},
		{`grade: {levels: ["1", "2", "3"], ordered: true, coding: successive}`, `grade: {levels: 3, reference: "2", ordered: true, coding: successive}`},
		{"{column: age, centre: 40,", "{column: age, centre: [40],"},
		{"  - treat\n  - site\n", "  - treat\n  - {}\n  - site\n"},
		{"{column: age, at_least: 18}", "{column: age, at_least: 18, at_most: 60}"},
	} {
		src := strings.Replace(termsPlanSrc, c.edit, c.want, 1)
		if src == termsPlanSrc {
			t.Fatalf("edit %q not applied", c.edit)
		}
		_, err := Parse([]byte(src), "p.yaml")
		if err == nil {
			t.Errorf("%q accepted", c.want)
			continue
		}
		t.Log(err)
	}
}

// A subset that leaves out levels of a categorical predictor is refused at
// the condition when no row used could then serve the design: the
// reference level, a level whose column is kept, all levels but one; a
// value written like a level but not as declared is refused as a slip.
// Leaving out a level whose column is dropped (unobserved: drop) is fine.
func TestSubsetLeavesOutLevels(t *testing.T) {
	for _, c := range []struct{ subset, want string }{
		{"{column: site, one_of: [north, south]}", `p.yaml:5:5: subset[1]: leaves out the rows of level "east" of site, the reference level (categorical.site): no row used has it; choose another reference`},
		{"{column: site, one_of: [east]}", `p.yaml:5:5: subset[1]: leaves only one level ("east") of site among the rows used: a categorical predictor needs two; drop site from the predictors of this subset`},
		{"{column: site, one_of: [north, east, South]}", `p.yaml:5:5: subset[1]: names "South", which is not a level of site but is written like its level "south" (categorical.site.levels)`},
		// All levels but one is said before the level left out: removing
		// the level would only lead there.
		{"{column: treat, none_of: [drug]}", `p.yaml:5:5: subset[1]: leaves only one level ("placebo") of treat among the rows used: a categorical predictor needs two; drop treat from the predictors of this subset`},
		{`{column: grade, none_of: ["2"]}`, `p.yaml:5:5: subset[1]: leaves out the rows of level "2" of grade, which categorical.grade declares: no row used has it, so its column cannot be estimated`},
	} {
		src := strings.Replace(termsPlanSrc, "{column: site, one_of: [north, east]}", c.subset, 1)
		_, err := Parse([]byte(src), "p.yaml")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: got %v, want %s", c.subset, err, c.want)
		}
	}
	if _, err := Parse([]byte(termsPlanSrc), "p.yaml"); err != nil {
		t.Errorf("a level left out whose column is dropped: %v", err)
	}
}

// A design column where a term is wanted (a level of a categorical
// predictor in the partial set) is refused with the term to name; a
// profile level that is not a level names the value given.
func TestColumnWhereTermWanted(t *testing.T) {
	src := strings.Replace(termsPlanSrc, "free: [treat, site]", "free: [treat, site.north]", 1)
	_, err := Parse([]byte(src), "p.yaml")
	want := `models.partial.free[1]: "site.north" is not a predictor (predictors: treat, site, grade, age_s, dose.log.c, bmi.polynomial, treat&age_s); "site.north" is a column of the term "site", whose 2 columns (site.north, site.south) move together: name the term`
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("got %v, want %s", err, want)
	}
	src = strings.Replace(termsPlanSrc, "profile: {site: north", "profile: {site: South", 1)
	_, err = Parse([]byte(src), "p.yaml")
	want = `inference.profile.site: "South" is not a level of "site", which is categorical: give one of its levels (north, east, south)`
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("got %v, want %s", err, want)
	}
}

// A profile names the level of a categorical column as the plan writes
// its levels: a level written as a number (grade: 2, levels ["1", "2",
// "3"]) is that level, as it is in categorical.grade.levels, not a number
// refused as an empty level; its canonical form is the level's text.
func TestProfileLevelWrittenAsNumber(t *testing.T) {
	for _, v := range []string{"2", `"2"`} {
		src := strings.Replace(termsPlanSrc, "profile: {site: north, age: 50}", "profile: {grade: "+v+", age: 50}", 1)
		p, err := Parse([]byte(src), "p.yaml")
		if err != nil {
			t.Fatalf("grade: %s: %v", v, err)
		}
		got := p.Inference.Profile[0]
		if got.Predictor != "grade" || got.Level != "2" {
			t.Errorf("grade: %s: profile %+v, want the level \"2\"", v, got)
		}
		c := p.canonical().Inference.Profile["grade"]
		if c != "2" {
			t.Errorf("grade: %s: canonical profile value %#v, want \"2\"", v, c)
		}
	}
	src := strings.Replace(termsPlanSrc, "profile: {site: north, age: 50}", "profile: {grade: 4}", 1)
	_, err := Parse([]byte(src), "p.yaml")
	want := `inference.profile.grade: "4" is not a level of "grade", which is categorical: give one of its levels (1, 2, 3)`
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("got %v, want %s", err, want)
	}
	src = strings.Replace(termsPlanSrc, "profile: {site: north, age: 50}", "profile: {age: true}", 1)
	_, err = Parse([]byte(src), "p.yaml")
	want = `inference.profile.age: "age" is numeric: give a number, got "true"`
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("got %v, want %s", err, want)
	}
}

// A profile at a level that the subset leaves out (its column dropped,
// unobserved: drop) is refused at the profile: no row used has the level,
// so the model has no effect of it to evaluate.
func TestProfileLevelLeftOutBySubset(t *testing.T) {
	src := strings.Replace(termsPlanSrc, "profile: {site: north", "profile: {site: south", 1)
	_, err := Parse([]byte(src), "p.yaml")
	want := `inference.profile.site: "south" is a level the subset leaves out (subset[1]: site in {north, east}): no row used has it, so the fitted model has no effect of it; give a level the rows used have (north, east)`
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("got %v, want %s", err, want)
	}
}

// An interaction naming the column of a term instead of the term (the
// term renamed, log(dose) as dose.log.c) is told the term's name.
func TestInteractionNamesAColumn(t *testing.T) {
	src := strings.Replace(termsPlanSrc, "{interact: [treat, age_s]}", "{interact: [treat, dose]}", 1)
	_, err := Parse([]byte(src), "p.yaml")
	want := `predictors[6].interact[1]: "dose" is not a term listed before this interaction in predictors ("dose" is a column; interactions name terms, and the term reading it is "dose.log.c")`
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("got %v, want %s", err, want)
	}
}
