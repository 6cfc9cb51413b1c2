package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"ordplan/internal/refdata"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

var refDir = refdata.Dir()

func runCLI(args ...string) (string, string, int) {
	var out, errb bytes.Buffer
	code := run(args, &out, &errb)
	return out.String(), errb.String(), code
}

// The command reproduces the partial proportional odds fit of the General
// Social Survey 1977/1989 extract (Long 1997) in the reference files.
func TestFitJSONMatchesReference(t *testing.T) {
	out, errs, code := runCLI("fit", "--data", filepath.Join(refDir, "gsswarm.csv"), "--outcome", "warm",
		"--predictors", "yr89,male,white,age,ed,prst", "--nonparallel", "yr89,male", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		LogLik    float64 `json:"loglik"`
		NParams   int     `json:"n_params"`
		NObs      float64 `json:"nobs"`
		AIC, BIC  float64
		Converged bool                 `json:"converged"`
		Tau       []float64            `json:"tau"`
		Slopes    map[string][]float64 `json:"slopes"`
		Estimates map[string]float64   `json:"estimates"`
		StdErrors map[string]float64   `json:"std_errors"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(filepath.Join(refDir, "gsswarm.models.json"))
	var refs []struct {
		ID        string             `json:"id"`
		LogLik    float64            `json:"loglik"`
		Estimates map[string]float64 `json:"estimates"`
		SE        map[string]float64 `json:"se_oim"`
	}
	json.Unmarshal(b, &refs)
	for _, r := range refs {
		r.Estimates, r.SE = refdata.ParamNames(r.Estimates), refdata.ParamNames(r.SE)
		if r.ID != "cumulative/partial_unconstrained/logit" {
			continue
		}
		if math.Abs(got.LogLik-r.LogLik) > 1e-6 || !got.Converged || got.NParams != 13 || got.NObs != 2293 {
			t.Fatalf("got %+v", got)
		}
		for n, v := range r.Estimates {
			if math.Abs(got.Estimates[n]-v) > 1e-5*math.Abs(v)+1e-7 || math.Abs(got.StdErrors[n]-r.SE[n]) > 1e-5*r.SE[n] {
				t.Errorf("%s: %v (%v), want %v (%v)", n, got.Estimates[n], got.StdErrors[n], v, r.SE[n])
			}
		}
		return
	}
	t.Fatal("reference record missing")
}

func TestFitTableAndFailures(t *testing.T) {
	gss := filepath.Join(refDir, "gsswarm.csv")
	wine := filepath.Join(refDir, "wine.csv") // Randall (1989) wine bitterness
	tmp := t.TempDir()
	ragged := filepath.Join(tmp, "ragged.csv")
	os.WriteFile(ragged, []byte("y,a\n1,2\n2\n"), 0o644)
	cases := []struct {
		name string
		args []string
		code int
		want string // in stdout (code 0) or stderr
	}{
		{"table", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89,male", "--approach", "stage"}, 0, "stage/parallel/logit"},
		{"baseline", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89", "--approach", "adjacent", "--all-nonparallel", "--baseline", "1"}, 0, "Baseline-category form"},
		{"separation", []string{"fit", "--data", wine, "--outcome", "rating", "--predictors", "temp,contact", "--all-nonparallel"}, 1, "no finite maximum"},
		{"missing flag", []string{"fit", "--outcome", "warm"}, 2, "--data FILE (or --parts a.csv,b.csv,...) is required"},
		{"unknown approach", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89", "--approach", "sideways"}, 2, `unknown approach "sideways"`},
		{"unknown link", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89", "--link", "tanh"}, 2, `unknown link "tanh"`},
		{"absent column", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "height"}, 1, `height`},
		{"nonparallel not predictor", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89", "--nonparallel", "male"}, 1, `nonparallel predictor "male" is not among the predictors`},
		{"ragged", []string{"fit", "--data", ragged, "--outcome", "y", "--predictors", "a"}, 1, "ragged.csv:3"},
		{"no file", []string{"fit", "--data", filepath.Join(tmp, "none.csv"), "--outcome", "y"}, 1, "none.csv"},
		{"unknown command", []string{"frobnicate"}, 2, "unknown command"},
		{"sandwich", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89,male", "--covariance", "sandwich"}, 0, "sandwich (HC1"},
		{"clustered without column", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89", "--covariance", "clustered"}, 1, "--cluster COL"},
		{"clustered", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89,male", "--covariance", "clustered", "--cluster", "ed"}, 0, "cluster-robust"},
		// The column of estimate over error is headed t, its df said once.
		{"clustered t", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89,male", "--covariance", "clustered", "--cluster", "ed"}, 0, "std. error       t        p "},
		{"clustered t df", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89,male", "--covariance", "clustered", "--cluster", "ed"}, 0, "t is the estimate over its standard error; p-values and intervals refer to t on G-1 = "},
		{"sampling weights without weights", []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89", "--weight-kind", "sampling"}, 1, "need a weights column"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out, errs, code := runCLI(c.args...)
			if code != c.code {
				t.Fatalf("exit %d, want %d\nstdout: %s\nstderr: %s", code, c.code, out, errs)
			}
			where := out
			if c.code == 2 || (c.code == 1 && !strings.Contains(out, c.want)) {
				where = errs
			}
			if !strings.Contains(where, c.want) {
				t.Fatalf("want %q in output\nstdout: %s\nstderr: %s", c.want, out, errs)
			}
			if strings.Contains(errs, "goroutine") || strings.Contains(errs, "panic") {
				t.Fatalf("panic trace: %s", errs)
			}
			if c.code == 1 && errs != "" && strings.Count(strings.TrimSpace(errs), "\n") > 0 {
				t.Fatalf("error must be one line: %q", errs)
			}
		})
	}
}

// TestFitPrintsChecks: ordplan fit prints, after the estimates, the odds
// ratios of a logit fit (exp of the estimate and of its interval bounds),
// the likelihood-ratio test against the thresholds-only model with the
// pseudo-R2 measures, the Lipsitz test and, with a categorical predictor,
// the Pulkstenis-Robinson tests; the same numbers are in its --json output.
//
// gsswarm (Long 1997; testdata/reference): the ordered logit of warm on
// six predictors has a likelihood-ratio chi-square of 301.72 on 6 df and McFadden's R2 0.050
// (published values, from memory: Long & Freese 2014, as in
// runner/fit/overall_test.go).
func TestFitPrintsChecks(t *testing.T) {
	gss := filepath.Join(refDir, "gsswarm.csv")
	args := []string{"fit", "--data", gss, "--outcome", "warm", "--predictors", "yr89,male,white,age,ed,prst", "--confidence-level", "0.9"}
	out, errs, code := runCLI(args...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{
		"Cumulative odds ratios, exp(b) (above 1: towards higher categories):",
		"Against the thresholds-only model (log-likelihood ",
		"likelihood-ratio chi2(6) = 301.7", // 301.716: the published 301.72 to its digits
		"Pseudo-R2: McFadden 0.05",
		", McKelvey-Zavoina 0.",
		"Lipsitz test (10 groups of predicted score): chi2(9) = ",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "Pulkstenis-Robinson") {
		t.Errorf("Pulkstenis-Robinson line without categorical predictors:\n%s", out)
	}
	js, errs, code := runCLI(append(args, "--json")...)
	if code != 0 {
		t.Fatalf("--json: exit %d: %s", code, errs)
	}
	var rec struct {
		Estimates map[string]float64 `json:"estimates"`
		StdErrors map[string]float64 `json:"std_errors"`
		Checks    struct {
			Overall struct {
				LR struct {
					Chi2 float64 `json:"chi2"`
				} `json:"lr_vs_null"`
			} `json:"overall_fit"`
			Lipsitz struct {
				Test struct {
					Chi2 float64 `json:"chi2"`
				} `json:"test"`
			} `json:"lipsitz"`
		} `json:"checks"`
	}
	if err := json.Unmarshal([]byte(js), &rec); err != nil {
		t.Fatalf("%v\n%s", err, js)
	}
	if rec.Checks.Overall.LR.Chi2 == 0 || rec.Checks.Lipsitz.Test.Chi2 == 0 {
		t.Errorf("--json lacks the checks: %s", js)
	}
	// exp(b) and exp(b -+ z se), z for 90%, as printed with four decimals.
	b, se := rec.Estimates["male"], rec.StdErrors["male"]
	if b == 0 || se == 0 {
		t.Fatalf("no estimate of male in %s", js)
	}
	const z = 1.6448536269514722
	row := fmt.Sprintf("male 1 against 0 all %.4f [%.4f, %.4f]", math.Exp(b), math.Exp(b-z*se), math.Exp(b+z*se))
	if !strings.Contains(strings.Join(strings.Fields(out), " "), row) {
		t.Errorf("odds ratio row %q not in:\n%s", row, out)
	}

	// A categorical predictor: the Pulkstenis-Robinson line.
	qs := filepath.Join("..", "..", "plans", "data", "quietstreets.csv")
	out, errs, code = runCLI("fit", "--data", qs, "--outcome", "safety", "--categories", "very_unsafe,unsafe,neutral,safe,very_safe",
		"--predictors", "pilot,age,street_type|levels=residential/through_road/cul_de_sac")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "Pulkstenis-Robinson tests (street_type: 3 patterns, 6 groups): Pearson chi2(17) = ") || !strings.Contains(out, "; deviance chi2(17) = ") {
		t.Errorf("no Pulkstenis-Robinson line:\n%s", out)
	}
}

// `ordplan fit --parts` without a queue reads the parts here, in order, as
// one data set (the reader of the plan key data.parts): the fit, its
// checks (the Lipsitz test included) and the JSON are those of one file
// holding the same rows, byte for byte; the table differs only in the line
// naming the data; a pattern among the parts gives its files in name order.
// General Social Survey extract (Long 1997), cut into
// three parts of consecutive rows.
func TestFitPartsReadLocally(t *testing.T) {
	src, err := os.ReadFile(filepath.Join(refDir, "gsswarm.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(strings.TrimRight(string(src), "\n")+"\n", "\n")
	head, rows := lines[0], lines[1:len(lines)-1]
	dir := t.TempDir()
	whole := head
	var parts []string
	for p, cut := range [][2]int{{0, 700}, {700, 701}, {701, len(rows)}} {
		body := strings.Join(rows[cut[0]:cut[1]], "")
		whole += body
		path := filepath.Join(dir, fmt.Sprintf("part%d.csv", p))
		os.WriteFile(path, []byte(head+body), 0o644)
		parts = append(parts, path)
	}
	wholePath := filepath.Join(dir, "whole.csv")
	os.WriteFile(wholePath, []byte(whole), 0o644)
	for _, model := range [][]string{{"--nonparallel", "yr89,male", "--json"}, {"--json"}, {"--approach", "adjacent", "--covariance", "sandwich"}} {
		args := append([]string{"fit", "--outcome", "warm", "--predictors", "yr89,male,white,age,ed,prst"}, model...)
		one, errs, code := runCLI(append(args, "--data", wholePath)...)
		if code != 0 {
			t.Fatalf("%v: one file: exit %d: %s", model, code, errs)
		}
		held, errs, code := runCLI(append(args, "--parts", strings.Join(parts, ","))...)
		if code != 0 {
			t.Fatalf("%v: parts: exit %d: %s", model, code, errs)
		}
		held = strings.Replace(held, "parts "+strings.Join(parts, ", "), wholePath, 1)
		if held != one {
			t.Errorf("%v: the fit over parts read here differs from the fit of one file:\n%s\n---\n%s", model, one, held)
		}
		// A pattern gives its files in name order, as in data.parts.
		byPattern, errs, code := runCLI(append(args, "--parts", filepath.Join(dir, "part*.csv"))...)
		if byPattern = strings.Replace(byPattern, "parts "+strings.Join(parts, ", "), wholePath, 1); code != 0 || byPattern != one {
			t.Errorf("%v: --parts %s: exit %d %s\n%s", model, filepath.Join(dir, "part*.csv"), code, errs, byPattern)
		}
		if !regexp.MustCompile(`"name": "lipsitz",\s+"ok": true`).MatchString(one) && !strings.Contains(one, "Lipsitz test (10 groups of predicted score): chi2(9) = ") {
			t.Errorf("%v: no Lipsitz test:\n%s", model, one)
		}
	}
}
