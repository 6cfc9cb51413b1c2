package testsurvey

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
)

// LevelSeparated is an invented survey whose nonparallel fit separates: a
// factor g of Levels levels (rows in turn over the levels, row i at level
// i mod Levels), two numeric predictors (x1 standard normal, x2 uniform on
// [0, 1] to three decimals) and y in 1..4 from a cumulative logit
// (Category, cutpoints -1, 0, 1) with linear predictor
// e_g + 0.5 x1 - 0.3 x2, the level effects e_g normal with standard
// deviation 0.5; every tenth level (the first among them) has all its rows
// in category 4. A fit with g's effects nonparallel then has no finite
// maximum, and the slopes of those levels in the first two equations
// appear in no row's likelihood.
type LevelSeparated struct {
	Levels int
	Y, G   []int // category 1..4 and level 0..Levels-1 of each row
	X1, X2 []float64
}

// NewLevelSeparated draws n rows of LevelSeparated with levels levels.
func NewLevelSeparated(rng *rand.Rand, n, levels int) LevelSeparated {
	s := LevelSeparated{Levels: levels}
	eff := make([]float64, levels)
	for i := range eff {
		eff[i] = rng.NormFloat64() * 0.5
	}
	cuts := []float64{-1, 0, 1}
	for i := 0; i < n; i++ {
		g := i % levels
		x1 := rng.NormFloat64()
		x2 := math.Round(rng.Float64()*1000) / 1000
		y := Category(rng.Float64(), eff[g]+0.5*x1-0.3*x2, cuts)
		if g%10 == 0 {
			y = 4
		}
		s.Y, s.G, s.X1, s.X2 = append(s.Y, y), append(s.G, g), append(s.X1, x1), append(s.X2, x2)
	}
	return s
}

// Level is the name of level g: L followed by its number in three digits.
func (LevelSeparated) Level(g int) string { return fmt.Sprintf("L%03d", g) }

// Design is the design matrix (row-major) with treatment dummies of g
// against its first level, then x1 and x2, and the columns' names
// (g.L001, ..., x1, x2).
func (s LevelSeparated) Design() (x []float64, names []string) {
	K := s.Levels + 1
	for g := 1; g < s.Levels; g++ {
		names = append(names, "g."+s.Level(g))
	}
	names = append(names, "x1", "x2")
	x = make([]float64, len(s.Y)*K)
	for i, g := range s.G {
		if g > 0 {
			x[i*K+g-1] = 1
		}
		x[i*K+K-2], x[i*K+K-1] = s.X1[i], s.X2[i]
	}
	return x, names
}

// CSV is the survey as a CSV file (columns y, g, x1, x2).
func (s LevelSeparated) CSV() string {
	var b strings.Builder
	b.WriteString("y,g,x1,x2\n")
	for i := range s.Y {
		fmt.Fprintf(&b, "%d,%s,%g,%g\n", s.Y[i], s.Level(s.G[i]), s.X1[i], s.X2[i])
	}
	return b.String()
}

// Plan is a plan of the survey in file data: the cumulative logit with
// parallel and with nonparallel effects of g, x1 and x2, the
// likelihood-ratio test of parallel lines, rules rejecting the fits that
// did not converge (both, as both separate) and choosing by BIC.
func (s LevelSeparated) Plan(data string) string {
	levels := make([]string, s.Levels)
	for g := range levels {
		levels[g] = s.Level(g)
	}
	return fmt.Sprintf(`version: 1
title: A factor of %d levels that separates
seed: 1
data:
  file: %s
  missing: drop
outcomes:
  - column: y
    categories: [1, 2, 3, 4]
    label: y
categorical:
  g: {levels: [%s]}
predictors: [g, x1, x2]
dictionary:
  g: {label: group}
  x1: {range: [-10, 10]}
  x2: {range: [0, 1]}
models:
  approaches: [cumulative]
  effects: [parallel, nonparallel]
  links: [logit]
tests:
  parallel_lines: [lr]
  alpha: 0.05
rules:
  - reject_unconverged: true
  - prefer_simpler: {by: bic, margin: 2}
covariance: observed
report:
  timestamp: false
`, s.Levels, data, strings.Join(levels, ", "))
}
