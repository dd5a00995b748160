package batch

import (
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/summarize"
)

// The want values below are worked by hand from each helper's rule.

func TestNiceAxis(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		lo, hi     float64
		n          int
		wlo, whi   float64
		wantTicks  []float64
		wantFormat []string
	}{
		// span 0.37/6 ≈ 0.062 → step 0.1 (the first of 1, 2, 2.5, 5, 10 × 0.01
		// at or above it is 10 × 0.01); range widened to whole steps.
		{0.33, 0.70, 6, 0.3, 0.7, []float64{0.3, 0.4, 0.5, 0.6, 0.7}, []string{"0.3", "0.4", "0.5", "0.6", "0.7"}},
		// span 10/5 = 2 → step 2.
		{2, 12, 5, 2, 12, []float64{2, 4, 6, 8, 10, 12}, []string{"2", "4", "6", "8", "10", "12"}},
		// span 1/4 = 0.25 → step 0.25, two decimals.
		{0, 1, 4, 0, 1, []float64{0, 0.25, 0.5, 0.75, 1}, []string{"0.00", "0.25", "0.50", "0.75", "1.00"}},
		// Negative values print with a minus sign.
		{-1, 1, 2, -1, 1, []float64{-1, 0, 1}, []string{"−1", "0", "1"}},
		// A single value is widened by ±5 % of itself (0.5 at least).
		{3, 3, 4, 2.5, 3.5, []float64{2.5, 2.75, 3, 3.25, 3.5}, nil},
	} {
		a := niceAxis(tc.lo, tc.hi, tc.n, "x")
		if !near(a.Lo, tc.wlo) || !near(a.Hi, tc.whi) || !allNear(a.Ticks, tc.wantTicks) {
			t.Errorf("niceAxis(%v, %v, %d) = [%v, %v] ticks %v; want [%v, %v] ticks %v", tc.lo, tc.hi, tc.n, a.Lo, a.Hi, a.Ticks, tc.wlo, tc.whi, tc.wantTicks)
			continue
		}
		if tc.wantFormat != nil {
			step := a.Ticks[1] - a.Ticks[0]
			for i, v := range a.Ticks {
				if got := tickText(v, step); got != tc.wantFormat[i] {
					t.Errorf("tickText(%v, %v) = %q, want %q", v, step, got, tc.wantFormat[i])
				}
			}
		}
	}
}

func near(a, b float64) bool { return math.Abs(a-b) < 1e-12 }

func allNear(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if !near(a[i], b[i]) {
			return false
		}
	}
	return true
}

func TestLabelAndDigits(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		v    float64
		want string
	}{
		{0.0955, "0.0955"}, {0.000348, "0.000348"}, {5.7e-5, "5.7e−5"}, {-3.05e-5, "−3.05e−5"},
		{1032, "1032"}, {2.5e6, "2.5e6"}, {0, "0"}, {math.NaN(), "–"}, {math.Inf(1), "∞"}, {-0.25, "−0.25"},
	} {
		if got := label(tc.v); got != tc.want {
			t.Errorf("label(%v) = %q, want %q", tc.v, got, tc.want)
		}
	}
	for _, tc := range []struct {
		n    int
		want string
	}{{0, "0"}, {999, "999"}, {1000, "1,000"}, {20000, "20,000"}, {10000000, "10,000,000"}, {-1234, "−1,234"}} {
		if got := groupDigits(tc.n); got != tc.want {
			t.Errorf("groupDigits(%d) = %q, want %q", tc.n, got, tc.want)
		}
	}
	for _, tc := range []struct{ v, want float64 }{{0.2011, 0.2}, {0.8044, 0.8}, {0.0456, 0.046}, {123.4, 120}, {0, 0}} {
		if got := roundSig(tc.v, 2); !near(got, tc.want) {
			t.Errorf("roundSig(%v, 2) = %v, want %v", tc.v, got, tc.want)
		}
	}
}

func TestBlend(t *testing.T) {
	t.Parallel()
	// Halfway between white (255) and #0072B2 (0, 114, 178): 127.5 → 128,
	// 184.5 → 185, 216.5 → 217 (round half away from zero).
	for _, tc := range []struct {
		a, b string
		t    float64
		want string
	}{
		{"#ffffff", colBlue, 0, "#ffffff"}, {"#ffffff", colBlue, 1, "#0072b2"}, {"#ffffff", colBlue, 0.5, "#80b9d9"},
		{"#ffffff", colBlue, 2, "#0072b2"},
	} {
		if got := blend(tc.a, tc.b, tc.t); got != tc.want {
			t.Errorf("blend(%s, %s, %v) = %s, want %s", tc.a, tc.b, tc.t, got, tc.want)
		}
	}
}

func TestHistogramBins(t *testing.T) {
	t.Parallel()
	// Rice rule ⌈2·n^(1/3)⌉ (common practice), within [5, 40].
	for _, tc := range []struct {
		n    int64
		want int
	}{{1, 5}, {10, 5}, {27, 6}, {1000, 20}, {2000, 26}, {8000, 40}, {10_000_000, 40}} {
		if got := histogramBins(tc.n); got != tc.want {
			t.Errorf("histogramBins(%d) = %d, want %d", tc.n, got, tc.want)
		}
	}
}

// TestNewHistogram: the bins of each kind of distribution, and their
// probabilities from the CDF.
func TestNewHistogram(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name     string
		spec     sampler.Spec
		lo, hi   float64 // first and last edge
		expected []float64
		tails    bool
	}{
		// Uniform on [2, 12] over its support, 5 equal bins of 0.2 each.
		{"uniform", sampler.Spec{Kind: sampler.Uniform, Min: 2, Max: 12, HasMin: true, HasMax: true}, 2, 12, []float64{0.2, 0.2, 0.2, 0.2, 0.2}, false},
		// Weights 1, 2, 1: probabilities 1/4, 1/2, 1/4 at the values.
		{"discrete", sampler.Spec{Kind: sampler.Discrete, Values: []float64{0.6, 0.15, 0.3}, Weights: []float64{1, 1, 2}}, 0.15, 0.6, []float64{0.25, 0.5, 0.25}, false},
		// Standard normal between its 0.1 % quantiles, ±3.0902 (from
		// memory: Φ⁻¹(0.999) ≈ 3.0902); the outer bins take the tails.
		{"normal", sampler.Spec{Kind: sampler.Normal, Mean: 0, SD: 1}, -3.0902, 3.0902, nil, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			tc.spec.Name = "x"
			dist, err := sampler.NewDist(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			h := newHistogram(engine.DipDeg, tc.spec, dist, 10)
			if math.Abs(h.Edges[0]-tc.lo) > 1e-4 || math.Abs(h.Edges[len(h.Edges)-1]-tc.hi) > 1e-4 {
				t.Errorf("edges %v … %v, want %v … %v", h.Edges[0], h.Edges[len(h.Edges)-1], tc.lo, tc.hi)
			}
			if tc.expected != nil && !allNear(h.Expected, tc.expected) {
				t.Errorf("expected %v, want %v", h.Expected, tc.expected)
			}
			sum := 0.0
			for _, p := range h.Expected {
				sum += p
			}
			if !near(sum, 1) || h.Tails != tc.tails {
				t.Errorf("probabilities sum to %v, tails %v", sum, h.Tails)
			}
			// Values at or beyond the ends land in the outer bins.
			for _, v := range []float64{tc.lo - 10, tc.lo, tc.hi, tc.hi + 10} {
				h.add(v)
			}
			if h.N != 4 || h.Counts[0] != 2 || h.Counts[len(h.Counts)-1] != 2 {
				t.Errorf("counts %v (N %d), want 2 in each outer bin", h.Counts, h.N)
			}
		})
	}
}

func TestCheckpointsShown(t *testing.T) {
	t.Parallel()
	few := []float64{0.25, 0.5, 1}
	if got := checkpointsShown(few); !slices.Equal(got, few) {
		t.Errorf("checkpointsShown(%v) = %v", few, got)
	}
	var many []float64
	for k := 1; k <= 13; k++ {
		many = append(many, float64(k))
	}
	// 13 checkpoints, 7 shown: every second, from the first to the last.
	want := []float64{1, 3, 5, 7, 9, 11, 13}
	if got := checkpointsShown(many); !slices.Equal(got, want) {
		t.Errorf("checkpointsShown(1…13) = %v, want %v", got, want)
	}
}

func TestChartName(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct{ kind, what, want string }{
		{"tornado", "recovery_at_0.5pvi", "tornado-recovery_at_0.5pvi.svg"},
		{"fractional-flow", "P90", "fractional-flow-p90.svg"},
		{"rank-correlation", "", "rank-correlation.svg"},
		{"x", "a/b c", "x-a-b-c.svg"},
	} {
		if got := chartName(tc.kind, tc.what); got != tc.want {
			t.Errorf("chartName(%q, %q) = %q, want %q", tc.kind, tc.what, got, tc.want)
		}
	}
}

// TestValueRange: one extreme case among 200 would take most of the axis,
// so the axis ends at the value exceeded by TailCut of the cases; the
// curve is clipped there with an interpolated end point.
func TestValueRange(t *testing.T) {
	t.Parallel()
	col := make([]float64, 200)
	for i := range col {
		col[i] = float64(i + 1) // 1 … 200
	}
	col[199] = 10000
	e := newExceedance("x", col, summarize.Exceedance)
	r := valueRange([]exceedance{e})
	// Q(0.995) of 1 … 199, 10000 by Hyndman & Fan definition 7:
	// h = 199·0.995 = 198.005, between x(199) = 199 and x(200) = 10000:
	// 199 + 0.005·9801 = 248.005.
	if !r.cutHi || r.cutLo || !scalar.EqualWithinAbsOrRel(r.hi, 248.005, 1e-9, 1e-9) || r.lo != 1 || r.max != 10000 {
		t.Errorf("range %+v, want [1, 248.005] cut at the top", r)
	}
	c := clipCurve(e.Curve, 0, 300)
	last := c[len(c)-1]
	// On the segment from (199, 1 − 198/199) to (10000, 0) at x = 300.
	wantY := (1 - 198.0/199) * (1 - (300-199)/(10000.0-199))
	if last.X != 300 || !scalar.EqualWithinAbsOrRel(last.Y, wantY, 1e-12, 1e-9) {
		t.Errorf("clipped curve ends at %v, want (300, %v)", last, wantY)
	}
	even := newExceedance("x", []float64{1, 2, 3, 4}, summarize.Exceedance)
	if r := valueRange([]exceedance{even}); r.cutHi || r.cutLo || r.lo != 1 || r.hi != 4 {
		t.Errorf("even spread: range %+v, want [1, 4] uncut", r)
	}
}
