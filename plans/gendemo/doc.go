// Command gendemo writes the invented example data set used by the demo
// plans: plans/data/quietstreets.csv.
//
// # Scenario (invented)
//
// A fictional region runs a "neighbourhood quiet-streets programme": some
// residential streets get a traffic-calming pilot. A survey asks residents
// how safe they feel cycling on their own street. The people, streets,
// districts and answers are all made up by this program; no real survey
// lies behind them.
//
// Columns, one row per resident:
//
//	safety          outcome, ordered: very_unsafe < unsafe < neutral < safe < very_safe
//	pilot           1 if the resident's street is in the pilot, else 0
//	female          1 if the resident is female, else 0
//	age             age in whole years, 18..85 (about 1% empty = missing)
//	child_home      1 if a child lives in the home, else 0
//	years_resident  years lived on the street, 0..40, one decimal (about 2% empty = missing)
//	cyclist         1 if the resident cycles regularly, else 0
//	street_type     residential, through_road or cul_de_sac (text)
//	district        district id d01..d24 (usable as a cluster id)
//
// # How the predictors are drawn
//
// district is uniform over d01..d24. Districts d01-d10 are pilot districts,
// where a resident's street is in the pilot with probability 0.60; elsewhere
// with probability 0.15. female ~ Bernoulli(0.52). age is a normal(47, 16)
// draw rounded to whole years and redrawn until it lies in 18..85.
// child_home ~ Bernoulli(0.45) below age 50, else Bernoulli(0.12).
// years_resident is exponential with mean 11, capped at age-18 and at 40,
// rounded to one decimal. cyclist ~ Bernoulli(0.35) below age 40, else
// Bernoulli(0.20). street_type is residential with probability 0.55,
// through_road 0.25, cul_de_sac 0.20. There are no frequency weights: every row is one
// resident.
//
// # Outcome model (the true parameter values)
//
// The outcome follows a cumulative logit model with boundaries j = 1..4
// (between category j and j+1):
//
//	logit P(safety <= j | x) = theta_j - eta_j(x)
//	eta_j(x) = bPilot_j*pilot + bFemale_j*female + bAge*age
//	         + bChild*child_home + bYearsLog*log(years_resident + 1)
//	         + bCyclist*cyclist + bStreet[street_type]
//	         + bPilotThrough*pilot*[street_type = through_road]
//
// so a positive coefficient moves answers towards "very_safe". The pilot
// and female effects differ across the boundaries (nonparallel); the other
// effects are the same at every boundary (parallel):
//
//	theta     = (-2.60, -1.00, 0.40, 2.00)
//	bPilot_j  = ( 1.10,  0.85, 0.60, 0.40)
//	bFemale_j = (-0.55, -0.40, -0.25, -0.10)
//	bAge      = -0.015   (per year)
//	bChild    = -0.40
//	bYearsLog =  0.25    (per unit of log(years_resident + 1))
//	bCyclist  =  0.70
//	bStreet   = (0, -0.60, 0.35) for residential, through_road, cul_de_sac
//	bPilotThrough = 0.55 (the pilot works better on through roads)
//
// The model is drawn from with the complete predictor values; afterwards age
// is blanked completely at random with probability 0.01 and years_resident
// with probability 0.02, so that readers must drop incomplete rows.
//
// # Reproducibility
//
// n = 1800 rows are drawn from a math/rand/v2 PCG source seeded with
// (20250611, 1800). Uniform numbers are built directly from the source's
// 64-bit output and normal numbers by the Box-Muller method, and numbers
// are written with fixed decimals, so the output is byte-identical across
// runs. Regenerate with:
//
//	go run ./plans/gendemo -out plans/data/quietstreets.csv
package main
