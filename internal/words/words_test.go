package words

import (
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
}
