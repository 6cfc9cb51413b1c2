package data

import (
	"bytes"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
)

// LevelDrops reads the rows of a level (or a combination of levels) again
// and says why none is used, alike from a CSV file and from a Parquet
// file of the same rows (read row by row: Options.OnlyLevels), and from
// the file cut into parts; nothing when some row of the level is used.
func TestLevelDrops(t *testing.T) {
	type row struct {
		Y    int64   `parquet:"y"`
		Site string  `parquet:"site"`
		X    float64 `parquet:"x"`
		W    float64 `parquet:"w"`
		Keep string  `parquet:"keep"`
	}
	var rows []row
	var csv strings.Builder
	csv.WriteString("y,site,x,w,keep\n")
	for i := 0; i < 30; i++ {
		r := row{Y: int64(1 + i%3), Site: []string{"north", "east", "south"}[i%3], X: float64(i), W: 1, Keep: "yes"}
		switch {
		case r.Site == "south" && i%2 == 0:
			r.Keep = "no" // 5 rows outside the subset
		case r.Site == "south":
			r.W = 0 // 5 rows of weight 0
		}
		rows = append(rows, r)
		csv.WriteString(strings.Join([]string{strconv.FormatInt(r.Y, 10), r.Site, strconv.FormatFloat(r.X, 'g', -1, 64), strconv.FormatFloat(r.W, 'g', -1, 64), r.Keep}, ",") + "\n")
	}
	dir := t.TempDir()
	var pq bytes.Buffer
	w := parquet.NewGenericWriter[row](&pq)
	if _, err := w.Write(rows); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(csv.String(), "\n")
	files := map[string]string{"d.csv": csv.String(), "d.parquet": pq.String(),
		"p1.csv": strings.Join(lines[:16], ""), "p2.csv": lines[0] + strings.Join(lines[16:], "")}
	for name, body := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	opt := Options{Outcome: "y", Predictors: []string{"site", "x"}, PredictorLevels: map[string][]string{"site": {"north", "east", "south"}},
		Weights: "w", Keep: []Condition{{Column: "keep", Op: "in", Values: []string{"yes"}}}}
	want := "It occurs in 10 rows of the data, each dropped for the subset or zero weight (w = 0: 5, outside the subset keep in {yes}: 5; a row with several of these is counted once, under the first)"
	for _, paths := range [][]string{{"d.csv"}, {"d.parquet"}, {"p1.csv", "p2.csv"}} {
		for i := range paths {
			paths[i] = filepath.Join(dir, paths[i])
		}
		if got := LevelDrops(paths, opt, []LevelRef{{Column: "site", Level: "south"}}, nil); got != want {
			t.Errorf("%v:\n%q\nwant\n%q", paths, got, want)
		}
		if got := LevelDrops(paths, opt, []LevelRef{{Column: "site", Level: "north"}}, nil); got != "" {
			t.Errorf("%v: a level with rows used: %q", paths, got)
		}
	}
}
