package main

import (
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"ordplan/internal/newfile"
	"ordplan/plan/skeleton"
	"ordplan/runner/data"
)

const initUsage = "usage: ordplan init PLAN.yaml [--data FILE | --header \"a,b,c\"] [--outcome COLUMN]"

// cmdInit writes a commented plan skeleton; it never overwrites a file.
func cmdInit(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("init", stderr)
	dataFile := fs.String("data", "", "CSV data file: its columns are listed with the kind of values found")
	header := fs.String("header", "", "the columns, comma separated, when there are no data yet")
	outcome := fs.String("outcome", "", "the ordinal outcome column (default: guessed, marked EDIT)")
	planPath, stop, code := planArg(fs, args, initUsage, stderr)
	if stop {
		return code
	}
	if (*dataFile == "") == (*header == "") {
		fmt.Fprintln(stderr, "ordplan init: give either --data FILE or --header \"a,b,c\"")
		fmt.Fprintln(stderr, initUsage)
		return exitUsage
	}
	in := skeleton.Input{Outcome: *outcome}
	if *dataFile != "" {
		cols, err := data.ProfileFile(*dataFile, nil)
		if err != nil {
			return fail(stderr, err)
		}
		in.Columns, in.HaveData = cols, true
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
	if err := newfile.Create(planPath, text); err != nil {
		var ee *newfile.ExistsError
		if errors.As(err, &ee) {
			return fail(stderr, fmt.Errorf("init: %s already exists; ordplan init never overwrites a file: give another name", planPath))
		}
		return fail(stderr, err)
	}
	fmt.Fprintf(stdout, "wrote %s: edit the lines marked EDIT, then `ordplan check %s`\n", planPath, planPath)
	return exitOK
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
