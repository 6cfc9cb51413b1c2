package planshapes

import (
	"os"
	"path/filepath"
)

// Rich is a base plan with the keys the example plans leave out: weights,
// offset, clusters, every subset comparison, every rule kind,
// constraint groups, stepwise selection, a dictionary, assumptions with
// splines and nonparallel effects, deviations.
const Rich = `version: 1
title: every key
seed: 7
data:
  file: d.csv
  missing: drop
  missing_values: ["", "NA", "-9"]
  delimiter: comma
  decimal: point
  weights: w
  weight_kind: frequency
  offset: off
  cluster: cl
outcomes:
  - column: y
    categories: ["1", "2", "3", "4"]
    label: Outcome
  - column: z
    categories: [low, mid, high]
    predictors: [treat, {column: dose, sqrt: true}]
subset:
  - {column: age, at_least: 18}
  - {column: age, less_than: 90}
  - {column: dose, greater_than: 0}
  - {column: dose, at_most: 10}
  - {column: treat, one_of: [placebo, drug]}
  - {column: grade, none_of: ["4"]}
  - {column: pilot, equal_to: 1}
  - {column: x, not_equal_to: 2}
categorical:
  treat: {levels: [placebo, drug]}
  site: {levels: [north, east, south, west], reference: east, coding: sum, unobserved: drop}
  grade: {levels: ["1", "2", "3"], ordered: true, coding: successive}
predictors:
  - treat
  - site
  - grade
  - {column: age, centre: 40, scale: sd, spline: {quantiles: [0.1, 0.5, 0.9]}, name: age_s}
  - {column: dose, log: {shift: 1}, centre: mean}
  - {column: bmi, polynomial: {degree: 2, basis: raw}}
  - {column: x, spline: {knots: [0, 1, 2, 3]}}
  - {interact: [treat, age_s]}
  - {interact: [site, grade], name: sg}
models:
  approaches: [cumulative, stage]
  direction: backward
  effects: [parallel, constrained]
  links: [logit]
  partial:
    free: [treat, site, age_s]
    groups:
      - {name: g1, predictors: [treat, site]}
      - {name: g2, predictors: [age_s]}
  run_every_start: false
tests: {parallel_lines: [brant, lr, score, wald, wolfe_gould], alpha: 0.1}
rules:
  - reject_unconverged: true
  - reject_negative_probabilities: true
  - reject_if_test_rejects: {test: lr, alpha: 0.01, against: each_less_constrained, applies_to: [parallel]}
  - reject_if_simpler_is_close: {max_difference: 0.02, grid: {age: [30, 50, 70], dose: [1]}}
  - reject_if_sparse: {per_parameter: 10, smallest_category: 5, within: site}
  - reject_if_unstable: {max_condition: 1e8, min_starts_agreeing: 2}
  - choose: {by: tic, margin: 1, otherwise: cumulative/parallel/logit}
covariance: clustered
report: {title: R, focus_predictor: age_s, panels_by: site, confidence_level: 0.9, timestamp: false}
inference:
  hypotheses: ["treat = 0", "site.south = site.west", "tau[1] = -tau[3]", "age_s[1] = age_s[2]"]
  multiplicity: benjamini_hochberg
  marginal_effects: [average, means, profile]
  profile: {age: 50, site: south, treat: drug}
  predict: new.csv
dictionary:
  age: {range: [0, 120], unit: years, label: Age, missing: ["-1"]}
  dose: {range: [0, 100]}
  bmi: {range: [10, 60]}
  x: {range: [0, 3]}
  w: {range: [0, 10]}
  off: {range: [-5, 5]}
  cl: {label: Cluster}
  pilot: {values: [0, 1]}
  treat: {label: Treatment}
  site: {label: Site}
  grade: {label: Grade}
assumptions:
  n: 200
  comparison: stage
  direction: forward
  link: probit
  predictors:
    age: {mean: 50, sd: 10}
    site: {proportions: [0.25, 0.25, 0.25, 0.25]}
    treat: {proportions: [0.5, 0.5]}
  correlations: [{between: [age, dose], r: 0.3}]
  missing:
    dose: {proportion: 0.1, given: {age: 0.5, y: -0.3}}
    bmi: {proportion: 0.05}
  outcomes:
    y:
      proportions: [0.1, 0.2, 0.3, 0.4]
      effects:
        treat: {drug: 0.5}
        age_s: {at: [20, 50, 80], values: [0, 0.1, 0.3]}
        bmi.polynomial: {bmi.polynomial.1: 0.1, bmi.polynomial.2: -0.01}
        treat&age_s: {treat.drug&age_s.1: 0.1}
      nonparallel:
        site: [{north: 0.1}, {south: 0.2}, {west: 0.3}]
    z:
      proportions: [0.3, 0.4, 0.3]
deviations:
  - {key: "rules[3]", reason: a reason}
`

// Parts, Imputed and Chained are small bases with data as parts, as
// imputed sets, and imputed by the program.
const Parts = `version: 1
data: {parts: [p1.csv, "parts/*.csv"], missing: drop}
outcomes: [{column: y}]
predictors: [a, b, {column: c, polynomial: {degree: 3}}]
models: {effects: [parallel, partial, nonparallel], partial: {select: {method: stepwise, alpha: 0.1, test: lr}}}
rules: [{prefer_simpler: {by: aic, margin: 2}}]
covariance: sandwich_plain
`

const Imputed = `version: 1
data: {file: d.csv, imputed: {file: imp.csv, column: imp}, weights: w}
outcomes: [{column: z, categories: [low, mid, high]}]
categorical: {g: {levels: [u, v]}}
predictors: [g, x]
models: {approaches: [adjacent], effects: [parallel, constrained], partial: {free: [g, x]}}
rules: [{reject_if_test_rejects: true}, {choose: true}]
inference: {hypotheses: ["g.v = 0"], marginal_effects: [profile], profile: {g: v, x: 1}}
`

const Chained = `version: 1
data:
  file: d.csv
  missing: impute
  imputation: {sets: 2, iterations: 1, seed: 5, column_models: {age: normal_draw, site: multinomial}, convergence_table: true}
outcomes: [{column: safety, categories: [very_unsafe, unsafe, neutral, safe, very_safe]}]
categorical: {site: {levels: [north, east, south, west]}}
predictors: [site, {column: age, centre: mean}, a]
models: {approaches: [cumulative], effects: [parallel, partial], partial: {free: [a]}}
rules: [{reject_if_sparse: {per_parameter: 5}}, {choose: {by: aic}}]
inference: {hypotheses: ["site = 0"], marginal_effects: [average, means]}
`

// Bases are the base plans: the project's example plans (read from root,
// the module's folder) and the ones above.
func Bases(root string) [][]byte {
	out := [][]byte{[]byte(Rich), []byte(Parts), []byte(Imputed), []byte(Chained)}
	for _, name := range []string{"example.yaml", "kneepain.yaml"} {
		if b, err := os.ReadFile(filepath.Join(root, "plans", name)); err == nil {
			out = append(out, b)
		}
	}
	return out
}
