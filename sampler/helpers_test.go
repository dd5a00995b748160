package sampler

import (
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Spec builders.

func uni(name string, a, b float64) Spec {
	return Spec{Name: name, Kind: Uniform, Min: a, Max: b, HasMin: true, HasMax: true}
}

func tri(name string, a, m, b float64) Spec {
	return Spec{Name: name, Kind: Triangular, Min: a, Mode: m, Max: b, HasMin: true, HasMax: true}
}

func pert(name string, a, m, b float64) Spec {
	return Spec{Name: name, Kind: PERT, Min: a, Mode: m, Max: b, HasMin: true, HasMax: true}
}

// gauss is normal(mean, sd) truncated to [lo, hi] (±Inf: open side).
func gauss(name string, mean, sd, lo, hi float64) Spec {
	return Spec{Name: name, Kind: Normal, Mean: mean, SD: sd,
		Min: lo, HasMin: !math.IsInf(lo, 0), Max: hi, HasMax: !math.IsInf(hi, 0)}
}

func logn(name string, mean, sd, lo, hi float64) Spec {
	s := gauss(name, mean, sd, lo, hi)
	s.Kind = LogNormal
	return s
}

func fixed(name string, v float64) Spec { return Spec{Name: name, Kind: Fixed, Value: v} }

func follow(name, leader string) Spec { return Spec{Name: name, Kind: SameAs, SameAs: leader} }

var inf = math.Inf(1)

// Oracles: CDFs and moments written from the definitions, independently of
// the code under test.

// phiT is the standard normal CDF, Φ(z) = erfc(−z/√2)/2.
func phiT(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }

// densT is the standard normal density φ(z); φ(±∞) = 0.
func densT(z float64) float64 { return math.Exp(-z*z/2) / math.Sqrt(2*math.Pi) }

// massT is Φ(b) − Φ(a), from the upper tail when a > 0 so that it keeps its
// relative accuracy far out (Φ(b) − Φ(a) = Φ(−a) − Φ(−b)).
func massT(a, b float64) float64 {
	if a > 0 {
		return phiT(-a) - phiT(-b)
	}
	return phiT(b) - phiT(a)
}

// zfin returns z·φ(z), 0 for infinite z.
func zdens(z float64) float64 {
	if math.IsInf(z, 0) {
		return 0
	}
	return z * densT(z)
}

type oracle struct {
	cdf            func(x float64) float64
	mean, variance float64
}

// oracleOf returns the CDF, mean and variance of s from closed forms.
func oracleOf(s Spec) oracle {
	switch s.Kind {
	case Uniform:
		a, b := s.Min, s.Max
		return oracle{
			cdf:  func(x float64) float64 { return math.Min(1, math.Max(0, (x-a)/(b-a))) },
			mean: (a + b) / 2, variance: (b - a) * (b - a) / 12,
		}
	case Triangular:
		// Mean (a+b+c)/3, variance (a²+b²+c²−ab−ac−bc)/18 (Johnson, Kotz &
		// Balakrishnan 1995, Continuous Univariate Distributions vol. 2,
		// ch. 26, from memory); the CDF is the integral of the two linear
		// pieces of the density.
		a, c, b := s.Min, s.Mode, s.Max
		return oracle{
			cdf: func(x float64) float64 {
				switch {
				case x <= a:
					return 0
				case x <= c:
					return (x - a) * (x - a) / ((b - a) * (c - a))
				case x < b:
					return 1 - (b-x)*(b-x)/((b-a)*(b-c))
				}
				return 1
			},
			mean:     (a + b + c) / 3,
			variance: (a*a + b*b + c*c - a*b - a*c - b*c) / 18,
		}
	case PERT:
		// PERT mean (min + 4·mode + max)/6 (Malcolm et al. 1959, Oper. Res. 7,
		// from memory). Variance derived: with r = max − min,
		// α = 1 + 4(mode−min)/r, β = 1 + 4(max−mode)/r, α + β = 6, and the
		// mean μ = min + r·α/6 gives α = 6(μ−min)/r, β = 6(max−μ)/r, so
		// var = r²·αβ/((α+β)²(α+β+1)) = (μ − min)(max − μ)/7.
		a, m, b := s.Min, s.Mode, s.Max
		be := distuv.Beta{Alpha: 1 + 4*(m-a)/(b-a), Beta: 1 + 4*(b-m)/(b-a)}
		mu := (a + 4*m + b) / 6
		return oracle{
			cdf:  func(x float64) float64 { return be.CDF((x - a) / (b - a)) },
			mean: mu, variance: (mu - a) * (b - mu) / 7,
		}
	case Normal, LogNormal:
		mu, sigma := s.Mean, s.SD
		if s.Kind == LogNormal {
			// The conversion of the issue: σ² = ln(1 + sd²/mean²), μ = ln(mean) − σ²/2.
			s2 := math.Log(1 + s.SD*s.SD/(s.Mean*s.Mean))
			mu, sigma = math.Log(s.Mean)-s2/2, math.Sqrt(s2)
		}
		tr := func(x float64) float64 {
			if s.Kind == LogNormal {
				if x <= 0 {
					return math.Inf(-1)
				}
				return (math.Log(x) - mu) / sigma
			}
			return (x - mu) / sigma
		}
		a, b := math.Inf(-1), inf
		if s.HasMin {
			a = tr(s.Min)
		}
		if s.HasMax {
			b = tr(s.Max)
		}
		z := massT(a, b)
		o := oracle{cdf: func(x float64) float64 {
			t := tr(x)
			switch {
			case t <= a:
				return 0
			case t >= b:
				return 1
			}
			return massT(a, t) / z
		}}
		if s.Kind == Normal {
			// Truncated normal (Johnson, Kotz & Balakrishnan 1994, Continuous
			// Univariate Distributions vol. 1, ch. 13, from memory), with
			// Z = Φ(β) − Φ(α):
			//	mean = μ + σ(φ(α) − φ(β))/Z
			//	var  = σ²[1 + (αφ(α) − βφ(β))/Z − ((φ(α) − φ(β))/Z)²]
			d := (densT(a) - densT(b)) / z
			o.mean = mu + sigma*d
			o.variance = sigma * sigma * (1 + (zdens(a)-zdens(b))/z - d*d)
		} else {
			// Truncated lognormal, derived: with x = e^(μ+σt),
			//	E[Xᵏ; α<T<β] = ∫ e^(k(μ+σt)) φ(t) dt = e^(kμ + k²σ²/2) ∫ φ(t − kσ) dt
			//	             = e^(kμ + k²σ²/2) (Φ(β − kσ) − Φ(α − kσ)),
			// divided by Z for the truncated moments.
			m1 := math.Exp(mu+sigma*sigma/2) * massT(a-sigma, b-sigma) / z
			m2 := math.Exp(2*mu+2*sigma*sigma) * massT(a-2*sigma, b-2*sigma) / z
			o.mean, o.variance = m1, m2-m1*m1
		}
		return o
	case Discrete:
		vals, w := s.Values, s.Weights
		if w == nil {
			w = make([]float64, len(vals))
			for i := range w {
				w[i] = 1
			}
		}
		tot, m1, m2 := 0.0, 0.0, 0.0
		for i, v := range vals {
			tot += w[i]
			m1 += w[i] * v
			m2 += w[i] * v * v
		}
		m1, m2 = m1/tot, m2/tot
		return oracle{
			cdf: func(x float64) float64 {
				c := 0.0
				for i, v := range vals {
					if v <= x {
						c += w[i]
					}
				}
				return c / tot
			},
			mean: m1, variance: m2 - m1*m1,
		}
	}
	panic("no oracle for " + s.Kind.String())
}

// Design helpers.

func newCols(m, n int) [][]float64 {
	cols := make([][]float64, m)
	for j := range cols {
		cols[j] = make([]float64, n)
	}
	return cols
}

func fillAll(d *Design) [][]float64 {
	cols := newCols(d.NumParams(), d.N())
	d.Fill(0, d.N(), cols)
	return cols
}

func mustNew(t testing.TB, specs []Spec, m Method, seed uint64, n int, corr []Correlation, block int) *Design {
	t.Helper()
	d, err := newDesign(specs, m, seed, n, corr, block)
	if err != nil {
		t.Fatalf("newDesign: %v", err)
	}
	return d
}

// checkStrata maps the sample back through cdf and checks that the N values
// fall one in each of the N equal-probability strata (the Latin hypercube
// property, McKay, Beckman & Conover 1979, Technometrics 21; the check
// gonum's stat/samplemv tests use).
func checkStrata(t *testing.T, label string, xs []float64, cdf func(float64) float64) {
	t.Helper()
	n := len(xs)
	hit := make([]int, n)
	for i := range hit {
		hit[i] = -1
	}
	for i, x := range xs {
		s := int(math.Floor(cdf(x) * float64(n)))
		if s < 0 || s >= n {
			t.Errorf("%s: case %d: x = %v, F(x) = %v outside [0, 1)", label, i, x, cdf(x))
			return
		}
		if hit[s] >= 0 {
			t.Errorf("%s: cases %d and %d both in stratum %d of %d (x = %v, %v)", label, hit[s], i, s, n, xs[hit[s]], x)
			return
		}
		hit[s] = i
	}
}

// ranks returns the ranks 1 … n of xs (ties in order of appearance; the
// tests use continuous distributions).
func ranks(xs []float64) []float64 {
	idx := make([]int, len(xs))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int {
		switch {
		case xs[a] < xs[b]:
			return -1
		case xs[a] > xs[b]:
			return 1
		}
		return 0
	})
	r := make([]float64, len(xs))
	for k, i := range idx {
		r[i] = float64(k + 1)
	}
	return r
}

// spearman is the Pearson correlation of the ranks (gonum stat.Correlation).
func spearman(x, y []float64) float64 { return stat.Correlation(ranks(x), ranks(y), nil) }

// ks returns the Kolmogorov–Smirnov statistic D = sup |F_N(x) − F(x)|.
func ks(xs []float64, cdf func(float64) float64) float64 {
	s := slices.Clone(xs)
	slices.Sort(s)
	n := float64(len(s))
	d := 0.0
	for i, x := range s {
		f := cdf(x)
		d = math.Max(d, math.Max(float64(i+1)/n-f, f-float64(i)/n))
	}
	return d
}
