package summarize_test

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/sweepstat/sweepstat/summarize"
)

func ExampleDescribe() {
	// An invented recovery factor column of 1000 cases, 3 of them rejected.
	rng := rand.New(rand.NewPCG(1, 1))
	values := make([]float64, 1000)
	for i := range values {
		values[i] = 0.45 + 0.08*rng.NormFloat64()
	}
	values[10], values[200], values[999] = math.NaN(), math.NaN(), math.NaN()

	s := summarize.Describe(values, summarize.Exceedance)
	fmt.Printf("%s: n=%d rejected=%d\n", s.Convention, s.N, s.NRejected)
	fmt.Printf("P90 %.6f [%.6f, %.6f]\n", s.P90, s.P90Low, s.P90High)
	fmt.Printf("P50 %.6f [%.6f, %.6f]\n", s.P50, s.P50Low, s.P50High)
	fmt.Printf("P10 %.6f [%.6f, %.6f]\n", s.P10, s.P10Low, s.P10High)
	fmt.Printf("mean %.6f, Swanson %.6f\n", s.Mean, s.SwansonMean)
	// Output:
	// exceedance: n=997 rejected=3
	// P90 0.347388 [0.335759, 0.357174]
	// P50 0.443935 [0.438747, 0.452147]
	// P10 0.552446 [0.543124, 0.564138]
	// mean 0.448695, Swanson 0.447524
}

func ExampleSpearman() {
	x := []float64{1, 2, 3, 4, 5, math.NaN()}
	y := []float64{5, 6, 7, 8, 7, 1}
	fmt.Printf("%.6f\n", summarize.Spearman(x, y)) // the NaN pair is skipped
	// Output:
	// 0.820783
}

func ExampleSobolIndices() {
	// y = x1 + 2·x2 with x1, x2 ~ U(0, 1): S1 = 1/5, S2 = 4/5, no interaction.
	plan := summarize.SobolPlan{N: 4000, D: 2}
	rng := rand.New(rand.NewPCG(2, 2))
	rowsA, rowsB := make([][]float64, plan.N), make([][]float64, plan.N)
	for r := range plan.N {
		rowsA[r] = []float64{rng.Float64(), rng.Float64()}
		rowsB[r] = []float64{rng.Float64(), rng.Float64()}
	}
	f := make([]float64, plan.Runs()) // outputs in run order
	x := make([]float64, plan.D)
	for j := range f {
		block, row := plan.Locate(j)
		plan.Point(x, rowsA[row], rowsB[row], block)
		f[j] = x[0] + 2*x[1]
	}
	fA, fB, fAB := plan.Split(f)
	for i, s := range summarize.SobolIndices(fA, fB, fAB, 200, 0.95, 1) {
		fmt.Printf("x%d: S %.2f [%.2f, %.2f]  ST %.2f [%.2f, %.2f]\n",
			i+1, s.First, s.FirstLow, s.FirstHigh, s.Total, s.TotalLow, s.TotalHigh)
	}
	// Output:
	// x1: S 0.20 [0.18, 0.22]  ST 0.21 [0.20, 0.21]
	// x2: S 0.77 [0.73, 0.80]  ST 0.79 [0.76, 0.82]
}
