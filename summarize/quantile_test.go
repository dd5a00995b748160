package summarize

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// newRand returns a generator for test stream k, its PCG seed words spread
// by SplitMix64 so that neighbouring k give unrelated streams.
func newRand(k uint64) *rand.Rand {
	return rand.New(rand.NewPCG(splitMix64(k), splitMix64(k^0xa0761d6478bd642f)))
}

func TestConvention(t *testing.T) {
	t.Parallel()
	// Definitions of SPE-PRMS (2018) for exceedance; the statistics
	// convention for cumulative.
	tests := []struct {
		name       string
		conv       Convention
		p90, p10   float64
		marshalled string
	}{
		{"exceedance", Exceedance, 0.10, 0.90, "exceedance"},
		{"cumulative", Cumulative, 0.90, 0.10, "cumulative"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got, err := ParseConvention(tc.name)
			if err != nil || got != tc.conv {
				t.Fatalf("ParseConvention(%q) = %v, %v; want %v, nil", tc.name, got, err, tc.conv)
			}
			if s := tc.conv.String(); s != tc.name {
				t.Errorf("String() = %q, want %q", s, tc.name)
			}
			if p := tc.conv.Prob(90); p != tc.p90 {
				t.Errorf("Prob(90) = %v, want %v", p, tc.p90)
			}
			if p := tc.conv.Prob(10); p != tc.p10 {
				t.Errorf("Prob(10) = %v, want %v", p, tc.p10)
			}
			if p := tc.conv.Prob(50); p != 0.5 {
				t.Errorf("Prob(50) = %v, want 0.5", p)
			}
			text, err := tc.conv.MarshalText()
			if err != nil || string(text) != tc.marshalled {
				t.Errorf("MarshalText() = %q, %v; want %q", text, err, tc.marshalled)
			}
			var back Convention = 7
			if err := back.UnmarshalText(text); err != nil || back != tc.conv {
				t.Errorf("UnmarshalText(%q) = %v, %v; want %v", text, back, err, tc.conv)
			}
		})
	}
	var zero Convention
	if zero != Exceedance {
		t.Errorf("zero Convention = %v, want exceedance", zero)
	}
	for _, bad := range []string{"", "Exceedance", "p90", "reserves"} {
		if _, err := ParseConvention(bad); !errors.Is(err, ErrConvention) {
			t.Errorf("ParseConvention(%q) error = %v, want ErrConvention", bad, err)
		}
	}
	if s := Convention(7).String(); s != "Convention(7)" {
		t.Errorf("Convention(7).String() = %q", s)
	}
	if _, err := Convention(7).MarshalText(); !errors.Is(err, ErrConvention) {
		t.Errorf("Convention(7).MarshalText() error = %v, want ErrConvention", err)
	}
}

func TestQuantileDefinition7(t *testing.T) {
	t.Parallel()
	inf := math.Inf(1)
	oneToTen := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	// Derived by hand from Hyndman & Fan (1996) definition 7:
	// h = (n−1)p + 1, Q = x(⌊h⌋) + (h−⌊h⌋)(x(⌊h⌋+1) − x(⌊h⌋)).
	// For 1…10 that is Q(p) = 1 + 9p.
	tests := []struct {
		name string
		x    []float64
		p    float64
		want float64
	}{
		{"1..10 min", oneToTen, 0, 1},
		{"1..10 p10", oneToTen, 0.1, 1.9},
		{"1..10 median", oneToTen, 0.5, 5.5},
		{"1..10 p90", oneToTen, 0.9, 9.1},
		{"1..10 max", oneToTen, 1, 10},
		{"single", []float64{3}, 0.1, 3},
		// h = 1·0.25 + 1 → x(1) + 0.25·(10 − 0).
		{"pair", []float64{0, 10}, 0.25, 2.5},
		// h = 2·0.5 + 1 = 2 exactly: x(2), no interpolation.
		{"odd median", []float64{-1, 4, 9}, 0.5, 4},
		// h = 1.5 between x(1) = −Inf and x(2) = 1.
		{"-inf end", []float64{-inf, 1, 2}, 0.25, -inf},
		// h = 2.5 between x(2) = 2 and x(3) = +Inf.
		{"+inf end", []float64{1, 2, inf}, 0.75, inf},
		// h = 2 exactly: x(2) even though x(1) = −Inf.
		{"-inf not used", []float64{-inf, 1, 2}, 0.5, 1},
		// Ties: h = 1 + 3·0.5 = 2.5 between two 2s.
		{"ties", []float64{1, 2, 2, 3}, 0.5, 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got := Quantile(tc.x, tc.p)
			if !scalar.EqualWithinAbsOrRel(got, tc.want, 1e-14, 1e-14) && got != tc.want {
				t.Errorf("Quantile(%v, %v) = %v, want %v", tc.x, tc.p, got, tc.want)
			}
		})
	}
	if got := Quantile(nil, 0.5); !math.IsNaN(got) {
		t.Errorf("Quantile(nil, 0.5) = %v, want NaN", got)
	}
	if got := Quantile([]float64{-inf, inf}, 0.5); !math.IsNaN(got) {
		t.Errorf("Quantile([-Inf +Inf], 0.5) = %v, want NaN", got)
	}
}

// gonum's stat.Quantile with stat.LinInterp interpolates at h = n·p
// (Hyndman & Fan definition 4, with x(0) = x(1)); definition 7 at p
// interpolates at h = (n−1)p + 1, which is definition 4 at
// p' = ((n−1)p + 1)/n ∈ [1/n, 1]. So gonum at p' is an independent oracle.
func TestQuantileAgainstGonum(t *testing.T) {
	t.Parallel()
	rng := newRand(1)
	for _, n := range []int{1, 2, 3, 7, 10, 101, 1000} {
		x := make([]float64, n)
		for i := range x {
			x[i] = rng.NormFloat64()*3 + 1
			if i%4 == 3 { // some ties
				x[i] = x[i-1]
			}
		}
		slices.Sort(x)
		ps := []float64{0, 0.1, 0.5, 0.9, 1}
		for range 50 {
			ps = append(ps, rng.Float64())
		}
		for _, p := range ps {
			pp := min((float64(n-1)*p+1)/float64(n), 1)
			want := stat.Quantile(pp, stat.LinInterp, x, nil)
			got := Quantile(x, p)
			if !scalar.EqualWithinAbsOrRel(got, want, 1e-12, 1e-12) {
				t.Errorf("n=%d p=%v: Quantile = %v, gonum LinInterp at %v = %v", n, p, got, pp, want)
			}
		}
	}
}

func TestPercentiles(t *testing.T) {
	t.Parallel()
	x := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	// Q(p) = 1 + 9p for 1…10 (derived in TestQuantileDefinition7); the
	// exceedance P90 is Q(0.1) (SPE-PRMS 2018), the cumulative P90 is Q(0.9).
	tests := []struct {
		conv          Convention
		p90, p50, p10 float64
	}{
		{Exceedance, 1.9, 5.5, 9.1},
		{Cumulative, 9.1, 5.5, 1.9},
	}
	for _, tc := range tests {
		t.Run(tc.conv.String(), func(t *testing.T) {
			t.Parallel()
			p90, p50, p10 := Percentiles(x, tc.conv)
			if !scalar.EqualWithinAbsOrRel(p90, tc.p90, 1e-14, 1e-14) ||
				!scalar.EqualWithinAbsOrRel(p50, tc.p50, 1e-14, 1e-14) ||
				!scalar.EqualWithinAbsOrRel(p10, tc.p10, 1e-14, 1e-14) {
				t.Errorf("Percentiles(1…10, %v) = %v, %v, %v; want %v, %v, %v",
					tc.conv, p90, p50, p10, tc.p90, tc.p50, tc.p10)
			}
		})
	}
}

func TestOrderStatisticRanksHand(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name     string
		n        int
		p, level float64
		l, u     int
	}{
		// Bin(1, 0.5): each tail of x(1) holds 0.5 > 0.025, so both bounds
		// are infinite.
		{"n=1", 1, 0.5, 0.95, 0, 2},
		// Bin(10, 0.1), a = 0.05: P(B=0) = 0.9^10 = 0.3487 > a, so l = 0;
		// P(B ≥ 3) = 1 − 0.3487 − 0.3874 − 0.1937 = 0.0702 > a and
		// P(B ≥ 4) = 0.0702 − 120·0.1³·0.9⁷ = 0.0128 ≤ a, so u = 4.
		{"n=10 p=0.1", 10, 0.1, 0.90, 0, 4},
		// Mirror image of the previous row: Bin(10, 0.9), a = 0.05.
		{"n=10 p=0.9", 10, 0.9, 0.90, 7, 11},
		// Bin(10, 0.5), a = 0.025: P(B ≤ 1) = 11/1024 = 0.0107 ≤ a,
		// P(B ≤ 2) = 56/1024 = 0.0547 > a, so l = 2 and by symmetry u = 9.
		{"n=10 median", 10, 0.5, 0.95, 2, 9},
		// Bin(20, 0.5), a = 0.025: P(B ≤ 5) = 21700/2^20 = 0.0207 ≤ a,
		// P(B ≤ 6) = 60460/2^20 = 0.0577 > a: [x(6), x(15)], coverage
		// 1 − 2·0.0207 = 0.9586 (the tabled median interval, Conover 1999,
		// Practical Nonparametric Statistics, from memory).
		{"n=20 median", 20, 0.5, 0.95, 6, 15},
		// p = 0: B ≡ 0; p = 1: B ≡ n.
		{"p=0", 5, 0, 0.95, 0, 1},
		{"p=1", 5, 1, 0.95, 5, 6},
		// n = 0: no data, ranks (0, 1) so both bounds are infinite.
		{"n=0", 0, 0.5, 0.95, 0, 1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			l, u := OrderStatisticRanks(tc.n, tc.p, tc.level)
			if l != tc.l || u != tc.u {
				t.Errorf("OrderStatisticRanks(%d, %v, %v) = %d, %d; want %d, %d",
					tc.n, tc.p, tc.level, l, u, tc.l, tc.u)
			}
		})
	}
}

// binomCDF is P(B ≤ k) for B ~ Binomial(n, p) from gonum (regularised
// incomplete beta), independent of the ratio-recurrence sums under test.
func binomCDF(n int, p float64, k int) float64 {
	return distuv.Binomial{N: float64(n), P: p, Src: rand.NewPCG(0, 0)}.CDF(float64(k))
}

// The defining properties of OrderStatisticRanks, checked with gonum's
// binomial CDF: each tail outside [l, u−1] holds at most (1−level)/2,
// moving either rank inward breaks that, and the coverage is ≥ level.
func TestOrderStatisticRanksAgainstGonum(t *testing.T) {
	t.Parallel()
	for _, n := range []int{1, 2, 5, 13, 50, 200, 1000, 5000} {
		for _, p := range []float64{0.01, 0.1, 0.25, 0.5, 0.9, 0.99} {
			for _, level := range []float64{0.5, 0.9, 0.95, 0.99} {
				a := (1 - level) / 2
				l, u := OrderStatisticRanks(n, p, level)
				if !(0 <= l && l < u && u <= n+1) {
					t.Fatalf("n=%d p=%v level=%v: ranks %d, %d out of order", n, p, level, l, u)
				}
				below := binomCDF(n, p, l-1)     // P(B ≤ l−1)
				above := 1 - binomCDF(n, p, u-1) // P(B ≥ u)
				const tol = 1e-10
				if below > a+tol || above > a+tol {
					t.Errorf("n=%d p=%v level=%v: tails %v, %v exceed %v", n, p, level, below, above, a)
				}
				if l < n && binomCDF(n, p, l) <= a-tol {
					t.Errorf("n=%d p=%v level=%v: l=%d could be %d", n, p, level, l, l+1)
				}
				if u > 1 && 1-binomCDF(n, p, u-2) <= a-tol {
					t.Errorf("n=%d p=%v level=%v: u=%d could be %d", n, p, level, u, u-1)
				}
				if cov := 1 - below - above; cov < level-tol {
					t.Errorf("n=%d p=%v level=%v: coverage %v", n, p, level, cov)
				}
			}
		}
	}
}

// For large n the binomial is near normal (de Moivre–Laplace): the ranks
// sit at n·p ∓ z·√(n p (1−p)) + O(1), the O(1) from the continuity and
// skewness corrections (Cornish–Fisher: (z²−1)(1−2p)/6 < 0.5 here).
func TestOrderStatisticRanksLargeN(t *testing.T) {
	t.Parallel()
	for _, n := range []int{100_000, 10_000_000} {
		for _, p := range []float64{0.1, 0.5, 0.9} {
			level := 0.95
			z := distuv.UnitNormal.Quantile((1 + level) / 2)
			mu, sd := float64(n)*p, math.Sqrt(float64(n)*p*(1-p))
			l, u := OrderStatisticRanks(n, p, level)
			if d := float64(l) - (mu - z*sd); math.Abs(d) > 2 {
				t.Errorf("n=%d p=%v: l=%d, normal approximation %.1f", n, p, l, mu-z*sd)
			}
			if d := float64(u) - (mu + z*sd); math.Abs(d) > 2 {
				t.Errorf("n=%d p=%v: u=%d, normal approximation %.1f", n, p, u, mu+z*sd)
			}
		}
	}
}

// Coverage: over independent samples the interval [x(l), x(u)] must cover
// the true quantile with the exact probability c = P(l ≤ B ≤ u−1) ≥ level.
// The number of covering samples out of 400 is Binomial(400, c). We require
// (1) at least 400·0.9 − 3·√(400·0.9·0.1) = 342 covers (nominal minus three
// binomial standard deviations) and (2) a count within 3.5 standard
// deviations of 400·c, so an interval that is too wide also fails.
func TestQuantileIntervalCoverage(t *testing.T) {
	t.Parallel()
	const (
		trials = 400
		n      = 150
		level  = 0.90
	)
	type dist interface {
		Rand() float64
		Quantile(float64) float64
	}
	tests := []struct {
		name string
		dist func(src rand.Source) dist
	}{
		{"normal", func(src rand.Source) dist { return distuv.Normal{Mu: 3, Sigma: 2, Src: src} }},
		{"uniform", func(src rand.Source) dist { return distuv.Uniform{Min: 0.2, Max: 0.5, Src: src} }},
		{"lognormal", func(src rand.Source) dist { return distuv.LogNormal{Mu: 0, Sigma: 1, Src: src} }},
	}
	probs := []float64{0.1, 0.5, 0.9} // the quantiles behind P90, P50, P10
	for ti, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			covers := make([]int, len(probs))
			x := make([]float64, n)
			for trial := range trials {
				d := tc.dist(newRand(uint64(1000*ti + trial)))
				for i := range x {
					x[i] = d.Rand()
				}
				slices.Sort(x)
				for k, p := range probs {
					lo, hi := QuantileInterval(x, p, level)
					if q := d.Quantile(p); lo <= q && q <= hi {
						covers[k]++
					}
				}
			}
			for k, p := range probs {
				l, u := OrderStatisticRanks(n, p, level)
				c := binomCDF(n, p, u-1) - binomCDF(n, p, l-1)
				mean, sd := trials*c, math.Sqrt(trials*c*(1-c))
				floor := trials*level - 3*math.Sqrt(trials*level*(1-level))
				if float64(covers[k]) < floor || math.Abs(float64(covers[k])-mean) > 3.5*sd {
					t.Errorf("q=%v: %d of %d intervals cover; exact coverage %.4f gives %.1f ± %.1f, floor %.0f",
						p, covers[k], trials, c, mean, sd, floor)
				}
			}
		})
	}
}

func TestQuantileIntervalBounds(t *testing.T) {
	t.Parallel()
	x := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	inf := math.Inf(1)
	// Ranks from TestOrderStatisticRanksHand (n = 10); x(k) = k.
	tests := []struct {
		p, level float64
		lo, hi   float64
	}{
		{0.1, 0.90, -inf, 4},
		{0.9, 0.90, 7, inf},
		{0.5, 0.95, 2, 9},
	}
	for _, tc := range tests {
		lo, hi := QuantileInterval(x, tc.p, tc.level)
		if lo != tc.lo || hi != tc.hi {
			t.Errorf("QuantileInterval(1…10, %v, %v) = %v, %v; want %v, %v", tc.p, tc.level, lo, hi, tc.lo, tc.hi)
		}
	}
	if lo, hi := QuantileInterval(nil, 0.5, 0.9); !math.IsNaN(lo) || !math.IsNaN(hi) {
		t.Errorf("QuantileInterval(nil) = %v, %v; want NaN, NaN", lo, hi)
	}
}

func TestPanics(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		f    func()
	}{
		{"Quantile p<0", func() { Quantile([]float64{1}, -0.1) }},
		{"Quantile p NaN", func() { Quantile([]float64{1}, math.NaN()) }},
		{"Prob label", func() { Exceedance.Prob(101) }},
		{"Prob conv", func() { Convention(3).Prob(50) }},
		{"ranks level 1", func() { OrderStatisticRanks(10, 0.5, 1) }},
		{"ranks level 0", func() { OrderStatisticRanks(10, 0.5, 0) }},
		{"ranks n<0", func() { OrderStatisticRanks(-1, 0.5, 0.9) }},
		{"DescribeLevel", func() { DescribeLevel([]float64{1}, Exceedance, 95) }},
		{"Spearman lengths", func() { Spearman([]float64{1, 2}, []float64{1}) }},
		{"SpearmanEach lengths", func() { SpearmanEach([][]float64{{1, 2}}, []float64{1}) }},
		{"Sobol lengths", func() { SobolIndices([]float64{1, 2}, []float64{1, 2}, [][]float64{{1}}, 0, 0.9, 1) }},
		{"Sobol bootstrap", func() { SobolIndices([]float64{1, 2}, []float64{1, 2}, nil, -1, 0.9, 1) }},
		{"Point block", func() { SobolPlan{N: 2, D: 1}.Point(make([]float64, 1), []float64{1}, []float64{2}, 3) }},
		{"Locate", func() { SobolPlan{N: 2, D: 1}.Locate(6) }},
		{"Split", func() { SobolPlan{N: 2, D: 1}.Split(make([]float64, 5)) }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			defer func() {
				if recover() == nil {
					t.Errorf("%s did not panic", tc.name)
				}
			}()
			tc.f()
		})
	}
}
