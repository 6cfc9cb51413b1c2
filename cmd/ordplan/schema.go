package main

import (
	"fmt"
	"io"

	"ordplan/plan"
)

// cmdSchema writes the JSON Schema of the plan, made from the same key
// description as the plan's checks.
func cmdSchema(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("schema", stderr)
	if stop, code := parseFlags(fs, args); stop {
		return code
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "ordplan schema: unexpected argument %q (the schema goes to standard output: ordplan schema > plan.schema.json)\n", fs.Arg(0))
		return exitUsage
	}
	if _, err := stdout.Write(plan.Schema()); err != nil {
		return fail(stderr, err)
	}
	return exitOK
}
