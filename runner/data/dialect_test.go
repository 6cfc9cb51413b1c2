package data

import (
	"strings"
	"testing"
)

// The three delimiters and two decimal marks read the same numbers.
func TestDialectsReadTheSameData(t *testing.T) {
	base := "y,a,b\n1,0.5,-1.25\n2,1e-3,3\n3,-0.75,2.5\n"
	want, err := Read(strings.NewReader(base), "base.csv", Options{Outcome: "y", Predictors: []string{"a", "b"}})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ delim, dec string }{{"semicolon", "comma"}, {"tab", "point"}, {"tab", "comma"}, {"semicolon", "point"}} {
		dl, err := ParseDialect(c.delim, c.dec)
		if err != nil {
			t.Fatal(err)
		}
		lines := strings.Split(base, "\n")
		for i, ln := range lines {
			cells := strings.Split(ln, ",")
			if dl.DecimalComma {
				for j := range cells {
					cells[j] = strings.ReplaceAll(cells[j], ".", ",")
				}
			}
			lines[i] = strings.Join(cells, string(dl.delim()))
		}
		got, err := Read(strings.NewReader(strings.Join(lines, "\n")), "x.csv", Options{Outcome: "y", Predictors: []string{"a", "b"}, Dialect: dl})
		if err != nil {
			t.Fatalf("%v: %v", c, err)
		}
		for i := range want.X {
			if got.X[i] != want.X[i] {
				t.Errorf("%v: X[%d] = %v, want %v", c, i, got.X[i], want.X[i])
			}
		}
		if msg := SuggestDialect([]byte(strings.Join(lines, "\n")), dl); msg != "" {
			t.Errorf("%v: suggestion for a file in its own dialect: %s", c, msg)
		}
	}
}

func TestSuggestDialect(t *testing.T) {
	for _, c := range []struct {
		file string
		d    Dialect
		want string
	}{
		{"y;a\n1;0,5\n2;1,5\n", Dialect{}, "set delimiter: semicolon and decimal: comma"},
		{"y;a\n1;0.5\n2;1\n", Dialect{}, "set delimiter: semicolon under data"},
		{"y\ta\n1\t0.5\n", Dialect{}, "set delimiter: tab under data"},
		{"y;a\n1;0.5\n", Dialect{Delimiter: ';', DecimalComma: true}, "set decimal: point under data"},
		{"y,a\n1,0.5\n", Dialect{}, ""},
		{"y\n1\n2\n", Dialect{}, ""},
	} {
		got := SuggestDialect([]byte(c.file), c.d)
		if c.want == "" && got != "" || !strings.Contains(got, c.want) {
			t.Errorf("%q: got %q, want %q", c.file, got, c.want)
		}
	}
}

func TestCheckUTF8(t *testing.T) {
	if msg := checkUTF8([]byte("a,b\ncaf\xc3\xa9,1\n")); msg != "" {
		t.Errorf("valid UTF-8 refused: %s", msg)
	}
	if msg := checkUTF8([]byte("a,b\ncaf\xc3")); msg != "" {
		t.Errorf("a rune cut at the end of the sample refused: %s", msg)
	}
	if msg := checkUTF8([]byte("a,b\ncaf\xe9,1\n")); !strings.Contains(msg, "byte 0xe9 on line 2") {
		t.Errorf("Latin-1: %q", msg)
	}
}
