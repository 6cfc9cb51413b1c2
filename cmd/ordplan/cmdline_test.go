package main

import "testing"

// TestCommandLine: the command line recorded in the report keeps what can
// change the results and quotes what a shell would split.
func TestCommandLine(t *testing.T) {
	args := []string{"my plan.yaml", "--out", "/tmp/a", "--workers=3", "--quiet", "--previous", "old run", "--queue", "nats://h:1"}
	got := commandLine(append([]string{"ordplan", "run"}, resultArgs(args)...))
	want := `ordplan run 'my plan.yaml' --previous 'old run'`
	if got != want {
		t.Errorf("got  %s\nwant %s", got, want)
	}
	if got := commandLine([]string{"a'b"}); got != `'a'\''b'` {
		t.Errorf("quote: %s", got)
	}
}
