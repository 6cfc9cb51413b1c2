package words

import (
	"slices"
	"strconv"
	"strings"
	"testing"
)

type color int

var colorWords = New[color]("colour", "red", "dark_green")

func TestSetParsesPrintsAndLists(t *testing.T) {
	if c, err := colorWords.Parse("dark_green"); err != nil || c != 1 || colorWords.Name(c) != "dark_green" {
		t.Fatalf("parse: %v %v", c, err)
	}
	_, err := colorWords.Parse("Dark-Green")
	if err == nil || !strings.Contains(err.Error(), `unknown colour "Dark-Green" (want red or dark_green); did you mean "dark_green"?`) {
		t.Fatalf("got %v", err)
	}
	if got := colorWords.Name(7); got != "colour(7)" {
		t.Errorf("out of range: %s", got)
	}
	if _, err := colorWords.Text(-1); err == nil {
		t.Error("Text accepted a value outside the set")
	}
	if all := colorWords.All(); len(all) != 2 || all[1] != 1 {
		t.Errorf("All = %v", all)
	}
	if OrList([]string{"a", "b", "c"}) != "a, b or c" || OrList([]string{"a"}) != "a" {
		t.Error("OrList")
	}
	if got := AndList(Each([]int{3, 1, 2}, func(i int) string { return colorWords.Name(color(i % 2)) })); got != "dark_green, dark_green and red" {
		t.Errorf("Each: %q", got)
	}
}

func TestNearestByEditDistance(t *testing.T) {
	names := []string{"dose.low", "dose.mid", "dose.high", "female", "age_c", "dose"}
	for _, c := range []struct {
		w    string
		want []string
	}{
		{"dose.hgh", []string{"dose.high", "dose.low", "dose.mid"}}, // one deletion, then two edits each
		{"dos", []string{"dose"}},
		{"femael", []string{"female"}}, // a swap counts once
		{"AGE_C", nil},                 // differs in case only: first, at distance 0
		{"zzzzzzzz", nil},
	} {
		got := Nearest(c.w, names, 3)
		if c.w == "AGE_C" {
			if len(got) == 0 || got[0] != "age_c" {
				t.Errorf("Nearest(%q) = %v, want age_c first", c.w, got)
			}
			continue
		}
		if !slices.Equal(got, c.want) {
			t.Errorf("Nearest(%q) = %v, want %v", c.w, got, c.want)
		}
	}
}

// A count takes its noun in the number the count asks for.
func TestCount(t *testing.T) {
	for _, c := range []struct {
		n    int
		want string
	}{{0, "0 keys"}, {1, "1 key"}, {2, "2 keys"}, {12, "12 keys"}} {
		if got := Count(c.n, "key", "keys"); got != c.want {
			t.Errorf("Count(%d) = %q, want %q", c.n, got, c.want)
		}
		if got, want := Form(c.n, "key", "keys"), c.want[len(strconv.Itoa(c.n))+1:]; got != want {
			t.Errorf("Form(%d) = %q, want %q", c.n, got, want)
		}
	}
}

// A level is written as it is unless it would blur a list or a "column =
// level" pair: empty, or holding a space or punctuation such as a comma.
func TestLevel(t *testing.T) {
	for _, c := range [][2]string{
		{"north", "north"}, {"01", "01"}, {"café", "café"}, {"a.b_c", "a.b_c"},
		{"", `""`}, {"east side", `"east side"`}, {"so,uth", `"so,uth"`}, {`pub "x"`, `"pub \"x\""`},
		{"a=b", `"a=b"`}, {"{x}", `"{x}"`},
	} {
		if got := Level(c[0]); got != c[1] {
			t.Errorf("Level(%q) = %s, want %s", c[0], got, c[1])
		}
	}
}
