package runner

import (
	"runtime/debug"
	"testing"
)

// The source revision as the toolchain stamps it (the settings go
// version -m prints for a binary built in a git checkout).
func TestRevisionOf(t *testing.T) {
	vcs := func(rev, modified string) []debug.BuildSetting {
		return []debug.BuildSetting{{Key: "vcs", Value: "git"}, {Key: "vcs.revision", Value: rev}, {Key: "vcs.modified", Value: modified}}
	}
	for _, c := range []struct {
		settings []debug.BuildSetting
		want     string
	}{
		{vcs("cbbbe0f40d5021a4d355ce51d2a8970195680d3b", "false"), "git cbbbe0f40d50"},
		{vcs("cbbbe0f40d5021a4d355ce51d2a8970195680d3b", "true"), "git cbbbe0f40d50+modified"},
		{[]debug.BuildSetting{{Key: "-buildmode", Value: "exe"}}, ""},
	} {
		if got := revisionOf(c.settings); got != c.want {
			t.Errorf("%v: %q, want %q", c.settings, got, c.want)
		}
	}
}
