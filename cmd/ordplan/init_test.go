package main

import (
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"ordplan/plan"
)

// ordplan init writes a valid plan that lists the columns with their
// kinds, from a data file or a header line, and never overwrites a file.
func TestInitSkeleton(t *testing.T) {
	dir := t.TempDir()
	csv := "id,grade,dose,smoker,site,note\n" +
		"p1,2,1.5,0,north,\np2,1,0.5,1,south,x\np3,3,2.0,0,north,NA\np4,2,,1,east,y\np5,1,1.0,0,south,z\n"
	dataPath := filepath.Join(dir, "data", "trial.csv")
	os.MkdirAll(filepath.Dir(dataPath), 0o755)
	os.WriteFile(dataPath, []byte(csv), 0o644)
	planPath := filepath.Join(dir, "trial.yaml")
	out, errs, code := runCLI("init", planPath, "--data", dataPath)
	if code != 0 {
		t.Fatalf("init: %d %s %s", code, out, errs)
	}
	text, _ := os.ReadFile(planPath)
	for _, want := range []string{
		"file: data/trial.csv",
		"#   grade   integer codes 1, 2, 3 (3 values): ordered categories, or a count?  <- outcome (guessed: see outcomes)",
		"  - column: grade   # EDIT: guessed from the columns; check that it is the outcome",
		"#   dose    numeric from 0.5 to 2; 1 of 5 missing",
		"#   smoker  numeric 0/1",
		"#   site    text, 3 values: north, south, east (categorical; ordered?)",
		"categories: [1, 2, 3]",
		"predictors: [dose, smoker]",
		"  dose:   {range: [0.5, 2], label: null, unit: null}   # EDIT: the possible range (observed 0.5 to 2)",
		"  smoker: {values: [0, 1], label: null, unit: null}",
	} {
		if !strings.Contains(string(text), want) {
			t.Errorf("want %q in\n%s", want, text)
		}
	}
	p := loadSkeleton(t, planPath)
	if p.Outcomes[0].Column != "grade" {
		t.Errorf("outcome %q", p.Outcomes[0].Column)
	}
	// Never overwritten.
	os.WriteFile(planPath, []byte("mine\n"), 0o644)
	if _, errs, code := runCLI("init", planPath, "--data", dataPath); code != 1 || !strings.Contains(errs, "already exists") {
		t.Fatalf("overwrite: %d %s", code, errs)
	}
	if b, _ := os.ReadFile(planPath); string(b) != "mine\n" {
		t.Fatal("the file was overwritten")
	}
	// From a header line, with the outcome named.
	hp := filepath.Join(dir, "h.yaml")
	if _, errs, code := runCLI("init", hp, "--header", "y,a,b", "--outcome", "y"); code != 0 {
		t.Fatalf("header: %s", errs)
	}
	src, _ := os.ReadFile(hp)
	if _, err := plan.Parse(src, hp); err != nil {
		t.Fatalf("header skeleton: %v\n%s", err, src)
	}
	if !strings.Contains(string(src), "#   a  no data yet: numeric, categorical or ordered?") {
		t.Errorf("header columns not listed:\n%s", src)
	}
	if _, errs, code := runCLI("init", filepath.Join(dir, "x.yaml"), "--header", "y,a", "--outcome", "z"); code != 1 || !strings.Contains(errs, `--outcome: column "z" is not in the file`) {
		t.Errorf("unknown outcome: %d %s", code, errs)
	}
}

// A text column with few values (not an identifier) becomes a categorical
// predictor with its observed levels; the skeleton is a valid plan.
func TestInitCategorical(t *testing.T) {
	dir := t.TempDir()
	csv := "id,grade,dose,site\n"
	for i, s := range []string{"north", "south", "east", "north", "south", "east", "north", "east"} {
		csv += "p" + strconv.Itoa(i) + "," + strconv.Itoa(1+i%3) + "," + strconv.Itoa(i) + ".5," + s + "\n"
	}
	planPath, text := initSkeleton(t, dir, csv, "grade")
	hasEach(t, text, "  site: {levels: [north, south, east], reference: north}", "predictors: [dose, site]", "# Not listed: id")
	loadSkeleton(t, planPath)
}

// ordplan init profiles the data in their dialect: a semicolon-separated
// file with decimal commas (found from its first lines, or given by
// flags), a workbook's named sheet from its header row, a Parquet file;
// each gives the profile of the comma/point CSV file, and the skeleton
// names the dialect, so that check reads the file as init did.
func TestInitFollowsDialect(t *testing.T) {
	dir := t.TempDir()
	csv := "id,grade,dose,smoker,site\np1,2,1.5,0,north\np2,1,0.5,1,south\np3,3,2.25,0,north\np4,2,,1,east\np5,1,1.0,0,south\n"
	files := map[string][]byte{
		"d.csv":     []byte(csv),
		"semi.csv":  toSemicolonComma([]byte(csv)),
		"d.xlsx":    toWorkbook(t, []byte(csv)),
		"d.parquet": toParquet(t, []byte(csv)),
	}
	for n, b := range files {
		if err := os.WriteFile(filepath.Join(dir, n), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	profile := []string{
		"#   grade   integer codes 1, 2, 3 (3 values): ordered categories, or a count?",
		"#   dose    numeric from 0.5 to 2.25; 1 of 5 missing",
		"#   smoker  numeric 0/1",
		"predictors: [dose, smoker]",
	}
	for i, c := range []struct {
		args []string
		want []string
	}{
		{[]string{"--data", "d.csv"}, []string{"  delimiter: comma        # comma | semicolon | tab (as the file's first lines show)", "  decimal: point"}},
		{[]string{"--data", "semi.csv"}, []string{"  delimiter: semicolon    # comma | semicolon | tab (as the file's first lines show)", "  decimal: comma"}},
		{[]string{"--data", "semi.csv", "--delimiter", "semicolon", "--decimal", "comma"}, []string{"  delimiter: semicolon    # comma | semicolon | tab\n", "  decimal: comma"}},
		{[]string{"--data", "d.xlsx", "--sheet", "survey", "--header-row", "3"}, []string{"  sheet: survey\n  header_row: 3"}},
		{[]string{"--data", "d.parquet"}, []string{"  file: d.parquet\n  missing: drop"}},
	} {
		p := filepath.Join(dir, "p"+strconv.Itoa(i)+".yaml")
		c.args[1] = filepath.Join(dir, c.args[1])
		if out, errs, code := runCLI(append([]string{"init", p}, c.args...)...); code != 0 {
			t.Fatalf("init %v: exit %d %s %s", c.args, code, out, errs)
		}
		text, _ := os.ReadFile(p)
		for _, w := range append(c.want, profile...) {
			if !strings.Contains(string(text), w) {
				t.Errorf("init %v: want %q in\n%s", c.args, w, text)
			}
		}
		if _, errs, code := runCLI("check", p); code != 0 {
			t.Errorf("check of the skeleton of %v: exit %d: %s", c.args, code, errs)
		}
	}
	for _, c := range []struct{ args []string }{
		{[]string{"--data", "d.csv", "--sheet", "x"}},
		{[]string{"--data", "d.xlsx", "--delimiter", "semicolon"}},
		{[]string{"--data", "d.xlsx", "--header-row", "0"}},
	} {
		c.args[1] = filepath.Join(dir, c.args[1])
		if _, errs, code := runCLI(append([]string{"init", filepath.Join(dir, "bad.yaml")}, c.args...)...); code != 2 || !strings.Contains(errs, "ordplan init: --") {
			t.Errorf("init %v: exit %d %s", c.args, code, errs)
		}
	}
}

// The outcome guess on a small file: a four-value text column whose
// values are the words of an ordered scale wins over integer codes (here a
// count of visits), although the file has fewer than two rows per value;
// integer codes still win over text naming places, and a name that says
// rating wins among integer codes; a numeric column named as weights is
// never the outcome nor a predictor, and the plan offers it as data.weights,
// unless its name says it measures a weight (weight_kg: a predictor).
func TestInitGuessesScaleOutcome(t *testing.T) {
	dir := t.TempDir()
	for i, c := range []struct {
		csv, want string
	}{
		{"id,visits,dose,pain\n1,1,0.5,never\n2,3,1.5,sometimes\n3,2,2.5,often\n4,4,0.5,always\n5,1,1.0,sometimes\n6,2,2.0,never\n", "pain"},
		{"id,visits,dose,relief\n1,1,0.5,not at all\n2,3,1.5,a little\n3,2,2.5,somewhat\n4,4,0.5,very much\n5,1,1.0,a little\n6,2,2.0,somewhat\n", "relief"},
		{"site,arm,grade\nnorth,1,2\nsouth,2,1\neast,3,3\nnorth,1,2\nsouth,2,1\neast,3,3\nnorth,1,1\n", "grade"},
		// Integer codes under a weight name are weights, not the outcome;
		// slight and complete are scale words.
		{"fw,age,relief\n1,30,none\n2,41,slight\n3,52,moderate\n1,33,complete\n2,45,slight\n3,61,none\n", "relief"},
		// A weight measured (a unit, body, birth) is a predictor.
		{"weight_kg,age,relief\n61,30,none\n72,41,slight\n83,52,moderate\n64,33,complete\n75,45,slight\n86,61,none\n", "relief"},
	} {
		d := filepath.Join(dir, "d"+strconv.Itoa(i)+".csv")
		os.WriteFile(d, []byte(c.csv), 0o644)
		p := filepath.Join(dir, "p"+strconv.Itoa(i)+".yaml")
		if _, errs, code := runCLI("init", p, "--data", d); code != 0 {
			t.Fatalf("init: %s", errs)
		}
		pl := loadSkeleton(t, p)
		if got := pl.Outcomes[0].Column; got != c.want {
			text, _ := os.ReadFile(p)
			t.Errorf("case %d: outcome %q, want %q\n%s", i, got, c.want, text)
		}
		if strings.HasPrefix(c.csv, "weight_kg,") && !slices.Contains(pl.PredictorsOf(pl.Outcomes[0]), "weight_kg") {
			text, _ := os.ReadFile(p)
			t.Errorf("a body weight taken for case weights:\n%s", text)
		}
		if strings.HasPrefix(c.csv, "fw,") {
			text, _ := os.ReadFile(p)
			if slices.Contains(pl.PredictorsOf(pl.Outcomes[0]), "fw") || !strings.Contains(string(text), "fw looks like weights") {
				t.Errorf("the weights column: predictors %v\n%s", pl.PredictorsOf(pl.Outcomes[0]), text)
			}
		}
	}
}

// From a header line alone (no values to judge), the outcome is guessed
// by name: a rating or order word first, else the first column that is not
// an identifier, count or measure; before, the first column (often "id")
// was named the outcome.
func TestInitGuessesOutcomeFromHeader(t *testing.T) {
	dir := t.TempDir()
	for i, c := range []struct{ header, want string }{
		{"id,pain_score,arm,age,sex", "pain_score"},
		{"id,y,age,sex", "y"},
		{"subject_id,visit,health,arm", "health"},
		{"record,age,n_visits", "record"},
	} {
		p := filepath.Join(dir, "h"+strconv.Itoa(i)+".yaml")
		if _, errs, code := runCLI("init", p, "--header", c.header); code != 0 {
			t.Fatalf("init: %s", errs)
		}
		text, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		m := regexp.MustCompile(`(?m)^  - column: "?([^"\s]+)"?`).FindStringSubmatch(string(text))
		if m == nil || m[1] != c.want {
			t.Errorf("%q: outcome %v, want %q\n%s", c.header, m, c.want, text)
		}
	}
}

// Every place ordplan init marks EDIT (a guess from the data or a
// placeholder) is listed by check as a warning, at its line, while the
// skeleton stays a valid plan; freeze refuses the plan until the markers
// are gone, and then freezes it.
func TestInitMarkersBlockFreezing(t *testing.T) {
	dir := t.TempDir()
	csv := "id,rating,dose,smoker,site\np1,good,1.5,0,north\np2,poor,0.5,1,south\np3,fair,2.0,0,north\np4,good,,1,east\np5,poor,1.0,0,south\n"
	dataPath := filepath.Join(dir, "d.csv")
	os.WriteFile(dataPath, []byte(csv), 0o644)
	planPath := filepath.Join(dir, "p.yaml")
	if out, errs, code := runCLI("init", planPath, "--data", dataPath); code != 0 {
		t.Fatalf("init: %d %s %s", code, out, errs)
	}
	text, _ := os.ReadFile(planPath)
	var marked []int // lines of the skeleton carrying the marker, but its instruction
	for i, l := range strings.Split(string(text), "\n") {
		if strings.Contains(l, "EDIT") && !strings.Contains(l, "marked EDIT") {
			marked = append(marked, i+1)
		}
	}
	if len(marked) < 4 {
		t.Fatalf("only %d marked lines in\n%s", len(marked), text)
	}
	out, errs, code := runCLI("check", planPath)
	if code != 0 || !strings.Contains(out, "plan is valid") || !strings.Contains(out, strconv.Itoa(len(marked))+" places still marked EDIT") {
		t.Fatalf("check: %d\n%s\n%s", code, out, errs)
	}
	for _, line := range marked {
		if !strings.Contains(errs, "warning: "+planPath+":"+strconv.Itoa(line)+":") {
			t.Errorf("check does not warn of line %d:\n%s", line, errs)
		}
	}
	if !strings.Contains(errs, `outcomes[0].categories: still marked by ordplan init ("EDIT: put them in order, lowest first")`) {
		t.Errorf("the categories' order is not named:\n%s", errs)
	}
	if _, errs, code := runCLI("freeze", planPath); code != 1 || !strings.Contains(errs, "marked EDIT by ordplan init") {
		t.Fatalf("freeze of the skeleton: %d %s", code, errs)
	}
	if _, err := os.Stat(strings.TrimSuffix(planPath, ".yaml") + ".lock.json"); !os.IsNotExist(err) {
		t.Fatalf("a lock was written: %v", err)
	}
	// The analyst orders the categories, names the study and deletes the
	// markers: freeze goes on, check no longer warns.
	s := strings.Replace(string(text), "title: EDIT the title of the report", "title: Dose and rating", 1)
	if !strings.Contains(s, "categories: [fair, good, poor]") {
		t.Fatalf("the categories in natural order are not in\n%s", s)
	}
	s = strings.Replace(s, "categories: [fair, good, poor]", "categories: [poor, fair, good]", 1)
	var kept []string
	for _, l := range strings.Split(s, "\n") {
		if i := strings.Index(l, "EDIT"); i >= 0 && !strings.Contains(l, "marked EDIT") {
			if j := strings.LastIndex(l[:i], "#"); j >= 0 {
				l = strings.TrimRight(l[:j], " ")
			}
		}
		kept = append(kept, l)
	}
	os.WriteFile(planPath, []byte(strings.Join(kept, "\n")), 0o644)
	if out, errs, code := runCLI("check", planPath); code != 0 || strings.Contains(errs, "warning") || strings.Contains(out, "still marked") {
		t.Fatalf("check after editing: %d\n%s\n%s", code, out, errs)
	}
	if out, errs, code := runCLI("freeze", planPath); code != 0 {
		t.Fatalf("freeze after editing: %d %s %s", code, out, errs)
	}
}

// A numeric column holding 1..n in the n rows of the file (a row number or
// a numeric identifier) is described as such and left out of the
// predictors, where it would give the order of the rows an effect; a
// column of whole numbers that is not one per row (ages) stays a
// predictor. Invented data: 40 rows.
func TestInitLeavesOutRowNumbers(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("id,grade,age,dose\n")
	for i := range 40 {
		fmt.Fprintf(&b, "%d,%d,%d,%d.5\n", i+1, 1+i%3, 20+(i*7)%45, i%9)
	}
	planPath, text := initSkeleton(t, dir, b.String(), "grade")
	hasEach(t, text,
		"#   id     numeric, whole numbers from 1 to 40 in 40 rows: a row number or identifier?  (not a predictor below: declare it or leave it out)",
		"predictors: [age, dose]",
		"# Not listed: id (empty columns, row numbers or identifiers,",
	)
	loadSkeleton(t, planPath)
}

// A numeric column with one number in every row (besides what looks like
// a missing-value code) is not offered as a predictor: its dictionary line
// would have a range whose minimum is its maximum, which check refuses,
// and a predictor that does not vary has no effect to estimate. The plan
// says why it is left out and check reads it. Invented data: 40 rows.
func TestInitLeavesOutConstantColumns(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("grade,age,site,wave\n")
	for i := range 40 {
		wave := "2"
		if i == 3 {
			wave = "-9"
		}
		fmt.Fprintf(&b, "%d,%d,5,%s\n", 1+i%3, 20+(i*7)%45, wave)
	}
	planPath, text := initSkeleton(t, dir, b.String(), "grade")
	hasEach(t, text,
		"predictors: [age]",
		"# Not listed, the same number in every row of the file: site (every value 5), wave (every value 2) (a predictor that does not vary has no effect to estimate).",
	)
	loadSkeleton(t, planPath)
}

// A numeric column whose other values are all 0 or more and that holds a
// conventional missing-value code (-9, -99, ...) gets that code as its own
// missing value in the dictionary, and its range from its other values;
// the plan reads the code as missing. A column whose values run below 0
// anyway keeps its whole range and no code.
func TestInitOffersMissingCodes(t *testing.T) {
	dir := t.TempDir()
	d := filepath.Join(dir, "d.csv")
	os.WriteFile(d, []byte("grade,months,temp\n1,12,-9\n2,-9,3.5\n3,40,-12\n1,7,0.5\n2,-99,2\n3,22,-4\n1,3,1\n2,16,6\n3,5,2.5\n1,9,-1\n2,31,4\n3,18,0\n1,27,-3\n2,11,5\n3,35,1.5\n1,14,-2\n"), 0o644)
	p := filepath.Join(dir, "p.yaml")
	if _, errs, code := runCLI("init", p, "--data", d); code != 0 {
		t.Fatalf("init: %s", errs)
	}
	text, _ := os.ReadFile(p)
	for _, want := range []string{
		`months: {range: [3, 40], missing: ["-99", "-9"], label: null, unit: null}   # EDIT: the possible range (observed 3 to 40, and -99 and -9, which look like missing-value codes below values that are all 0 or more: check)`,
		`temp:   {range: [-12, 6], label: null, unit: null}`,
	} {
		if !strings.Contains(string(text), want) {
			t.Errorf("the plan lacks %q:\n%s", want, text)
		}
	}
	pl := loadSkeleton(t, p)
	i := slices.IndexFunc(pl.Dictionary, func(e plan.Entry) bool { return e.Column == "months" })
	if i < 0 || !slices.Equal(pl.Dictionary[i].Missing, []string{"-99", "-9"}) {
		t.Errorf("months' own missing codes: %+v", pl.Dictionary)
	}
	// The data read with the plan: the codes are missing values.
	checksInside(t, p)
}

// A conventional code written at the top of a scale (99, 999, ...) far
// above a column's other values is offered as a missing-value code too,
// beside one below them, and the range is that of the other values; a 99
// among values that reach 95 is a value. Invented data: 16 rows.
func TestInitOffersTopCodes(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("grade,age,score\n")
	for i := range 16 {
		age := strconv.Itoa(20 + i*3)
		switch i {
		case 3:
			age = "999"
		case 7:
			age = "-9"
		}
		score := 50 + i*3
		if i == 5 {
			score = 99
		}
		fmt.Fprintf(&b, "%d,%s,%d\n", 1+i%3, age, score)
	}
	planPath, text := initSkeleton(t, dir, b.String(), "grade")
	hasEach(t, text,
		`age:   {range: [20, 65], missing: ["-9", 999], label: null, unit: null}   # EDIT: the possible range (observed 20 to 65, and -9, which looks like a missing-value code below values that are all 0 or more; and 999, which looks like a missing-value code far above the other values: check)`,
		`score: {range: [50, 99], label: null, unit: null}`,
	)
	checksInside(t, planPath)
}

// A semicolon file whose numbers write thousands with a point (3.473
// beside 313) is described so, and the plan says to remove them: check
// refuses it as it is. Invented data: 12 rows.
func TestInitNotesThousandsPoints(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("grade;income\n")
	for i := range 12 {
		fmt.Fprintf(&b, "%d;%s\n", 1+i%3, []string{"3.473", "313", "12.050", "87"}[i%4])
	}
	planPath, text := initSkeleton(t, dir, b.String(), "grade")
	hasEach(t, text,
		"#   income  numeric from 3.473 to 313; its points look like thousands separators (3.473 beside 313): see data.decimal",
		"  # EDIT: the points of column income look like thousands separators (3.473 beside 313), which check and run refuse: write the file's numbers without them",
	)
	if _, errs, code := runCLI("check", planPath); code != 1 || !strings.Contains(errs, `column "income": value "3.473" looks like 3473 written with a thousands separator`) {
		t.Errorf("check: exit %d\n%s", code, errs)
	}
}

// A text outcome's labels are listed in natural order, the numbers inside
// them compared as numbers (c1, c02, c3, c05, c10, c12, then the text
// after a number: q2a before q2b), not as found, and the line stays marked
// EDIT: the order is the user's call.
func TestInitOrdersTextLabelsNaturally(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("grade,x\n")
	for i := range 60 {
		fmt.Fprintf(&b, "%s,%d\n", []string{"c02", "c12", "c05", "c1", "c10", "c3"}[i%6], i%7)
	}
	data := filepath.Join(dir, "g.csv")
	os.WriteFile(data, []byte(b.String()), 0o644)
	p := filepath.Join(dir, "g.yaml")
	if out, errs, code := runCLI("init", p, "--data", data, "--outcome", "grade"); code != 0 {
		t.Fatalf("init: %d %s %s", code, out, errs)
	}
	text, _ := os.ReadFile(p)
	want := "    categories: [c1, c02, c3, c05, c10, c12]   # EDIT: put them in order, lowest first\n"
	if !strings.Contains(string(text), want) {
		t.Errorf("want %q in:\n%s", want, text)
	}
}

// The command init suggests, and the --previous a rerun suggests, can be
// pasted into a shell when the path holds a space (or another character
// a shell reads): such a path is quoted.
func TestSuggestedCommandsQuotePaths(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "my study é")
	os.MkdirAll(dir, 0o755)
	planPath := filepath.Join(dir, "plan ü.yaml")
	out, errs, code := runCLI("init", planPath, "--header", "y,a,b")
	if want := "then `ordplan check '" + planPath + "'`\n"; code != 0 || !strings.HasSuffix(out, want) {
		t.Errorf("init: exit %d, want the suffix %q in\n%s%s", code, want, out, errs)
	}
	if got := commandLine([]string{"--previous", "out/plan ü/earlier/20261205T090258Z"}); got != "--previous 'out/plan ü/earlier/20261205T090258Z'" {
		t.Errorf("--previous: %s", got)
	}
}
