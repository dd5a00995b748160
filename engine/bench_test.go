package engine

import (
	"math/rand/v2"
	"testing"
)

// benchCases draws a fixed set of realistic waterflood and CO2 cases: the
// ranges of the demo studies, with dip and gravity.
func benchCases(n int) []Params {
	rng := rand.New(rand.NewPCG(3, 3))
	out := make([]Params, n)
	for i := range out {
		p := DefaultParams()
		p[S1Init] = 0.1 + 0.15*rng.Float64()
		p[S1r] = p[S1Init]
		p[S2r] = 0.15 + 0.2*rng.Float64()
		p[Kr1Max] = 0.2 + 0.5*rng.Float64()
		p[Kr2Max] = 0.6 + 0.4*rng.Float64()
		p[N1] = 1.5 + 2.5*rng.Float64()
		p[N2] = 1.5 + 2*rng.Float64()
		p[Mu1CP] = 0.5
		p[Mu2CP] = 0.8 + 6*rng.Float64()
		p[DipDeg] = 16*rng.Float64() - 8
		p[Rho1], p[Rho2] = 1040, 860
		p[PermMD] = 50 + 300*rng.Float64()
		p[VelocityMPerDay] = 0.3
		out[i] = p
	}
	return out
}

// BenchmarkSolveCase solves cases with five PVI checkpoints and a cut
// limit, the batch runner's call. Goal (issue 2): ≥ 200,000 cases/s on one
// core with 0 allocations per case.
func BenchmarkSolveCase(b *testing.B) {
	cases := benchCases(1024)
	pvi := []float64{0.25, 0.5, 1, 2, 3}
	var s Solver
	var r Result
	s.SolveCase(&cases[0], pvi, 0.98, &r)
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		s.SolveCase(&cases[i%len(cases)], pvi, 0.98, &r)
		i++
	}
	b.ReportMetric(float64(i)/b.Elapsed().Seconds(), "cases/s")
}

// BenchmarkSolveEnvelope is the envelope construction alone.
func BenchmarkSolveEnvelope(b *testing.B) {
	cases := benchCases(1024)
	var s Solver
	var sol Solution
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		_ = s.Solve(&cases[i%len(cases)], &sol)
		i++
	}
	b.ReportMetric(float64(i)/b.Elapsed().Seconds(), "cases/s")
}
