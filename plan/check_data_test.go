package plan

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Load checks the columns a plan names against the header of its data
// file and reports a missing one at the key and line that name it.
func TestLoadChecksColumnsAgainstData(t *testing.T) {
	dir := t.TempDir()
	if err := os.Mkdir(filepath.Join(dir, "folder"), 0o755); err != nil {
		t.Fatal(err)
	}
	write := func(name, s string) string {
		t.Helper()
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	write("d.csv", "\uFEFFy, a ,b,w,off,grp\n1,2,3,1,0,g\n")
	write("empty.csv", "")
	write("header.csv", "y,a,b\n\n")
	write("dup.csv", "y,a,a\n1,2,3\n")
	write("semi.csv", "y;a;b;w;off;grp\n1;2,5;3,25;1;0;g\n2;1,5;4,75;1;0;h\n")
	good := `version: 1
data:
  file: d.csv
outcomes:
  - column: y
predictors: [a, b]
models: {effects: [parallel, nonparallel]}
rules:
  - choose: {by: aic}
`
	cases := []struct {
		name, old, new string
		want           []string // "" = loads
	}{
		{"valid", "", "", nil},
		{"absent predictor", "[a, b]", "[a, c]",
			[]string{`p.yaml:6:17: predictors[1]: column "c" is not in the data file d.csv; its columns are "y", "a", "b", "w", "off", "grp"`}},
		{"predictor differing in case", "[a, b]", "[a, B]",
			[]string{`p.yaml:6:17: predictors[1]: column "B" is not in the data file d.csv; did you mean "b"?`}},
		{"absent outcome", "column: y", "column: score",
			[]string{`p.yaml:5:13: outcomes[0].column: column "score" is not in the data file d.csv`}},
		{"second outcome absent", "  - column: y\n", "  - column: y\n  - column: z\n",
			[]string{`p.yaml:6:13: outcomes[1].column: column "z" is not in the data file d.csv`}},
		{"absent weights, offset and cluster", "  file: d.csv\n", "  file: d.csv\n  weights: wt\n  offset: of\n  cluster: GRP\ncovariance: clustered\n",
			[]string{
				`p.yaml:4:12: data.weights: column "wt" is not in the data file d.csv`,
				`p.yaml:5:11: data.offset: column "of" is not in the data file d.csv`,
				`p.yaml:6:12: data.cluster: column "GRP" is not in the data file d.csv; did you mean "grp"?`,
			}},
		{"several problems, in line order", "column: y", "column: yy\npredictors: [q]\nx: 1",
			[]string{`outcomes[0].column: column "yy"`, `predictors: key is given twice`, `x: unknown key`}},
		{"missing data file", "file: d.csv", "file: sub/none.csv",
			[]string{`p.yaml:3:9: data.file: cannot open the data file "sub/none.csv" (looked for ` + filepath.Join(dir, "sub", "none.csv") + `): no such file or directory`}},
		// The checks of data.file, made part by part for data.parts.
		{"missing part", "file: d.csv", "parts: [d.csv, sub/none.csv]",
			[]string{`p.yaml:3:18: data.parts[1]: cannot open the part "sub/none.csv" (looked for ` + filepath.Join(dir, "sub", "none.csv") + `): no such file or directory`}},
		{"empty part", "file: d.csv", "parts: [d.csv, empty.csv]",
			[]string{`p.yaml:3:18: data.parts[1]: the part "empty.csv" (looked for ` + filepath.Join(dir, "empty.csv") + `) is empty (a header line naming the columns is needed); every part needs rows: leave it out of data.parts`}},
		{"part with a header alone", "file: d.csv", "parts: [d.csv, header.csv]",
			[]string{`p.yaml:3:18: data.parts[1]: the part "header.csv" (looked for ` + filepath.Join(dir, "header.csv") + `) has a header line and no data rows after it; every part needs rows: leave it out of data.parts`}},
		// A part is named by its entry of the list, a pattern's matches
		// by the pattern's entry, at the entry's own line and column.
		{"parts named by their entries", "file: d.csv", "parts:\n    - \"[de]*.csv\"\n    - header.csv",
			[]string{
				`p.yaml:4:7: data.parts[0]: the part "empty.csv" (looked for ` + filepath.Join(dir, "empty.csv") + `) is empty`,
				`p.yaml:5:7: data.parts[1]: the part "header.csv" (looked for ` + filepath.Join(dir, "header.csv") + `) has a header line and no data rows after it`,
			}},
		{"part in another dialect", "file: d.csv", "parts: [semi.csv]",
			[]string{`data.delimiter: data part semi.csv: the file looks semicolon-separated with a decimal comma`}},
		// A file that is no data file at all (empty, a folder) is said at
		// data.file, as one that cannot be opened.
		{"empty data file", "file: d.csv", "file: empty.csv",
			[]string{`p.yaml:3:9: data.file: the data file "empty.csv" (looked for ` + filepath.Join(dir, "empty.csv") + `) is empty (a header line naming the columns is needed)`}},
		{"data file with a header alone", "file: d.csv", "file: header.csv",
			[]string{`p.yaml:3:9: data.file: the data file "header.csv" (looked for ` + filepath.Join(dir, "header.csv") + `) has a header line and no data rows after it`}},
		{"folder as the data file", "file: d.csv", "file: folder",
			[]string{`p.yaml:3:9: data.file: the data file "folder" (looked for ` + filepath.Join(dir, "folder") + `) is a folder, not a regular file: ordplan reads data from files only (save the data to a file first)`}},
		// Problems inside the data file are the data reader's: they are
		// reported when the data are read, with the file's line numbers.
		{"duplicate header column", "file: d.csv", "file: dup.csv", nil},
	}
	for i, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			src := strings.Replace(good, c.old, c.new, 1)
			if c.old != "" && src == good {
				t.Fatalf("test setup: %q not in plan", c.old)
			}
			path := write("p"+string(rune('a'+i))+".yaml", src)
			p, err := Load(path)
			if c.want == nil {
				if err != nil {
					t.Fatalf("Load: %v", err)
				}
				if p.Data.Path == "" {
					t.Fatal("no data path")
				}
				return
			}
			var es Errors
			if !errors.As(err, &es) {
				t.Fatalf("got %v (%T), want Errors", err, err)
			}
			msg := strings.ReplaceAll(err.Error(), path, "p.yaml")
			for _, w := range c.want {
				if !strings.Contains(msg, w) {
					t.Errorf("want\n  %s\ngot\n  %s", w, strings.ReplaceAll(msg, "\n", "\n  "))
				}
			}
			if len(es) < len(c.want) {
				t.Errorf("got %d errors, want at least %d", len(es), len(c.want))
			}
		})
	}
}

// Parse never looks at the data file.
func TestParseDoesNotReadData(t *testing.T) {
	src := strings.Replace(base, "d.csv", filepath.Join(t.TempDir(), "absent.csv"), 1)
	if _, err := Parse([]byte(src), "p.yaml"); err != nil {
		t.Fatal(err)
	}
}
