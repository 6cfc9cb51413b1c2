package runner

import (
	"runtime/debug"
	"sync"
)

// Version of the program, recorded in every run.
const Version = "0.1.0"

// Revision is the source revision the program was built from, "git
// 0123456789ab" (with "+modified" when the work tree had uncommitted
// changes), as the Go toolchain stamps it into binaries built by go build
// or go install inside a git checkout; "" when it did not (go run, go
// test, a copy without .git). Two builds that write the same Version can so
// be told apart in run.json and the report.
func Revision() string {
	revisionOnce.Do(func() {
		if bi, ok := debug.ReadBuildInfo(); ok {
			revision = revisionOf(bi.Settings)
		}
	})
	return revision
}

// revisionOf is Revision from a build's settings.
func revisionOf(settings []debug.BuildSetting) string {
	var rev, modified string
	for _, s := range settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			modified = s.Value
		}
	}
	if rev == "" {
		return ""
	}
	out := "git " + rev[:min(12, len(rev))]
	if modified == "true" {
		out += "+modified"
	}
	return out
}

var (
	revisionOnce sync.Once
	revision     string
)
