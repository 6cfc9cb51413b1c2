package simulate

import (
	"fmt"
	"math"
	"math/rand/v2"

	"ordplan/runner"
	"ordplan/runner/fit"
)

// Clusters gives the number of clusters simulated in n rows: the stated
// number, or n over the rows of each cluster, rounded up. It refuses n
// rows that cannot hold the stated number, or that make one cluster,
// naming the key (Assumptions.ClusterSizeProblem).
func (s *Sim) Clusters(n int) (int, error) {
	if key, problem := s.Plan.Assumptions.ClusterSizeProblem(n, ""); problem != "" {
		return 0, fmt.Errorf("%s: %s: %s", s.Plan.Path, key, problem)
	}
	if s.clusterNumber > 0 {
		return s.clusterNumber, nil
	}
	return (n + s.clusterRows - 1) / s.clusterRows, nil
}

// clusterOf gives the cluster (from 0) of row i of n: runs of consecutive
// rows, of clusterRows rows each, or clusterNumber runs whose sizes
// differ by at most one.
func (s *Sim) clusterOf(i, n int) int {
	if s.clusterNumber > 0 {
		return int(int64(i) * int64(s.clusterNumber) / int64(n))
	}
	return i / s.clusterRows
}

// intercepts draws the G clusters' intercepts of replicate r of size n,
// from a stream of their own (nil without a cluster effect), so that the
// other values are those the same plan draws without one.
func (s *Sim) intercepts(n int, r uint64, G int) []float64 {
	if s.clusterSD == 0 {
		return nil
	}
	rng := rand.New(rand.NewPCG(s.seed, uint64(n)<<32^r^0xc1057e4))
	u := make([]float64, G)
	for g := range u {
		u[g] = s.clusterSD * rng.NormFloat64()
	}
	return u
}

// ClustersRecord says how the cluster column was simulated (nil: the plan
// has none). With n > 0 (a rehearsal of n rows, replicate 0) it gives the
// clusters made, their smallest and largest sizes, and the standard
// deviation of the intercepts drawn.
func (s *Sim) ClustersRecord(n int) *runner.SimulatedClusters {
	if s.Cluster == "" {
		return nil
	}
	c := s.Plan.Assumptions.Clusters
	rec := &runner.SimulatedClusters{Column: s.Cluster, Stated: c != nil, Number: s.clusterNumber, InterceptSD: s.clusterSD, Effect: "none"}
	if s.clusterNumber == 0 {
		rec.RowsEach = s.clusterRows
	}
	for _, k := range s.perCluster {
		rec.PerCluster = append(rec.PerCluster, s.Predictors[k].Column)
	}
	switch {
	case c != nil && c.ICCStated:
		rec.Effect = "latent_icc"
	case c != nil && s.clusterSD > 0:
		rec.Effect = "intercept_sd"
	}
	if v, ok := fit.LinkVariance(s.Link); ok {
		icc := s.clusterSD * s.clusterSD / (s.clusterSD*s.clusterSD + v)
		if c != nil && c.ICCStated {
			icc = c.ICC // as stated, not through the square root and back
		}
		rec.LatentICC, rec.LinkVariance = &icc, &v
	}
	if n <= 0 {
		return rec
	}
	G, err := s.Clusters(n)
	if err != nil {
		return rec
	}
	rec.Clusters = G
	if s.clusterNumber > 0 {
		rec.RowsMin, rec.RowsMax = n/G, (n+G-1)/G
	} else {
		rec.RowsMin, rec.RowsMax = n-(G-1)*s.clusterRows, s.clusterRows
	}
	if u := s.intercepts(n, 0, G); u != nil {
		mean, ss := 0.0, 0.0
		for _, x := range u {
			mean += x
		}
		mean /= float64(G)
		for _, x := range u {
			ss += (x - mean) * (x - mean)
		}
		sd := math.Sqrt(ss / float64(G-1))
		rec.DrawnSD = &sd
	}
	return rec
}
