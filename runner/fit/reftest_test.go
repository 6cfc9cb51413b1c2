package fit

import (
	"encoding/csv"
	"encoding/json"
	"ordplan/internal/refdata"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// refDir holds the published data sets and reference fits shared by the
// project (see testdata/reference/README.md at the repository root).
var refDir = refdata.Dir()

// refSources names the published source of each reference data set.
var refSources = map[string]string{
	"gsswarm":  "General Social Survey 1977/1989 extract, Long (1997) ch. 5",
	"housing":  "Madsen (1976) Scand. J. Statist. 3:97-106, Copenhagen housing satisfaction",
	"wine":     "Randall (1989) Biometrical J. 31:781-791, wine bitterness",
	"pneumo":   "Ashford (1959) Biometrics 15:573-581; McCullagh & Nelder (1989) p. 179",
	"mental":   "Agresti (2010) Analysis of Ordinal Categorical Data, 2nd ed., mental impairment",
	"backpain": "Anderson (1984) JRSS B 46:1-30, back pain relief",
}

var refNames = []string{"gsswarm", "housing", "wine", "pneumo", "mental", "backpain"}

// strList accepts a JSON list of strings or a single string.
type strList []string

func (s *strList) UnmarshalJSON(b []byte) error {
	var one string
	if err := json.Unmarshal(b, &one); err == nil {
		*s = []string{one}
		return nil
	}
	var many []string
	if err := json.Unmarshal(b, &many); err != nil {
		return err
	}
	*s = many
	return nil
}

type refLabels struct {
	Outcome string   `json:"outcome"`
	Labels  []string `json:"labels"`
	Weights *string  `json:"weights"`
}

type refModel struct {
	ID          string               `json:"id"`
	Comparison  string               `json:"comparison"`
	Model       string               `json:"model"`
	Link        string               `json:"link"`
	Predictors  strList              `json:"predictors"`
	Parallel    strList              `json:"parallel"`
	Nonparallel strList              `json:"nonparallel"`
	Constrained strList              `json:"constrained"`
	NObs        float64              `json:"nobs"`
	NParams     int                  `json:"n_params"`
	Status      string               `json:"status"`
	LogLik      *float64             `json:"loglik"`
	AIC         *float64             `json:"aic"`
	BIC         *float64             `json:"bic"`
	Cutpoints   []float64            `json:"cutpoints"`
	Effects     map[string][]float64 `json:"effects"`
	Phi         []float64            `json:"phi"`
	Gamma       map[string]float64   `json:"gamma"`
	Estimates   map[string]float64   `json:"estimates"`
	SEOIM       map[string]float64   `json:"se_oim"`
	SEEIM       map[string]float64   `json:"se_eim"`
	SupLL       *float64             `json:"loglik_supremum_approx"`
}

type refSet struct {
	name   string
	labels refLabels
	cols   map[string][]float64
	models []refModel
}

func loadRef(t testing.TB, name string) *refSet {
	t.Helper()
	rs := &refSet{name: name, cols: map[string][]float64{}}
	b, err := os.ReadFile(filepath.Join(refDir, name+".labels.json"))
	if err != nil {
		t.Fatalf("reference data missing (%v): tests need testdata/reference", err)
	}
	if err := json.Unmarshal(b, &rs.labels); err != nil {
		t.Fatal(err)
	}
	b, err = os.ReadFile(filepath.Join(refDir, name+".models.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &rs.models); err != nil {
		t.Fatal(err)
	}
	for i := range rs.models {
		m := &rs.models[i]
		m.Estimates, m.SEOIM, m.SEEIM = refdata.ParamNames(m.Estimates), refdata.ParamNames(m.SEOIM), refdata.ParamNames(m.SEEIM)
	}
	f, err := os.Open(filepath.Join(refDir, name+".csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	head := recs[0]
	for _, r := range recs[1:] {
		for j, h := range head {
			v, err := strconv.ParseFloat(r[j], 64)
			if err != nil {
				t.Fatal(err)
			}
			rs.cols[h] = append(rs.cols[h], v)
		}
	}
	return rs
}

// data builds fit input with the given predictors.
func (rs *refSet) data(preds []string) *Data {
	y := rs.cols[rs.labels.Outcome]
	n := len(y)
	d := &Data{J: len(rs.labels.Labels), Categories: rs.labels.Labels, Predictors: preds}
	d.Y = make([]int, n)
	for i, v := range y {
		d.Y[i] = int(v) - 1
	}
	d.X = make([]float64, n*len(preds))
	for i := 0; i < n; i++ {
		for k, p := range preds {
			d.X[i*len(preds)+k] = rs.cols[p][i]
		}
	}
	if rs.labels.Weights != nil {
		d.Weights = rs.cols[*rs.labels.Weights]
	}
	return d
}

// modelOf turns a reference record into a Model (multinomial records map
// to the adjacent nonparallel logit).
func (rm *refModel) modelOf(t testing.TB) Model {
	t.Helper()
	cmpName := rm.Comparison
	if cmpName == "multinomial" {
		cmpName = "adjacent"
	}
	c, err := ParseComparison(cmpName)
	if err != nil {
		t.Fatal(err)
	}
	l, err := ParseLink(rm.Link)
	if err != nil {
		t.Fatal(err)
	}
	m := Model{Comparison: c, Link: l}
	for _, p := range rm.Predictors {
		e := Parallel
		if contains(rm.Nonparallel, p) || rm.Comparison == "multinomial" {
			e = Nonparallel
		}
		if contains(rm.Constrained, p) {
			e = Constrained
		}
		m.Effects = append(m.Effects, e)
	}
	return m
}

func contains(xs []string, x string) bool {
	for _, v := range xs {
		if v == x {
			return true
		}
	}
	return false
}

// refRecord is one model record of a reference data set.
type refRecord struct {
	name string // the data set (refNames)
	rs   *refSet
	rm   refModel
}

// refRecords lists the model records of every reference data set, in
// order: those with constrained predictors (the stereotype models
// included) when constrained is true, the others when it is false.
func refRecords(t testing.TB, constrained bool) []refRecord {
	t.Helper()
	var out []refRecord
	for _, name := range refNames {
		rs := loadRef(t, name)
		for _, rm := range rs.models {
			if (len(rm.Constrained) > 0) == constrained {
				out = append(out, refRecord{name, rs, rm})
			}
		}
	}
	return out
}
