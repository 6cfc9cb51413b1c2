package main

import (
	"strings"
	"testing"
)

// Every command explains itself: `ordplan CMD --help` and `ordplan help
// CMD` print the same help, listing every flag with a sentence and an
// example, on standard output with exit code 0.
func TestEveryCommandHasHelp(t *testing.T) {
	for _, c := range commands {
		if c.name == "schema" || c.name == "version" {
			continue
		}
		out, errs, code := runCLI(c.name, "--help")
		if code != 0 || errs != "" {
			t.Fatalf("%s --help: exit %d, stderr %q", c.name, code, errs)
		}
		if !strings.HasPrefix(out, "usage: ordplan "+c.name) {
			t.Errorf("%s --help starts %q", c.name, firstLine(out))
		}
		if strings.Contains(out, "(no example)") {
			t.Errorf("%s --help: a flag has no example:\n%s", c.name, out)
		}
		flags := 0
		lines := strings.Split(out, "\n")
		for i, l := range lines {
			if strings.HasPrefix(l, "  --") {
				flags++
				if i+2 >= len(lines) || strings.TrimSpace(lines[i+1]) == "" || !strings.HasPrefix(strings.TrimSpace(lines[i+2]), "example: ordplan "+c.name) {
					t.Errorf("%s: flag %s lacks its sentence or example", c.name, strings.TrimSpace(l))
				}
			}
		}
		if flags == 0 && c.name != "check" {
			t.Errorf("%s --help lists no flag:\n%s", c.name, out)
		}
		viaHelp, _, code := runCLI("help", c.name)
		if code != 0 || viaHelp != out {
			t.Errorf("help %s differs from %s --help (exit %d)", c.name, c.name, code)
		}
	}
}

func firstLine(s string) string { l, _, _ := strings.Cut(s, "\n"); return l }

func TestOverviewHelpAndVersion(t *testing.T) {
	for _, args := range [][]string{{"--help"}, {"help"}, {"-h"}} {
		out, _, code := runCLI(args...)
		if code != 0 || !strings.Contains(out, "commands:") || !strings.Contains(out, "help plan") {
			t.Errorf("%v: exit %d\n%s", args, code, out)
		}
		for _, c := range commands {
			if !strings.Contains(out, "  "+c.name+" ") {
				t.Errorf("%v does not list %s", args, c.name)
			}
		}
	}
	for _, args := range [][]string{{"--version"}, {"version"}} {
		out, _, code := runCLI(args...)
		if code != 0 || !strings.HasPrefix(out, "ordplan ") {
			t.Errorf("%v: exit %d %q", args, code, out)
		}
	}
	out, _, code := runCLI("help", "plan")
	if code != 0 || !strings.Contains(out, "models.effects\n") || !strings.Contains(out, "covariance\n    word: observed | expected | sandwich | sandwich_plain | clustered; default observed") {
		t.Errorf("help plan: exit %d\n%s", code, out)
	}
	out, _, code = runCLI("schema")
	if code != 0 || !strings.Contains(out, `"$schema": "https://json-schema.org/draft/2020-12/schema"`) {
		t.Errorf("schema: exit %d", code)
	}
	_, errs, code := runCLI("help", "nonsense")
	if code != 2 || !strings.Contains(errs, `no command or topic "nonsense"`) {
		t.Errorf("help nonsense: exit %d %q", code, errs)
	}
}

// A bad flag gets the flag's error and one line pointing to the help, not
// the whole help.
func TestBadFlagPointsToHelp(t *testing.T) {
	_, errs, code := runCLI("fit", "--link", "tanh")
	if code != 2 || !strings.Contains(errs, `unknown link "tanh" (want logit, probit, cloglog, loglog or cauchy)`) ||
		!strings.Contains(errs, "Run 'ordplan fit --help'") || strings.Count(errs, "\n") > 2 {
		t.Errorf("exit %d:\n%s", code, errs)
	}
}
