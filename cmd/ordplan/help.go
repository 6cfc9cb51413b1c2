package main

import (
	"flag"
	"fmt"
	"io"
	"sort"
	"strings"

	"ordplan/plan"
)

// command describes one subcommand for `ordplan help`: what it does, how
// it is called, and an example of every flag. The flags themselves (name,
// sentence, default) come from the command's own flag set, so the help
// lists exactly the flags the command accepts.
type command struct {
	name     string
	args     string // what follows the name, e.g. "PLAN.yaml [flags]"
	summary  string // one line
	about    string // a paragraph, or ""
	examples map[string]string
	more     func() string // text after the flags (optional)
}

// commands is every subcommand, in the order `ordplan help` lists them.
var commands = []command{
	{name: "run", args: "PLAN.yaml [flags]", summary: "run an analysis plan: fit every model, apply the rules, write the report",
		about: "Writes report.md, report.html, decisions.json and run.json (and the plan's predictions) into the output folder. Exit code 0: done; 1: the plan or the data is wrong; 2: the command line is wrong; 3: the run finished and wrote its outputs, but for some outcome no model survived the rules and the plan names no fallback, or a sensitivity analysis could not be run.",
		examples: map[string]string{
			"out": "--out results/2026-12", "previous": "--previous results/2026-11", "workers": "--workers 2",
			"quiet": "--quiet", "allow-unregistered-changes": "--allow-unregistered-changes",
		}},
	{name: "check", args: "PLAN.yaml [flags]", summary: "check a plan (and its data file) without fitting anything",
		about:    "Reads the plan, lists every problem with its line and column, reads the data file's header and checks the predictors can be fitted; then lists the rules as they will be applied.",
		examples: map[string]string{"no-data": "--no-data", "allow-unregistered-changes": "--allow-unregistered-changes"}},
	{name: "fit", args: "--data FILE --outcome COLUMN --predictors a,b [flags]", summary: "fit one model from the command line and print its table",
		about: "Fits one model of the typology (an approach, a link and an effect structure for each predictor) and prints the estimates; then, for a fit with a finite maximum, the odds ratios with their intervals (logit link), the likelihood-ratio test against the thresholds-only model with pseudo-R2 measures, the Lipsitz test and, when a predictor is categorical, the Pulkstenis-Robinson tests. With --json it prints one JSON object, the same checks under \"checks\".",
		examples: map[string]string{
			"data": "--data plans/data/quietstreets.csv", "outcome": "--outcome safety",
			"categories": "--categories very_unsafe,unsafe,neutral,safe,very_safe", "predictors": "--predictors pilot,female,age",
			"approach": "--approach stage", "direction": "--direction backward", "link": "--link probit",
			"covariance": "--covariance sandwich", "nonparallel": "--nonparallel pilot", "all-nonparallel": "--all-nonparallel",
			"constrained": "--constrained g1:pilot,female", "stereotype": "--approach adjacent --stereotype",
			"weights": "--weights w", "weight-kind": "--weights w --weight-kind sampling", "cluster": "--covariance clustered --cluster street",
			"few-clusters": "--covariance clustered --cluster district --few-clusters jackknife",
			"offset":       "--offset exposure", "missing": "--missing refuse", "missing-codes": "--missing-codes baseline_pain=-9,age=-9/-99", "delimiter": "--delimiter semicolon --decimal comma", "decimal": "--delimiter semicolon --decimal comma",
			"sheet": "--data survey.xlsx --sheet wave2", "header-row": "--data survey.xlsx --header-row 3", "baseline": "--approach adjacent --all-nonparallel --baseline neutral",
			"confidence-level": "--confidence-level 0.9", "json": "--json",
			"queue": "--queue nats://10.0.0.5:4222 --parts a.csv,b.csv", "parts": "--parts part1.csv,part2.csv",
		},
		more: func() string { return compactHelp }},
	{name: "init", args: "PLAN.yaml [flags]", summary: "write a commented plan skeleton from a data file or a header line",
		examples: map[string]string{"data": "--data survey.csv", "header": `--header "id,y,age,sex"`, "outcome": "--outcome y",
			"delimiter": "--data survey.csv --delimiter semicolon --decimal comma", "decimal": "--data survey.csv --delimiter semicolon --decimal comma",
			"sheet": "--data survey.xlsx --sheet wave2", "header-row": "--data survey.xlsx --header-row 3"}},
	{name: "rehearse", args: "PLAN.yaml [flags]", summary: "run the whole plan, rules and report included, on data simulated from its assumptions (every page, figure and table says SIMULATED DATA)",
		examples: map[string]string{"n": "--n 400", "out": "--out out/rehearsal", "workers": "--workers 2", "quiet": "--quiet", "allow-unregistered-changes": "--allow-unregistered-changes"}},
	{name: "power", args: "PLAN.yaml --n 200,400 [flags]", summary: "size the study: run the whole decision procedure on data simulated at each sample size; power of the plan's hypotheses, how often each model is chosen, separation and non-convergence, with Monte Carlo errors",
		examples: map[string]string{"n": "--n 200,400,800", "replicates": "--replicates 200", "alpha": "--alpha 0.01",
			"out": "--out out/power", "workers": "--workers 2", "quiet": "--quiet", "allow-unregistered-changes": "--allow-unregistered-changes"}},
	{name: "freeze", args: "PLAN.yaml [flags]", summary: "freeze (register) a plan: record its canonical form and hash in a lock file",
		examples: map[string]string{"registration": "--registration 10.17605/OSF.IO/ABCDE", "replace": "--replace"}},
	{name: "worker", args: "--queue nats://HOST:PORT --queue-secret-file FILE [flags]", summary: "compute fits sent through a NATS JetStream queue",
		examples: map[string]string{"cache": "--cache /var/cache/ordplan", "jobs": "--jobs 4", "ack-wait": "--ack-wait 2m",
			"name": "--name node7", "quiet": "--quiet", "max-starts": "--max-starts 50", "max-iterations": "--max-iterations 500",
			"max-predictors": "--max-predictors 200", "max-data-mb": "--max-data-mb 2048"}},
	{name: "schema", args: "", summary: "write the JSON Schema of the plan (for YAML editors) to standard output"},
	{name: "version", args: "", summary: "print the program's version"},
}

// queueExamples are the examples of the queue flags several commands share.
var queueExamples = map[string]string{
	"queue": "--queue nats://10.0.0.5:4222", "queue-ca": "--queue-ca ca.pem", "queue-cert": "--queue-cert client.pem",
	"queue-key": "--queue-key client-key.pem", "queue-creds": "--queue-creds user.creds", "queue-nkey": "--queue-nkey user.nk",
	"queue-login": "--queue-login queue.login", "queue-token": "--queue-token queue.token",
	"queue-secret-file": "--queue-secret-file secret.txt", "job-deadline": "--job-deadline 30m",
}

func findCommand(name string) *command {
	for i := range commands {
		if commands[i].name == name {
			return &commands[i]
		}
	}
	return nil
}

// usageText is the overview `ordplan help` prints.
func usageText() string {
	var b strings.Builder
	b.WriteString("ordplan: analysis plans for ordered outcomes\n\nusage: ordplan COMMAND [arguments]\n\ncommands:\n")
	for _, c := range commands {
		fmt.Fprintf(&b, "  %-9s %s\n", c.name, c.summary)
	}
	b.WriteString(`
  help COMMAND   the flags of a command, each with an example
  help plan      every key of a plan, with its type, default and allowed words

Run 'ordplan COMMAND --help' (or 'ordplan help COMMAND') for the flags of a command.
'ordplan --version' prints the version.
`)
	return b.String()
}

// cmdHelp answers `ordplan help [TOPIC]`.
func cmdHelp(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stdout, usageText())
		return exitOK
	}
	if len(args) > 1 {
		// `help run --bogus` once printed run's help and exited 0.
		fmt.Fprintf(stderr, "ordplan help: give one command or topic, not %d (%s); for a command's flags: ordplan help %s\n", len(args), strings.Join(args, " "), args[0])
		return exitUsage
	}
	switch args[0] {
	case "plan":
		fmt.Fprint(stdout, plan.KeyHelp())
		return exitOK
	case "help":
		fmt.Fprint(stdout, usageText())
		return exitOK
	}
	c := findCommand(args[0])
	if c == nil {
		fmt.Fprintf(stderr, "ordplan help: no command or topic %q (commands: %s; topic: plan)\n", args[0], commandNames())
		return exitUsage
	}
	if c.name == "schema" || c.name == "version" {
		fmt.Fprintf(stdout, "usage: ordplan %s\n\n%s.\n", c.name, c.summary)
		return exitOK
	}
	return run([]string{c.name, "--help"}, stdout, stdout)
}

func commandNames() string {
	var out []string
	for _, c := range commands {
		out = append(out, c.name)
	}
	return strings.Join(out, ", ")
}

// isHelp reports whether args ask for help.
func isHelp(args []string) bool {
	for _, a := range args {
		if a == "--" {
			return false
		}
		if a == "-h" || a == "-help" || a == "--help" {
			return true
		}
	}
	return false
}

// printCommandHelp writes a command's help: usage, what it does, and every
// flag with its sentence, default and an example.
func printCommandHelp(w io.Writer, fs *flag.FlagSet, name string) {
	c := findCommand(name)
	if c == nil {
		c = &command{name: name}
	}
	fmt.Fprintf(w, "usage: ordplan %s %s\n\n", c.name, c.args)
	if c.summary != "" {
		fmt.Fprintf(w, "%s%s.\n", strings.ToUpper(c.summary[:1]), c.summary[1:])
	}
	if c.about != "" {
		fmt.Fprintf(w, "%s\n", c.about)
	}
	var names []string
	fs.VisitAll(func(f *flag.Flag) { names = append(names, f.Name) })
	sort.Strings(names)
	if len(names) > 0 {
		fmt.Fprintf(w, "\nflags:\n")
	}
	for _, n := range names {
		f := fs.Lookup(n)
		arg, usage := flag.UnquoteUsage(f)
		head := "  --" + n
		if arg == "string" {
			arg = "value"
		}
		if arg != "" && !isBoolFlag(f) {
			head += " " + strings.ToUpper(arg)
		}
		fmt.Fprintf(w, "%s\n      %s", head, usage)
		if d := f.DefValue; d != "" && d != "false" && d != "0" {
			fmt.Fprintf(w, " (default %s)", d)
		}
		ex := c.examples[n]
		if ex == "" {
			ex = queueExamples[n]
		}
		if ex == "" {
			ex = "(no example)"
		} else {
			ex = "ordplan " + c.name + " " + exampleArgs(c) + ex
		}
		fmt.Fprintf(w, "\n      example: %s\n", strings.TrimSpace(ex))
	}
	if c.more != nil {
		fmt.Fprintf(w, "\n%s\n", strings.TrimRight(c.more(), "\n"))
	}
}

// exampleArgs is what an example puts before the flag: the plan file for
// commands that take one (for init, which writes it, a file that does not
// exist yet, so that the example runs as printed).
func exampleArgs(c *command) string {
	if c.name == "init" {
		return "plans/new.yaml "
	}
	if strings.HasPrefix(c.args, "PLAN.yaml") {
		return "plans/example.yaml "
	}
	return ""
}

func isBoolFlag(f *flag.Flag) bool {
	b, ok := f.Value.(interface{ IsBoolFlag() bool })
	return ok && b.IsBoolFlag()
}
