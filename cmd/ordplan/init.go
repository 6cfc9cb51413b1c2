package main

import (
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"ordplan/internal/newfile"
	"ordplan/plan"
	"ordplan/plan/skeleton"
	"ordplan/runner/data"
)

const initUsage = "usage: ordplan init PLAN.yaml [--data FILE | --header \"a,b,c\"] [--outcome COLUMN]"

// cmdInit writes a commented plan skeleton; it never overwrites a file.
func cmdInit(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("init", stderr)
	dataFile := fs.String("data", "", "the data file (CSV text, an .xlsx workbook or a flat Parquet file): its columns are listed with the kind of values found")
	delimiter := fs.String("delimiter", "", "the character between the CSV file's fields: comma, semicolon or tab (default: as the file's header shows)")
	decimal := fs.String("decimal", "", "the decimal mark of the CSV file's numbers, or of the numbers a workbook or Parquet file holds as text: point or comma (default: as the file's numbers show)")
	sheet := fs.String("sheet", "", "for an .xlsx workbook: the worksheet to read, hidden or not (default: the one visible sheet with cells filled)")
	headerRow := fs.Int("header-row", 1, "for an .xlsx workbook: the sheet row holding the column names")
	header := fs.String("header", "", "the columns, comma separated, when there are no data yet")
	outcome := fs.String("outcome", "", "the ordinal outcome column (default: guessed, marked EDIT)")
	planPath, stop, code := planArg(fs, args, initUsage, stderr)
	if stop {
		return code
	}
	if (*dataFile == "") == (*header == "") {
		if *dataFile == "" && isDataFileName(planPath) {
			// `ordplan init survey.csv`: the data file given as the plan.
			fmt.Fprintf(stderr, "ordplan init: %s would be the plan to write, but it is named like a data file: give the plan's name first and the data with --data: ordplan init %s --data %s\n",
				planPath, strings.TrimSuffix(planPath, filepath.Ext(planPath))+".yaml", planPath)
			return exitUsage
		}
		fmt.Fprintln(stderr, "ordplan init: give either --data FILE or --header \"a,b,c\"")
		fmt.Fprintln(stderr, initUsage)
		return exitUsage
	}
	// Where the plan goes is checked before the data are read (a wide
	// file takes a while).
	if code := initTarget(planPath, stderr); code != exitOK {
		return code
	}
	in := skeleton.Input{Outcome: *outcome}
	if *dataFile != "" {
		d, detected, msg := initDialect(*dataFile, *delimiter, *decimal, *sheet, *headerRow)
		if msg != "" {
			fmt.Fprintf(stderr, "ordplan init: %s\n", msg)
			return exitUsage
		}
		if detected {
			// The dialect is read from the file's first lines.
			raw, err := data.ReadFile(*dataFile)
			if err != nil {
				return fail(stderr, err)
			}
			d = data.DetectDialect(raw)
		}
		cols, read, err := data.ProfileSheet(*dataFile, nil, d)
		if err != nil {
			return fail(stderr, err)
		}
		if read != nil && read.Sheets > 1 {
			// The sheet read, named in the plan: a sheet added later
			// leaves the plan reading the same one.
			d.Sheet = read.Name
		}
		in.Columns, in.HaveData = cols, true
		in.Dialect, in.DialectFound = d, detected
		in.DataFile = relativeTo(planPath, *dataFile)
	} else {
		names, err := data.ReadHeader(strings.NewReader(*header+"\n"), "--header")
		if err != nil {
			return fail(stderr, err)
		}
		for _, n := range names {
			in.Columns = append(in.Columns, data.Profile{Name: n})
		}
		in.DataFile = "EDIT-data.csv"
	}
	text, err := skeleton.Write(in)
	if err != nil {
		return fail(stderr, err)
	}
	if len(text) > plan.MaxPlanBytes {
		// The commands that read a plan would refuse it (plan.ReadFile).
		return fail(stderr, fmt.Errorf("init: the plan of the %d columns would have %d bytes, more than the %d a plan may have (ordplan check would refuse it); nothing written: give --header with the columns the analysis uses, or init from a file holding only those", len(in.Columns), len(text), plan.MaxPlanBytes))
	}
	if err := newfile.Create(planPath, text); err != nil {
		return initTargetError(planPath, err, stderr)
	}
	fmt.Fprintf(stdout, "wrote %s: edit the lines marked EDIT, then `%s`\n", planPath, commandLine([]string{"ordplan", "check", planPath}))
	for _, n := range skeleton.Notes(in) {
		fmt.Fprintf(stdout, "note: %s\n", n)
	}
	return exitOK
}

// isDataFileName reports whether a name has the extension of a data file
// the program reads (CSV or text, a workbook, Parquet).
func isDataFileName(name string) bool {
	switch strings.ToLower(filepath.Ext(name)) {
	case ".csv", ".tsv", ".txt", ".xlsx", ".parquet":
		return true
	}
	return false
}

// relativeTo writes file as a plan at planPath names it: relative to the
// plan's folder when possible.
func relativeTo(planPath, file string) string {
	pd, err1 := filepath.Abs(filepath.Dir(planPath))
	fa, err2 := filepath.Abs(file)
	if err1 != nil || err2 != nil {
		return filepath.ToSlash(file)
	}
	if rel, err := filepath.Rel(pd, fa); err == nil {
		return filepath.ToSlash(rel)
	}
	return filepath.ToSlash(fa)
}

// initDialect is the dialect the flags of init give for the data file, or
// detected (true) when a CSV file's flags leave both the delimiter and the
// decimal mark to the file; msg says what is wrong with the flags.
func initDialect(file, delimiter, decimal, sheet string, headerRow int) (data.Dialect, bool, string) {
	book := data.IsWorkbook(file)
	switch {
	case headerRow < 1:
		return data.Dialect{}, false, fmt.Sprintf("--header-row must be a sheet row number, 1 or more (got %d)", headerRow)
	case (sheet != "" || headerRow != 1) && !book:
		return data.Dialect{}, false, "--sheet and --header-row are for .xlsx workbooks; the data file is not named *.xlsx"
	case delimiter != "" && (book || data.IsParquet(file)):
		return data.Dialect{}, false, "--delimiter is for CSV text; the data file is a workbook or a Parquet file, which has no delimiter (--decimal comma reads its numbers held as text with a decimal comma)"
	}
	d, err := data.ParseDialect(delimiter, decimal)
	if err != nil {
		return d, false, "--delimiter/--decimal: " + err.Error()
	}
	d.Sheet, d.HeaderRow = sheet, headerRow
	return d, !book && !data.IsParquet(file) && delimiter == "" && decimal == "", ""
}

// initTarget checks that init can write its plan at planPath (newfile.Check).
func initTarget(planPath string, stderr io.Writer) int {
	if err := newfile.Check(planPath); err != nil {
		return initTargetError(planPath, err, stderr)
	}
	return exitOK
}

// initTargetError reports that init cannot write planPath: R5 when a file
// is there.
func initTargetError(planPath string, err error, stderr io.Writer) int {
	var ee *newfile.ExistsError
	if errors.As(err, &ee) {
		return fail(stderr, fmt.Errorf("init: %s already exists; ordplan init never overwrites a file: give another name", planPath))
	}
	return fail(stderr, fmt.Errorf("init: %w", err))
}
