package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// errorLines gives the lines of stderr that are not warnings.
func errorLines(stderr string) []string {
	var out []string
	for _, l := range strings.Split(strings.TrimSpace(stderr), "\n") {
		if l != "" && !strings.HasPrefix(l, "warning: ") {
			out = append(out, l)
		}
	}
	return out
}

// TestCheckPrintsDataErrorsAsRun: check prints an error of the data
// file's rows in the form run prints it (fail: "ordplan: FILE:LINE: ...",
// one problem per line), as docs/bad-inputs.md's message shapes say; it
// printed them bare.
func TestCheckPrintsDataErrorsAsRun(t *testing.T) {
	dir := t.TempDir()
	catalogueData(t, dir)
	good, err := os.ReadFile(filepath.Join(dir, "d.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(good), "\n")
	files := map[string]string{
		"badnum.csv": lines[0] + lines[1] + "2,abc,1,5,0,0,0\n" + strings.Join(lines[3:], ""),
	}
	cases := []struct {
		file, plan, want string
	}{
		{"badnum.csv", goodPlan, `ordplan: DIR/badnum.csv:3: column "a": value "abc" is not a number`},
		{"d.csv", goodPlan + "dictionary:\n  a: {range: [-1, 1]}\n  b: {label: B}\n", `ordplan: DIR/d.csv:`},
	}
	for _, c := range cases {
		if body, ok := files[c.file]; ok {
			os.WriteFile(filepath.Join(dir, c.file), []byte(body), 0o644)
		}
		p := filepath.Join(dir, strings.TrimSuffix(c.file, ".csv")+".yaml")
		os.WriteFile(p, []byte(strings.Replace(c.plan, "file: d.csv", "file: "+c.file, 1)), 0o644)
		_, checkErr, code := runCLI("check", p)
		if code != exitFail {
			t.Errorf("%s: check exit %d, want %d: %s", c.file, code, exitFail, checkErr)
		}
		_, runErr, code := runCLI("run", p, "--quiet", "--out", filepath.Join(dir, "out-"+c.file))
		if code != exitFail {
			t.Errorf("%s: run exit %d, want %d: %s", c.file, code, exitFail, runErr)
		}
		cl, rl := errorLines(checkErr), errorLines(runErr)
		c.want = strings.Replace(c.want, "DIR", dir, 1)
		if len(cl) == 0 || !strings.HasPrefix(cl[0], c.want) {
			t.Errorf("%s: check says\n%s\nwant a first line beginning %s", c.file, checkErr, c.want)
		}
		for _, l := range cl {
			if !strings.HasPrefix(l, "ordplan: ") {
				t.Errorf("%s: check line without the ordplan: prefix: %s", c.file, l)
			}
		}
		if strings.Join(cl, "\n") != strings.Join(rl, "\n") {
			t.Errorf("%s: check says\n%s\nrun says\n%s", c.file, strings.Join(cl, "\n"), strings.Join(rl, "\n"))
		}
	}
}
