package fit

import (
	"math"
	"testing"
)

// The joint Brant test of one predictor equals its per-variable test, and
// the joint test of every predictor equals the omnibus test (identities of
// the same Wald statistic), on the General Social Survey extract (Long
// 1997) whose Brant values reproduce Long & Freese (2014).
func TestBrantJointIdentities(t *testing.T) {
	rs := loadRef(t, "gsswarm")
	d := rs.data([]string{"yr89", "male", "white", "age", "ed", "prst"})
	br := Brant(d, Options{Workers: 1})
	if !br.OK {
		t.Fatal(br.Reason)
	}
	for k, p := range d.Predictors {
		if j := br.Joint([]string{p}); math.Abs(j.Chi2-br.PerVariable[k].Chi2) > 1e-9 || j.DF != br.PerVariable[k].DF {
			t.Errorf("%s: joint %v, per variable %v", p, j, br.PerVariable[k])
		}
	}
	if j := br.Joint(d.Predictors); math.Abs(j.Chi2-br.Omnibus.Chi2) > 1e-9 || j.DF != br.Omnibus.DF {
		t.Errorf("all: joint %v, omnibus %v", j, br.Omnibus)
	}
}
