package engine

import (
	"math/rand/v2"
	"testing"
)

// benchLETs draws LET curves for the bench cases: S-shaped and tailing
// curves over the ranges of published LET fits (L 1.5–4, E 0.5–5, T 0.8–2,
// common practice), with the cases' own end points.
func benchLETs(cases []Params) []LET {
	rng := rand.New(rand.NewPCG(4, 4))
	out := make([]LET, len(cases))
	for i := range cases {
		p := &cases[i]
		out[i] = LET{S1r: p[S1r], S2r: p[S2r], Kr1Max: p[Kr1Max], Kr2Max: p[Kr2Max],
			L1: 1.5 + 2.5*rng.Float64(), E1: 0.5 + 4.5*rng.Float64(), T1: 0.8 + 1.2*rng.Float64(),
			L2: 1.5 + 2.5*rng.Float64(), E2: 0.5 + 4.5*rng.Float64(), T2: 0.8 + 1.2*rng.Float64()}
	}
	return out
}

// BenchmarkSolveCaseLET is BenchmarkSolveCase with LET curves.
func BenchmarkSolveCaseLET(b *testing.B) {
	cases := benchCases(1024)
	lets := benchLETs(cases)
	rels := make([]RelPerm, len(cases))
	for i := range cases {
		rels[i] = &lets[i]
	}
	benchSolveRel(b, cases, rels)
}

// benchSolveRel solves cases[k] with the curves rels[k], round robin, at
// the checkpoints and cut limit of BenchmarkSolveCase.
func benchSolveRel(b *testing.B, cases []Params, rels []RelPerm) {
	pvi := []float64{0.25, 0.5, 1, 2, 3}
	var s Solver
	var r Result
	s.solveCaseRel(&cases[0], rels[0], pvi, 0.98, &r)
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		k := i % len(cases)
		s.solveCaseRel(&cases[k], rels[k], pvi, 0.98, &r)
		i++
	}
	b.ReportMetric(float64(i)/b.Elapsed().Seconds(), "cases/s")
}

// BenchmarkSolveCaseTable is BenchmarkSolveCase with one 21-row table
// (sampled from Corey curves n1 = 2.5, n2 = 1.8) scaled to each case's end
// points, as a study sampling end points around one measured sample would.
func BenchmarkSolveCaseTable(b *testing.B) {
	cases := benchCases(1024)
	s, kr1, kr2 := coreyRowsNoEnds(&Corey{S1r: 0.2, S2r: 0.2, Kr1Max: 0.4, Kr2Max: 0.9, N1: 2.5, N2: 1.8}, 21)
	tab := mustTable(b, "bench", s, kr1, kr2)
	rels := make([]RelPerm, len(cases))
	for i := range cases {
		p := &cases[i]
		rels[i] = &ScaledTable{T: tab, S1r: p[S1r], S2r: p[S2r], Kr1Max: p[Kr1Max], Kr2Max: p[Kr2Max]}
	}
	benchSolveRel(b, cases, rels)
}
