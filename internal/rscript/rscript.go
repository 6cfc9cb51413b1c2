package rscript

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"ordplan/internal/words"
)

// timeout bounds one run of R.
const timeout = 2 * time.Minute

// Require returns the path of Rscript, or skips the test with one line when
// it is not on PATH.
func Require(t testing.TB) string {
	t.Helper()
	p, err := exec.LookPath("Rscript")
	if err != nil {
		t.Skip("Rscript is not on PATH: the cross-checks against R are skipped (Debian: apt-get install r-base-core r-cran-nnet)")
	}
	return p
}

// HasPackage reports whether the R package pkg can be loaded.
func HasPackage(t testing.TB, pkg string) bool {
	t.Helper()
	p := Require(t)
	cmd := exec.Command(p, "--vanilla", "-e", fmt.Sprintf("cat(requireNamespace(%q, quietly = TRUE))", pkg))
	out, err := cmd.Output()
	return err == nil && strings.TrimSpace(string(out)) == "TRUE"
}

// RequirePackages skips the test with one line when Rscript is not on
// PATH (Require) or one of the R packages pkgs cannot be loaded, naming
// those and the Debian packages that bring them.
func RequirePackages(t testing.TB, pkgs ...string) {
	t.Helper()
	Require(t)
	var missing, debian []string
	for _, p := range pkgs {
		if !HasPackage(t, p) {
			missing = append(missing, p)
			debian = append(debian, "r-cran-"+strings.ToLower(p))
		}
	}
	switch len(missing) {
	case 0:
	case 1:
		t.Skipf("the R package %s is not installed (Debian: apt-get install %s): the check against it is skipped", missing[0], debian[0])
	default:
		t.Skipf("the R packages %s are not installed (Debian: apt-get install %s): the check against them is skipped", words.AndList(missing), strings.Join(debian, " "))
	}
}

// Values are the value lists a script printed, by name.
type Values map[string][]float64

// Get returns the list called name; the test fails when the script did not
// print it.
func (v Values) Get(t testing.TB, name string) []float64 {
	t.Helper()
	x, ok := v[name]
	if !ok {
		t.Fatalf("R printed no value %q", name)
	}
	return x
}

// Scalar returns the single value called name.
func (v Values) Scalar(t testing.TB, name string) float64 {
	t.Helper()
	x := v.Get(t, name)
	if len(x) != 1 {
		t.Fatalf("R printed %d values for %q, want 1", len(x), name)
	}
	return x[0]
}

// Run concatenates the R files (in order) into dir/check.R, runs it with
// `Rscript --vanilla` in dir and parses its standard output. Lines that do
// not start with a name followed by numbers fail the test, so nothing R
// prints goes unread.
func Run(t testing.TB, dir string, files ...string) Values {
	t.Helper()
	p := Require(t)
	var src bytes.Buffer
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		fmt.Fprintf(&src, "## ---- %s\n", filepath.Base(f))
		src.Write(b)
		src.WriteString("\n")
	}
	script := filepath.Join(dir, "check.R")
	if err := os.WriteFile(script, src.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), timeout)
	defer cancel()
	cmd := exec.CommandContext(ctx, p, "--vanilla", "check.R")
	cmd.Dir = dir
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("Rscript %s: %v\n%s", strings.Join(files, " "), err, stderr.String())
	}
	vals, err := parse(stdout.Bytes())
	if err != nil {
		t.Fatalf("Rscript %s: %v", strings.Join(files, " "), err)
	}
	return vals
}

// Frozen reads the output of an R script saved in a file, so that a check
// runs without R: lines starting with "#" (how and where the values were
// made) are left out, the rest is read as Run reads a script's output.
func Frozen(t testing.TB, path string) Values {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var keep []string
	for _, l := range strings.Split(string(b), "\n") {
		if !strings.HasPrefix(l, "#") {
			keep = append(keep, l)
		}
	}
	vals, err := parse([]byte(strings.Join(keep, "\n")))
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return vals
}

// FrozenBy is Frozen for the output of the R script at script saved in
// frozen, after checking that frozen records the script's SHA-256 in a
// line "# script-sha256 HEX": values made by another version of the script
// fail the test, which says how to make them again (remake).
func FrozenBy(t testing.TB, script, frozen, remake string) Values {
	t.Helper()
	src, err := os.ReadFile(script)
	if err != nil {
		t.Fatal(err)
	}
	saved, err := os.ReadFile(frozen)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(src)
	if !strings.Contains(string(saved), "# script-sha256 "+hex.EncodeToString(sum[:])+"\n") {
		t.Fatalf("%s was not made by the %s of today (its SHA-256 is not the one recorded); run it again: %s, keeping the header of %s", frozen, script, remake, frozen)
	}
	return Frozen(t, frozen)
}

func parse(b []byte) (Values, error) {
	vals := Values{}
	sc := bufio.NewScanner(bytes.NewReader(b))
	sc.Buffer(make([]byte, 1<<20), 1<<26)
	line := 0
	for sc.Scan() {
		line++
		f := strings.Fields(sc.Text())
		if len(f) == 0 {
			continue
		}
		if _, dup := vals[f[0]]; dup {
			return nil, fmt.Errorf("output line %d: %q printed twice", line, f[0])
		}
		x := make([]float64, 0, len(f)-1)
		for _, s := range f[1:] {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				return nil, fmt.Errorf("output line %d (%s): %q is not a number", line, f[0], s)
			}
			x = append(x, v)
		}
		vals[f[0]] = x
	}
	return vals, sc.Err()
}

// Table is a numeric CSV file: its header and one column per name.
type Table struct {
	Names []string
	Cols  map[string][]float64
	Rows  int
}

// Col returns the column called name; the test fails when there is none.
func (tb *Table) Col(t testing.TB, name string) []float64 {
	t.Helper()
	c, ok := tb.Cols[name]
	if !ok {
		t.Fatalf("no column %q (have %v)", name, tb.Names)
	}
	return c
}

// ReadCSV reads a CSV file of numbers with a header line, as R's write.csv
// writes it (quoted names, row.names = FALSE).
func ReadCSV(t testing.TB, path string) *Table {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	if len(recs) < 2 {
		t.Fatalf("%s: no data rows", path)
	}
	tb := &Table{Names: recs[0], Cols: map[string][]float64{}, Rows: len(recs) - 1}
	for j, name := range tb.Names {
		col := make([]float64, tb.Rows)
		for i, rec := range recs[1:] {
			v, err := strconv.ParseFloat(rec[j], 64)
			if err != nil {
				t.Fatalf("%s line %d column %q: %q is not a number", path, i+2, name, rec[j])
			}
			col[i] = v
		}
		tb.Cols[name] = col
	}
	return tb
}

// WriteCSV writes columns of numbers with a header line, every number in
// the shortest form that reads back to the same float64.
func WriteCSV(t testing.TB, path string, names []string, cols [][]float64) {
	t.Helper()
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	_ = w.Write(names)
	rec := make([]string, len(cols))
	for i := range cols[0] {
		for j, c := range cols {
			rec[j] = strconv.FormatFloat(c[i], 'g', -1, 64)
		}
		_ = w.Write(rec)
	}
	w.Flush()
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}
