package runner

import (
	"strings"
	"testing"

	"ordplan/runner/data"
	"ordplan/runner/design"
)

// A level of a categorical predictor whose rows lie in one cluster (a
// site's own fixed effect under errors clustered by site) is named: its
// cluster-robust errors have nothing to rest on. The reference level, a
// level met in several clusters, a numeric column and a sum-coded column
// are not. Expected by hand from the rows below.
func TestOneClusterLevels(t *testing.T) {
	site := &design.Categorical{Levels: []string{"A", "B", "C"}}
	sum := &design.Categorical{Levels: []string{"u", "v"}, Coding: design.Sum}
	r := Reading{Design: design.Spec{Sources: []design.Source{{Name: "x"}, {Name: "site", Cat: site}, {Name: "s", Cat: sum}}}}
	// Columns x, site (level index), s (level index); clusters by row.
	ds := &data.Dataset{Predictors: []string{"x", "site", "s"}, K: 3, N: 6,
		X:       []float64{0.1, 0, 0, 0.2, 1, 1, 0.3, 1, 0, 0.4, 2, 1, 0.5, 2, 0, 0.6, 0, 1},
		Cluster: []string{"k1", "k2", "k2", "k3", "k3", "k1"}}
	got := oneClusterLevels(r, ds)
	if !strings.HasPrefix(got, `the rows of site = B (cluster "k2"), site = C (cluster "k3") lie in one cluster each`) || strings.Contains(got, "site = A") || strings.Contains(got, "s = ") {
		t.Errorf("got %q", got)
	}
	// Level B met in a second cluster: only C is named (one level: "lie in
	// one cluster", not "each").
	ds.Cluster[2] = "k1"
	if got := oneClusterLevels(r, ds); !strings.HasPrefix(got, `the rows of site = C (cluster "k3") lie in one cluster (a cluster's own`) {
		t.Errorf("B in two clusters: %q", got)
	}
	// With B the reference, A (rows 1 and 6, both in k1) and C are named;
	// with A and C each met in a second cluster, nothing.
	site.Reference = "B"
	ds.Cluster[2] = "k2"
	if got := oneClusterLevels(r, ds); !strings.HasPrefix(got, `the rows of site = A (cluster "k1"), site = C (cluster "k3") lie`) {
		t.Errorf("B the reference: %q", got)
	}
	ds.Cluster[3], ds.Cluster[5] = "k1", "k2"
	if got := oneClusterLevels(r, ds); got != "" {
		t.Errorf("every level in two clusters or the reference: %q", got)
	}
}
