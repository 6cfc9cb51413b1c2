package jsonkeys

import (
	"slices"
	"testing"
)

// Keys at every depth (objects in arrays, objects in objects) are checked;
// values are not keys.
func TestNotSnakeCase(t *testing.T) {
	js := []byte(`{"ok_key":1,"Bad":{"x2":[{"camelCase":"NotAKey","_lead":0}],"trail_":null},"a__b":[[{"Bad":2}]]}`)
	got, err := NotSnakeCase(js)
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"Bad", "_lead", "a__b", "camelCase", "trail_"}
	if !slices.Equal(got, want) {
		t.Fatalf("got %v, want %v", got, want)
	}
	if _, err := NotSnakeCase([]byte(`{`)); err == nil {
		t.Fatal("no error for broken JSON")
	}
}

// The keys of an object under a key named as keyed by name are not
// checked (directly or in an array there); the objects they hold are, and
// the same key elsewhere is.
func TestNotSnakeCaseByName(t *testing.T) {
	js := []byte(`{"estimates":{"tau[1]":1,"age.s":{"Inner":2}},"phi":[{"g1":{"x":1}},{"Grp":0}],"fits":{"tau[1]":1}}`)
	got, err := NotSnakeCase(js, "estimates", "phi")
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"Inner", "tau[1]"}
	if !slices.Equal(got, want) {
		t.Fatalf("got %v, want %v", got, want)
	}
}
