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
	for _, n := range []int{0, 1, 2, sortSmall - 1, sortSmall, 1000, 100_000, 300_000} {
		for _, kind := range []string{"normal", "ties", "equal", "wide", "special", "sorted", "reversed", "ulps", "one sign", "zeros"} {
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
				case "ulps":
					// Clusters of values a few ulps apart: the low key bits
					// decide, many digit levels down.
					x[i] = math.Float64frombits(math.Float64bits(1+float64(rng.IntN(7))) + uint64(rng.IntN(3000)))
				case "one sign":
					// Negative zeros without positive ones: the radix path.
					x[i] = []float64{math.Copysign(0, -1), -1, 2, -inf}[rng.IntN(4)]
				case "zeros":
					x[i] = []float64{0, 0.5, 1e-300}[rng.IntN(3)]
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
			// Where −0 and +0 do not both occur the sorted order is unique:
			// bit for bit what slices.Sort gives.
			negZero := slices.ContainsFunc(x, func(v float64) bool { return v == 0 && math.Signbit(v) })
			posZero := slices.ContainsFunc(x, func(v float64) bool { return v == 0 && !math.Signbit(v) })
			if !negZero || !posZero {
				for i := range x {
					if math.Float64bits(x[i]) != math.Float64bits(want[i]) {
						t.Fatalf("n=%d %s: position %d holds %v, slices.Sort %v", n, kind, i, x[i], want[i])
					}
				}
			}
		}
	}
}
