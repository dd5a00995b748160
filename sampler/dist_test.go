package sampler

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
)

// continuousCases are the continuous distributions every marginal test runs
// on, truncated ones included, some truncated far in a tail.
func continuousCases() []Spec {
	// Far-tail lognormal bound: 12 standard deviations of ln X above μ.
	s2 := math.Log(1 + 1.2*1.2/9)
	farLog := math.Exp(math.Log(3) - s2/2 + 12*math.Sqrt(s2))
	return []Spec{
		uni("uniform", -8, 8),
		tri("triangular", 0.18, 0.25, 0.35),
		tri("triangular-left", 0, 0, 2),
		tri("triangular-right", 0, 2, 2),
		pert("pert", 1.5, 2, 4),
		pert("pert-left", 0, 0, 1),
		gauss("normal", 10, 3, -inf, inf),
		gauss("normal-trunc", 10, 3, 8, 20),
		gauss("normal-min", 0, 1, 0.5, inf),
		gauss("normal-far-upper", 0, 1, 10, inf),
		gauss("normal-far-band", 0, 1, 30, 31),
		gauss("normal-far-lower", 5, 2, -inf, 5-2*15),
		logn("lognormal", 150, 80, -inf, inf),
		logn("lognormal-trunc", 3, 1.2, 0.8, inf),
		logn("lognormal-both", 3, 1.2, 1, 4),
		logn("lognormal-far-upper", 3, 1.2, farLog, inf),
	}
}

// TestKolmogorovSmirnov checks every marginal under the random method with
// the one-sample Kolmogorov–Smirnov statistic: √N·D stays below 1.628, the
// 1 % critical value of the asymptotic Kolmogorov distribution (Kolmogorov
// 1933; Smirnov 1948, Ann. Math. Stat. 19, table, from memory).
//
// All designs use one seed, so they share one uniform stream; D is invariant
// under a monotone map, so every distribution must also reproduce the D of
// the raw uniforms to 1e-6: a sharp check of each quantile function against
// its closed-form CDF.
func TestKolmogorovSmirnov(t *testing.T) {
	t.Parallel()
	const n = 20000
	const seed = 1
	us := fillAll(mustNew(t, []Spec{uni("u", 0, 1)}, Random, seed, n, nil, BlockSize))[0]
	dU := ks(us, func(x float64) float64 { return x })
	if crit := 1.628 / math.Sqrt(n); dU > crit {
		t.Errorf("uniform stream: KS D = %.5f, want ≤ %.5f (1 %% critical value)", dU, crit)
	}
	for _, s := range continuousCases() {
		t.Run(s.Name, func(t *testing.T) {
			t.Parallel()
			d := mustNew(t, []Spec{s}, Random, seed, n, nil, BlockSize)
			xs := fillAll(d)[0]
			o := oracleOf(s)
			for i, x := range xs {
				if math.IsNaN(x) || math.IsInf(x, 0) || (s.HasMin && x < s.Min) || (s.HasMax && x > s.Max) {
					t.Fatalf("case %d: x = %v outside the support", i, x)
				}
			}
			got, crit := ks(xs, o.cdf), 1.628/math.Sqrt(n)
			if got > crit {
				t.Errorf("KS D = %.5f, want ≤ %.5f (1 %% critical value)", got, crit)
			}
			if math.Abs(got-dU) > 1e-6 {
				t.Errorf("KS D = %.8f, the uniform stream's is %.8f", got, dU)
			}
		})
	}
}

// TestMarginalStrata: each distribution alone, under LHS, hits each of N
// strata once when mapped back through its closed-form CDF (McKay, Beckman
// & Conover 1979), far-tail truncations included.
func TestMarginalStrata(t *testing.T) {
	t.Parallel()
	for j, s := range continuousCases() {
		t.Run(s.Name, func(t *testing.T) {
			t.Parallel()
			xs := fillAll(mustNew(t, []Spec{s}, LHS, uint64(300+j), 2000, nil, BlockSize))[0]
			checkStrata(t, s.Name, xs, oracleOf(s).cdf)
		})
	}
}

// TestMoments compares sample means and variances with the closed forms of
// oracleOf (sources cited there): under LHS to within 0.2 % of a standard
// deviation (mean) and 1 % (variance), and under random sampling to within
// five standard errors (common practice), the standard error of the
// variance estimated as √((m₄ − s⁴)/N).
func TestMoments(t *testing.T) {
	t.Parallel()
	const n = 20000
	specs := append(continuousCases(),
		Spec{Name: "discrete", Kind: Discrete, Values: []float64{3, 1, 2}, Weights: []float64{1, 2, 0.5}},
		Spec{Name: "discrete-equal", Kind: Discrete, Values: []float64{-1, 4}})
	for j, s := range specs {
		for _, m := range []Method{LHS, Random} {
			t.Run(s.Name+"/"+m.String(), func(t *testing.T) {
				t.Parallel()
				d := mustNew(t, []Spec{s}, m, uint64(200+j), n, nil, BlockSize)
				xs := fillAll(d)[0]
				o := oracleOf(s)
				mean, m2, m4 := 0.0, 0.0, 0.0
				for _, x := range xs {
					mean += x
				}
				mean /= n
				for _, x := range xs {
					dx := (x - mean) * (x - mean)
					m2 += dx
					m4 += dx * dx
				}
				m2 /= n
				m4 /= n
				sd := math.Sqrt(o.variance)
				tolMean, tolVar := 2e-3*sd, 1e-2*o.variance
				if m == Random {
					tolMean, tolVar = 5*sd/math.Sqrt(n), 5*math.Sqrt((m4-m2*m2)/n)
				}
				if math.Abs(mean-o.mean) > tolMean {
					t.Errorf("mean = %.10g, want %.10g ± %.3g", mean, o.mean, tolMean)
				}
				if math.Abs(m2-o.variance) > tolVar {
					t.Errorf("variance = %.10g, want %.10g ± %.3g", m2, o.variance, tolVar)
				}
			})
		}
	}
}

// TestLognormalParameters checks the conversion from the variable's mean and
// sd to the log's μ and σ by its defining property: an untruncated
// lognormal's quantiles are e^(μ + σ z_p) with σ² = ln(1 + sd²/mean²),
// μ = ln(mean) − σ²/2 (the lognormal moments E[X] = e^(μ+σ²/2),
// Var X = (e^(σ²) − 1) e^(2μ+σ²) solved for μ, σ).
func TestLognormalParameters(t *testing.T) {
	t.Parallel()
	d, err := NewDist(logn("x", 150, 80, -inf, inf))
	if err != nil {
		t.Fatal(err)
	}
	s2 := math.Log(1 + 80.0*80/(150*150))
	mu, sigma := math.Log(150)-s2/2, math.Sqrt(s2)
	// z values of the standard normal at p = 0.1, 0.5, 0.975 (standard
	// tables, e.g. Abramowitz & Stegun 1964 table 26.5, to 10 digits, from memory).
	for _, c := range []struct{ p, z float64 }{{0.1, -1.2815515655}, {0.5, 0}, {0.975, 1.9599639845}} {
		want := math.Exp(mu + sigma*c.z)
		if got := d.Quantile(c.p); math.Abs(got-want) > 1e-8*want {
			t.Errorf("Quantile(%v) = %.12g, want %.12g", c.p, got, want)
		}
	}
}

// TestQuantileCDF checks that CDF inverts Quantile on a grid reaching 1e-12
// from either end, that the ends map to the support's ends, and the NaN
// contract.
func TestQuantileCDF(t *testing.T) {
	t.Parallel()
	ps := []float64{1e-12, 1e-6, 0.01, 0.3, 0.5, 0.7, 0.99, 1 - 1e-6, 1 - 1e-12}
	for _, s := range continuousCases() {
		t.Run(s.Name, func(t *testing.T) {
			t.Parallel()
			d, err := NewDist(s)
			if err != nil {
				t.Fatal(err)
			}
			o := oracleOf(s)
			for _, p := range ps {
				x := d.Quantile(p)
				if math.IsNaN(x) || math.IsInf(x, 0) {
					t.Fatalf("Quantile(%v) = %v", p, x)
				}
				// Relative tolerance on the smaller tail probability, plus
				// the resolution of x: the probability of an ulp of x on
				// either side, and, next to a bound k standard deviations
				// out, where the truncated density of z is about k, a few
				// ulps of z (4·15·2⁻⁴⁸ ≈ 2e-13 for k ≤ 15).
				tail := math.Min(p, 1-p)
				ulp := o.cdf(math.Nextafter(x, inf)) - o.cdf(math.Nextafter(x, -inf))
				if got := d.CDF(x); math.Abs(got-p) > 1e-7*tail+2*ulp+2e-13 {
					t.Errorf("CDF(Quantile(%v)) = %v", p, got)
				}
				if got := o.cdf(x); math.Abs(got-p) > 1e-6*tail+2*ulp+2e-13 {
					t.Errorf("oracle CDF(Quantile(%v) = %v) = %v", p, x, got)
				}
			}
			for _, p := range []float64{-0.1, 1.1, math.NaN()} {
				if x := d.Quantile(p); !math.IsNaN(x) {
					t.Errorf("Quantile(%v) = %v, want NaN", p, x)
				}
			}
			lo, hi := d.Quantile(0), d.Quantile(1)
			if s.HasMin && lo != s.Min || s.HasMax && hi != s.Max {
				t.Errorf("Quantile(0), Quantile(1) = %v, %v; want the bounds %v, %v", lo, hi, s.Min, s.Max)
			}
		})
	}
}

func TestDiscreteDist(t *testing.T) {
	t.Parallel()
	d, err := NewDist(Spec{Name: "k", Kind: Discrete, Values: []float64{5, 1, 3, 9}, Weights: []float64{1, 1, 2, 0}})
	if err != nil {
		t.Fatal(err)
	}
	// Sorted: 1 (¼), 3 (½), 5 (¼); 9 has weight 0 and is never drawn.
	for _, c := range []struct{ p, want float64 }{
		{0, 1}, {0.1, 1}, {0.25, 1}, {0.2500001, 3}, {0.75, 3}, {0.76, 5}, {1, 5},
	} {
		if got := d.Quantile(c.p); got != c.want {
			t.Errorf("Quantile(%v) = %v, want %v", c.p, got, c.want)
		}
	}
	for _, c := range []struct{ x, want float64 }{{0, 0}, {1, 0.25}, {2, 0.25}, {3, 0.75}, {5, 1}, {10, 1}} {
		if got := d.CDF(c.x); got != c.want {
			t.Errorf("CDF(%v) = %v, want %v", c.x, got, c.want)
		}
	}
}

func TestNewDistErrors(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name  string
		spec  Spec
		field string
		in    string
	}{
		{"bad uniform", uni("u", 2, 1), "max", "greater than min"},
		{"same_as", follow("f", "u"), "same_as", "none of its own"},
		{"far truncation", gauss("g", 0, 1, 40, inf), "min", "too far in the tail"},
		{"far lognormal max", logn("l", 3, 1, -inf, 1e-300), "max", "too far in the tail"},
		{"overflowing range", uni("w", -1e308, 1e308), "max", "finite"},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			_, err := NewDist(c.spec)
			var pe *ParamError
			if !errors.As(err, &pe) || pe.Field != c.field || !strings.Contains(pe.Reason, c.in) {
				t.Errorf("NewDist(%+v) error %v, want field %q mentioning %q", c.spec, err, c.field, c.in)
			}
		})
	}
}

// TestFarTruncationAccepted: a truncation 30 sd out is valid and sampled
// inside its range (the mass 4.9e-198 is far above minTruncMass).
func TestFarTruncationAccepted(t *testing.T) {
	t.Parallel()
	s := gauss("g", 0, 1, 30, 31)
	if errs := s.Validate(); errs != nil {
		t.Fatalf("Validate: %v", errs)
	}
	d, _ := NewDist(s)
	for _, p := range []float64{1e-300, 1e-15, 0.5, 1 - 1e-15} {
		if x := d.Quantile(p); !(x >= 30 && x <= 31) {
			t.Errorf("Quantile(%v) = %v, want in [30, 31]", p, x)
		}
	}
	// Median of the truncated tail, derived: Q(x) = (Q(30) + Q(31))/2 with
	// Q(31) ≪ Q(30), so Q(x) ≈ Q(30)/2; by the Mills ratio Q(z) ≈ φ(z)/z,
	// x ≈ 30 + ln 2/30 = 30.0231.
	if x := d.Quantile(0.5); math.Abs(x-(30+math.Ln2/30)) > 1e-3 {
		t.Errorf("median = %v, want ≈ %v", x, 30+math.Ln2/30)
	}
}

func ExampleKind_String() {
	fmt.Println(LogNormal, SameAs)
	// Output: lognormal same_as
}
