package summarize

import (
	"math"
	"slices"
	"testing"
)

// sortFloats against slices.Sort (the independent oracle) on both sides of
// sortSmall, with ties, signed zeros, infinities and wide exponent ranges.
// −0 and +0 may come out in either order, so elements compare with ==.
func TestSortFloats(t *testing.T) {
	t.Parallel()
	rng := newRand(7)
	inf := math.Inf(1)
	for _, n := range []int{0, 1, 2, sortSmall - 1, sortSmall, 1000, 100_000} {
		for _, kind := range []string{"normal", "ties", "equal", "wide", "special", "sorted", "reversed"} {
			x := make([]float64, n)
			for i := range x {
				switch kind {
				case "normal":
					x[i] = rng.NormFloat64()
				case "ties":
					x[i] = math.Round(rng.NormFloat64()*5) / 4
				case "equal":
					x[i] = 0.25
				case "wide":
					x[i] = math.Copysign(math.Exp(rng.NormFloat64()*200), rng.Float64()-0.5)
				case "special":
					x[i] = []float64{0, math.Copysign(0, -1), inf, -inf, 1, -1, math.SmallestNonzeroFloat64}[rng.IntN(7)]
				case "sorted", "reversed":
					x[i] = float64(i) * 0.1
				}
			}
			if kind == "reversed" {
				slices.Reverse(x)
			}
			want := slices.Clone(x)
			slices.Sort(want)
			sortFloats(x)
			if !slices.Equal(x, want) {
				t.Errorf("n=%d %s: sortFloats differs from slices.Sort", n, kind)
			}
		}
	}
}
