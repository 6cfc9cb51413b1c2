package data

import (
	"os"
	"path/filepath"
	"testing"
)

// Twins pairs a file with the first earlier one it is (a link) or whose
// bytes it holds; files of one size with other bytes, a path written
// twice and a missing file are no twins.
func TestTwins(t *testing.T) {
	dir := t.TempDir()
	w := func(name, body string) string {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(body), 0o644)
		return p
	}
	a, b, c := w("a.csv", "y,x\n1,2\n"), w("b.csv", "y,x\n1,3\n"), w("c.csv", "y,x\n1,2\n")
	// a large copy, compared over more than one block
	big := make([]byte, 3<<20)
	for i := range big {
		big[i] = byte('0' + i%10)
	}
	big1, big2 := w("big1.csv", string(big)), w("big2.csv", string(big))
	bigSum := HashBytes(big)
	big[len(big)-1] = 'x'
	big3 := w("big3.csv", string(big))
	link := filepath.Join(dir, "l.csv")
	if err := os.Symlink("b.csv", link); err != nil {
		t.Fatal(err)
	}
	got := Twins([]string{a, b, a, filepath.Join(dir, "none.csv"), c, link, big1, big3, big2})
	want := []Twin{{First: 0, Second: 4, SHA256: HashBytes([]byte("y,x\n1,2\n")), Link: -1}, {First: 1, Second: 5, SameFile: true, Link: 5},
		{First: 6, Second: 8, SHA256: bigSum, Link: -1}}
	if len(got) != len(want) {
		t.Fatalf("got %+v, want %+v", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("twin %d: %+v, want %+v", i, got[i], want[i])
		}
	}
}
