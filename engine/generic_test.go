package engine

import (
	"math"
	"math/rand/v2"
	"testing"
)

// opaqueRel hides Corey curves behind another type, so that the solver
// takes its generic path (FracFlow.Eval through the RelPerm interface, as
// for any other curves) instead of the fast paths behind its *Corey type
// checks.
type opaqueRel struct{ c Corey }

func (o *opaqueRel) Eval(s float64) RelPermValue   { return o.c.Eval(s) }
func (o *opaqueRel) Residuals() (s1r, s2r float64) { return o.c.Residuals() }

// TestGenericRelPermPath solves random cases (the ranges of
// TestEnvelopeProperties) through the RelPerm interface alone. The
// envelope is checked against f sampled finely from the independent
// math.Pow implementation refFlux (LeVeque 1992, §16.1: F ≥ f, concave,
// tangent at interior shock ends), and recovery, cut and front speed must
// agree with the Corey path within 1e-10.
func TestGenericRelPermPath(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(9, 9))
	n := 3000
	if testing.Short() {
		n = 300
	}
	pvi := []float64{0.05, 0.2, 0.5, 1, 2, 5, 30}
	var fast, generic Solver
	var r Result
	var sol Solution
	for range n {
		p := randomCase(rng)
		fast.SolveCase(&p, pvi, 0.98, &r)
		if r.Status != StatusOK {
			continue
		}
		if err := generic.Solve(&p, &sol); err != nil {
			t.Fatalf("%v: %v", p, err)
		}
		sol.Flow.Rel = &opaqueRel{c: sol.corey}
		sol.cf.set(&sol.Flow)
		generic.sc.envelope(&sol)
		checkEnvelope(t, &p, &sol)
		for i, x := range pvi {
			avg, cut := sol.averageAndCut(x, &generic.sc)
			rec := (avg - sol.Init) / (1 - sol.Init)
			if math.Abs(rec-r.RecoveryAt[i]) > 1e-10 || math.Abs(cut-r.CutAt[i]) > 1e-10 {
				t.Errorf("%v at %v PVI: generic path recovery %v, cut %v; Corey path %v, %v", p, x, rec, cut, r.RecoveryAt[i], r.CutAt[i])
			}
		}
		if got, want := sol.FrontSpeed(), r.FrontSpeed; math.Abs(got-want) > 1e-10*math.Max(1, math.Abs(want)) {
			t.Errorf("%v: generic path front speed %v, Corey path %v", p, got, want)
		}
	}
}

// TestCoreyFlowMatchesEval checks that the Corey fast path gives the bits
// of FracFlow.Eval and FracFlow.F (its reference: the RelPerm interface
// and combine), at random interior saturations, at the residuals and next
// to them, for random cases. If combine's formulas change, coreyFlow.at
// must follow.
func TestCoreyFlowMatchesEval(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(5, 5))
	same := func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) || (a != a && b != b) }
	for range 2000 {
		p := randomCase(rng)
		if rng.IntN(4) == 0 {
			p[N1] = float64(1 + rng.IntN(4)) // the integer exponents pow multiplies out
		}
		ff := NewFracFlow(&p)
		var cf coreyFlow
		cf.set(&ff)
		lo, hi := p[S1r], 1-p[S2r]
		ss := []float64{lo, hi, math.Nextafter(lo, 1), math.Nextafter(hi, 0), lo - 0.01, hi + 0.01}
		for range 20 {
			ss = append(ss, lo+(hi-lo)*rng.Float64())
		}
		for _, s := range ss {
			f, df, d2f := ff.Eval(s)
			g, dg, d2g := cf.eval(&ff, s)
			if !same(f, g) || !same(df, dg) || !same(d2f, d2g) {
				t.Errorf("%v: at S = %v Eval gives (%v, %v, %v), coreyFlow.eval (%v, %v, %v)", p, s, f, df, d2f, g, dg, d2g)
			}
			if a, b := ff.F(s), cf.f(&ff, s); !same(a, b) {
				t.Errorf("%v: at S = %v F gives %v, coreyFlow.f %v", p, s, a, b)
			}
		}
	}
}

// TestBinomialTail checks the series of seriesStep against
// math.Expm1(n·math.Log1p(δ)), the same (1 + δ)^n − 1 from the math
// package, for exponents 0.05–50 and steps up to the bound nearFlow uses:
// they agree to 1e-18, so a continued power p·(1 + tail) carries only
// its own rounding.
func TestBinomialTail(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(7, 7))
	for range 100000 {
		n := math.Exp(math.Log(0.05) + rng.Float64()*math.Log(1000))
		d := (2*rng.Float64() - 1) * seriesStep / max(1, n)
		got, want := binomialTail(n, d), math.Expm1(n*math.Log1p(d))
		if math.Abs(got-want) > 1e-18 {
			t.Fatalf("n = %v, δ = %v: binomialTail = %v, want %v", n, d, got, want)
		}
	}
}

// TestNearFlowSeries checks nearFlow against the direct evaluation
// (coreyFlow.eval) at points within the series' reach of a fully
// evaluated one. The powers agree to rounding (TestBinomialTail); f′ and
// f″ are differences of larger terms (strongly so where gravity lifts f
// above 1), so they are compared to 1e-12 relative or absolute.
func TestNearFlowSeries(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(6, 6))
	near := func(a, b float64) bool { return math.Abs(a-b) <= 1e-12*max(1, math.Abs(b)) }
	for range 2000 {
		p := randomCase(rng)
		ff := NewFracFlow(&p)
		var cf coreyFlow
		cf.set(&ff)
		lo, hi := p[S1r], 1-p[S2r]
		s0 := lo + (hi-lo)*(0.01+0.98*rng.Float64())
		nf := cf.near(&ff)
		nf.eval(s0)
		for _, d := range []float64{1e-12, -1e-10, 1e-8, -3e-7} {
			s := s0 + d*(hi-lo)
			f, df, d2f := nf.eval(s)
			g, dg, d2g := cf.eval(&ff, s)
			if !near(f, g) || !near(df, dg) || !near(d2f, d2g) {
				t.Errorf("%v: at S = %v from %v: series (%v, %v, %v), direct (%v, %v, %v)", p, s, s0, f, df, d2f, g, dg, d2g)
			}
		}
	}
}
