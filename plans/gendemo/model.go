package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
)

// True parameter values (see the package comment).
var (
	labels    = []string{"very_unsafe", "unsafe", "neutral", "safe", "very_safe"}
	theta     = []float64{-2.60, -1.00, 0.40, 2.00}
	bPilot    = []float64{1.10, 0.85, 0.60, 0.40}
	bFemale   = []float64{-0.55, -0.40, -0.25, -0.10}
	bAge      = -0.015
	bChild    = -0.40
	bYearsLog = 0.25 // per unit of log(years_resident + 1)
	bCyclist  = 0.70
	// street_type: residential (reference), through_road, cul_de_sac
	streetTypes = []string{"residential", "through_road", "cul_de_sac"}
	streetShare = []float64{0.55, 0.25, 0.20}
	bStreet     = []float64{0, -0.60, 0.35}
	// the pilot works better on through roads: pilot x through_road
	bPilotThrough = 0.55
	pMissAge      = 0.01
	pMissYear     = 0.02
)

// gen draws from a PCG source only through its 64-bit output, so that the
// stream depends on nothing but the source.
type gen struct{ src *rand.PCG }

func newGen(hi, lo uint64) *gen { return &gen{src: rand.NewPCG(hi, lo)} }

// unif returns a uniform number in [0, 1).
func (g *gen) unif() float64 { return float64(g.src.Uint64()>>11) / (1 << 53) }

func (g *gen) bern(p float64) int {
	if g.unif() < p {
		return 1
	}
	return 0
}

// normal returns a standard normal number (Box-Muller, one of the pair).
func (g *gen) normal() float64 {
	u1, u2 := 1-g.unif(), g.unif()
	return math.Sqrt(-2*math.Log(u1)) * math.Cos(2*math.Pi*u2)
}

// resident is one simulated survey row.
type resident struct {
	safety                        int
	pilot, female, child, cyclist int
	age                           int
	years                         float64
	district                      int
	street                        int
	ageMissing, yearsMissing      bool
}

func (g *gen) resident() (resident, error) {
	var r resident
	r.district = int(g.unif() * districts)
	pPilot := 0.15
	if r.district < 10 {
		pPilot = 0.60
	}
	r.pilot = g.bern(pPilot)
	r.female = g.bern(0.52)
	for {
		r.age = int(math.Round(47 + 16*g.normal()))
		if r.age >= 18 && r.age <= 85 {
			break
		}
	}
	pChild, pCyc := 0.12, 0.20
	if r.age < 50 {
		pChild = 0.45
	}
	if r.age < 40 {
		pCyc = 0.35
	}
	r.child = g.bern(pChild)
	y := -11 * math.Log(1-g.unif())
	y = math.Min(y, math.Min(float64(r.age-18), 40))
	r.years = math.Round(y*10) / 10
	r.cyclist = g.bern(pCyc)
	u := g.unif()
	for r.street = 0; r.street < len(streetShare)-1 && u >= streetShare[r.street]; r.street++ {
		u -= streetShare[r.street]
	}

	s, err := r.draw(g.unif())
	if err != nil {
		return r, err
	}
	r.safety = s
	r.ageMissing = g.unif() < pMissAge
	r.yearsMissing = g.unif() < pMissYear
	return r, nil
}

// draw returns the category whose cumulative probability interval holds u.
func (r *resident) draw(u float64) (int, error) {
	common := bAge*float64(r.age) + bChild*float64(r.child) +
		bYearsLog*math.Log(r.years+1) + bCyclist*float64(r.cyclist) + bStreet[r.street]
	if r.street == 1 {
		common += bPilotThrough * float64(r.pilot)
	}
	prev := 0.0
	for j := range theta {
		eta := common + bPilot[j]*float64(r.pilot) + bFemale[j]*float64(r.female)
		cum := 1 / (1 + math.Exp(-(theta[j] - eta)))
		if cum < prev {
			return 0, fmt.Errorf("cumulative probabilities cross at boundary %d", j+1)
		}
		if u < cum {
			return j, nil
		}
		prev = cum
	}
	return len(theta), nil
}

func (r *resident) csv() string {
	age := strconv.Itoa(r.age)
	if r.ageMissing {
		age = ""
	}
	years := strconv.FormatFloat(r.years, 'f', 1, 64)
	if r.yearsMissing {
		years = ""
	}
	return strings.Join([]string{
		labels[r.safety],
		strconv.Itoa(r.pilot),
		strconv.Itoa(r.female),
		age,
		strconv.Itoa(r.child),
		years,
		strconv.Itoa(r.cyclist),
		streetTypes[r.street],
		fmt.Sprintf("d%02d", r.district+1),
	}, ",") + "\n"
}
