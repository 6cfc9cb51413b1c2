package plan_test

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/planshapes"
)

// TestShowShape prints the plan planshapes makes of a fuzz input, to read a
// failing input of FuzzPlanShapes or FuzzPlanRun: SHAPE=/abs/path/of/the/
// testdata/fuzz/file (or SHAPE=2,250,5 for the bytes) go test ./plan -run
// TestShowShape -v.
func TestShowShape(t *testing.T) {
	s := os.Getenv("SHAPE")
	if s == "" {
		t.Skip()
	}
	var b []byte
	if strings.HasPrefix(s, "/") {
		src, _ := os.ReadFile(s)
		line := strings.Split(string(src), "\n")[1]
		line = strings.TrimSuffix(strings.TrimPrefix(line, "[]byte("), ")")
		u, err := strconv.Unquote(line)
		if err != nil {
			t.Fatal(err)
		}
		b = []byte(u)
	} else {
		for _, f := range strings.Split(s, ",") {
			v, _ := strconv.Atoi(f)
			b = append(b, byte(v))
		}
	}
	os.Stdout.Write(planshapes.Plan(b, planshapes.Bases(filepath.Join(".."))))
}
