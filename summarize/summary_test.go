package summarize

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Identity models: values drawn from a known distribution must give back
// its analytic quantiles (distuv Quantile), mean and standard deviation.
//
// Tolerances (4 standard errors, asymptotic; David & Nagaraja 2003, Order
// Statistics, §10.3, and the delta method, both from memory):
//
//	sample q-quantile: √(q(1−q)/n) / pdf(ξ_q)
//	sample mean:       σ/√n
//	sample SD:         σ·√((κ + 2)/(4n)), κ the excess kurtosis
func TestDescribeIdentity(t *testing.T) {
	t.Parallel()
	const n = 20_000
	type dist interface {
		Rand() float64
		Quantile(float64) float64
		Prob(float64) float64
		Mean() float64
		StdDev() float64
	}
	tests := []struct {
		name  string
		dist  func(src rand.Source) dist
		exKur float64
	}{
		// Excess kurtosis 0 for the normal.
		{"normal", func(src rand.Source) dist { return distuv.Normal{Mu: 10, Sigma: 2, Src: src} }, 0},
		// Excess kurtosis −6/5 for the uniform.
		{"uniform", func(src rand.Source) dist { return distuv.Uniform{Min: 0.2, Max: 0.5, Src: src} }, -1.2},
		// Excess kurtosis of the lognormal: e^{4σ²} + 2e^{3σ²} + 3e^{2σ²} − 6.
		{"lognormal", func(src rand.Source) dist { return distuv.LogNormal{Mu: 1, Sigma: 0.5, Src: src} },
			math.Exp(4*0.25) + 2*math.Exp(3*0.25) + 3*math.Exp(2*0.25) - 6},
	}
	for ti, tc := range tests {
		for _, conv := range []Convention{Exceedance, Cumulative} {
			t.Run(tc.name+"/"+conv.String(), func(t *testing.T) {
				t.Parallel()
				d := tc.dist(newRand(uint64(10 + ti)))
				x := make([]float64, n)
				for i := range x {
					x[i] = d.Rand()
				}
				s := Describe(x, conv)
				if s.N != n || s.NRejected != 0 || s.Convention != conv || s.Level != DefaultLevel {
					t.Fatalf("N, NRejected, Convention, Level = %d, %d, %v, %v", s.N, s.NRejected, s.Convention, s.Level)
				}
				check := func(name string, got, want, tol float64) {
					t.Helper()
					if math.Abs(got-want) > tol {
						t.Errorf("%s = %.6g, want %.6g ± %.3g", name, got, want, tol)
					}
				}
				for _, pc := range []struct {
					label float64
					got   float64
				}{{90, s.P90}, {50, s.P50}, {10, s.P10}} {
					q := conv.Prob(pc.label)
					xi := d.Quantile(q)
					se := math.Sqrt(q*(1-q)/n) / d.Prob(xi)
					check(fmt.Sprintf("P%.0f", pc.label), pc.got, xi, 4*se)
				}
				sigma := d.StdDev()
				check("Mean", s.Mean, d.Mean(), 4*sigma/math.Sqrt(n))
				check("SD", s.SD, sigma, 4*sigma*math.Sqrt((tc.exKur+2)/(4*n)))
				// Swanson's rule is a weighting of the same three values.
				check("SwansonMean", s.SwansonMean, 0.3*s.P10+0.4*s.P50+0.3*s.P90, 1e-12*math.Abs(s.P50))
				if !(s.P90Low <= s.P90 && s.P90 <= s.P90High && s.P50Low <= s.P50 && s.P50 <= s.P50High &&
					s.P10Low <= s.P10 && s.P10 <= s.P10High) {
					t.Errorf("intervals do not bracket their estimates: %+v", s)
				}
			})
		}
	}
}

// The arithmetic of Describe against gonum routines on the same data:
// stat.MeanStdDev, floats.Min/Max, and stat.Quantile (LinInterp at the
// shifted probability of TestQuantileAgainstGonum).
func TestDescribeAgainstGonum(t *testing.T) {
	t.Parallel()
	rng := newRand(2)
	for _, n := range []int{2, 3, 10, 999, 5000} {
		x := make([]float64, n)
		for i := range x {
			x[i] = 1e3 + 50*rng.ExpFloat64() // offset mean, skewed
		}
		mean, sd := stat.MeanStdDev(x, nil)
		lo, hi := floats.Min(x), floats.Max(x)
		sorted := slices.Clone(x)
		slices.Sort(sorted)
		q := func(p float64) float64 {
			return stat.Quantile(min((float64(n-1)*p+1)/float64(n), 1), stat.LinInterp, sorted, nil)
		}
		s := Describe(x, Exceedance)
		for _, c := range []struct {
			name      string
			got, want float64
		}{
			{"Mean", s.Mean, mean}, {"SD", s.SD, sd}, {"Min", s.Min, lo}, {"Max", s.Max, hi},
			{"P90", s.P90, q(0.1)}, {"P50", s.P50, q(0.5)}, {"P10", s.P10, q(0.9)},
		} {
			if !scalar.EqualWithinAbsOrRel(c.got, c.want, 1e-12, 1e-12) {
				t.Errorf("n=%d: %s = %v, gonum %v", n, c.name, c.got, c.want)
			}
		}
	}
}

func TestDescribeHand(t *testing.T) {
	t.Parallel()
	inf := math.Inf(1)
	// 1…10, shuffled: mean 5.5, Σ(x−5.5)² = 82.5 so SD = √(82.5/9);
	// quantiles Q(p) = 1 + 9p (TestQuantileDefinition7); 95 % intervals from
	// the ranks derived in TestOrderStatisticRanksHand: q = 0.1 → (−Inf,
	// x(4)], q = 0.5 → [x(2), x(9)], q = 0.9 → [x(7), +Inf); Swanson's mean
	// 0.3·(1.9 + 9.1) + 0.4·5.5 = 5.5.
	x := []float64{4, 9, 1, 7, 10, 2, 6, 3, 8, 5}
	want := Stats{
		Convention: Exceedance, Level: 0.95, N: 10,
		Mean: 5.5, SD: math.Sqrt(82.5 / 9), Min: 1, Max: 10,
		P90: 1.9, P50: 5.5, P10: 9.1, SwansonMean: 5.5,
		P90Low: -inf, P90High: 4, P50Low: 2, P50High: 9, P10Low: 7, P10High: inf,
	}
	got := Describe(x, Exceedance)
	if !statsClose(got, want, 1e-14) {
		t.Errorf("Describe(1…10, exceedance) =\n%+v\nwant\n%+v", got, want)
	}
	// Cumulative swaps P90 and P10 with their intervals; Swanson's mean is
	// symmetric in P90 and P10, so it does not change (bit for bit).
	cum := Describe(x, Cumulative)
	want.Convention = Cumulative
	want.P90, want.P10 = want.P10, want.P90
	want.P90Low, want.P90High, want.P10Low, want.P10High = want.P10Low, want.P10High, want.P90Low, want.P90High
	if !statsClose(cum, want, 1e-14) {
		t.Errorf("Describe(1…10, cumulative) =\n%+v\nwant\n%+v", cum, want)
	}
	if cum.SwansonMean != got.SwansonMean {
		t.Errorf("SwansonMean differs between conventions: %v vs %v", cum.SwansonMean, got.SwansonMean)
	}
}

func TestDescribeNaN(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	rng := newRand(3)
	clean := make([]float64, 500)
	for i := range clean {
		clean[i] = rng.NormFloat64()
	}
	withNaN := make([]float64, 0, 600)
	for i, v := range clean {
		if i%5 == 0 {
			withNaN = append(withNaN, nan)
		}
		withNaN = append(withNaN, v)
	}
	withNaN = append(withNaN, nan)
	rejected := len(withNaN) - len(clean)

	want := Describe(slices.Clone(clean), Exceedance)
	want.NRejected = rejected
	got := Describe(withNaN, Exceedance)
	// Dropping NaNs must leave exactly the clean computation.
	if got != want {
		t.Errorf("with %d NaNs:\n%+v\nwant\n%+v", rejected, got, want)
	}
	// The documented in-place contract: valid values sorted, then NaNs.
	if !slices.IsSorted(withNaN[:got.N]) {
		t.Error("values[:N] not sorted")
	}
	for i, v := range withNaN[got.N:] {
		if !math.IsNaN(v) {
			t.Fatalf("values[N+%d] = %v, want NaN", i, v)
		}
	}
}

func TestDescribeSmall(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name string
		x    []float64
		want Stats
	}{
		// No valid value: everything NaN, the NaNs counted.
		{"all rejected", []float64{nan, nan, nan}, Stats{
			Level: 0.95, NRejected: 3, Mean: nan, SD: nan, Min: nan, Max: nan,
			P90: nan, P50: nan, P10: nan, SwansonMean: nan,
			P90Low: nan, P90High: nan, P50Low: nan, P50High: nan, P10Low: nan, P10High: nan,
		}},
		{"empty", nil, Stats{
			Level: 0.95, Mean: nan, SD: nan, Min: nan, Max: nan,
			P90: nan, P50: nan, P10: nan, SwansonMean: nan,
			P90Low: nan, P90High: nan, P50Low: nan, P50High: nan, P10Low: nan, P10High: nan,
		}},
		// One value: SD undefined (divisor n−1 = 0); Bin(1, q) leaves more
		// than 0.025 in each tail of x(1) for q ∈ {0.1, 0.5, 0.9}, so all
		// intervals are (−Inf, +Inf).
		{"one", []float64{nan, 5}, Stats{
			Level: 0.95, N: 1, NRejected: 1, Mean: 5, SD: nan, Min: 5, Max: 5,
			P90: 5, P50: 5, P10: 5, SwansonMean: 5,
			P90Low: -inf, P90High: inf, P50Low: -inf, P50High: inf, P10Low: -inf, P10High: inf,
		}},
		// Infinite values are valid: min −Inf, max +Inf, mean NaN (−Inf + Inf).
		{"infinities", []float64{inf, 1, -inf}, Stats{
			Level: 0.95, N: 3, Mean: nan, SD: nan, Min: -inf, Max: inf,
			// Q(0.1): h = 1.2 between −Inf and 1 → −Inf; Q(0.9): h = 2.8
			// between 1 and +Inf → +Inf; median x(2) = 1.
			P90: -inf, P50: 1, P10: inf, SwansonMean: nan,
			P90Low: -inf, P90High: inf, P50Low: -inf, P50High: inf, P10Low: -inf, P10High: inf,
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got := Describe(tc.x, Exceedance)
			if !statsClose(got, tc.want, 0) {
				t.Errorf("Describe(%v) =\n%+v\nwant\n%+v", tc.x, got, tc.want)
			}
		})
	}
}

// statsClose compares two Stats, floats within relative tol with NaN equal
// to NaN and infinities exact.
func statsClose(a, b Stats, tol float64) bool {
	eq := func(x, y float64) bool {
		if math.IsNaN(x) || math.IsNaN(y) {
			return math.IsNaN(x) && math.IsNaN(y)
		}
		if math.IsInf(x, 0) || math.IsInf(y, 0) {
			return x == y
		}
		return scalar.EqualWithinAbsOrRel(x, y, tol, tol)
	}
	return a.Convention == b.Convention && a.N == b.N && a.NRejected == b.NRejected &&
		eq(a.Level, b.Level) && eq(a.Mean, b.Mean) && eq(a.SD, b.SD) && eq(a.Min, b.Min) && eq(a.Max, b.Max) &&
		eq(a.P90, b.P90) && eq(a.P50, b.P50) && eq(a.P10, b.P10) && eq(a.SwansonMean, b.SwansonMean) &&
		eq(a.P90Low, b.P90Low) && eq(a.P90High, b.P90High) && eq(a.P50Low, b.P50Low) &&
		eq(a.P50High, b.P50High) && eq(a.P10Low, b.P10Low) && eq(a.P10High, b.P10High)
}
