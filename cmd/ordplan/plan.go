package main

import (
	"fmt"
	"io"
)

func cmdRun(args []string, stdout, stderr io.Writer) int {
	fmt.Fprintln(stderr, "ordplan run: not available in this build")
	return exitFail
}

func cmdCheck(args []string, stdout, stderr io.Writer) int {
	fmt.Fprintln(stderr, "ordplan check: not available in this build")
	return exitFail
}
