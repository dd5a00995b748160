package sampler

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sync"
	"testing"

	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/stat/distuv"
)

// betaProbes returns n probabilities: half uniform on (0, 1), half spread
// evenly over the octaves of both tails down to 2^−45 (past the tables'
// lowest octave, 2^−41, so the gonum fallback is probed too).
func betaProbes(n int) []float64 {
	rng := rand.New(rand.NewPCG(1, 1))
	p := make([]float64, n)
	for i := range p {
		if i%2 == 0 {
			p[i] = rng.Float64()
			continue
		}
		v := math.Ldexp(0.5+rng.Float64()/2, -rng.IntN(45))
		if rng.IntN(2) == 0 {
			v = 1 - v
		}
		p[i] = v
	}
	return p
}

// TestBetaQuantileClosedForms checks the tables against quantiles in
// closed form (derived here):
//
//	Beta(1, b): f(x) = b(1 − x)^(b−1), F(x) = 1 − (1 − x)^b,
//	            Q(p) = 1 − (1 − p)^(1/b) = −expm1(log1p(−p)/b);
//	Beta(a, 1): F(x) = x^a, Q(p) = p^(1/a);
//	Beta(2, 2): F(x) = 3x² − 2x³; with x = 1/2 + y, 2F − 1 = 3y − 4y³,
//	            the triple-angle form of sin 3θ with y = sin θ, so
//	            Q(p) = 1/2 + sin(asin(2p − 1)/3).
//
// The Beta(2, 2) form loses accuracy where asin is steep (p near 0 or
// 1), so it is used on [0.05, 0.95] only. Every PERT with the mode at an
// end is a Beta(1, 5) or a Beta(5, 1).
func TestBetaQuantileClosedForms(t *testing.T) {
	t.Parallel()
	probes := betaProbes(40000)
	for _, tc := range []struct {
		a, b   float64
		lo, hi float64 // probes used
		q      func(p float64) float64
	}{
		{1, 5, 0, 1, func(p float64) float64 { return -math.Expm1(math.Log1p(-p) / 5) }},
		{1, 2.7, 0, 1, func(p float64) float64 { return -math.Expm1(math.Log1p(-p) / 2.7) }},
		{5, 1, 0, 1, func(p float64) float64 { return math.Pow(p, 1.0/5) }},
		{3.2, 1, 0, 1, func(p float64) float64 { return math.Pow(p, 1/3.2) }},
		{2, 2, 0.05, 0.95, func(p float64) float64 { return 0.5 + math.Sin(math.Asin(2*p-1)/3) }},
	} {
		t.Run(fmt.Sprintf("beta(%g,%g)", tc.a, tc.b), func(t *testing.T) {
			q := newBetaQuantile(tc.a, tc.b)
			worst, at := 0.0, 0.0
			for _, p := range probes {
				if p < tc.lo || p > tc.hi {
					continue
				}
				want := tc.q(p)
				if e := math.Abs(q.Quantile(p)-want) / want; e > worst {
					worst, at = e, p
				}
			}
			// The tables' node values come from gonum's incomplete beta
			// function, whose relative error is about 2e-15 (measured:
			// gonum's own Quantile is 4e-15 off these forms).
			if worst > 5e-15 {
				t.Errorf("worst relative error %.3g at p = %v, want ≤ 5e-15", worst, at)
			}
			t.Logf("worst relative error %.3g at p = %v", worst, at)
		})
	}
}

// TestBetaQuantileAccuracy checks the tables of PERT shapes against gonum:
// its inverse incomplete beta function (distuv.Beta.Quantile, cephes
// incbi) and its incomplete beta function (mathext.RegIncBeta, cephes
// incbet): the Newton step (F(x) − p)/f(x) from each draw x, with the
// tail probability computed on the side x lies (the upper tail as
// I_{1−x}(b, a), 1 − x being exact there), must be within tolF of the
// distance to the nearer end plus an ulp of x.
func TestBetaQuantileAccuracy(t *testing.T) {
	t.Parallel()
	const tolF = 1e-14
	probes := betaProbes(20000)
	for _, ab := range [][2]float64{{3, 3}, {1.8, 4.2}, {4.6, 1.4}, {1.0001, 4.9999}, {2.6, 3.4}} {
		a, b := ab[0], ab[1]
		t.Run(fmt.Sprintf("beta(%g,%g)", a, b), func(t *testing.T) {
			q := newBetaQuantile(a, b)
			ref := distuv.Beta{Alpha: a, Beta: b}
			worstQ, worstF := 0.0, 0.0
			for _, p := range probes {
				x := q.Quantile(p)
				if e := math.Abs(x-ref.Quantile(p)) / x; e > worstQ {
					worstQ = e
				}
				// The Newton step from x on the tail side, against what x
				// can hold: 1 − x near 1 has only ulp(x) resolution.
				var dx float64
				if p <= 0.5 {
					dx = (mathext.RegIncBeta(a, b, x) - p) / ref.Prob(x)
				} else {
					dx = (mathext.RegIncBeta(b, a, 1-x) - (1 - p)) / ref.Prob(x)
				}
				if e := math.Abs(dx) / (min(x, 1-x) + ulp(x)/tolF); e > worstF {
					worstF = e
				}
			}
			if worstQ > 2e-14 {
				t.Errorf("worst relative difference from gonum's quantile %.3g, want ≤ 2e-14", worstQ)
			}
			if worstF > tolF {
				t.Errorf("worst Newton step %.3g of min(x, 1 − x) + ulp(x)/%g, want ≤ %g", worstF, tolF, tolF)
			}
			t.Logf("vs quantile %.3g, Newton step %.3g", worstQ, worstF)
		})
	}
}

// TestBetaQuantileEdges checks the ends, the cell boundaries and p = 1/2:
// Q(0) = 0, Q(1) = 1, NaN outside [0, 1], and no step down larger than
// the interpolation error (4e-16 relative) from one float to the next
// where two cells or the two halves meet.
func TestBetaQuantileEdges(t *testing.T) {
	t.Parallel()
	q := newBetaQuantile(1.8, 4.2)
	if q.Quantile(0) != 0 || q.Quantile(1) != 1 {
		t.Errorf("Q(0) = %v, Q(1) = %v, want 0 and 1", q.Quantile(0), q.Quantile(1))
	}
	for _, p := range []float64{-1e-300, 1.0000000000000002, math.NaN(), math.Inf(1)} {
		if v := q.Quantile(p); !math.IsNaN(v) {
			t.Errorf("Q(%v) = %v, want NaN", p, v)
		}
	}
	var edges []float64
	for o := range betaOctaves + 1 {
		for m := range betaCells {
			e := math.Ldexp(1+float64(m)/betaCells, -2-o)
			edges = append(edges, e, 1-e)
		}
	}
	edges = append(edges, 0.5)
	for _, e := range edges {
		below := math.Nextafter(e, 0)
		lo, hi := q.Quantile(below), q.Quantile(e)
		if lo > hi*(1+4e-16) {
			t.Errorf("Q steps down at p = %v: Q(%v) = %v > Q(%v) = %v", e, below, lo, e, hi)
		}
	}
}

// TestBetaQuantileConcurrent draws from one fresh shape pair on several
// goroutines at once, each octave built by whichever gets there first:
// every draw must equal the one made alone.
func TestBetaQuantileConcurrent(t *testing.T) {
	t.Parallel()
	probes := betaProbes(4000)
	a, b := 1.234567, 4.765433
	q := newBetaQuantile(a, b) // one table, fitted by all at once
	got := make([][]float64, 4)
	var wg sync.WaitGroup
	for g := range got {
		wg.Go(func() {
			got[g] = make([]float64, len(probes))
			for i := range probes {
				k := (i + g*997) % len(probes) // each starts elsewhere
				got[g][k] = q.Quantile(probes[k])
			}
		})
	}
	wg.Wait()
	// A second table of the same shapes, built alone in another order.
	alone := newBetaQuantile(a, b)
	for i := len(probes) - 1; i >= 0; i-- {
		want := alone.Quantile(probes[i])
		for g := range got {
			if got[g][i] != want {
				t.Fatalf("goroutine %d: Q(%v) = %v, alone %v", g, probes[i], got[g][i], want)
			}
		}
	}
}

func BenchmarkBetaQuantile(b *testing.B) {
	q := newBetaQuantile(1.8, 4.2)
	ref := distuv.Beta{Alpha: 1.8, Beta: 4.2}
	// Uniform probabilities, as a study draws them.
	rng := rand.New(rand.NewPCG(1, 1))
	probes := make([]float64, 4096)
	for i := range probes {
		probes[i] = rng.Float64()
		q.Quantile(probes[i]) // build the octaves before timing
	}
	for _, c := range []struct {
		name     string
		quantile func(float64) float64
	}{{"table", q.Quantile}, {"gonum", ref.Quantile}} {
		b.Run(c.name, func(b *testing.B) {
			s, i := 0.0, 0
			for b.Loop() {
				s += c.quantile(probes[i&4095])
				i++
			}
			_ = s
		})
	}
	b.Run("build", func(b *testing.B) {
		for b.Loop() {
			h := &betaHalf{exact: ref}
			for o := range betaOctaves {
				h.fit(o)
			}
		}
	})
}
