package main

import (
	"bytes"
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/internal/planshapes"
	"ordplan/plan"
)

// shapesData writes into dir a small data file holding every column the
// plans of planshapes name, under every file name they read (data file,
// parts, stacked imputed sets, new rows). Seeded: the same files on every
// call. Some cells are missing (a, age, years_resident's -9).
func shapesData(t testing.TB, dir string) {
	r := rand.New(rand.NewPCG(20261203, 1))
	cols := []string{"y", "z", "a", "b", "c", "x", "w", "cl", "off", "safety", "pilot", "female", "age", "child_home",
		"years_resident", "cyclist", "street_type", "change", "arm", "baseline_pain", "site", "treat", "grade", "dose",
		"bmi", "g", "imp", "one"}
	words := func(ws ...string) func() string { return func() string { return ws[r.IntN(len(ws))] } }
	num := func(lo, hi float64) func() string {
		return func() string { return fmt.Sprintf("%.3f", lo+(hi-lo)*r.Float64()) }
	}
	code := func(k int) func() string { return func() string { return fmt.Sprint(r.IntN(k)) } }
	gens := map[string]func() string{
		"y": func() string { return fmt.Sprint(1 + r.IntN(4)) }, "z": words("low", "mid", "high"),
		"a": num(-2, 2), "b": num(-1, 3), "c": num(0, 5), "x": num(0, 3), "w": func() string { return fmt.Sprint(1 + r.IntN(3)) },
		"cl": func() string { return fmt.Sprint(1 + r.IntN(8)) }, "off": num(-0.5, 0.5),
		"safety": words("very_unsafe", "unsafe", "neutral", "safe", "very_safe"),
		"pilot":  code(2), "female": code(2), "age": num(18, 90), "child_home": code(2),
		"years_resident": num(0, 40), "cyclist": code(2), "street_type": words("residential", "through_road", "cul_de_sac"),
		"change": words("much_worse", "worse", "same", "better", "much_better"), "arm": code(2),
		"baseline_pain": num(0, 10), "site": words("north", "east", "south", "west"), "treat": words("placebo", "drug"),
		"grade": func() string { return fmt.Sprint(1 + r.IntN(3)) }, "dose": num(0.1, 10), "bmi": num(15, 40),
		"g": words("u", "v"), "imp": func() string { return "1" }, "one": func() string { return "1" },
	}
	rows := func(n int, missing bool, imp int) string {
		var b strings.Builder
		b.WriteString(strings.Join(cols, ",") + "\n")
		for i := 0; i < n; i++ {
			cells := make([]string, len(cols))
			for j, c := range cols {
				cells[j] = gens[c]()
				if c == "imp" && imp > 0 {
					cells[j] = fmt.Sprint(1 + i%3)
				}
				if missing && i%11 == 3 && (c == "a" || c == "age") {
					cells[j] = "NA"
				}
				if missing && i%13 == 5 && c == "years_resident" {
					cells[j] = "-9"
				}
			}
			b.WriteString(strings.Join(cells, ",") + "\n")
		}
		return b.String()
	}
	write := func(name, text string) {
		path := filepath.Join(dir, name)
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	main := rows(120, true, 0)
	for _, name := range []string{"d.csv", "data/quietstreets.csv", "data/kneepain.csv", "p1.csv", "parts/p2.csv", "parts/p3.csv"} {
		write(name, main)
	}
	for _, name := range []string{"new.csv", "data/newrows.csv"} {
		write(name, rows(5, false, 0))
	}
	write("imp.csv", rows(360, false, 1))
}

// fitsOf is about the number of fits a run of the plan at path makes: the
// fuzzer gives up on an input after 10 s, so larger grids are only checked.
func fitsOf(path string) int {
	p, err := plan.Load(path)
	if err != nil {
		return 0
	}
	n := len(p.Outcomes) * len(p.Models.Approaches) * len(p.Models.Effects) * len(p.Models.Links)
	if im := p.Data.Imputation; im != nil {
		n *= im.Sets
	}
	if im := p.Data.Imputed; im != nil {
		n *= max(3, len(im.Files))
	}
	return n
}

// fuzzing says whether the test runs with -fuzz (not on its seeds alone),
// or ORDPLAN_FUZZ_RUN=1 asks for the runs on the seeds and corpus too.
func fuzzing() bool {
	if os.Getenv("ORDPLAN_FUZZ_RUN") == "1" {
		return true
	}
	f := flag.Lookup("test.fuzz")
	return f != nil && f.Value.String() != ""
}

// FuzzPlanRun runs the whole program on plans made by planshapes over a
// small data file holding every column they name: `check`, then `run` of
// a plan the check passes, then `rehearse` of one with assumptions and no
// subset. No
// command may panic (run recovers a panic as "internal error", and a panic
// on another goroutine ends the process), and a failure must say something.
// On its seeds alone (go test ./...) only check runs: the runs take
// seconds each.
func FuzzPlanRun(f *testing.F) {
	bases := planshapes.Bases(filepath.Join("..", ".."))
	f.Add([]byte{})
	for i := range bases {
		f.Add([]byte{byte(i)})
		f.Add([]byte{byte(i), 3, 17, 2, 5, 40, 1, 9, 200, 7, 4, 4, 81, 33, 6})
	}
	dir := f.TempDir()
	if d := os.Getenv("SHAPES_DIR"); d != "" { // keep the data, to run a failing plan by hand

		dir = d
	}
	shapesData(f, dir)
	n := 0
	f.Fuzz(func(t *testing.T, b []byte) {
		src := planshapes.Plan(b, bases)
		path := filepath.Join(dir, "plan.yaml")
		if err := os.WriteFile(path, src, 0o644); err != nil {
			t.Fatal(err)
		}
		n++
		command := func(args ...string) int {
			var stdout, stderr bytes.Buffer
			code := run(args, &stdout, &stderr)
			t.Logf("ordplan %s: exit %d %.300s", args[0], code, stderr.String())
			if strings.Contains(stderr.String(), "internal error") {
				t.Fatalf("ordplan %s: %s\nplan:\n%s", strings.Join(args, " "), stderr.String(), src)
			}
			if code != exitOK && code != exitNoChoice && strings.TrimSpace(stderr.String()) == "" {
				t.Fatalf("ordplan %s: exit %d with nothing said\nplan:\n%s", strings.Join(args, " "), code, src)
			}
			return code
		}
		if command("check", path) != exitOK || !fuzzing() || fitsOf(path) > 4 {
			return
		}
		out := filepath.Join(dir, fmt.Sprintf("out%d", n))
		defer os.RemoveAll(out)
		command("run", "--quiet", "--workers", "1", "--out", out, path)
		// A rehearsal of a plan with a subset draws rows until the subset
		// keeps enough (tens of seconds): beyond the fuzzer's limit of 10 s
		// an input.
		if bytes.Contains(src, []byte("assumptions:")) && !bytes.Contains(src, []byte("subset:")) {
			command("rehearse", "--workers", "1", "--n", "80", "--out", out+"r", path)
			os.RemoveAll(out + "r")
		}
	})
}
