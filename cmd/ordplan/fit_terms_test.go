package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"ordplan/internal/refdata"
)

// Madsen (1976), Copenhagen housing: `ordplan fit` with the compact terms
// of the three categorical predictors gives the fit of the dummy-coded
// file (log-likelihood and every estimate), with the type term
// nonparallel as the dummies apartment, atrium and terrace.
func TestFitCompactTermsEqualDummies(t *testing.T) {
	run := func(args ...string) map[string]any {
		out, errs, code := runCLI(append([]string{"fit", "--outcome", "sat", "--weights", "freq", "--json"}, args...)...)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		var m map[string]any
		if err := json.Unmarshal([]byte(out), &m); err != nil {
			t.Fatal(err)
		}
		return m
	}
	cat := run("--data", refdata.Path("housing_factors.csv"), "--nonparallel", "type",
		"--predictors", "infl|levels=low/medium/high,type|levels=tower/apartment/atrium/terrace,cont|levels=low/high")
	dum := run("--data", refdata.Path("housing.csv"), "--nonparallel", "apartment,atrium,terrace",
		"--predictors", "inflmed,inflhigh,apartment,atrium,terrace,conthigh")
	if a, b := cat["loglik"].(float64), dum["loglik"].(float64); math.Abs(a-b) > 1e-9 {
		t.Errorf("log-likelihood: compact terms %.10f, dummies %.10f", a, b)
	}
	if !strings.Contains(mustJSON(cat), `"type.atrium[2]"`) {
		t.Errorf("no column type.atrium[2] in %s", mustJSON(cat))
	}
	// a bad compact term names the item and the problem
	_, errs, code := runCLI("fit", "--data", refdata.Path("housing_factors.csv"), "--outcome", "sat", "--predictors", "infl|levels=low/medium/high|colour=red")
	if code == 0 || !strings.Contains(errs, `--predictors: predictor 1 ("infl|levels=low/medium/high|colour=red"): unknown option "|colour=red"`) {
		t.Errorf("exit %d: %s", code, errs)
	}
	_, errs, code = runCLI("fit", "--data", refdata.Path("housing_factors.csv"), "--outcome", "sat", "--predictors", "infl|levels=low/medium/high,infl&cont")
	if code == 0 || !strings.Contains(errs, `"cont" is not a term listed before this interaction`) {
		t.Errorf("exit %d: %s", code, errs)
	}
}

func mustJSON(v any) string {
	b, _ := json.Marshal(v)
	return string(b)
}

// The compact form's log takes a shift with either sign: log-1000 is
// log(x - 1000), the same term as log+-1000; a shift that is not a number
// is refused naming both forms.
func TestCompactLogShiftSigns(t *testing.T) {
	for _, c := range []struct {
		item  string
		shift float64
	}{{"inc|log", 0}, {"inc|log+1", 1}, {"inc|log-1000", -1000}, {"inc|log+-1000", -1000}, {"inc|log-0.5", -0.5}} {
		spec, err := parseCompactTerms(c.item)
		if err != nil {
			t.Errorf("%s: %v", c.item, err)
			continue
		}
		if tm := spec.Terms[0]; !tm.Log || tm.Shift != c.shift {
			t.Errorf("%s: log %v, shift %v; want shift %v", c.item, tm.Log, tm.Shift, c.shift)
		}
	}
	for _, item := range []string{"inc|log-", "inc|log-x", "inc|log+"} {
		if _, err := parseCompactTerms(item); err == nil || !strings.Contains(err.Error(), "want log+NUMBER or log-NUMBER") {
			t.Errorf("%s: %v", item, err)
		}
	}
}
