package main

// Catalogue items of mistakes a hostile or careless user made on the
// command line, in plans and in folders (docs/bad-inputs.md), run by
// TestBadInputCatalogue with the others.

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// noFolder checks that an item made no folder name in dir.
func noFolder(name string) func(t *testing.T, dir, out, errs string) {
	return func(t *testing.T, dir, out, errs string) {
		t.Helper()
		if _, err := os.Stat(filepath.Join(dir, name)); !os.IsNotExist(err) {
			t.Errorf("%s was made: %v", name, err)
		}
	}
}

// mistakeItems are the catalogue items of this file.
func mistakeItems(dir string) []badInput {
	return []badInput{
		{id: "A30", name: "power --n above the most rows simulated", args: []string{"power", "--n", "200,2000000000", "--out", filepath.Join(dir, "A30-power")}, code: 2,
			plan:  edit() + assumed("{a: 0.2}", ""),
			want:  []string{"ordplan power: --n: the sample size 2000000000 is above 10000000, the most rows ordplan simulates (as for assumptions.n); give sizes from 10 to 10000000"},
			check: noFolder("A30-power")},
		{id: "A30", name: "rehearse --n above the most rows simulated", args: []string{"rehearse", "--n", "2000000000", "--out", filepath.Join(dir, "A30-rehearsal")}, code: 2,
			plan:  edit() + assumed("{a: 0.2}", ""),
			want:  []string{"ordplan rehearse: --n 2000000000 is above 10000000, the most rows ordplan simulates (as for assumptions.n); give --n from 10 to 10000000"},
			check: noFolder("A30-rehearsal")},
		{id: "A31", name: "--workers 0 or below", args: []string{"run", "--workers", "-3"}, plan: goodPlan, code: 2, lines: true,
			want:  []string{`invalid value "-3" for flag -workers: want a whole number of 1 or more (leave --workers out to use all cores)`, "Run 'ordplan run --help' for its flags"},
			check: noFolder("A31-out")},
		{id: "A31", name: "power --workers 0", args: []string{"power", "--n", "100", "--workers", "0", "--out", filepath.Join(dir, "A31-power")}, plan: edit() + assumed("{a: 0.2}", ""), code: 2, lines: true,
			want:  []string{`invalid value "0" for flag -workers: want a whole number of 1 or more`},
			check: noFolder("A31-power")},
		{id: "A32", name: "help given more than one word", args: []string{"help", "run", "--bogus"}, code: 2,
			want: []string{"ordplan help: give one command or topic, not 2 (run --bogus); for a command's flags: ordplan help run"}},
		{id: "O13", name: "an empty --previous", args: []string{"run", "--previous="}, plan: goodPlan, code: 2,
			want:  []string{`ordplan run: --previous is given an empty value (""), but it names the output folder of an earlier run: give one, or leave the flag out`},
			check: noFolder("O13-out")},
		{id: "O13", name: "an empty --out", args: []string{"rehearse", "--out="}, plan: edit() + assumed("{a: 0.2}", ""), code: 2,
			want:  []string{`ordplan rehearse: --out is given an empty value (""), but it names a folder: give one, or leave the flag out`},
			check: noFolder("out")},
		{id: "O13", name: "an empty --queue", args: []string{"run", "--queue", ""}, plan: goodPlan, code: 2,
			want:  []string{`ordplan run: --queue is given an empty value (""), but it names the server's URL: give one, or leave the flag out`},
			check: noFolder("O13-out")},
		{id: "O13", name: "ordplan fit given an empty --weights", args: fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a", "--weights", ""), code: 2,
			want: []string{`ordplan fit: --weights is given an empty value (""), but it names the column of weights: give one, or leave the flag out`}},
		{id: "C11", name: "ordplan fit --categories separated by slashes", args: fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a", "--categories", "1/2/3"), code: 1,
			want: []string{`ordplan: d.csv: only one outcome category declared ("1/2/3"); at least two are needed: categories are separated by commas (ordplan fit --categories 1,2,3), not by "/"`}},
		{id: "T37", name: "ordplan fit --predictors with a typeset minus sign", args: fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a|centre=−1"), code: 1,
			want: []string{`ordplan: --predictors: predictor 1 ("a|centre=−1"): centre=−1: want mean or a finite number; it holds the character U+2212 (MINUS SIGN) where a number has the ASCII hyphen-minus "-": write -1`}},
		{id: "C12", name: "ordplan fit --nonparallel listing a predictor twice", args: fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a,b", "--nonparallel", "a,a"), code: 1,
			want: []string{`ordplan: predictor "a" is listed twice as nonparallel; list it once`}},
		{id: "C12", name: "ordplan fit --constrained with an empty group name", args: fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a,b", "--constrained", ":a"), code: 1,
			want: []string{`ordplan: --constrained: group 1 of 1 in ":a" has an empty name before the colon: write NAME:a, or leave the colon out for a group without a name`}},
		{id: "C13", name: "ordplan fit --cluster naming a column in another letter case", args: fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a,b", "--covariance", "clustered", "--cluster", "C"), code: 1,
			want: []string{`ordplan: d.csv: column "C": cluster column not found in the header; did you mean "c"?` + "\n"},
			check: func(t *testing.T, dir, out, errs string) {
				for _, c := range []struct{ flag, col, want string }{
					{"--offset", "Big", `column "Big": offset column not found in the header; did you mean "big"?`},
					{"--weights", "TI-NY", `column "TI-NY": weights column not found in the header; available columns: "y", "a", "b", "c", "d", "big", "tiny"`},
				} {
					if _, e, code := runCLI(fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a,b", c.flag, c.col)...); code != 1 || !strings.Contains(e, c.want) {
						t.Errorf("%s %s: exit %d\n%s", c.flag, c.col, code, e)
					}
				}
			}},
		{id: "C14", name: "a command given no plan", args: []string{"run", "--out", filepath.Join(dir, "C14-out")}, code: 2, lines: true,
			want:  []string{"ordplan run: no plan file given: name one (a YAML file)\nusage: ordplan run PLAN.yaml"},
			check: noFolder("C14-out")},
		{id: "C14", name: "a command given two plans", args: []string{"check", "a.yaml"}, plan: goodPlan, code: 2, lines: true,
			want: []string{`ordplan check: unexpected argument "`, `" after the plan a.yaml: the command takes one plan file` + "\nusage: ordplan check PLAN.yaml"}},
		{id: "D55", name: "ordplan fit on an outcome of text labels without --categories", args: fitArgs(filepath.Join(dir, "D55.csv"), "--predictors", "a"), code: 1,
			setup: func(t *testing.T, dir, id string) {
				os.WriteFile(filepath.Join(dir, "D55.csv"), []byte("y,a\nsame,1\nbetter,2\nworse,3\n"), 0o644)
			},
			want: []string{`ordplan: D55.csv:2: column "y": value "same" is not an integer category code (declare the categories to use text labels: outcomes[].categories; ordplan fit: --categories)` + "\n"}},
		{id: "C15", name: "a numeric flag given a number of another kind", args: []string{"power", "--n", "100", "--replicates", "1.5", "--out", filepath.Join(dir, "C15-power")}, plan: edit() + assumed("{a: 0.2}", ""), code: 2, lines: true,
			want: []string{`invalid value "1.5" for flag -replicates: want a whole number written in digits (not 1.5, 1e3 or 2k)`, "Run 'ordplan power --help' for its flags"},
			check: func(t *testing.T, dir, out, errs string) {
				noFolder("C15-power")(t, dir, out, errs)
				for _, c := range []struct {
					args []string
					want string
				}{
					{fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a", "--confidence-level", "95%"), `invalid value "95%" for flag -confidence-level: want a number written in digits, such as 0.05`},
					{fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a", "--header-row", "99999999999999999999"), `-header-row: the number is too large for this flag`},
					{[]string{"worker", "--queue", "nats://127.0.0.1:1", "--ack-wait", "30"}, `invalid value "30" for flag -ack-wait: want a duration with its unit, such as 30s, 5m or 1h`},
				} {
					if _, e, code := runCLI(c.args...); code != 2 || !strings.Contains(e, c.want) {
						t.Errorf("%v: exit %d\n%s", c.args, code, e)
					}
				}
			}},
		{id: "O14", name: "a flag given twice", args: []string{"power", "--n", "100", "--out", filepath.Join(dir, "O14-power"), "--n", "200"}, plan: edit() + assumed("{a: 0.2}", ""), code: 2,
			want:  []string{`ordplan power: --n is given twice ("100", then "200"); give each flag once (several items go in one value, comma separated: --n 100,200)`},
			check: noFolder("O14-power")},
		{id: "O14", name: "a flag given before and after the plan", args: []string{"run", "--out", filepath.Join(dir, "O14-a")}, plan: goodPlan, code: 2,
			want:  []string{`ordplan run: --out is given twice ("O14-a", then "O14-out"); give each flag once`},
			check: noFolder("O14-a")},
		{id: "O14", name: "a bool flag given twice", args: []string{"check", "--no-data", "--no-data"}, plan: goodPlan, code: 2,
			want: []string{`ordplan check: --no-data is given twice; give each flag once`}},
		{id: "O14", name: "fit given a confidence level twice", args: fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a", "--confidence-level", "0.9", "--confidence-level", "0.8"), code: 2,
			want: []string{`ordplan fit: --confidence-level is given twice ("0.9", then "0.8"); give each flag once`}},
		{id: "O14", name: "an unknown flag of ordplan version", args: []string{"version", "--bogus"}, code: 2, lines: true,
			want: []string{"flag provided but not defined: -bogus", "Run 'ordplan version --help'"}},
		{id: "O15", name: "an output folder that cannot be made: a file in its path", args: []string{"run", filepath.Join(dir, "O15.yaml"), "--out", filepath.Join(dir, "d.csv", "out")}, code: 1,
			setup: func(t *testing.T, dir, id string) {
				if err := os.WriteFile(filepath.Join(dir, id+".yaml"), []byte(goodPlan), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			want: []string{"ordplan: output folder d.csv/out: cannot write there (mkdir d.csv: not a directory); nothing was computed or written: give --out another folder"},
			check: func(t *testing.T, dir, out, errs string) {
				if fi, err := os.Stat(filepath.Join(dir, "d.csv")); err != nil || !fi.Mode().IsRegular() {
					t.Errorf("the data file d.csv changed: %v", err)
				}
			}},
		{id: "R11", name: "--previous naming a folder whose decisions.json is not an ordplan record", args: []string{"run", "--previous", filepath.Join(dir, "R11-prev")}, plan: goodPlan, code: 1,
			setup: func(t *testing.T, dir, id string) {
				os.MkdirAll(filepath.Join(dir, id+"-prev"), 0o755)
				if err := os.WriteFile(filepath.Join(dir, id+"-prev", "decisions.json"), []byte("{}\n"), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			want:  []string{`ordplan: --previous: R11-prev/decisions.json is not the decisions record of an ordplan run (it does not say "program": "ordplan"); --previous names the output folder of an earlier ordplan run (its --out, which holds its decisions.json)`},
			check: noFolder("R11-out")},
		{id: "R14", name: "--previous naming a folder whose decisions.json is a device", args: []string{"run", "--previous", filepath.Join(dir, "R14-prev")}, plan: goodPlan, code: 1,
			setup: func(t *testing.T, dir, id string) {
				// /dev/null, not /dev/zero: a regression must not read without end.
				os.MkdirAll(filepath.Join(dir, id+"-prev"), 0o755)
				os.Remove(filepath.Join(dir, id+"-prev", "decisions.json"))
				if err := os.Symlink("/dev/null", filepath.Join(dir, id+"-prev", "decisions.json")); err != nil {
					t.Fatal(err)
				}
			},
			want:  []string{`ordplan: --previous: R14-prev/decisions.json is not a regular file (a named pipe, a device or a folder); --previous names the output folder of an earlier ordplan run (its --out, which holds its decisions.json)`},
			check: noFolder("R14-out")},
		{id: "R15", name: "a lock file that is a link to a device", args: []string{"check"}, plan: goodPlan, code: 1,
			setup: func(t *testing.T, dir, id string) {
				// /dev/null, not /dev/zero: a regression must not read without end.
				p := filepath.Join(dir, id+".lock.json")
				os.Remove(p)
				if err := os.Symlink("/dev/null", p); err != nil {
					t.Fatal(err)
				}
			},
			want: []string{"ordplan: R15.lock.json is not a regular file (a named pipe, a device or a folder): a lock file is the file ordplan freeze writes beside the plan; put the registered lock back, or remove this one if the plan was never frozen"}},
		{id: "R12", name: "a lock file that is a link to a missing file, under check", args: []string{"check"}, plan: goodPlan, code: 1, setup: danglingLock,
			want: []string{"ordplan: R12.lock.json is a symbolic link to missing-lock.json, which does not exist: the plan's registration cannot be read (was the lock moved or deleted?); restore the file it points to, or remove the link if the plan was never frozen"}},
		{id: "R12", name: "a lock file that is a link to a missing file, under run", args: []string{"run"}, plan: goodPlan, code: 1, setup: danglingLock,
			want:  []string{"ordplan: R12.lock.json is a symbolic link to missing-lock.json, which does not exist"},
			check: noFolder("R12-out")},
		{id: "R12", name: "a lock file that is a link to a missing file, under freeze", args: []string{"freeze"}, plan: goodPlan, code: 1, setup: danglingLock,
			want: []string{"ordplan freeze: R12.lock.json is a symbolic link to missing-lock.json, which does not exist: the plan's registration cannot be read", ". To freeze anew all the same (the link is kept as R12.lock.json.replaced-TIME), pass --replace"},
			check: func(t *testing.T, dir, out, errs string) {
				if target, err := os.Readlink(filepath.Join(dir, "R12.lock.json")); err != nil || target != "missing-lock.json" {
					t.Errorf("the link is now %q (%v)", target, err)
				}
			}},
		{id: "V7", name: "missing_values given as the empty text, not a list", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  missing_values: \"\"\n"),
			want: []string{`V7.yaml:4:19: data.missing_values: want a list, got string ""; write [""] for a list of one item, the empty text ([] is a list of none)`}},
		{id: "V8", name: "a missing-value code written with a typeset minus sign", args: []string{"check", "--no-data"}, code: 1, lines: true,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  missing_values: [\"\", NA, \"\u221299\"]\n") + "dictionary:\n  a: {missing: [\"\u22129\"]}\n  b: {}\n",
			want: []string{`V8.yaml:4:28: data.missing_values[2]: missing-value code "−99": it holds the character U+2212 (MINUS SIGN) where a number has the ASCII hyphen-minus "-", so it would mark no cell written -99 as missing, and those cells would be read as the value -99: write -99`,
				`V8.yaml:16:17: dictionary.a.missing[0]: missing-value code "−9": it holds the character U+2212 (MINUS SIGN)`}},
		{id: "V8", name: "ordplan fit --missing-codes with a typeset minus sign", args: fitArgs(filepath.Join(dir, "d.csv"), "--predictors", "a", "--missing-codes", "a=−9"), code: 2,
			want: []string{`ordplan fit: --missing-codes: item 1 ("a=−9"): code "−9": it holds the character U+2212 (MINUS SIGN) where a number has the ASCII hyphen-minus "-", so it would mark no cell written -9 as missing`}},
		{id: "P78", name: "selection_stability with too few resamples", args: []string{"check", "--no-data"}, code: 1,
			plan: goodPlan + "selection_stability: {resamples: 5, seed: 3}\n",
			want: []string{"P78.yaml:14:34: selection_stability.resamples: 5 is out of range (want a whole number from 20 to 10000)"}},
		{id: "P78", name: "selection_stability with an absurd number of resamples", args: []string{"check", "--no-data"}, code: 1,
			plan: goodPlan + "selection_stability:\n  resamples: 1000000\n  seed: 3\n",
			want: []string{"P78.yaml:15:14: selection_stability.resamples: 1000000 is out of range (want a whole number from 20 to 10000)"}},
		{id: "P78", name: "selection_stability without its seed", args: []string{"check", "--no-data"}, code: 1,
			plan: goodPlan + "selection_stability:\n  resamples: 200\n",
			want: []string{"P78.yaml:15:3: selection_stability.seed: required key is missing"}},
		{id: "P78", name: "selection_stability with resamples as text", args: []string{"check", "--no-data"}, code: 1,
			plan: goodPlan + "selection_stability: {resamples: many, seed: 3}\n",
			want: []string{"P78.yaml:14:34: selection_stability.resamples: want a whole number from 20 to 10000, got string \"many\""}},
		{id: "P79", name: "selection_stability on imputed sets made elsewhere", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  imputed: {files: [i1.csv, i2.csv]}\n") + "selection_stability: {resamples: 200, seed: 3}\n",
			want: []string{"P79.yaml:15:22: selection_stability: is not available with data.imputed: each bootstrap resample of the rows would have to be imputed again, which sets made elsewhere cannot be; remove selection_stability, or impute with the program (data.missing: impute, data.imputation), whose resamples are imputed anew"}},
		{id: "P80", name: "selection_stability.draw an unknown word", args: []string{"check", "--no-data"}, code: 1,
			plan: goodPlan + "selection_stability: {resamples: 200, seed: 3, draw: rows}\n",
			want: []string{"P80.yaml:14:54: selection_stability.draw: unknown way of drawing \"rows\" (want bootstrap or chosen_model)"}},
		{id: "P80", name: "selection_stability.draw: chosen_model with data.missing: impute", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  missing: impute\n") + "selection_stability: {resamples: 200, seed: 3, draw: chosen_model}\n",
			want: []string{"P80.yaml:15:54: selection_stability.draw: chosen_model is not available with data.missing: impute: the outcomes would be drawn from a model fitted to pooled imputed sets, at rows whose missing values are themselves imputed; use draw: bootstrap (each resample imputed anew), or data.missing: drop"}},
		{id: "P63", name: "a YAML merge key", args: []string{"check", "--no-data"}, code: 1,
			plan: "x: &d {file: d.csv}\n" + edit("data:\n  file: d.csv\n", "data:\n  <<: *d\n"),
			want: []string{"P63.yaml:4:3: data.<<: YAML merge keys (<<) are not supported in a plan: write the keys of the anchor &d (line 1) out under data"},
			known: func(out, errs string, code int) string {
				if strings.Contains(errs, "required key is missing") {
					return "a merge key was called an unknown key, and the keys it merged missing"
				}
				return ""
			}},
		{id: "P64", name: "a tab that indents a line", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("data:\n  file: d.csv\n", "data:\n\tfile: d.csv\n"),
			want: []string{"P64.yaml:3:1: not valid YAML: a tab at column 1 of line 3; YAML indents with spaces, never tabs: replace the tab with spaces"}},
		{id: "P65", name: "a plan saved as Windows-1252", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("version: 1\n", "version: 1\ntitle: caf\xe9\n"),
			want: []string{"P65.yaml:2:11: the plan file is not UTF-8 text (byte 0xe9 on line 2 is not valid UTF-8; perhaps Latin-1 or Windows-1252): save the plan as UTF-8"}},
		{id: "P4", name: "a number too large for any number", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("version: 1\n", "version: 1\nseed: 1e400\n"),
			want: []string{`P4.yaml:2:7: seed: want a whole number from 0 to 18446744073709551615, got number 1e400, too large for any number (beyond about 1.8e308)`}},
		{id: "P67", name: "a sensitivity analysis under which the primary's chosen model has no usable fit", args: []string{"run"}, code: 0,
			plan: "version: 1\ndata: {file: sep.csv}\noutcomes: [{column: y}]\npredictors: [z]\nmodels: {approaches: [cumulative], effects: [parallel]}\n" +
				"rules:\n  - reject_unconverged: true\n  - choose: {by: aic}\nsensitivity:\n  - name: with_x\n    why: w\n    change: {predictors: [z, x]}\n",
			want: []string{"y: chosen: cumulative/parallel/logit", "sensitivity analysis with_x: y: no model chosen"},
			known: func(out, errs string, code int) string {
				if strings.Contains(errs, "internal error") {
					return "the table of estimates under each analysis read the standard errors of a fit that had none (index out of range), and the run stopped without writing its outputs"
				}
				return ""
			},
			check: func(t *testing.T, dir, out, errs string) {
				rep, _ := os.ReadFile(filepath.Join(dir, "P67-out", "report.md"))
				if !strings.Contains(string(rep), "Not fitted under: with_x: no usable estimates: no_finite_maximum: no finite maximum likelihood estimate") {
					t.Errorf("the report does not say why the model has no estimates under with_x")
				}
			}},
		{id: "P68", name: "a plan's number written with the data's decimal comma or a typeset minus sign", args: []string{"check", "--no-data"}, code: 1, lines: true,
			plan: edit("  file: d.csv\n", "  file: semi.csv\n  delimiter: semicolon\n  decimal: comma\n") +
				"subset:\n  - {column: a, greater_than: \"0,2\"}\n  - {column: b, equal_to: \"1,000\"}\n  - {column: a, less_than: \u22120.5}\n",
			want: []string{`P68.yaml:17:31: subset[0].greater_than: want a number, got string "0,2"; it has a decimal comma, and a plan writes numbers with a decimal point whatever the data's decimal mark (data.decimal): write 0.2`,
				`P68.yaml:18:27: subset[1].equal_to: want a number, got string "1,000"; it has a decimal comma, and a plan writes numbers with a decimal point whatever the data's decimal mark (data.decimal): write 1.000 (or 1000 if the comma separates thousands)`,
				`P68.yaml:19:28: subset[2].less_than: want a number, got string "−0.5"; it holds the character U+2212 (MINUS SIGN) where a number has the ASCII hyphen-minus "-": write -0.5`},
			known: func(out, errs string, code int) string {
				if strings.Contains(errs, "write one_of: [1,000]") {
					return "the hint for a decimal-comma number under equal_to was one_of: [1,000], a list of the two numbers 1 and 0"
				}
				return ""
			}},
		{id: "P69", name: "a sensitivity analysis keeping one arm of a predictor assigned by chance", args: []string{"check", "--no-data"}, code: 0,
			plan: goodPlan + "dictionary:\n  a: {}\n  b: {values: [0, 1], assigned_by_chance: true}\n" +
				"sensitivity:\n  - name: one_arm\n    why: w\n    change:\n      subset: [{column: b, equal_to: 1}]\n      predictors: [a]\n",
			want: []string{"P69.yaml: plan is valid", "one_arm (line 18): changes subset, predictors"},
			known: func(out, errs string, code int) string {
				if strings.Contains(errs, `"b" is the subset column (subset[0]), not a predictor`) {
					return "the analysis was refused for the primary plan's assigned_by_chance, which the plan cannot drop without losing the primary's reading of b"
				}
				return ""
			}},
		{id: "P70", name: "a sensitivity analysis asking to write its imputed sets", args: []string{"check", "--no-data"}, code: 1,
			plan: goodPlan + "sensitivity:\n  - name: imputed\n    why: w\n    change:\n      data.missing: impute\n      data.imputation: {sets: 5, write_sets: true}\n",
			want: []string{"P70.yaml:19:34: sensitivity[0].change.data.imputation.write_sets: a sensitivity analysis writes no imputed sets: only the primary analysis's are written among the outputs (data.imputation.write_sets); remove write_sets here"}},
		{id: "P71", name: "data.delimiter or data.decimal given as the character", args: []string{"check", "--no-data"}, code: 1, lines: true,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  delimiter: \";\"\n  decimal: \",\"\n"),
			want: []string{`P71.yaml:4:14: data.delimiter: unknown delimiter ";" (want comma, semicolon or tab): write the word semicolon for ";"`,
				`P71.yaml:5:12: data.decimal: unknown decimal mark "," (want point or comma): write the word comma for ","`}},
		{id: "P72", name: "the cluster, weights or offset column also a predictor", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  cluster: a\n") + "covariance: clustered\n",
			want: []string{`P72.yaml:4:12: data.cluster: "a" is also listed in predictors (predictors[0]): ordplan reads each column in one role; the cluster ids are read as labels, the predictor as values or levels; to cluster the errors by a column that is also a predictor (sites as fixed effects and errors clustered by site), put a copy of the column in the data under another name and name the copy here`}},
		{id: "P73", name: "report.panels_by naming a column no predictor reads", args: []string{"check", "--no-data"}, code: 1,
			plan: goodPlan + "report: {panels_by: c}\n",
			want: []string{`P73.yaml:14:21: report.panels_by: "c" is not a column the predictors read (a, b): panels_by names a categorical predictor, a panel per level, or a predictor holding only 0 and 1, a panel at 0 and one at 1`}},
		{id: "P73", name: "report.panels_by naming a column whose dictionary values go beyond 0 and 1", args: []string{"check", "--no-data"}, code: 1,
			plan: goodPlan + "report: {panels_by: b}\ndictionary:\n  a: {}\n  b: {values: [0, 1, 2]}\n",
			want: []string{`P73.yaml:14:21: report.panels_by: "b" is a numeric column whose values (dictionary.b.values) include 2: panels_by names a categorical predictor, a panel per level, or a predictor holding only 0 and 1, a panel at 0 and one at 1; declare it under categorical for a panel per value`}},
		{id: "P75", name: "a hypothesis naming a term whose column's name has a space", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("predictors: [a, b]", "predictors: [a, \"b c\"]") + "inference: {hypotheses: [\"b c = 0\"]}\n",
			want: []string{`P75.yaml:14:26: inference.hypotheses[0]: hypothesis "b c = 0": expected + or - before "c"; term "b c" holds " ", which a hypothesis cannot name: give the term a name of its own, {name: NAME, column: "b c"}, and use that name`}},
		{id: "P74", name: "report.panels_by naming a numeric predictor holding other values than 0 and 1", args: []string{"check"}, code: 1,
			plan: goodPlan + "report: {panels_by: a}\n",
			want: []string{`P74.yaml: report.panels_by: column "a" holds 0.5575 (d.csv:2), but a numeric column named by panels_by must hold only 0 and 1 (a panel of predictions at each); declare it under categorical for a panel per value, or leave panels_by out (outcome "y")`}},
		{id: "P74", name: "report.panels_by naming a numeric predictor holding other values than 0 and 1, under run", args: []string{"run"}, code: 1,
			plan:  goodPlan + "report: {panels_by: a}\n",
			want:  []string{`ordplan: P74.yaml: report.panels_by: column "a" holds 0.5575 (d.csv:2), but a numeric column named by panels_by must hold only 0 and 1`},
			check: noFolder("P74-out")},
		{id: "P74", name: "report.panels_by naming a 0/1 predictor", args: []string{"check"}, code: 0,
			plan: goodPlan + "report: {panels_by: b}\n",
			want: []string{"P74.yaml: plan is valid"}},
		{id: "D49", name: "an empty cell under data.missing_values that leaves the empty text out", args: []string{"check"}, code: 1,
			setup: func(t *testing.T, dir, id string) {
				if err := os.WriteFile(filepath.Join(dir, id+".csv"), []byte("y,a,b\n1,0.5,1\n2,,0\n3,0.1,1\n1,-99,0\n2,0.7,1\n3,0.9,0\n"), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			plan: edit("  file: d.csv\n", "  file: D49.csv\n  missing_values: [\"-99\"]\n"),
			want: []string{`D49.csv:3: column "a": value "" is not a number; an empty cell (or a Parquet file's null) is not a missing value here: data.missing_values replaces the default markers ("", "NA", "NaN", ".") and leaves "" out: to read it as missing, set data.missing_values: ["-99", ""] (the markers in force and it), or list it for this column alone under dictionary.a.missing (ordplan fit reads an empty cell as missing always)`},
			known: func(out, errs string, code int) string {
				if strings.Contains(errs, "the column holds text: declare it categorical") {
					return "an empty cell was said to be text, with the hint to declare the column categorical"
				}
				return ""
			}},
		{id: "X28", name: "data.parts: a part saved with semicolons among parts saved with commas", args: []string{"check"}, code: 1, setup: mixedParts,
			plan: edit("file: d.csv", "parts: [X28-p1.csv, X28-p2.csv]"),
			want: []string{`X28.yaml:3:23: data.parts[1]: the part X28-p2.csv looks semicolon-separated with a decimal comma, but every part is read as the first part X28-p1.csv is, comma-separated with a decimal point (data.delimiter and data.decimal; ordplan fit: --delimiter and --decimal): save every part in one dialect`}},
		{id: "X28", name: "ordplan fit --parts: a part saved with semicolons", args: []string{"fit", "--outcome", "y", "--predictors", "a", "--parts", "X28-p1.csv,X28-p2.csv"}, code: 1,
			setup: func(t *testing.T, dir, id string) { mixedParts(t, dir, id); t.Chdir(dir) },
			want:  []string{`ordplan: X28-p2.csv:1: looks semicolon-separated with a decimal comma, but every part is read as the first part X28-p1.csv is, comma-separated with a decimal point`}},
		{id: "D47", name: "the header line repeated inside the new rows to predict", args: []string{"check"}, code: 1,
			setup: func(t *testing.T, dir, id string) {
				b, err := os.ReadFile(filepath.Join(dir, "d.csv"))
				if err != nil {
					t.Fatal(err)
				}
				lines := strings.SplitAfter(string(b), "\n")
				joined := strings.Join(lines[:3], "") + lines[0] + strings.Join(lines[3:6], "")
				if err := os.WriteFile(filepath.Join(dir, "hdrnew.csv"), []byte(joined), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			plan: goodPlan + "inference: {predict: hdrnew.csv}\n",
			want: []string{"D47.yaml: inference.predict: hdrnew.csv:4: this line repeats the header (y,a,b,c,d,big,tiny) of line 1: a data file has one header line; remove the repeated one"},
			known: func(out, errs string, code int) string {
				if strings.Contains(errs, "the column holds text") {
					return "a header repeated in the new rows was read as a row whose cells were text"
				}
				return ""
			}},
		{id: "D47", name: "the header line repeated inside a stacked file of imputed sets", args: []string{"check"}, code: 1,
			setup: func(t *testing.T, dir, id string) {
				b, err := os.ReadFile(filepath.Join(dir, "d.csv"))
				if err != nil {
					t.Fatal(err)
				}
				lines := strings.Split(strings.TrimSpace(string(b)), "\n")
				out := []string{"imp," + lines[0]}
				for k := 1; k <= 2; k++ {
					if k == 2 {
						out = append(out, "imp,"+lines[0]) // two files joined with their headers
					}
					for _, l := range lines[1:] {
						out = append(out, fmt.Sprintf("%d,%s", k, l))
					}
				}
				if err := os.WriteFile(filepath.Join(dir, "hdrimp.csv"), []byte(strings.Join(out, "\n")+"\n"), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			plan: edit("  file: d.csv\n", "  file: d.csv\n  imputed: {file: hdrimp.csv, column: imp}\n"),
			want: []string{"D47.yaml: data.imputed.file: hdrimp.csv:122: this line repeats the header (imp,y,a,b,c,d,big,tiny) of line 1: a data file has one header line; remove the repeated one"},
			known: func(out, errs string, code int) string {
				if strings.Contains(errs, `imputation number "imp" is not a whole number`) {
					return "a header repeated in a stacked imputed file was read as an imputation number"
				}
				return ""
			}},
		{id: "D47", name: "the header line repeated inside a part", args: []string{"fit", "--outcome", "y", "--predictors", "a", "--parts", "X28-p1.csv,D47-part.csv"}, code: 1,
			setup: func(t *testing.T, dir, id string) {
				mixedParts(t, dir, "X28")
				b, err := os.ReadFile(filepath.Join(dir, "X28-p1.csv"))
				if err != nil {
					t.Fatal(err)
				}
				lines := strings.SplitAfter(string(b), "\n")
				if err := os.WriteFile(filepath.Join(dir, id+"-part.csv"), []byte(strings.Join(lines[:4], "")+lines[0]+strings.Join(lines[4:], "")), 0o644); err != nil {
					t.Fatal(err)
				}
				t.Chdir(dir)
			},
			want: []string{"ordplan: D47-part.csv:5: this line repeats the header (y,a,b,c,d,big,tiny) of line 1: a data file has one header line"}},
		{id: "D50", name: "a numeric missing-value code written with a point for a decimal-comma file", args: fitArgs(filepath.Join(dir, "D50.csv"), "--delimiter", "semicolon", "--decimal", "comma", "--predictors", "a", "--missing-codes", "a=-99.0"), code: 0,
			setup: func(t *testing.T, dir, id string) {
				if err := os.WriteFile(filepath.Join(dir, id+".csv"), []byte("y;a;b\n1;0,5;1\n2;-99,00;0\n3;0,1;1\n1;0,3;0\n2;0,7;1\n3;0,9;0\n1;0,2;1\n2;0,4;0\n3;-99,00;1\n1;0,6;0\n2;0,8;1\n3;0,35;0\n"), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			want: []string{"D50.csv: 12 rows read, 10 used; 2 of 12 rows dropped for missing values (a: 2)"}},
		{id: "D51", name: "commas that separate thousands in a file read with a decimal comma", args: fitArgs(filepath.Join(dir, "D51.csv"), "--decimal", "comma", "--predictors", "a,b"), code: 1,
			setup: func(t *testing.T, dir, id string) {
				if err := os.WriteFile(filepath.Join(dir, id+".csv"), []byte("y,a,b\n1,\"2,449\",1\n2,313,0\n3,\"1,179\",1\n1,87,0\n"), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			want: []string{"ordplan: D51.csv:2: column \"a\": value \"2,449\" looks like 2449 written with a thousands separator: every value of the column with a comma has three digits after it and would be 1000 or more without it (2 values), and the others are integers below 1000 written without a comma (2, such as \"313\"); a decimal comma reads it as 2.449. Write the numbers without thousands separators (2449); or, if the commas are decimal commas, write the whole numbers with three decimals too (\"313,000\")\n"},
			check: func(t *testing.T, dir, out, errs string) {
				// ordplan init proposes the decimal comma the quoted cells
				// suggest, and says what the commas look like.
				plan := filepath.Join(dir, "D51.yaml")
				if _, e, code := runCLI("init", plan, "--data", filepath.Join(dir, "D51.csv"), "--outcome", "y"); code != 0 {
					t.Fatalf("init: exit %d\n%s", code, e)
				}
				b, err := os.ReadFile(plan)
				if want := "# EDIT: the commas of column a look like thousands separators (2,449 beside 313), which check and run refuse"; err != nil || !strings.Contains(string(b), want) {
					t.Errorf("init: want %q in\n%s", want, b)
				}
			}},
		{id: "M22", name: "a chosen model with fewer than 10 observations per parameter, in a plan without reject_if_sparse", args: []string{"run"}, code: 0,
			plan: edit("  file: d.csv\n", "  file: M22.csv\n"),
			setup: func(t *testing.T, dir, id string) {
				if err := os.WriteFile(filepath.Join(dir, id+".csv"), []byte("y,a,b\n3,0.675,0.665\n3,-1.579,0.51\n1,0.2,-0.3\n2,1.1,0.9\n1,-0.4,1.2\n2,0.3,-1.1\n3,1.9,0.2\n1,-1.2,-0.6\n"), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			check: func(t *testing.T, dir, out, errs string) {
				md, err := os.ReadFile(filepath.Join(dir, "M22-out", "report.md"))
				if want := "parameters for 8 observations (2 per parameter), fewer than 10. Its standard errors, tests, p-values and intervals rest on large-sample approximations that so few observations per parameter support poorly"; err != nil || !strings.Contains(string(md), want) {
					t.Errorf("report.md lacks %q (%v)", want, err)
				}
			}},
		{id: "W31", name: "an outcome code that looks like one for a missing answer, categories left to the data", args: []string{"check"}, code: 0,
			plan: edit("  file: d.csv\n", "  file: W31.csv\n"),
			setup: func(t *testing.T, dir, id string) {
				var b strings.Builder
				b.WriteString("y,a,b\n")
				for i := range 60 {
					y := 1 + i%4
					if i%15 == 7 {
						y = 9
					}
					fmt.Fprintf(&b, "%d,%d,%d\n", y, (i*7)%11, i%2)
				}
				if err := os.WriteFile(filepath.Join(dir, id+".csv"), []byte(b.String()), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			check: func(t *testing.T, dir, out, errs string) {
				want := `outcome y: Code 9 lies apart from the others (1 to 4), as codes for "don't know" or a missing answer often do: it was analysed as the highest category; if it is not a point of the scale, list it as missing (dictionary.y.missing: ["9"]; ordplan fit: --missing-codes y=9), or declare the categories (outcomes[].categories: [1, 2, 3, 4])` + "\n"
				if !strings.Contains(errs, "warning: "+filepath.Join(dir, "W31.yaml")+": "+want) {
					t.Errorf("check: want %q in\n%s", want, errs)
				}
				_, e, code := runCLI("run", filepath.Join(dir, "W31.yaml"), "--out", filepath.Join(dir, "W31-out"), "--quiet")
				if code != 0 || !strings.Contains(e, want) {
					t.Errorf("run: exit %d, want %q in\n%s", code, want, e)
				}
				// ordplan init, which declares the codes found, marks the
				// code to be checked; declared without it, the code is
				// refused with the way to mark it missing.
				plan := filepath.Join(dir, "W31init.yaml")
				if _, e, code := runCLI("init", plan, "--data", filepath.Join(dir, "W31.csv"), "--outcome", "y"); code != 0 {
					t.Fatalf("init: exit %d\n%s", code, e)
				}
				b, err := os.ReadFile(plan)
				if want := `categories: [1, 2, 3, 4, 9]   # EDIT: code 9 lies apart from the others, as codes for "don't know" or a missing answer often do: if it is not a point of the scale, remove it here and list it as missing (dictionary: "y": {missing: ["9"]})`; err != nil || !strings.Contains(string(b), want) {
					t.Errorf("init: want %q in\n%s", want, b)
				}
				_, e, code = runCLI(fitArgs(filepath.Join(dir, "W31.csv"), "--categories", "1,2,3,4", "--predictors", "a,b")...)
				if want := `W31.csv:9: column "y": value "9" is not one of the declared categories: "1", "2", "3", "4" (add it to the categories, or list it among the missing-value markers)`; code != 1 || !strings.Contains(e, want) {
					t.Errorf("fit --categories 1,2,3,4: exit %d, want %q in\n%s", code, want, e)
				}
			}},
		{id: "W37", name: "rows kept for imputation that observe none of the columns it fills (notes below the table)", args: []string{"check"}, code: 0,
			plan: edit("  file: d.csv\n", "  file: W37.csv\n  missing: impute\n  imputation: {sets: 2, iterations: 2}\n"),
			setup: func(t *testing.T, dir, id string) {
				// Two notes below the table, in a column the plan does not
				// read: rows 122 and 123, every used cell empty.
				withColumns(t, dir, id+".csv", "note", func(i int, f []string) string { return "" })
				f, err := os.OpenFile(filepath.Join(dir, id+".csv"), os.O_APPEND|os.O_WRONLY, 0)
				if err != nil {
					t.Fatal(err)
				}
				fmt.Fprint(f, ",,,,,,,Source: an invented survey\n,,,,,,,NA marks a question not asked\n")
				f.Close()
			},
			check: func(t *testing.T, dir, out, errs string) {
				plan := filepath.Join(dir, "W37.yaml")
				// It imputed both as rows of the data, without a word.
				note := `2 rows kept for imputation observe none of the columns it fills (y, a, b; W37.csv:122, W37.csv:123): the imputation models make up every value of such a row, so it adds a row to every imputed set, and to the observations their degrees of freedom count, without a datum of its own (data.missing: impute). If such rows are notes, totals or spacer rows beside the table, delete them from the data; if they are units that answered nothing the plan reads, delete them too, or analyse complete cases (data.missing: drop), which drops them`
				want := "warning: " + plan + ": outcome y: " + note + "\n"
				if !strings.Contains(errs, want) {
					t.Errorf("check: want %q in\n%s", want, errs)
				}
				warnedInRun(t, plan, filepath.Join(dir, "W37-out"), want, "observe none of the columns it fills (y, a, b;", "2 rows kept for imputation observe none of the columns it fills")
				// Complete cases drop such rows (counted): no warning.
				cc := filepath.Join(dir, "W37cc.yaml")
				if err := os.WriteFile(cc, []byte(edit("  file: d.csv\n", "  file: W37.csv\n")), 0o644); err != nil {
					t.Fatal(err)
				}
				if _, e, code := runCLI("check", cc); code != 0 || strings.Contains(e, "observe none") {
					t.Errorf("check (complete cases): exit %d\n%s", code, e)
				}
			}},
		{id: "W34", name: "a predictor column observed in fewer than half of the rows (complete cases and data.missing: impute)", args: []string{"check"}, code: 0,
			plan: edit("  file: d.csv\n", "  file: W34.csv\n", "predictors: [a, b]\n", "predictors: [a, b, s]\n"),
			setup: func(t *testing.T, dir, id string) {
				// s is observed in 40 of the 120 rows (every third).
				withColumns(t, dir, id+".csv", "s", func(i int, f []string) string {
					if i%3 == 0 {
						return fmt.Sprint((i * 5) % 7)
					}
					return ""
				})
			},
			check: func(t *testing.T, dir, out, errs string) {
				plan := filepath.Join(dir, "W34.yaml")
				want := "warning: " + plan + `: outcome y: Predictor column "s" is observed in 40 of the 120 rows (80 missing, 66.7%), fewer than half: every row missing it, 80, is dropped (complete cases), so at most 40 rows remain for the fits. Check the column (the one meant, its missing-value markers); if it is this sparse, leave it out of the predictors, or analyse the rows that have it (subset)` + "\n"
				if !strings.Contains(errs, want) {
					t.Errorf("check: want %q in\n%s", want, errs)
				}
				warnedInRun(t, plan, filepath.Join(dir, "W34-out"), want,
					`Predictor column \"s\" is observed in 40 of the 120 rows (80 missing, 66.7%), fewer than half: every row missing it, 80, is dropped`,
					`Predictor column "s" is observed in 40 of the 120 rows`)
				// Imputed, the warning says what the imputed values rest on.
				imp := filepath.Join(dir, "W34imp.yaml")
				b, err := os.ReadFile(plan)
				if err != nil {
					t.Fatal(err)
				}
				if err := os.WriteFile(imp, []byte(strings.Replace(string(b), "  file: W34.csv\n", "  file: W34.csv\n  missing: impute\n", 1)), 0o644); err != nil {
					t.Fatal(err)
				}
				_, e, code := runCLI("check", imp)
				want = "warning: " + imp + `: outcome y: Predictor column "s" is observed in 40 of the 120 rows (80 missing, 66.7%), fewer than half: more of its values are imputed than observed, and the 80 imputed rest on those 40 observed and on the imputation models: the fewer observed, the more its estimated effects restate those models rather than the data. Check the column (the one meant, its missing-value markers); if it is this sparse, leave it out of the predictors, or analyse the rows that have it (subset)` + "\n"
				if code != 0 || !strings.Contains(e, want) {
					t.Errorf("check (impute): exit %d, want %q in\n%s", code, want, e)
				}
				// a and b, observed in every row, are not named.
				if strings.Contains(errs+e, `Predictor column "a"`) || strings.Contains(errs+e, `Predictor column "b"`) {
					t.Errorf("a complete column is warned of:\n%s%s", errs, e)
				}
				// s observed in 2 rows, neither in category 3: the refusal of
				// the unobserved category, which comes before the warning,
				// says why so few rows remain.
				seen := 0
				withColumns(t, dir, "W34few.csv", "s", func(i int, f []string) string {
					if f[0] != "3" && seen < 2 {
						seen++
						return "1.5"
					}
					return ""
				})
				few := filepath.Join(dir, "W34few.yaml")
				if err := os.WriteFile(few, []byte(strings.Replace(strings.Replace(string(b), "W34.csv", "W34few.csv", 1), "  - column: y\n", "  - column: y\n    categories: [1, 2, 3]\n", 1)), 0o644); err != nil {
					t.Fatal(err)
				}
				want = few + `: outcomes: y: category "3" is declared but never observed in the 2 rows used: 118 of 120 rows dropped for missing values (s: 118). Rows were lost to the missing values of column "s", read by predictors[2] (` + few + `:7:20). Predictor column "s" is observed in 2 of the 120 rows (118 missing, 98.3%), fewer than half: every row missing it, 118, is dropped (complete cases), so at most 2 rows remain for the fits. Check the column (the one meant, its missing-value markers); if it is this sparse, leave it out of the predictors, or analyse the rows that have it (subset). If these are the rows meant, remove it from categories or merge it with a neighbour`
				for _, cmd := range []string{"check", "run"} {
					args := []string{cmd, few}
					if cmd == "run" {
						args = append(args, "--out", filepath.Join(dir, "W34few-out"))
					}
					if _, e, code := runCLI(args...); code != 1 || !strings.Contains(e, want) {
						t.Errorf("%s, 2 rows left: exit %d, want %q in\n%s", cmd, code, want, e)
					}
				}
			}},
		{id: "W35", name: "a level of a categorical predictor, or a combination of levels of an interaction, with fewer than 10 rows used", args: []string{"check"}, code: 0,
			plan: edit("  file: d.csv\n", "  file: W35.csv\ncategorical:\n  g: {levels: [m, n, rare]}\n  k: {levels: [lo, hi]}\n", "predictors: [a, b]\n", "predictors: [a, g, k, {interact: [g, k]}]\n"),
			setup: func(t *testing.T, dir, id string) {
				// g: rare in 6 rows (two of every 40: 2 with k hi, 4 lo), m
				// and n in 57 each; k: hi in every third row but only
				// twice among the rows of n (rows 3 and 15, in categories
				// 3 and 1).
				w35Data(t, dir, id+".csv", 15)
			},
			check: func(t *testing.T, dir, out, errs string) {
				plan := filepath.Join(dir, "W35.yaml")
				want := "warning: " + plan + `: outcome y: Few rows at some levels of categorical predictors (fewer than 10 of the 120 rows used): g = rare (6 rows), g "n" with k "hi" (2 rows, in term "g&k"). The coefficients, odds ratios, marginal effects and Wald tests of such a level or combination of levels rest on those rows alone, and their standard errors, p-values and intervals on a large-sample (normal) approximation that so few support poorly: read them as rough. Merge such a level with a neighbouring one in the data (one code for both), leave the term out, or, if the level is meant as it is, keep it and interpret its estimates with care` + "\n"
				if !strings.Contains(errs, want) {
					t.Errorf("check: want %q in\n%s", want, errs)
				}
				warnedInRun(t, plan, filepath.Join(dir, "W35-out"), want,
					`Few rows at some levels of categorical predictors (fewer than 10 of the 120 rows used): g = rare (6 rows), g \"n\" with k \"hi\" (2 rows`,
					`Few rows at some levels of categorical predictors (fewer than 10 of the 120 rows used): g = rare (6 rows)`)
				// ordplan fit gives the same warning on standard error, and a
				// reference level among them is to be chosen by |ref=.
				fitArgs := []string{"fit", "--data", filepath.Join(dir, "W35.csv"), "--outcome", "y", "--predictors", "a,g|levels=m/n/rare,k|levels=lo/hi,g&k"}
				fitWant := "warning: " + strings.SplitN(want, ": outcome y: ", 2)[1]
				if _, e, code := runCLI(fitArgs...); code != 0 || !strings.Contains(e, fitWant) {
					t.Errorf("fit: exit %d, want %q in\n%s", code, fitWant, e)
				}
				fitArgs[len(fitArgs)-1] = "a,g|levels=rare/m/n"
				if _, e, code := runCLI(fitArgs...); code != 0 || !strings.Contains(e, "g = rare (6 rows, the reference level)") || !strings.HasSuffix(e, "make a larger level the reference (--predictors g|ref=LEVEL)\n") {
					t.Errorf("fit, rare the reference: exit %d\n%s", code, e)
				}
				// The cells of rare (2 and 4 rows) are not named again.
				if strings.Contains(errs, `g "rare"`) {
					t.Errorf("a cell of a level named already is named:\n%s", errs)
				}
				// With the rows of n with k hi both in category 3 (rows 3
				// and 9), every candidate is separated along g.n&k.hi and
				// its verdict says so: run names rare alone, check (which
				// fits nothing) both.
				w35Data(t, dir, "W35sep.csv", 9)
				sep := filepath.Join(dir, "W35sep.yaml")
				b, err := os.ReadFile(plan)
				if err != nil {
					t.Fatal(err)
				}
				if err := os.WriteFile(sep, []byte(strings.Replace(string(b), "W35.csv", "W35sep.csv", 1)), 0o644); err != nil {
					t.Fatal(err)
				}
				if _, e, code := runCLI("check", sep); code != 0 || !strings.Contains(e, `g = rare (6 rows), g "n" with k "hi" (2 rows, in term "g&k")`) {
					t.Errorf("check, separated cell: exit %d\n%s", code, e)
				}
				_, e, _ := runCLI("run", sep, "--out", filepath.Join(dir, "W35sep-out"), "--quiet")
				if !strings.Contains(e, `(fewer than 10 of the 120 rows used): g = rare (6 rows). The coefficients`) {
					t.Errorf("run, separated cell: want rare alone in\n%s", e)
				}
				w35Imputed(t, dir)
			}},
		{id: "W38", name: "a subset condition on the outcome's own column", args: []string{"check", "--no-data"}, code: 0,
			plan: edit("predictors: [a, b]\n", "subset:\n  - {column: y, at_least: 2}\npredictors: [a, b]\n"),
			check: func(t *testing.T, dir, out, errs string) {
				plan := filepath.Join(dir, "W38.yaml")
				sel := `subset[0] (y >= 2) chooses rows by the value of the outcome y itself: the models describe y only among the rows kept, and choosing rows by the outcome changes in general what the effects are (a cumulative model of every category does not hold among the rows of some of them), so the estimates are not the effects in the population the rows were drawn from. To study a part of that population, choose its rows by another column; to study the outcome among these rows, as meant, read the results as conditional on the selection`
				want := "warning: " + plan + ": outcomes[0] (y): " + sel + "\n"
				if !strings.Contains(errs, want) {
					t.Errorf("check --no-data: want %q in\n%s", want, errs)
				}
				if _, e, code := runCLI("check", plan); code != 0 || !strings.Contains(e, want) {
					t.Errorf("check: exit %d, want %q in\n%s", code, want, e)
				}
				warnedInRun(t, plan, filepath.Join(dir, "W38-out"), want, sel+".", sel+".")
				// A subset on another column is not warned of.
				b, err := os.ReadFile(plan)
				if err != nil {
					t.Fatal(err)
				}
				other := filepath.Join(dir, "W38b.yaml")
				if err := os.WriteFile(other, []byte(strings.Replace(string(b), "column: y, at_least: 2", "column: a, at_least: -1", 1)), 0o644); err != nil {
					t.Fatal(err)
				}
				if _, e, code := runCLI("check", other); code != 0 || strings.Contains(e, "chooses rows by the value of the outcome") {
					t.Errorf("a subset on a predictor: exit %d\n%s", code, e)
				}
				// A category the selection leaves without rows: the refusal
				// names the condition that chose the rows by the outcome.
				cats := filepath.Join(dir, "W38c.yaml")
				if err := os.WriteFile(cats, []byte(strings.Replace(string(b), "  - column: y\n", "  - column: y\n    categories: [1, 2, 3]\n", 1)), 0o644); err != nil {
					t.Fatal(err)
				}
				refusal := `outcomes: y: category "1" is declared but never observed in the `
				named := ` rows used, which subset[0] (y >= 2) chooses by the outcome's own value`
				if _, e, code := runCLI("check", cats); code != 1 || !strings.Contains(e, refusal) || !strings.Contains(e, named) {
					t.Errorf("an unobserved category: exit %d, want %q and %q in\n%s", code, refusal, named, e)
				}
			}},
		{id: "W32", name: "reject_if_sparse counting categories within the values of a numeric column of many values", args: []string{"check"}, code: 0,
			plan: edit("  - reject_unconverged: true\n", "  - reject_unconverged: true\n  - reject_if_sparse: {smallest_category: 5, within: a}\n"),
			check: func(t *testing.T, dir, out, errs string) {
				want := "warning: " + filepath.Join(dir, "W32.yaml") + ": outcome y: the rule at line 13 (reject_if_sparse) counts each category within the values of a, which takes "
				if !strings.Contains(errs, want) || !strings.Contains(errs, "whatever the data, and the rule rejects every model in which the effect of a varies across equations; within is meant for a categorical or few-valued column\n") {
					t.Errorf("check: want %q in\n%s", want, errs)
				}
				// Within a 0/1 column the rule can be met: no warning.
				plan := filepath.Join(dir, "W32b.yaml")
				if err := os.WriteFile(plan, []byte(strings.Replace(edit("  - reject_unconverged: true\n", "  - reject_unconverged: true\n  - reject_if_sparse: {smallest_category: 5, within: b}\n"), "file: d.csv", "file: "+filepath.Join(dir, "d.csv"), 1)), 0o644); err != nil {
					t.Fatal(err)
				}
				if _, e, code := runCLI("check", plan); code != 0 || strings.Contains(e, "reject_if_sparse) counts") {
					t.Errorf("within b: exit %d\n%s", code, e)
				}
			}},
		{id: "P66", name: "ordplan init into a folder that does not exist", args: []string{"init", filepath.Join(dir, "P66-nodir", "x.yaml"), "--data", filepath.Join(dir, "d.csv")}, code: 1,
			want:  []string{"ordplan: init: cannot write P66-nodir/x.yaml: the folder P66-nodir does not exist: make it first, or give another path"},
			check: noFolder("P66-nodir")},
		{id: "P66", name: "ordplan init of a file too wide for a plan", args: []string{"init", filepath.Join(dir, "P66-wide.yaml"), "--data", filepath.Join(dir, "P66-wide.csv")}, code: 1,
			setup: func(t *testing.T, dir, id string) {
				var b strings.Builder
				b.WriteString("y")
				for j := range 30000 {
					fmt.Fprintf(&b, ",c%d", j)
				}
				for i := range 3 {
					fmt.Fprintf(&b, "\n%d", i+1)
					for j := range 30000 {
						fmt.Fprintf(&b, ",%d", (i+j)%7)
					}
				}
				if err := os.WriteFile(filepath.Join(dir, id+"-wide.csv"), []byte(b.String()+"\n"), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			want:  []string{"ordplan: init: the plan of the 30001 columns would have", "bytes, more than the 4194304 a plan may have (ordplan check would refuse it); nothing written: give --header with the columns the analysis uses, or init from a file holding only those"},
			check: noFolder("P66-wide.yaml")},
	}
}

// danglingLock makes the item's lock file a symbolic link to a file that
// does not exist.
func danglingLock(t *testing.T, dir, id string) {
	t.Helper()
	p := filepath.Join(dir, id+".lock.json")
	os.Remove(p)
	if err := os.Symlink("missing-lock.json", p); err != nil {
		t.Fatal(err)
	}
}

// mixedParts writes two parts of d.csv's rows: ID-p1.csv as d.csv writes
// them, ID-p2.csv with semicolons and decimal commas.
func mixedParts(t *testing.T, dir, id string) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(dir, "d.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	semi := []string{strings.ReplaceAll(lines[0], ",", ";")}
	for _, l := range lines[61:] {
		semi = append(semi, strings.ReplaceAll(strings.ReplaceAll(l, ",", ";"), ".", ","))
	}
	os.WriteFile(filepath.Join(dir, id+"-p1.csv"), []byte(strings.Join(lines[:61], "\n")+"\n"), 0o644)
	os.WriteFile(filepath.Join(dir, id+"-p2.csv"), []byte(strings.Join(semi, "\n")+"\n"), 0o644)
}

// w35Data writes d.csv with columns g and k for catalogue item W35: g
// rare in rows i%40 < 2, else m (even rows) or n (odd); k hi in every
// third row, among the rows of n only in rows 3 and nHi.
func w35Data(t *testing.T, dir, name string, nHi int) {
	t.Helper()
	withColumns(t, dir, name, "g,k", func(i int, f []string) string {
		g := "mn"[i%2 : i%2+1]
		if i%40 < 2 {
			g = "rare"
		}
		k := "lo"
		if i%3 == 0 && (g != "n" || i == 3 || i == nHi) {
			k = "hi"
		}
		return g + "," + k
	})
}

// w35Imputed checks W35 on imputed data: h is rare in 8 rows and missing
// in 8 whose x lies with the rare rows' (x near 5), so that imputation
// puts rare there. The level is counted where it is observed (8 rows), in
// check and run alike, by the program's imputation and on imputed sets
// made elsewhere, whose first set holds 16 rows of rare (it was counted
// on that set, and run said nothing).
func w35Imputed(t *testing.T, dir string) {
	t.Helper()
	withColumns(t, dir, "W35mi.csv", "h,x", func(i int, f []string) string {
		switch {
		case i%15 == 0:
			return fmt.Sprintf("rare,%.2f", 5+float64(i%7)/10)
		case i%15 == 7:
			return fmt.Sprintf(",%.2f", 5+float64(i%5)/10)
		}
		return "mn"[i%2:i%2+1] + "," + f[1]
	})
	orig, err := os.ReadFile(filepath.Join(dir, "W35mi.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(orig)), "\n")
	var stacked strings.Builder
	stacked.WriteString(lines[0] + ",imp\n")
	for k, fill := range []string{"rare", "m"} {
		for _, l := range lines[1:] {
			fmt.Fprintf(&stacked, "%s,%d\n", strings.Replace(l, ",,", ","+fill+",", 1), k+1)
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "W35stacked.csv"), []byte(stacked.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	want := `Few rows at some levels of categorical predictors (fewer than 10 of the 120 rows used, counting at each level the rows where it is observed, not the values imputed into it): h = rare (8 rows). The coefficients`
	for n, how := range []string{"  missing: impute\n  imputation: {sets: 5, seed: 35}\n", "  imputed: {file: W35stacked.csv, column: imp}\n"} {
		plan := filepath.Join(dir, "W35mi.yaml")
		text := edit("  file: d.csv\n", "  file: W35mi.csv\n"+how+"categorical:\n  h: {levels: [m, n, rare]}\n", "predictors: [a, b]\n", "predictors: [x, h]\n")
		if err := os.WriteFile(plan, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		if _, e, code := runCLI("check", plan); code != 0 || !strings.Contains(e, want) {
			t.Errorf("check, %s: exit %d, want %q in\n%s", strings.TrimSpace(how), code, want, e)
		}
		if _, e, code := runCLI("run", plan, "--out", filepath.Join(dir, fmt.Sprintf("W35mi-out%d", n)), "--quiet"); code != 0 || !strings.Contains(e, want) {
			t.Errorf("run, %s: exit %d, want %q in\n%s", strings.TrimSpace(how), code, want, e)
		}
	}
}

// warnedInRun runs the plan into out and checks that the run warns on
// stderr as want says (exit 0), that decisions.json holds note (JSON
// text) among the outcome's notes and that report.md holds reportText.
func warnedInRun(t *testing.T, plan, out, want, note, reportText string) {
	t.Helper()
	_, e, code := runCLI("run", plan, "--out", out, "--quiet")
	if code != 0 || !strings.Contains(e, want) {
		t.Errorf("run: exit %d, want %q in\n%s", code, want, e)
	}
	if b, err := os.ReadFile(filepath.Join(out, "decisions.json")); err != nil || !strings.Contains(string(b), note) {
		t.Errorf("decisions.json: want %q among the notes (%v)", note, err)
	}
	if b, err := os.ReadFile(filepath.Join(out, "report.md")); err != nil || !strings.Contains(string(b), reportText) {
		t.Errorf("report.md: want %q (%v)", reportText, err)
	}
}
