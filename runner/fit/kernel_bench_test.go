package fit

import "testing"

// speedTargetModels are the parallel-effects models of the speed
// targets (logit link, K = 10): a binary outcome and the three comparisons
// with J = 5.
var speedTargetModels = []struct {
	name string
	J    int
	c    Comparison
}{
	{"binary", 2, Cumulative},
	{"cumulative", 5, Cumulative},
	{"stage", 5, Stage},
	{"adjacent", 5, Adjacent},
}

// BenchmarkBlockKernels times the row kernels of one block of 4096 rows
// (log-probabilities with first and second derivatives, as a Newton
// iteration asks) for the parallel-effects models of the speed targets,
// logit link, at the marginal cutpoints: CPU ns per block (cpu-ns/op).
func BenchmarkBlockKernels(b *testing.B) {
	for _, tc := range speedTargetModels {
		d := speedData(blockRows, 10, tc.J)
		m := speedModel(tc.c, Parallel, 10)
		p, theta := atMarginalCutpoints(b, d, m)
		for i := range theta[d.J-1:] {
			theta[d.J-1+i] = 0.05 * float64(i%3-1)
		}
		c := p.coefs(theta)
		s := p.newScratch()
		p.blockColumns(c, 0, blockRows, s)
		p.blockLinear(c, 0, blockRows, true, s)
		b.Run(tc.name, func(b *testing.B) {
			cpu0 := processCPU()
			for i := 0; i < b.N; i++ {
				a := p.newAcc(0)
				if !p.blockKernels(c, 0, blockRows, 2, false, a, s) {
					b.Fatal("kernel failed")
				}
			}
			b.ReportMetric(float64(processCPU()-cpu0)/float64(b.N), "cpu-ns/op")
		})
	}
}

// BenchmarkIterationParts runs ProfileIteration (one worker) on 2e5 rows of
// the parallel-effects models of the speed targets and reports its parts,
// CPU ms per iteration: the iteration, its cross-products and row kernels,
// and the reference X'WX; "ratio" is iteration / (X'WX + kernels), the
// speed target's ratio.
func BenchmarkIterationParts(b *testing.B) {
	for _, tc := range speedTargetModels {
		d := speedData(200000, 10, tc.J)
		m := speedModel(tc.c, Parallel, 10)
		b.Run(tc.name, func(b *testing.B) {
			var it, cr, ke, ref float64
			for i := 0; i < b.N; i++ {
				pr, err := ProfileIteration(d, m, 1, 1)
				if err != nil {
					b.Fatal(err)
				}
				it += float64(pr.Iteration) / 1e6
				cr += float64(pr.CrossProducts) / 1e6
				ke += float64(pr.Kernels) / 1e6
				ref += float64(pr.Reference) / 1e6
			}
			n := float64(b.N)
			b.ReportMetric(it/n, "iter-ms")
			b.ReportMetric(cr/n, "cross-ms")
			b.ReportMetric(ke/n, "kernel-ms")
			b.ReportMetric(ref/n, "xwx-ms")
			b.ReportMetric(it/(ref+ke), "ratio")
		})
	}
}

// atMarginalCutpoints is the problem of model m on d with one worker and
// a parameter vector with the marginal cutpoints and zero slopes: the
// starting point of the kernel tests and benchmarks.
func atMarginalCutpoints(tb testing.TB, d *Data, m Model) (*problem, []float64) {
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		tb.Fatal(err)
	}
	p := newProblem(d.design(), m, ly, 1)
	theta := make([]float64, len(ly.params))
	copy(theta, marginalCutpoints(d, m))
	return p, theta
}

// BenchmarkAdjacentLinkKernels is BenchmarkBlockKernels for the adjacent
// comparison (J = 5, parallel effects, K = 10) under the logit, probit,
// cloglog, loglog and cauchy links: CPU ns per block of 4096 rows with
// derivatives of both orders (the last four form each equation's log-odds
// with Link.ratio).
func BenchmarkAdjacentLinkKernels(b *testing.B) {
	benchLinkKernels(b, Adjacent, []Link{Logit, Probit, Cloglog, Loglog, Cauchy})
}

// BenchmarkCumulativeLinkKernels is BenchmarkAdjacentLinkKernels for the
// cumulative comparison under the links other than the logit
// (cumulativeKernels: a tail for the end categories, kernel.between for
// the middle ones).
func BenchmarkCumulativeLinkKernels(b *testing.B) {
	benchLinkKernels(b, Cumulative, []Link{Probit, Cloglog, Loglog, Cauchy})
}

// BenchmarkStageLinkKernels is BenchmarkAdjacentLinkKernels for the
// forward stage comparison under the links other than the logit (the
// general row kernel, a sum of tails).
func BenchmarkStageLinkKernels(b *testing.B) {
	benchLinkKernels(b, Stage, []Link{Probit, Cloglog, Loglog, Cauchy})
}

// benchLinkKernels times the row kernels of one block (J = 5, parallel
// effects, K = 10, derivatives of both orders) of comparison cmp under
// each link: CPU ns per block.
func benchLinkKernels(b *testing.B, cmp Comparison, links []Link) {
	for _, l := range links {
		d := speedData(blockRows, 10, 5)
		m := speedModel(cmp, Parallel, 10)
		m.Link = l
		p, theta := atMarginalCutpoints(b, d, m)
		for i := range theta[d.J-1:] {
			theta[d.J-1+i] = 0.05 * float64(i%3-1)
		}
		c := p.coefs(theta)
		s := p.newScratch()
		p.blockColumns(c, 0, blockRows, s)
		p.blockLinear(c, 0, blockRows, true, s)
		b.Run(l.String(), func(b *testing.B) {
			cpu0 := processCPU()
			for i := 0; i < b.N; i++ {
				a := p.newAcc(0)
				if !p.blockKernels(c, 0, blockRows, 2, false, a, s) {
					b.Fatal("kernel failed")
				}
			}
			b.ReportMetric(float64(processCPU()-cpu0)/float64(b.N), "cpu-ns/op")
		})
	}
}
