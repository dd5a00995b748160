package summarize

import (
	"math"
	"slices"
	"sort"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat"
)

// oracleRanks computes mid-ranks by counting, independently of the radix
// sort: with the non-NaN values sorted, a value v has #{x < v} smaller
// values and #{x = v} ties, so its mid-rank is #{x < v} + (#{x = v} + 1)/2.
func oracleRanks(x []float64) []float64 {
	var s []float64
	for _, v := range x {
		if !math.IsNaN(v) {
			s = append(s, v)
		}
	}
	sort.Float64s(s)
	r := make([]float64, len(x))
	for i, v := range x {
		if math.IsNaN(v) {
			r[i] = math.NaN()
			continue
		}
		below := sort.SearchFloat64s(s, v)
		upto := sort.Search(len(s), func(k int) bool { return s[k] > v })
		r[i] = float64(below) + float64(upto-below+1)/2
	}
	return r
}

func TestRanksHand(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	// Mid-ranks by hand (Kendall & Gibbons 1990 definition, from memory).
	tests := []struct {
		name string
		x    []float64
		want []float64
	}{
		{"empty", nil, []float64{}},
		{"distinct", []float64{30, 10, 20}, []float64{3, 1, 2}},
		// The two 1s share ranks 1 and 2.
		{"tie", []float64{3, 1, 4, 1, 5}, []float64{3, 1.5, 4, 1.5, 5}},
		// Three 7s share ranks 2, 3, 4.
		{"triple", []float64{7, 9, 7, 0, 7}, []float64{3, 5, 3, 1, 3}},
		// NaN is not ranked and does not count.
		{"nan", []float64{2, nan, 1}, []float64{2, nan, 1}},
		// −0 == +0.
		{"signed zero", []float64{0, math.Copysign(0, -1), 1}, []float64{1.5, 1.5, 3}},
		{"infinities", []float64{inf, -inf, 0, -1e308}, []float64{4, 1, 3, 2}},
		{"constant", []float64{2, 2, 2, 2}, []float64{2.5, 2.5, 2.5, 2.5}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got := Ranks(tc.x)
			if !slices.EqualFunc(got, tc.want, func(a, b float64) bool {
				return a == b || math.IsNaN(a) && math.IsNaN(b)
			}) {
				t.Errorf("Ranks(%v) = %v, want %v", tc.x, got, tc.want)
			}
		})
	}
}

// Ranks against the counting oracle on both sides of radixMin, with ties,
// negative values, NaNs and values spanning many binary exponents (every
// radix digit in play).
func TestRanksAgainstOracle(t *testing.T) {
	t.Parallel()
	rng := newRand(4)
	for _, n := range []int{1, 10, radixMin - 1, radixMin, 1000, 40_000} {
		for _, kind := range []string{"continuous", "ties", "wide", "nan"} {
			x := make([]float64, n)
			for i := range x {
				switch kind {
				case "continuous":
					x[i] = rng.NormFloat64()
				case "ties":
					x[i] = math.Round(rng.NormFloat64() * 3)
				case "wide":
					x[i] = math.Copysign(math.Exp(rng.NormFloat64()*100), rng.Float64()-0.5)
				case "nan":
					x[i] = rng.Float64()
					if rng.IntN(10) == 0 {
						x[i] = math.NaN()
					}
				}
			}
			got, want := Ranks(x), oracleRanks(x)
			for i := range x {
				if got[i] != want[i] && !(math.IsNaN(got[i]) && math.IsNaN(want[i])) {
					t.Errorf("n=%d %s: rank of x[%d] = %v is %v, want %v", n, kind, i, x[i], got[i], want[i])
					break
				}
			}
		}
	}
}

func TestSpearmanHand(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	tests := []struct {
		name string
		x, y []float64
		want float64
	}{
		// Ranks y = (1, 2, 3.5, 5, 3.5); with centre 3: Σdx·dy = 4+1+0+2+1
		// = 8, Σdx² = 10, Σdy² = 4+1+0.25+4+0.25 = 9.5, ρ = 8/√95.
		{"ties", []float64{1, 2, 3, 4, 5}, []float64{5, 6, 7, 8, 7}, 8 / math.Sqrt(95)},
		// Any strictly increasing map has ρ = 1, decreasing −1.
		{"monotone", []float64{1, 2, 3, 4}, []float64{math.Exp(1), math.Exp(2), math.Exp(3), math.Exp(4)}, 1},
		{"anti", []float64{1, 2, 3, 4}, []float64{0, -1, -8, -27}, -1},
		// The pairs with a NaN (3rd, 6th) are skipped, leaving
		// x = (1, 2, 4, 5), y = (5, 6, 8, 7):
		// ranks (1,2,3,4) and (1,2,4,3), d² sum 2, ρ = 1 − 6·2/(4·15) = 0.8
		// (no ties left, so the classical formula applies).
		{"nan pairs", []float64{1, 2, nan, 4, 5, 6}, []float64{5, 6, 7, 8, 7, nan}, 0.8},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if got := Spearman(tc.x, tc.y); !scalar.EqualWithinAbsOrRel(got, tc.want, 1e-14, 1e-14) {
				t.Errorf("Spearman(%v, %v) = %v, want %v", tc.x, tc.y, got, tc.want)
			}
		})
	}
}

// NaN cases documented by Spearman.
func TestSpearmanDegenerate(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	tests := []struct {
		name string
		x, y []float64
	}{
		{"empty", nil, nil},
		{"one pair", []float64{1}, []float64{2}},
		{"one complete pair", []float64{1, nan, 3}, []float64{2, 5, nan}},
		{"constant x", []float64{2, 2, 2}, []float64{1, 2, 3}},
		{"constant y over complete pairs", []float64{1, 2, 3}, []float64{4, 4, nan}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if got := Spearman(tc.x, tc.y); !math.IsNaN(got) {
				t.Errorf("Spearman(%v, %v) = %v, want NaN", tc.x, tc.y, got)
			}
		})
	}
}

// Spearman against gonum's Pearson correlation (stat.Correlation) of the
// counting-oracle ranks of the complete pairs, with ties and NaNs.
func TestSpearmanAgainstGonum(t *testing.T) {
	t.Parallel()
	rng := newRand(5)
	for _, n := range []int{5, 100, radixMin, 30_000} {
		for _, kind := range []string{"continuous", "ties", "nan"} {
			x, y := make([]float64, n), make([]float64, n)
			for i := range x {
				x[i] = rng.NormFloat64()
				y[i] = 0.6*x[i] + 0.8*rng.NormFloat64()
				switch kind {
				case "ties":
					x[i] = math.Round(x[i] * 2)
					y[i] = math.Round(y[i])
				case "nan":
					if rng.IntN(8) == 0 {
						x[i] = math.NaN()
					}
					if rng.IntN(8) == 0 {
						y[i] = math.NaN()
					}
				}
			}
			var cx, cy []float64
			for i := range x {
				if !math.IsNaN(x[i]) && !math.IsNaN(y[i]) {
					cx, cy = append(cx, x[i]), append(cy, y[i])
				}
			}
			want := stat.Correlation(oracleRanks(cx), oracleRanks(cy), nil)
			got := Spearman(x, y)
			if !scalar.EqualWithinAbsOrRel(got, want, 1e-12, 1e-12) {
				t.Errorf("n=%d %s: Spearman = %v, gonum on ranks = %v", n, kind, got, want)
			}
		}
	}
}

// SpearmanEach must equal Spearman column by column, bit for bit, including
// columns with NaNs of their own (the fallback) and a constant column.
func TestSpearmanEach(t *testing.T) {
	t.Parallel()
	rng := newRand(6)
	for _, n := range []int{0, 1, 3, 500, 5000} {
		y := make([]float64, n)
		xs := make([][]float64, 4)
		for k := range xs {
			xs[k] = make([]float64, n)
		}
		for i := range y {
			for k := range xs {
				xs[k][i] = math.Round(rng.NormFloat64() * 4)
			}
			xs[2][i] = 1 // constant
			y[i] = xs[0][i] - 0.5*xs[1][i] + rng.NormFloat64()
			if rng.IntN(7) == 0 {
				y[i] = math.NaN()
			}
			if rng.IntN(9) == 0 {
				xs[3][i] = math.NaN()
			}
		}
		got := SpearmanEach(xs, y)
		for k, x := range xs {
			want := Spearman(x, y)
			if got[k] != want && !(math.IsNaN(got[k]) && math.IsNaN(want)) {
				t.Errorf("n=%d column %d: SpearmanEach %v, Spearman %v", n, k, got[k], want)
			}
		}
	}
}
