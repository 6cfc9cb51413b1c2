package data

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

// Numbers below the normal range are read as strconv.ParseFloat reads
// them (subnormals to the nearest number held, bit for bit) on every path
// (the record path, the chunked fast paths, a decimal comma, a
// workbook's number cells); a nonzero number written that strconv reads
// as 0 (1e-400) is refused, naming it, on every path too (D56).
func TestSubnormalAndUnderflow(t *testing.T) {
	subnormals := []string{"4e-320", "-4e-320", "2.5e-324", "4.9406564584124654e-324", "2.2250738585072011e-308",
		"1e-310", "0.0000001e-310", "12345678e-330", "4E-320", "0." + strings.Repeat("0", 315) + "4", "0e-400", "-0.000e-999"}
	// rows builds a file of many plain rows around the cells, so that the
	// chunked reader takes the fast path on most lines.
	rows := func(cells []string, delim, mark string) string {
		var b strings.Builder
		b.WriteString("y" + delim + "a" + delim + "b\n")
		for i := 0; i < 20000; i++ {
			fmt.Fprintf(&b, "%d%s1%s5%s2\n", i%2+1, delim, mark, delim)
		}
		for i, c := range cells {
			fmt.Fprintf(&b, "%d%s%s%s%d\n", i%2+1, delim, strings.Replace(c, ".", mark, 1), delim, i)
		}
		return b.String()
	}
	dialects := []struct {
		delim, mark string
		d           Dialect
	}{{",", ".", Dialect{}}, {";", ",", Dialect{Delimiter: ';', DecimalComma: true}}, {"\t", ".", Dialect{Delimiter: '\t'}}}
	for _, dl := range dialects {
		text := rows(subnormals, dl.delim, dl.mark)
		path := filepath.Join(t.TempDir(), "sub.csv")
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		o := opts
		o.Dialect = dl.d
		loaded, err := Load(path, o)
		if err != nil {
			t.Fatalf("%q: %v", dl.delim, err)
		}
		read, err := Read(strings.NewReader(text), "sub.csv", o)
		if err != nil {
			t.Fatalf("%q: %v", dl.delim, err)
		}
		for i, c := range subnormals {
			want, err := strconv.ParseFloat(c, 64)
			if err != nil {
				t.Fatal(err)
			}
			for _, d := range []*Dataset{loaded, read} {
				if got := d.X[2*(20000+i)]; math.Float64bits(got) != math.Float64bits(want) {
					t.Errorf("%q: %s read as %v, strconv %v", dl.delim, c, got, want)
				}
			}
		}
		for _, c := range []string{"1e-400", "-1e-400", "2.4e-324", "0." + strings.Repeat("0", 330) + "1", "0.0001e-330"} {
			text := rows([]string{c}, dl.delim, dl.mark)
			path := filepath.Join(t.TempDir(), "under.csv")
			if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
				t.Fatal(err)
			}
			cell := strings.Replace(c, ".", dl.mark, 1)
			want := fmt.Sprintf("under.csv:20002: column \"a\": value %s is too small for a number: it is not zero, but smaller in size than the smallest number held (about 4.9e-324), and would be read as 0", quoteCell(cell))
			_, err := Load(path, o)
			if err == nil || !strings.HasPrefix(strings.TrimPrefix(err.Error(), filepath.Dir(path)+"/"), want) {
				t.Errorf("Load %s: got %v, want %s", cell, err, want)
			}
			_, err = Read(strings.NewReader(text), "under.csv", o)
			if err == nil || !strings.HasPrefix(err.Error(), want) {
				t.Errorf("Read %s: got %v, want %s", cell, err, want)
			}
		}
	}
	// A workbook: a number cell holding a subnormal, a text cell holding
	// one that underflows.
	book := toBook(t, "y,a,b\n1,4e-320,1\n2,1,2\n1,2,1\n")
	path := filepath.Join(t.TempDir(), "sub.xlsx")
	if err := os.WriteFile(path, book, 0o644); err != nil {
		t.Fatal(err)
	}
	d, err := Load(path, opts)
	if err != nil || d.X[0] != 4e-320 {
		t.Fatalf("workbook subnormal: %v %v", d, err)
	}
	f := excelize.NewFile()
	defer f.Close()
	for i, row := range [][]any{{"y", "a", "b"}, {1, "1e-400", 1}, {2, 1, 2}, {1, 2, 1}} {
		if err := f.SetSheetRow("Sheet1", fmt.Sprintf("A%d", i+1), &row); err != nil {
			t.Fatal(err)
		}
	}
	var b bytes.Buffer
	if err := f.Write(&b); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Load(path, opts); err == nil || !strings.Contains(err.Error(), `value "1e-400" is too small for a number`) {
		t.Fatalf("workbook underflow: %v", err)
	}
}
