package summarize

import (
	"fmt"
	"math"
	"testing"
)

// Speed goals live here, not in timed tests: run with
//
//	go test -run '^$' -bench . -benchtime 20x ./summarize

var benchSizes = []int{10_000, 1_000_000}

func BenchmarkDescribe(b *testing.B) {
	for _, n := range benchSizes {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			rng := newRand(100)
			src := make([]float64, n)
			for i := range src {
				src[i] = rng.NormFloat64()
			}
			x := make([]float64, n)
			for b.Loop() {
				copy(x, src) // Describe sorts in place; the copy is part of the cost
				Describe(x, Exceedance)
			}
			b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "values/s")
		})
	}
}

func BenchmarkSpearman(b *testing.B) {
	for _, n := range benchSizes {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			rng := newRand(101)
			x, y := make([]float64, n), make([]float64, n)
			for i := range x {
				x[i] = rng.Float64()
				y[i] = x[i]*x[i] + 0.3*rng.NormFloat64()
			}
			for b.Loop() {
				Spearman(x, y)
			}
			b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "pairs/s")
		})
	}
}

func BenchmarkRanks(b *testing.B) {
	n := 1_000_000
	rng := newRand(102)
	x := make([]float64, n)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	for b.Loop() {
		Ranks(x)
	}
	b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "values/s")
}

// BenchmarkRank ranks the column of BenchmarkRanks once for everything
// that needs its order (Ranking: sorted values, mid-ranks, Spearman).
func BenchmarkRank(b *testing.B) {
	n := 1_000_000
	rng := newRand(102)
	x := make([]float64, n)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	var rk Ranker
	for b.Loop() {
		rk.Rank(x)
	}
	b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "values/s")
}

// A study-sized Sobol analysis: 15 inputs, N = 20,000 (320,000 runs), 200
// bootstrap resamples.
func BenchmarkSobolIndices(b *testing.B) {
	plan := SobolPlan{N: 20_000, D: 15}
	rng := newRand(103)
	f := make([]float64, plan.Runs())
	for i := range f {
		f[i] = rng.NormFloat64()
	}
	fA, fB, fAB := plan.Split(f)
	for b.Loop() {
		SobolIndices(fA, fB, fAB, 200, 0.95, 1)
	}
	b.ReportMetric(float64(plan.Runs())*float64(b.N)/b.Elapsed().Seconds(), "runs/s")
}

// One output against the 14 inputs of a study at 1e6 cases, 10 % rejected.
func BenchmarkSpearmanEach(b *testing.B) {
	const n, d = 1_000_000, 14
	rng := newRand(104)
	xs := make([][]float64, d)
	for k := range xs {
		xs[k] = make([]float64, n)
		for i := range xs[k] {
			xs[k][i] = rng.Float64()
		}
	}
	y := make([]float64, n)
	for i := range y {
		y[i] = xs[0][i] + xs[1][i]*xs[2][i]
		if rng.IntN(10) == 0 {
			y[i] = math.NaN()
		}
	}
	for b.Loop() {
		SpearmanEach(xs, y)
	}
	b.ReportMetric(float64(n*d)*float64(b.N)/b.Elapsed().Seconds(), "pairs/s")
}

// BenchmarkRankStrata ranks a Latin hypercube column of a million
// uniform draws from their strata, checking them.
func BenchmarkRankStrata(b *testing.B) {
	n := 1_000_000
	rng := newRand(102)
	x := make([]float64, n)
	strata := make([]int32, n)
	for i, s := range rng.Perm(n) {
		strata[i] = int32(s)
		x[i] = (float64(s) + 0.5) / float64(n)
	}
	pos := make([]int32, n)
	var rk Ranker
	for b.Loop() {
		copy(pos, strata) // RankStrata takes pos over
		if _, ok := rk.RankStrata(x, pos); !ok {
			b.Fatal("positions refused")
		}
	}
	b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "values/s")
}
