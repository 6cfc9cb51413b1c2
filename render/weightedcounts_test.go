package render

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Counts that are sums of sampling weights are written with one decimal
// each, in the table of the outcome's categories and in that of the
// predictors by outcome category, so that 257.85 and 264.416 (six
// significant digits) no longer sit in one column; whole counts stay whole.
func TestWeightedCountsOneDecimal(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("y,g,x,w\n")
	r := uint32(7)
	next := func(n uint32) int { r = r*1664525 + 1013904223; return int((r >> 16) % n) }
	for i := 0; i < 90; i++ {
		fmt.Fprintf(&b, "%d,%s,%.2f,%.3f\n", 1+next(3), []string{"a", "b", "c"}[next(3)], float64(next(40))/3, 0.5+float64(next(17))/7)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
data: {file: d.csv, weights: w, weight_kind: sampling}
outcomes: [{column: y, categories: ["1", "2", "3"]}]
categorical:
  g: {levels: [a, b, c]}
predictors: [g, x]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
rules:
  - choose: {by: tic}
`
	md := string(renderSource(t, dir, src, 0)["report.md"])
	table := func(caption string) []string {
		_, after, ok := strings.Cut(md, caption)
		if !ok {
			t.Fatalf("report.md has no table %q", caption)
		}
		var lines []string
		for _, l := range strings.Split(after, "\n")[3:] {
			if !strings.HasPrefix(l, "|") {
				break
			}
			lines = append(lines, l)
		}
		return lines
	}
	for _, l := range table("** Outcome categories\n") {
		cells := strings.Split(l, "|")
		if c := strings.TrimSpace(cells[2]); !oneDecimal(c) || c == "" {
			t.Errorf("outcome categories: count %q is not written with one decimal: %s", c, l)
		}
	}
	for _, l := range table("** Predictors by outcome category\n") {
		if !strings.HasPrefix(l, "| g = ") {
			continue
		}
		for _, cell := range strings.Split(l, "|")[2:] {
			count, _, _ := strings.Cut(strings.TrimSpace(cell), " (")
			if count != "" && !oneDecimal(count) {
				t.Errorf("predictors by category: count %q is not written with one decimal: %s", count, l)
			}
		}
	}
}

func oneDecimal(s string) bool {
	whole, dec, ok := strings.Cut(s, ".")
	return ok && whole != "" && len(dec) == 1
}
