package data

import (
	"strings"
	"testing"
)

// Frequency weights count identical rows, so they must be whole numbers:
// the first row used with another weight is named (file, line, column,
// value), with how many more there are and the fix; the same weights read
// as sampling weights are taken, and whole weights written as 2.0 are
// counts.
func TestFrequencyWeightsMustBeWhole(t *testing.T) {
	in := "y,a,w\n1,0.5,2\n2,1,0.5\n1,2,-9\n2,3,2.7\n1,4,3.0\n"
	opt := Options{Outcome: "y", Predictors: []string{"a"}, Weights: "w", MissingTokens: []string{"-9"}}
	_, err := Read(strings.NewReader(in), "fw.csv", opt)
	want := `fw.csv:3: column "w": frequency weight 0.5 is not a whole number (and 1 more rows used): a frequency weight (data.weight_kind: frequency, the default) counts identical rows, so these weights would make 8.2 observations of the 4 rows`
	if err == nil || !strings.HasPrefix(err.Error(), want) || !strings.Contains(err.Error(), "set data.weight_kind: sampling (ordplan fit: --weight-kind sampling)") {
		t.Fatalf("got %v\nwant %s ...", err, want)
	}
	if de, ok := err.(*Error); !ok || de.Key != "data.weight_kind" {
		t.Errorf("error %#v: want the plan key data.weight_kind", err)
	}
	opt.Sampling = true
	if _, err := Read(strings.NewReader(in), "fw.csv", opt); err != nil {
		t.Errorf("sampling weights: %v", err)
	}
	opt.Sampling = false
	whole := "y,a,w\n1,0.5,2\n2,1,1.0\n1,2,3\n2,3,0\n"
	d, err := Read(strings.NewReader(whole), "fw.csv", opt)
	if err != nil || d.NObs() != 6 {
		t.Errorf("whole weights: %v (observations %v)", err, d)
	}
}

// A weight that dwarfs the others together is refused at its row when
// the others weigh less than 2^-26 of the total (minRestShare), exactly:
// 2^26 - 1 beside a row of weight 1 (and one of 0) leaves it 2^-26 and is read,
// 2^26 leaves them less and is refused, as frequency or sampling weights,
// naming the line (the row of weight 0 is dropped, not counted); a part
// read alone is not judged.
func TestWeightDwarfingTheOthers(t *testing.T) {
	for _, top := range []string{"67108863", "67108864"} {
		in := "y,a,w\n1,0.5,0\n2,1,1\n1,2," + top + "\n"
		for _, sampling := range []bool{false, true} {
			opt := Options{Outcome: "y", Predictors: []string{"a"}, Weights: "w", Sampling: sampling}
			_, err := Read(strings.NewReader(in), "dw.csv", opt)
			want := `dw.csv:4: column "w": weight 6.7108864e+07 dwarfs the others: the other row used weighs 1, 1.5e-08 of the total, below the 1.5e-8`
			switch {
			case top == "67108863" && err != nil:
				t.Errorf("%s (sampling %v): %v", top, sampling, err)
			case top == "67108864" && (err == nil || !strings.HasPrefix(err.Error(), want)):
				t.Errorf("%s (sampling %v): got %v\nwant %s ...", top, sampling, err, want)
			}
		}
	}
}
