package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// --missing-codes marks a column's own codes as missing, as a plan's
// dictionary.COLUMN.missing does: the fit of a file holding -9 (and -99.0,
// the code written otherwise) in a predictor, with the codes given, is the
// fit of the same file with those cells empty, byte for byte but for the
// file's name; without the flag -9 is a number and the fit differs. The
// data are invented (seeded arithmetic).
func TestFitMissingCodesAsEmptyCells(t *testing.T) {
	dir := t.TempDir()
	var coded, empty strings.Builder
	coded.WriteString("y,a,b\n")
	empty.WriteString("y,a,b\n")
	for i := 1; i <= 90; i++ {
		a := fmt.Sprintf("%.2f", float64(i*37%100)/25-2)
		b := fmt.Sprint(i * 7 % 5)
		y := (i*13%7+i%3)%3 + 1
		fmt.Fprintf(&empty, "%d,%s,%s\n", y, a, map[bool]string{true: "", false: b}[i%9 == 0 || i%17 == 0])
		switch {
		case i%9 == 0:
			b = "-9"
		case i%17 == 0:
			b = "-99.0"
		}
		fmt.Fprintf(&coded, "%d,%s,%s\n", y, a, b)
	}
	c, e := filepath.Join(dir, "coded.csv"), filepath.Join(dir, "empty.csv")
	os.WriteFile(c, []byte(coded.String()), 0o644)
	os.WriteFile(e, []byte(empty.String()), 0o644)
	fitOf := func(file string, extra ...string) string {
		out, errs, code := runCLI(append([]string{"fit", "--data", file, "--outcome", "y", "--predictors", "a,b"}, extra...)...)
		if code != 0 {
			t.Fatalf("%s %v: exit %d: %s", file, extra, code, errs)
		}
		return strings.ReplaceAll(out, file, "DATA")
	}
	want := fitOf(e)
	if got := fitOf(c, "--missing-codes", "b=-9/-99"); got != want {
		t.Errorf("with --missing-codes:\n%s\nwant (the cells empty):\n%s", got, want)
	}
	if !strings.Contains(want, "(b: 15)") {
		t.Errorf("the drop summary does not count b's 15 missing cells:\n%s", want)
	}
	if got := fitOf(c); got == want {
		t.Errorf("without --missing-codes, -9 was not read as a number")
	}
}
