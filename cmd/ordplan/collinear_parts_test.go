package main

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/runner/queue/localserver"
)

// TestFitPartsFlagCollinearity: `ordplan fit --parts --queue` makes the
// near-collinearity check the local fit makes (it printed no warning): an
// invented data set (seeded), x2 = x1 + N(0, 0.001^2) and y from a
// cumulative logit in x1 and x3, split into two parts; the fit over the
// workers flags x1 and x2 with the local fit's factors (to 1e-6, the
// local fit of the same rows being the reference) and prints the warning.
func TestFitPartsFlagCollinearity(t *testing.T) {
	if testing.Short() {
		t.Skip("starts worker processes")
	}
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(13, 2))
	var rows []string
	for i := 0; i < 400; i++ {
		x1, x3 := rng.NormFloat64(), rng.NormFloat64()
		u := rng.Float64()
		lat := 0.8*x1 + 0.5*x3 + math.Log(u/(1-u))
		y := 1
		if lat > -0.7 {
			y = 2
		}
		if lat > 0.9 {
			y = 3
		}
		rows = append(rows, fmt.Sprintf("%d,%.6f,%.6f,%.6f", y, x1, x1+1e-3*rng.NormFloat64(), x3))
	}
	write := func(name string, rs []string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte("y,x1,x2,x3\n"+strings.Join(rs, "\n")+"\n"), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	whole, p1, p2 := write("all.csv", rows), write("p1.csv", rows[:200]), write("p2.csv", rows[200:])
	url := localserver.ForTest(t)
	startWorkerProc(t, url, "c1")
	args := []string{"fit", "--outcome", "y", "--predictors", "x1,x2,x3"}
	type flagged struct {
		Collinear []struct {
			Term   string  `json:"term"`
			Factor float64 `json:"variance_inflation"`
		} `json:"collinear"`
	}
	var local, dist flagged
	for _, c := range []struct {
		args []string
		into *flagged
	}{{[]string{"--data", whole}, &local}, {[]string{"--queue", url, "--parts", p1 + "," + p2}, &dist}} {
		out, errs, code := runCLI(append(append(args, c.args...), "--json")...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", c.args, code, errs)
		}
		if err := json.Unmarshal([]byte(out), c.into); err != nil {
			t.Fatal(err)
		}
	}
	if len(local.Collinear) != 2 || len(dist.Collinear) != 2 {
		t.Fatalf("flagged: local %+v, over the parts %+v; want x1 and x2 in both", local.Collinear, dist.Collinear)
	}
	for k, v := range dist.Collinear {
		if w := local.Collinear[k]; v.Term != w.Term || math.Abs(v.Factor-w.Factor) > 1e-6*w.Factor {
			t.Errorf("over the parts %s %g, local %s %g", v.Term, v.Factor, w.Term, w.Factor)
		}
	}
	out, errs, code := runCLI(append(args, "--queue", url, "--parts", p1+","+p2)...)
	if code != 0 || !strings.Contains(out, "Warning: near-collinearity: the slopes of x1 and x2 have variance inflation ") {
		t.Errorf("exit %d, no warning:\n%s\n%s", code, out, errs)
	}
}
