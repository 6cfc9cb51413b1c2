package data

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

func TestReadHeader(t *testing.T) {
	names, err := ReadHeader(strings.NewReader("\uFEFF y , a,\"b c\"\r\n1,2\n"), "h.csv")
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"y", "a", "b c"}; !reflect.DeepEqual(names, want) {
		t.Errorf("names %q, want %q", names, want)
	}
	for _, c := range []struct{ in, want string }{
		{"", `h.csv: file is empty (a header line naming the columns is needed)`},
		{"y,a,a\n", `h.csv:1: header: column name "a" appears twice (columns 2 and 3)`},
		{"y,,a\n", `h.csv:1: header: column 2 has no name`},
		{"y,\"a\n", `h.csv:1: malformed CSV at character 6: extraneous or missing " in quoted-field`},
	} {
		_, err := ReadHeader(strings.NewReader(c.in), "h.csv")
		var e *Error
		if !errors.As(err, &e) || err.Error() != c.want {
			t.Errorf("ReadHeader(%q) = %v, want %s", c.in, err, c.want)
		}
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "h.csv")
	os.WriteFile(path, []byte("y,x\n"), 0o644)
	if names, err := Header(path); err != nil || !reflect.DeepEqual(names, []string{"y", "x"}) {
		t.Errorf("Header = %q, %v", names, err)
	}
	_, err = Header(filepath.Join(dir, "none.csv"))
	var e *Error
	if !errors.As(err, &e) || !strings.HasPrefix(e.Msg, "cannot open file: ") || !errors.Is(err, os.ErrNotExist) {
		t.Errorf("Header of a missing file: %v", err)
	}
}

// Rows of weight zero stand for no observation: they are dropped and
// counted, and a file of nothing else says so.
func TestAllRowsZeroWeight(t *testing.T) {
	_, err := Read(strings.NewReader("y,w\n1,0\n2,0\n"), "t.csv", Options{Outcome: "y", Weights: "w"})
	want := `t.csv: all 2 data rows were dropped for missing values or zero weight (w = 0: 2)`
	if err == nil || err.Error() != want {
		t.Errorf("got %v, want %s", err, want)
	}
}
