package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
	"github.com/xuri/excelize/v2"
)

// dialectPlan is a small plan over the bundled example data, in a folder
// of its own; extra goes under data.
func dialectPlan(t *testing.T, dir, file, extra string) string {
	t.Helper()
	src := `version: 1
title: Dialect check
seed: 7
data:
  file: ` + file + `
  missing_values: ["", "NA"]
` + extra + `
outcomes:
  - column: safety
    categories: [very_unsafe, unsafe, neutral, safe, very_safe]
categorical:
  street_type: {levels: [residential, through_road, cul_de_sac]}
predictors: [pilot, female, age, years_resident, street_type]
subset:
  - {column: years_resident, at_least: 0.5}
models:
  approaches: [cumulative, adjacent]
  effects: [parallel, nonparallel]
  links: [logit]
tests:
  parallel_lines: [lr, wald]
rules:
  - reject_unconverged: true
  - prefer_simpler: {by: bic, margin: 2}
report:
  timestamp: false
`
	p := filepath.Join(dir, "plan.yaml")
	if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// toSemicolonComma rewrites a comma-separated file with decimal points as
// a semicolon-separated file with decimal commas (the example data has
// no quoted cells and no commas inside cells).
func toSemicolonComma(b []byte) []byte {
	lines := strings.Split(string(b), "\n")
	for i, ln := range lines {
		cells := strings.Split(ln, ",")
		for j, c := range cells {
			cells[j] = strings.ReplaceAll(c, ".", ",")
		}
		lines[i] = strings.Join(cells, ";")
	}
	return []byte(strings.Join(lines, "\n"))
}

// The same data written comma-separated with decimal points and
// semicolon-separated with decimal commas give byte-identical
// decisions.json through ordplan run; check suggests the dialect keys
// when they are missing.
func TestDialectsGiveIdenticalDecisions(t *testing.T) {
	raw := exampleData(t, "quietstreets.csv")
	semi := semicolonCopy(t, raw)
	var outs [][]byte
	for i, c := range []struct {
		data  []byte
		extra string
	}{
		{raw, "  delimiter: comma\n  decimal: point\n"},
		{semi, "  delimiter: semicolon\n  decimal: comma\n"},
	} {
		dir := t.TempDir()
		outs = append(outs, dialectDecisions(t, dir, "d.csv", c.data, c.extra))
		if i == 1 {
			// Without the keys, check says what the file looks like.
			p := dialectPlan(t, dir, "d.csv", "")
			_, stderr, code := runCLI("check", p)
			if code == 0 || !strings.Contains(stderr, "looks semicolon-separated with a decimal comma") ||
				!strings.Contains(stderr, "delimiter: semicolon and decimal: comma") {
				t.Errorf("check without dialect keys: exit %d, %s", code, stderr)
			}
			// Only the decimal mark missing.
			p = dialectPlan(t, dir, "d.csv", "  delimiter: semicolon\n")
			_, stderr, code = runCLI("check", p)
			if code == 0 || !strings.Contains(stderr, "data.decimal") || !strings.Contains(stderr, "set decimal: comma") {
				t.Errorf("check without decimal key: exit %d, %s", code, stderr)
			}
		}
	}
	sameDecisions(t, "the comma/point and semicolon/comma files", outs[0], outs[1])
}

// exampleData reads a file of the bundled example data (plans/data).
func exampleData(t *testing.T, name string) []byte {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "plans", "data", name))
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// dialectDecisions writes data as dir/file, runs dialectPlan on it (extra
// under data) and returns its decisions.json with the hashes of the bytes
// as read, the data file's own and the plan's, replaced by HASH (each
// checked to be there) and the file's name by FILE: what must not depend
// on how the same data are written.
func dialectDecisions(t *testing.T, dir, file string, data []byte, extra string) []byte {
	t.Helper()
	if err := os.WriteFile(filepath.Join(dir, file), data, 0o644); err != nil {
		t.Fatal(err)
	}
	return planDecisions(t, dir, file, data, dialectPlan(t, dir, file, extra))
}

// planDecisions runs the plan p over data written as dir/file and returns
// its decisions.json, the hashes and the file's name replaced as
// dialectDecisions does.
func planDecisions(t *testing.T, dir, file string, data []byte, p string) []byte {
	t.Helper()
	out := filepath.Join(dir, "out")
	if stdout, stderr, code := runCLI("run", p, "--out", out, "--quiet"); code != 0 {
		t.Fatalf("%s: exit %d: %s %s", file, code, stdout, stderr)
	}
	b, err := os.ReadFile(filepath.Join(out, "decisions.json"))
	if err != nil {
		t.Fatal(err)
	}
	for _, h := range []string{HashHex(data), planHash(t, p)} {
		if !bytes.Contains(b, []byte(`"sha256": "`+h+`"`)) {
			t.Errorf("%s: decisions.json lacks the hash %s", file, h)
		}
		b = bytes.ReplaceAll(b, []byte(h), []byte("HASH"))
	}
	return bytes.ReplaceAll(b, []byte(file), []byte("FILE"))
}

// sameDecisions fails the test when two decisions.json differ, showing
// the first line that does.
func sameDecisions(t *testing.T, what string, a, b []byte) {
	t.Helper()
	if bytes.Equal(a, b) {
		return
	}
	la, lb := strings.Split(string(a), "\n"), strings.Split(string(b), "\n")
	for i := 0; i < min(len(la), len(lb)); i++ {
		if la[i] != lb[i] {
			t.Errorf("decisions.json differs between %s: line %d is\n%s\nagainst\n%s", what, i+1, la[i], lb[i])
			return
		}
	}
	t.Errorf("decisions.json differs between %s: %d lines against %d", what, len(la), len(lb))
}

func semicolonCopy(t *testing.T, raw []byte) []byte {
	t.Helper()
	semi := toSemicolonComma(raw)
	if bytes.Contains(semi, []byte(",,")) || !bytes.Contains(semi, []byte(";")) {
		t.Fatal("conversion of the example data failed")
	}
	return semi
}

func planHash(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:])
}

// toWorkbook writes a CSV file as an .xlsx workbook: a first sheet of
// notes, then the data on sheet "survey" under a title row and an empty
// row, numbers as numbers and text as text.
func toWorkbook(t *testing.T, raw []byte) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	f.SetCellValue("Sheet1", "A1", "notes: the data are on the sheet survey")
	if _, err := f.NewSheet("survey"); err != nil {
		t.Fatal(err)
	}
	f.SetCellValue("survey", "A1", "Quiet streets survey")
	for i, ln := range strings.Split(strings.TrimSpace(string(raw)), "\n") {
		for j, c := range strings.Split(ln, ",") {
			cell, _ := excelize.CoordinatesToCellName(j+1, i+3)
			if v, err := strconv.ParseFloat(c, 64); err == nil && i > 0 {
				f.SetCellValue("survey", cell, v)
			} else if c != "" {
				f.SetCellValue("survey", cell, c)
			}
		}
	}
	var b bytes.Buffer
	if err := f.Write(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// The same data in CSV and in an .xlsx workbook (named sheet, header
// row) give byte-identical decisions.json through ordplan run, but for
// the hashes of the files as read.
func TestWorkbookGivesIdenticalDecisions(t *testing.T) {
	raw := exampleData(t, "quietstreets.csv")
	// Two lines as the workbook's keys take, so that the rules keep their
	// lines (data.sheet and data.header_row are refused without a workbook).
	csv := dialectDecisions(t, t.TempDir(), "d.csv", raw, "  # a CSV file: no sheet\n  # and its header on line 1\n")
	book := dialectDecisions(t, t.TempDir(), "d.xlsx", toWorkbook(t, raw), "  sheet: survey\n  header_row: 3\n")
	sameDecisions(t, "the CSV file and the workbook", csv, book)
}

// toParquet writes a CSV file as a flat Parquet file: columns whose cells
// are all numbers (or empty) as optional doubles, the others as optional
// strings; empty cells as nulls.
func toParquet(t *testing.T, raw []byte) []byte {
	t.Helper()
	lines := strings.Split(strings.TrimSpace(string(raw)), "\n")
	names := strings.Split(lines[0], ",")
	var cells [][]string
	for _, ln := range lines[1:] {
		cells = append(cells, strings.Split(ln, ","))
	}
	numeric := make([]bool, len(names))
	group := parquet.Group{}
	for j, n := range names {
		numeric[j] = true
		for _, r := range cells {
			if _, err := strconv.ParseFloat(r[j], 64); err != nil && r[j] != "" {
				numeric[j] = false
			}
		}
		if numeric[j] {
			group[n] = parquet.Optional(parquet.Leaf(parquet.DoubleType))
		} else {
			group[n] = parquet.Optional(parquet.String())
		}
	}
	schema := parquet.NewSchema("rows", group)
	where := map[string]int{}
	for j, n := range names {
		where[n] = j
	}
	var b bytes.Buffer
	w := parquet.NewWriter(&b, schema)
	for _, r := range cells {
		var row parquet.Row
		for ci, path := range schema.Columns() {
			j := where[path[0]]
			switch {
			case r[j] == "":
				row = append(row, parquet.NullValue().Level(0, 0, ci))
			case numeric[j]:
				x, _ := strconv.ParseFloat(r[j], 64)
				row = append(row, parquet.ValueOf(x).Level(0, 1, ci))
			default:
				row = append(row, parquet.ValueOf(r[j]).Level(0, 1, ci))
			}
		}
		if _, err := w.WriteRows([]parquet.Row{row}); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// The same data in CSV and Parquet give byte-identical decisions.json
// through ordplan run, but for the hashes of the files as read.
func TestParquetGivesIdenticalDecisions(t *testing.T) {
	raw := exampleData(t, "quietstreets.csv")
	csv := dialectDecisions(t, t.TempDir(), "d.csv", raw, "")
	pq := dialectDecisions(t, t.TempDir(), "d.parquet", toParquet(t, raw), "")
	sameDecisions(t, "the CSV file and the Parquet file", csv, pq)
}

// ordplan fit --sheet and --header-row read a workbook as the plan keys
// data.sheet and data.header_row do: the same fit as from the CSV file.
func TestFitSheetFlags(t *testing.T) {
	raw := exampleData(t, "quietstreets.csv")
	dir := t.TempDir()
	book := filepath.Join(dir, "d.xlsx")
	if err := os.WriteFile(book, toWorkbook(t, raw), 0o644); err != nil {
		t.Fatal(err)
	}
	args := []string{"--outcome", "safety", "--categories", "very_unsafe,unsafe,neutral,safe,very_safe", "--predictors", "pilot,female,age", "--json"}
	want, stderr, code := runCLI(append([]string{"fit", "--data", filepath.Join("..", "..", "plans", "data", "quietstreets.csv")}, args...)...)
	if code != 0 {
		t.Fatalf("CSV: exit %d: %s", code, stderr)
	}
	got, stderr, code := runCLI(append([]string{"fit", "--data", book, "--sheet", "survey", "--header-row", "3"}, args...)...)
	if code != 0 {
		t.Fatalf("workbook: exit %d: %s", code, stderr)
	}
	if got != want {
		t.Errorf("the workbook's fit differs from the CSV file's:\n%s\n%s", got, want)
	}
	// Without --header-row the title row is taken for the header.
	_, stderr, code = runCLI(append([]string{"fit", "--data", book, "--sheet", "survey"}, args...)...)
	if code != 1 || !strings.Contains(stderr, `outcome column not found in the header`) {
		t.Errorf("workbook without --header-row: exit %d: %s", code, stderr)
	}
	_, stderr, code = runCLI(append([]string{"fit", "--data", book, "--sheet", "survey", "--header-row", "0"}, args...)...)
	if code != 2 || !strings.Contains(stderr, "--header-row must be a sheet row number, 1 or more (got 0)") {
		t.Errorf("--header-row 0: exit %d: %s", code, stderr)
	}
}

// The new rows of inference.predict may be a workbook or a Parquet file,
// read through the same path as the data: the predictions equal those of
// the CSV file (and a workbook's rows are read from the data's sheet and
// header row).
func TestNewRowsInEveryFormat(t *testing.T) {
	raw := exampleData(t, "quietstreets.csv")
	nr := exampleData(t, "newrows.csv")
	var want map[string][]string
	for i, c := range []struct {
		name  string
		data  []byte
		extra string
	}{
		{"new.csv", nr, ""},
		{"new.xlsx", toWorkbook(t, nr), "  sheet: survey\n  header_row: 3\n"},
		{"new.parquet", toParquet(t, nr), ""},
	} {
		dir := t.TempDir()
		os.WriteFile(filepath.Join(dir, "d.csv"), raw, 0o644)
		os.WriteFile(filepath.Join(dir, c.name), c.data, 0o644)
		p := dialectPlan(t, dir, "d.csv", c.extra)
		f, _ := os.OpenFile(p, os.O_APPEND|os.O_WRONLY, 0)
		f.WriteString("inference:\n  predict: " + c.name + "\n")
		f.Close()
		out := filepath.Join(dir, "out")
		if stdout, stderr, code := runCLI("run", p, "--out", out, "--quiet"); code != 0 {
			t.Fatalf("%s: exit %d: %s %s", c.name, code, stdout, stderr)
		}
		got, err := os.ReadFile(filepath.Join(out, "predictions-safety.csv"))
		if err != nil {
			t.Fatal(err)
		}
		// The same rows and numbers; a workbook's lines are its sheet rows
		// (4, 5, ... under a header in row 3), a Parquet file's columns
		// come in its schema's order.
		byName := columnsByName(t, got)
		if i == 0 {
			want = byName
		} else {
			for col, cells := range want {
				if col != "line" && !slices.Equal(byName[col], cells) {
					t.Errorf("%s: column %s of the predictions is %v, want %v", c.name, col, byName[col], cells)
				}
			}
		}
		if c.name == "new.xlsx" && byName["line"][0] != "4" {
			t.Errorf("%s: the first row is on line %s, want the sheet row 4", c.name, byName["line"][0])
		}
		if rj, _ := os.ReadFile(filepath.Join(out, "run.json")); c.name == "new.xlsx" && !bytes.Contains(rj, []byte(`"sha256": "`+HashHex(c.data)+`",`+"\n"+`    "sheet": "survey"`)) {
			t.Errorf("%s: run.json does not name the new rows' sheet:\n%s", c.name, rj)
		}
		if md, _ := os.ReadFile(filepath.Join(out, "report.md")); c.name == "new.xlsx" && !bytes.Contains(md, []byte("rows of `new.xlsx`, sheet \"survey\" (")) {
			t.Errorf("%s: the report does not name the new rows' sheet", c.name)
		}
		if rj, _ := os.ReadFile(filepath.Join(out, "run.json")); !bytes.Contains(rj, []byte(HashHex(c.data))) {
			t.Errorf("%s: run.json lacks the hash of the new rows as read", c.name)
		}
	}
}

// HashHex is the hex SHA-256 of b.
func HashHex(b []byte) string {
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:])
}

// columnsByName reads CSV text into its columns, by header name.
func columnsByName(t *testing.T, b []byte) map[string][]string {
	t.Helper()
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil || len(recs) < 2 {
		t.Fatalf("predictions: %v\n%s", err, b)
	}
	out := map[string][]string{}
	for _, r := range recs[1:] {
		for j, h := range recs[0] {
			out[h] = append(out[h], r[j])
		}
	}
	return out
}

// A plan whose data are held as parts (data.parts: names and a pattern;
// CSV, a workbook and a Parquet file; one part with its columns in another
// order) gives the decisions.json of the concatenated file, byte for byte
// but for the data's record: each part with its hash, and the hash of
// their hashes.
func TestPartsGiveIdenticalDecisions(t *testing.T) {
	raw := exampleData(t, "quietstreets.csv")
	lines := strings.Split(strings.TrimSpace(string(raw)), "\n")
	head, rows := lines[0], lines[1:]
	n := len(rows)
	chunk := func(a, b int) []byte { return []byte(head + "\n" + strings.Join(rows[a:b], "\n") + "\n") }
	// The third part lists its columns in reverse order.
	reversed := func(b []byte) []byte {
		var out []string
		for _, ln := range strings.Split(strings.TrimSpace(string(b)), "\n") {
			f := strings.Split(ln, ",")
			slices.Reverse(f)
			out = append(out, strings.Join(f, ","))
		}
		return []byte(strings.Join(out, "\n") + "\n")
	}
	dir := t.TempDir()
	os.MkdirAll(filepath.Join(dir, "parts"), 0o755)
	files := map[string][]byte{
		"all.csv":           raw,
		"parts/p1.csv":      chunk(0, n/5),
		"parts/p2.csv":      chunk(n/5, 2*n/5),
		"parts/p3.csv":      reversed(chunk(2*n/5, 3*n/5)),
		"extra/p4.parquet":  toParquet(t, chunk(3*n/5, 4*n/5)),
		"extra/p5.xlsx":     toWorkbook(t, chunk(4*n/5, n)),
		"extra/ignored.txt": []byte("not a part\n"),
	}
	for name, b := range files {
		os.MkdirAll(filepath.Dir(filepath.Join(dir, name)), 0o755)
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	run := func(file, extra string) []byte {
		t.Helper()
		d := t.TempDir()
		p := dialectPlan(t, d, file, extra)
		src, _ := os.ReadFile(p)
		if file == "" {
			src = bytes.Replace(src, []byte("  file: \n"), nil, 1)
		}
		p = filepath.Join(dir, "plan.yaml") // the same name for both plans
		os.WriteFile(p, src, 0o644)
		out := filepath.Join(d, "out")
		if stdout, stderr, code := runCLI("run", p, "--out", out, "--quiet"); code != 0 {
			t.Fatalf("%s: exit %d: %s %s", p, code, stdout, stderr)
		}
		b, err := os.ReadFile(filepath.Join(out, "decisions.json"))
		if err != nil {
			t.Fatal(err)
		}
		b = bytes.ReplaceAll(b, []byte(planHash(t, p)), []byte("PLANHASH"))
		if file == "" {
			rj, _ := os.ReadFile(filepath.Join(out, "run.json"))
			for _, f := range []string{"parts/p1.csv", "parts/p3.csv", "extra/p4.parquet", "extra/p5.xlsx"} {
				if !bytes.Contains(rj, []byte(`"file": "`+f+`",`+"\n"+`        "sha256": "`+HashHex(files[f])+`"`)) {
					t.Errorf("run.json lacks the part %s with its hash:\n%s", f, rj)
				}
			}
			var hs []string
			for _, f := range []string{"parts/p1.csv", "parts/p2.csv", "parts/p3.csv", "extra/p4.parquet", "extra/p5.xlsx"} {
				hs = append(hs, HashHex(files[f])+"\n")
			}
			if all := HashHex([]byte(strings.Join(hs, ""))); !bytes.Contains(rj, []byte(all)) || !bytes.Contains(b, []byte(all)) {
				t.Errorf("run.json or decisions.json lacks the hash of the parts' hashes %s", all)
			}
		}
		// The data's record differs; everything else must not.
		i := bytes.Index(b, []byte(`  "data": {`))
		j := bytes.Index(b[i:], []byte("\n  },\n"))
		return append(append([]byte{}, b[:i]...), b[i+j:]...)
	}
	want := run("all.csv", "  # a CSV file: no sheet\n  # and its header on line 1\n") // the parts' plan's lines
	got := run("", "  parts: [parts/*.csv, extra/p4.parquet, extra/p5.xlsx]\n  sheet: survey\n  header_row: 3\n")
	sameDecisions(t, "the concatenated file and the parts", want, got)
}

// formatsPlan is a plan over the data of gappyCSV in dir, read from file;
// extra goes under data.
func formatsPlan(t *testing.T, dir, file, extra string) string {
	t.Helper()
	src := `version: 1
title: Formats agree
seed: 11
data:
  file: ` + file + `
  missing_values: ["", "NA"]
` + extra + `
outcomes:
  - column: outcome
    categories: [low, mid, high]
categorical:
  grp: {levels: [north, south, east]}
predictors: [x, z, grp]
models:
  approaches: [cumulative, stage]
  effects: [parallel, nonparallel]
  links: [logit]
tests:
  parallel_lines: [lr, wald]
rules:
  - reject_unconverged: true
  - prefer_simpler: {by: bic, margin: 2}
report:
  timestamp: false
`
	p := filepath.Join(dir, "plan.yaml")
	if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// gappyCSV is seeded invented data: an ordered outcome of three labels, a
// number x with missing values written NA (or empty, when na is ""), a
// number z and a categorical grp with empty cells.
func gappyCSV(na string) []byte {
	rng := rand.New(rand.NewPCG(19, 3))
	var b strings.Builder
	b.WriteString("outcome,x,z,grp\n")
	shift := map[string]float64{"north": 0, "south": 0.5, "east": -0.4}
	for range 300 {
		x := math.Round(rng.NormFloat64()*1e4) / 1e4
		z := math.Round(1e4+rng.Float64()*8e3) / 100
		g := []string{"north", "south", "east"}[rng.IntN(3)]
		eta := 0.8*x + 0.02*z + shift[g] + rng.NormFloat64()
		y := "high"
		switch {
		case eta < 0.6:
			y = "low"
		case eta < 1.6:
			y = "mid"
		}
		xs := strconv.FormatFloat(x, 'g', -1, 64)
		if rng.Float64() < 0.05 {
			xs = na
		}
		if rng.Float64() < 0.04 {
			g = ""
		}
		fmt.Fprintf(&b, "%s,%s,%s,%s\n", y, xs, strconv.FormatFloat(z, 'g', -1, 64), g)
	}
	return []byte(b.String())
}

// The same data with a categorical predictor and missing values (NA, and
// empty cells in the numeric and the categorical column) in CSV (comma
// and point; semicolon and decimal comma; tab, CRLF line ends and a byte
// order mark), an .xlsx workbook (NA as text, or empty cells) and Parquet
// (nulls; the categorical column dictionary-encoded or not) give
// byte-identical decisions.json through ordplan run, but for the hashes
// of the files as read.
func TestFormatsAgreeWithLevelsAndGaps(t *testing.T) {
	raw, empty := gappyCSV("NA"), gappyCSV("")
	tab := bytes.ReplaceAll(bytes.ReplaceAll(raw, []byte(","), []byte("\t")), []byte("\n"), []byte("\r\n"))
	cases := []struct {
		file  string
		data  []byte
		extra string
	}{
		{"d.csv", raw, ""},
		{"d.csv", semicolonCopy(t, raw), "  delimiter: semicolon\n  decimal: comma\n"},
		{"d.csv", append([]byte("\xef\xbb\xbf"), tab...), "  delimiter: tab\n"},
		{"d.xlsx", toWorkbook(t, raw), "  sheet: survey\n  header_row: 3\n"},
		{"d.xlsx", toWorkbook(t, empty), "  sheet: survey\n  header_row: 3\n"},
		{"d.parquet", toParquet(t, empty), ""},
		{"d.parquet", dictParquet(t, empty), ""},
	}
	var want []byte
	for i, c := range cases {
		dir := t.TempDir()
		if err := os.WriteFile(filepath.Join(dir, c.file), c.data, 0o644); err != nil {
			t.Fatal(err)
		}
		// The plan's lines must not move between the cases: the dialect
		// keys take two lines, comments where there are none.
		extra := c.extra + strings.Repeat("  # -\n", 2-strings.Count(c.extra, "\n"))
		got := planDecisions(t, dir, c.file, c.data, formatsPlan(t, dir, c.file, extra))
		if i == 0 {
			want = got
			if !bytes.Contains(got, []byte(`"grp.south"`)) || !bytes.Contains(got, []byte(`"column": "grp"`)) {
				t.Fatalf("the plan did not fit the levels or drop rows missing grp:\n%s", got)
			}
			continue
		}
		sameDecisions(t, fmt.Sprintf("case 1 and case %d (%s)", i+1, c.file), want, got)
	}
}

// dictParquet writes the data as a Parquet file with typed columns: the
// outcome and grp dictionary-encoded strings (grp optional), x an
// optional double, z a required double.
func dictParquet(t *testing.T, raw []byte) []byte {
	t.Helper()
	type row struct {
		Outcome string   `parquet:"outcome,dict"`
		X       *float64 `parquet:"x,optional"`
		Z       float64  `parquet:"z"`
		Grp     *string  `parquet:"grp,optional,dict"`
	}
	var rows []row
	for _, ln := range strings.Split(strings.TrimSpace(string(raw)), "\n")[1:] {
		f := strings.Split(ln, ",")
		r := row{Outcome: f[0]}
		if f[1] != "" {
			x, _ := strconv.ParseFloat(f[1], 64)
			r.X = &x
		}
		r.Z, _ = strconv.ParseFloat(f[2], 64)
		if f[3] != "" {
			r.Grp = &f[3]
		}
		rows = append(rows, r)
	}
	var b bytes.Buffer
	if err := parquet.Write(&b, rows); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// boolSurvey is invented data with booleans: an outcome, a number x, a
// boolean b used as a number (an indicator), a boolean f declared
// categorical, a boolean s the subset reads; about one b in twenty
// missing. The CSV text spells booleans as spell does.
type boolSurveyRow struct {
	Outcome string  `parquet:"outcome"`
	X       float64 `parquet:"x"`
	B       *bool   `parquet:"b,optional"`
	F       bool    `parquet:"f"`
	S       bool    `parquet:"s"`
}

func boolSurvey() []boolSurveyRow {
	rng := rand.New(rand.NewPCG(23, 5))
	var rows []boolSurveyRow
	for range 300 {
		x := math.Round(rng.NormFloat64()*1e4) / 1e4
		b, f := rng.Float64() < 0.4, rng.Float64() < 0.5
		eta := 0.8*x + rng.NormFloat64()
		if b {
			eta += 0.7
		}
		if f {
			eta -= 0.4
		}
		y := "high"
		switch {
		case eta < 0:
			y = "low"
		case eta < 1:
			y = "mid"
		}
		r := boolSurveyRow{Outcome: y, X: x, F: f, S: rng.Float64() < 0.85}
		if rng.Float64() >= 0.05 {
			r.B = &b
		}
		rows = append(rows, r)
	}
	return rows
}

// The same data with booleans in CSV (TRUE and FALSE; true and false),
// an .xlsx workbook of boolean cells and a Parquet file of BOOLEAN
// columns give byte-identical decisions.json through ordplan run, but for
// the hashes of the files as read: a boolean is 1 or 0 where it is a
// number (b, with its dictionary's values 0 and 1), the declared level it
// spells where it is categorical (f, levels FALSE and TRUE), and the
// subset's one_of [TRUE] keeps the same rows.
func TestFormatsAgreeOnBooleans(t *testing.T) {
	rows := boolSurvey()
	csvText := func(spell func(bool) string) []byte {
		var b strings.Builder
		b.WriteString("outcome,x,b,f,s\n")
		for _, r := range rows {
			bs := ""
			if r.B != nil {
				bs = spell(*r.B)
			}
			fmt.Fprintf(&b, "%s,%s,%s,%s,%s\n", r.Outcome, strconv.FormatFloat(r.X, 'g', -1, 64), bs, spell(r.F), spell(r.S))
		}
		return []byte(b.String())
	}
	upper := csvText(func(b bool) string { return strings.ToUpper(strconv.FormatBool(b)) })
	lower := csvText(strconv.FormatBool)
	book := excelize.NewFile()
	defer book.Close()
	book.SetSheetRow("Sheet1", "A1", &[]any{"outcome", "x", "b", "f", "s"})
	for i, r := range rows {
		cells := []any{r.Outcome, r.X, nil, r.F, r.S}
		if r.B != nil {
			cells[2] = *r.B
		}
		cell, _ := excelize.CoordinatesToCellName(1, i+2)
		book.SetSheetRow("Sheet1", cell, &cells)
	}
	var xb, pb bytes.Buffer
	if err := book.Write(&xb); err != nil {
		t.Fatal(err)
	}
	if err := parquet.Write(&pb, rows); err != nil {
		t.Fatal(err)
	}
	plan := func(dir, file string) string {
		src := `version: 1
title: Booleans agree
seed: 11
data:
  file: ` + file + `
  missing_values: ["", "NA"]
outcomes:
  - column: outcome
    categories: [low, mid, high]
subset:
  - {column: s, one_of: ["TRUE"]}
categorical:
  f: {levels: ["FALSE", "TRUE"]}
predictors: [x, b, f]
dictionary:
  x: {label: A number}
  b: {values: [0, 1], label: A boolean read as a number}
  f: {label: A boolean read as levels}
  s: {values: [0, 1], label: The boolean the subset reads}
models:
  approaches: [cumulative]
  effects: [parallel, nonparallel]
  links: [logit]
tests:
  parallel_lines: [lr, wald]
rules:
  - reject_unconverged: true
  - prefer_simpler: {by: bic, margin: 2}
report:
  timestamp: false
`
		p := filepath.Join(dir, "plan.yaml")
		if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	cases := []struct {
		file string
		data []byte
	}{{"d.csv", upper}, {"d.csv", lower}, {"d.xlsx", xb.Bytes()}, {"d.parquet", pb.Bytes()}}
	var want []byte
	for i, c := range cases {
		dir := t.TempDir()
		if err := os.WriteFile(filepath.Join(dir, c.file), c.data, 0o644); err != nil {
			t.Fatal(err)
		}
		got := planDecisions(t, dir, c.file, c.data, plan(dir, c.file))
		if i == 0 {
			want = got
			for _, s := range []string{`"f.TRUE"`, `"column": "b"`, `"b"`} {
				if !bytes.Contains(got, []byte(s)) {
					t.Fatalf("decisions.json lacks %s:\n%s", s, got)
				}
			}
			continue
		}
		sameDecisions(t, fmt.Sprintf("case 1 and case %d (%s)", i+1, c.file), want, got)
	}
}

// A workbook whose hidden first sheet holds an old draft is read from its
// one visible sheet with cells, never the hidden one; run.json, the
// report's data section and ordplan fit name the sheet read, count the
// rows read that the sheet hides (they are data), and name the hidden
// columns read (age, column D), not those not read (district, I).
func TestWorkbookSheetNamedInOutputs(t *testing.T) {
	raw := exampleData(t, "quietstreets.csv")
	lines := strings.Split(strings.TrimSpace(string(raw)), "\n")
	f := excelize.NewFile()
	defer f.Close()
	f.SetSheetName("Sheet1", "draft")
	f.SetCellValue("draft", "A1", "safety")
	f.SetCellValue("draft", "A2", "an old draft")
	if _, err := f.NewSheet("data"); err != nil {
		t.Fatal(err)
	}
	for i, ln := range lines {
		for j, c := range strings.Split(ln, ",") {
			cell, _ := excelize.CoordinatesToCellName(j+1, i+1)
			if v, err := strconv.ParseFloat(c, 64); err == nil && i > 0 {
				f.SetCellValue("data", cell, v)
			} else if c != "" {
				f.SetCellValue("data", cell, c)
			}
		}
	}
	f.SetRowVisible("data", 5, false)
	f.SetRowVisible("data", 9, false)
	f.SetColVisible("data", "D", false)
	f.SetColVisible("data", "I", false)
	f.SetActiveSheet(1)
	if err := f.SetSheetVisible("draft", false); err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	var b bytes.Buffer
	if err := f.Write(&b); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(dir, "d.xlsx"), b.Bytes(), 0o644)
	p := dialectPlan(t, dir, "d.xlsx", "")
	out := filepath.Join(dir, "out")
	if stdout, stderr, code := runCLI("run", p, "--out", out, "--quiet"); code != 0 {
		t.Fatalf("exit %d: %s %s", code, stdout, stderr)
	}
	rj, _ := os.ReadFile(filepath.Join(out, "run.json"))
	if !bytes.Contains(rj, []byte(`"sheet": "data"`)) || !bytes.Contains(rj, []byte(`"hidden_rows_read": 2`)) || bytes.Contains(rj, []byte("sheet_hidden")) || !bytes.Contains(rj, []byte("\"hidden_columns_read\": [\n      \"age\"\n    ]")) {
		t.Errorf("run.json does not name the sheet read and its hidden rows:\n%s", rj)
	}
	md, _ := os.ReadFile(filepath.Join(out, "report.md"))
	for _, want := range []string{`The rows were read from the workbook's sheet "data". 2 of the rows read are hidden in the sheet`,
		`if they should not count); column "age" (column D), which is read, is hidden in the sheet; it was read as data like the others (a hidden column is often an old version kept out of view: check that it is the column meant).`} {
		if !bytes.Contains(md, []byte(want)) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	stdout, stderr, code := runCLI("fit", "--data", filepath.Join(dir, "d.xlsx"), "--outcome", "safety", "--categories", "very_unsafe,unsafe,neutral,safe,very_safe", "--predictors", "pilot,female,age")
	if want := `d.xlsx, sheet "data": `; code != 0 || !strings.Contains(stdout, want) || !strings.Contains(stdout, "; 2 of the rows read are hidden in the sheet") || !strings.Contains(stdout, `; column "age" (column D), which is read, is hidden in the sheet`) {
		t.Errorf("ordplan fit: exit %d, want %q and the hidden rows in its Data line:\n%s%s", code, want, stdout, stderr)
	}
	stdout, stderr, code = runCLI("fit", "--data", filepath.Join(dir, "d.xlsx"), "--sheet", "draft", "--outcome", "safety", "--predictors", "age")
	if code != 1 || !strings.Contains(stderr, `column "age": predictor column not found in the header`) {
		t.Errorf("ordplan fit --sheet draft: exit %d: %s%s", code, stdout, stderr)
	}
}
