package engine

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
)

// refLET writes the LET correlation (Lomeland, Ebeltoft & Thomas 2005)
// out from its definition with math.Pow, independently of LET.Eval.
func refLET(m *LET, s float64) (kr1, kr2 float64) {
	se := math.Min(1, math.Max(0, (s-m.S1r)/(1-m.S1r-m.S2r)))
	a1, b1 := math.Pow(se, m.L1), m.E1*math.Pow(1-se, m.T1)
	a2, b2 := math.Pow(1-se, m.L2), m.E2*math.Pow(se, m.T2)
	return m.Kr1Max * a1 / (a1 + b1), m.Kr2Max * a2 / (a2 + b2)
}

// TestLETHandValue checks LET.Eval at a point evaluated by hand. With
// S1r = 0.1, S2r = 0.15 (span 0.75) and S = 0.37, Se = 0.27/0.75 = 0.36,
// 1 − Se = 0.64, and √0.36 = 0.6, √0.64 = 0.8, so
//
//	Se^1.5 = 0.216,  (1 − Se)^0.5 = 0.8,  (1 − Se)^2.5 = 0.4096·0.8 = 0.32768.
//
// kr1 with L1 = 1.5, E1 = 2, T1 = 0.5, Kr1Max = 0.454:
//
//	0.454·0.216/(0.216 + 2·0.8) = 0.454·0.216/1.816 = 0.25·0.216 = 0.054.
//
// kr2 with L2 = 2.5, E2 = 0.5, T2 = 1.5, Kr2Max = 0.87136:
//
//	0.87136·0.32768/(0.32768 + 0.5·0.216) = 0.87136·0.32768/0.43568 = 2·0.32768 = 0.65536.
func TestLETHandValue(t *testing.T) {
	t.Parallel()
	m := LET{S1r: 0.1, S2r: 0.15, Kr1Max: 0.454, Kr2Max: 0.87136, L1: 1.5, E1: 2, T1: 0.5, L2: 2.5, E2: 0.5, T2: 1.5}
	v := m.Eval(0.37)
	if !scalar.EqualWithinRel(v.Kr1, 0.054, 1e-13) || !scalar.EqualWithinRel(v.Kr2, 0.65536, 1e-13) {
		t.Errorf("LET at S = 0.37: kr1 = %.16g, kr2 = %.16g; want 0.054, 0.65536", v.Kr1, v.Kr2)
	}
}

// randomLET draws LET curves over the ranges the property sweep covers:
// L and T in 0.5–6, E in 0.05–20 (log uniform), residuals up to 0.3.
func randomLET(rng *rand.Rand) LET {
	e := func() float64 { return 0.05 * math.Pow(400, rng.Float64()) }
	lt := func() float64 { return 0.5 + 5.5*rng.Float64() }
	return LET{
		S1r: 0.3 * rng.Float64(), S2r: 0.3 * rng.Float64(),
		Kr1Max: 0.05 + 0.95*rng.Float64(), Kr2Max: 0.05 + 0.95*rng.Float64(),
		L1: lt(), E1: e(), T1: lt(), L2: lt(), E2: e(), T2: lt(),
	}
}

// TestLETDerivatives compares LET.Eval with the correlation written out
// with math.Pow, and its derivatives with central finite differences of
// the values (gonum diff/fd, second-order central formula): kr' from kr,
// kr″ from kr', at random interior points of random curves.
func TestLETDerivatives(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(5, 5))
	for range 400 {
		m := randomLET(rng)
		span := 1 - m.S1r - m.S2r
		se := 0.02 + 0.96*rng.Float64()
		s := m.S1r + se*span
		v := m.Eval(s)
		k1, k2 := refLET(&m, s)
		if !scalar.EqualWithinAbsOrRel(v.Kr1, k1, 1e-300, 1e-12) || !scalar.EqualWithinAbsOrRel(v.Kr2, k2, 1e-300, 1e-12) {
			t.Errorf("%+v at Se = %v: kr = %v, %v; math.Pow gives %v, %v", m, se, v.Kr1, v.Kr2, k1, k2)
		}
		// A step small against the distance to either end point: the
		// central formula's error is O(h²) relative to that distance.
		set := &fd.Settings{Formula: fd.Central, Step: 1e-4 * math.Min(se, 1-se) * span}
		val := func(f func(RelPermValue) float64) func(float64) float64 {
			return func(s float64) float64 { return f(m.Eval(s)) }
		}
		for _, c := range []struct {
			name   string
			got, d float64
			of     func(RelPermValue) float64
			scale  float64
		}{
			{"kr1'", v.DKr1, 0, func(v RelPermValue) float64 { return v.Kr1 }, math.Abs(v.Kr1) / (se * (1 - se) * span)},
			{"kr2'", v.DKr2, 0, func(v RelPermValue) float64 { return v.Kr2 }, math.Abs(v.Kr2) / (se * (1 - se) * span)},
			{"kr1″", v.D2Kr1, 0, func(v RelPermValue) float64 { return v.DKr1 }, math.Abs(v.DKr1) / (se * (1 - se) * span)},
			{"kr2″", v.D2Kr2, 0, func(v RelPermValue) float64 { return v.DKr2 }, math.Abs(v.DKr2) / (se * (1 - se) * span)},
		} {
			want := fd.Derivative(val(c.of), s, set)
			if math.Abs(c.got-want) > 1e-6*(math.Abs(want)+c.scale)+1e-300 {
				t.Errorf("%+v at Se = %v: %s = %.10g, finite difference %.10g", m, se, c.name, c.got, want)
			}
		}
	}
}

// endLimitCheck compares a one-sided limit at an end point with the
// value a short way inside: a finite limit within tol·(1 + |lim|), an
// infinite one with an inside value of the same sign above big.
func endLimitCheck(lim, inside, tol, big float64) bool {
	if math.IsInf(lim, 0) {
		return math.Signbit(lim) == math.Signbit(inside) && math.Abs(inside) > big
	}
	return !math.IsNaN(lim) && math.Abs(lim-inside) <= tol*(1+math.Abs(lim))
}

// TestLETEndPoints checks the one-sided limits LET.Eval gives at Se = 0
// and 1 (derived in let.go) against the values at 1e-9 inside, for the
// exponents where they change character (below, at, between and above 1
// and 2).
func TestLETEndPoints(t *testing.T) {
	t.Parallel()
	exps := []float64{0.5, 1, 1.5, 2, 3}
	for _, l := range exps {
		for _, tt := range exps {
			for _, e := range []float64{0.4, 3} {
				m := LET{S1r: 0.1, S2r: 0.2, Kr1Max: 0.7, Kr2Max: 0.9, L1: l, E1: e, T1: tt, L2: tt, E2: 1 / e, T2: l}
				span := 1 - m.S1r - m.S2r
				const d = 1e-9
				for _, end := range []struct {
					name   string
					at, in float64
				}{
					{"Se=0", m.S1r, m.S1r + d*span},
					{"Se=1", 1 - m.S2r, 1 - m.S2r - d*span},
				} {
					v, w := m.Eval(end.at), m.Eval(end.in)
					for _, c := range []struct {
						name      string
						lim, near float64
					}{
						{"kr1", v.Kr1, w.Kr1}, {"kr2", v.Kr2, w.Kr2},
						{"kr1'", v.DKr1, w.DKr1}, {"kr2'", v.DKr2, w.DKr2},
						{"kr1″", v.D2Kr1, w.D2Kr1}, {"kr2″", v.D2Kr2, w.D2Kr2},
					} {
						if !endLimitCheck(c.lim, c.near, 1e-3, 1e3) {
							t.Errorf("L=%g T=%g E=%g at %s: %s = %g, at 1e-9 inside %g", l, tt, e, end.name, c.name, c.lim, c.near)
						}
					}
				}
			}
		}
	}
}

// TestFracFlowEndLimits checks FracFlow.Eval's one-sided limits of f' and
// f″ at both end points (derived at FracFlow.endLimits) against f' at
// 1e-10 and f″ at 1e-7 inside, for LET curves whose other phase's slope is
// infinite (T < 1) or finite, and for Corey curves, with and without
// gravity. f″ is compared further inside because its interior formula
// loses digits there: with T1 < 1, kr1″ ~ x^(T1−2) enters N″ and f·D″ and
// cancels, leaving an error of about 1e-16·x^(T1−2).
func TestFracFlowEndLimits(t *testing.T) {
	t.Parallel()
	exps := []float64{0.5, 1, 1.5, 2, 3}
	type model struct {
		name string
		rel  RelPerm
	}
	var models []model
	for _, l := range exps {
		for _, tt := range exps {
			models = append(models,
				model{fmt.Sprintf("LET L=%g T=%g", l, tt), &LET{S1r: 0.1, S2r: 0.2, Kr1Max: 0.7, Kr2Max: 0.9, L1: l, E1: 1.5, T1: tt, L2: l, E2: 0.7, T2: tt}},
				model{fmt.Sprintf("LET L1=%g T1=%g, L2=%g T2=%g", l, tt, tt, l), &LET{S1r: 0.1, S2r: 0.2, Kr1Max: 0.7, Kr2Max: 0.9, L1: l, E1: 1.5, T1: tt, L2: tt, E2: 0.7, T2: l}},
				model{fmt.Sprintf("Corey n1=%g n2=%g", l, tt), &Corey{S1r: 0.1, S2r: 0.2, Kr1Max: 0.7, Kr2Max: 0.9, N1: l, N2: tt}})
		}
	}
	for _, m := range models {
		for _, g := range []float64{0, -0.4, 2.5} {
			ff := FracFlow{Rel: m.rel, R: 0.3, G: g}
			const span = 0.7
			for _, end := range []struct {
				name    string
				at, dir float64
			}{
				{"Se=0", 0.1, 1},
				{"Se=1", 0.8, -1},
			} {
				_, df, d2f := ff.Eval(end.at)
				_, dfi, _ := ff.Eval(end.at + end.dir*1e-10*span)
				_, _, d2fi := ff.Eval(end.at + end.dir*1e-7*span)
				if !endLimitCheck(df, dfi, 1e-3, 1e3) {
					t.Errorf("%s G=%g at %s: f' = %g, at 1e-10 inside %g", m.name, g, end.name, df, dfi)
				}
				if !endLimitCheck(d2f, d2fi, 1e-2, 1e2) {
					t.Errorf("%s G=%g at %s: f″ = %g, at 1e-7 inside %g", m.name, g, end.name, d2f, d2fi)
				}
			}
		}
	}
}

// TestLETLinearMatchesCorey: with L = E = T = 1 the LET curves are
// Se/(Se + (1 − Se)) = Se and (1 − Se)/((1 − Se) + Se) = 1 − Se, the
// Corey curves with n1 = n2 = 1 (Corey 1954), so every output must match
// the Corey solution; the cases cover a fan (R < 1), a piston (R > 1),
// gravity lifting f to 1 below 1 − s2r (S_b by bisection against the
// Corey closed form), up-dip gravity and a mobile initial saturation.
func TestLETLinearMatchesCorey(t *testing.T) {
	t.Parallel()
	base := map[Param]float64{S1r: 0.1, S2r: 0.2, S1Init: 0.1, Kr1Max: 0.6, Kr2Max: 0.9, N1: 1, N2: 1, Mu2CP: 1}
	for _, tc := range []struct {
		name string
		set  map[Param]float64
	}{
		{"fan", map[Param]float64{Mu1CP: 0.3}},
		{"piston", map[Param]float64{Mu1CP: 3}},
		{"down-dip lifted", map[Param]float64{Mu1CP: 0.5, DipDeg: -30, Rho1: 1050, Rho2: 750, PermMD: 1500, VelocityMPerDay: 0.05}},
		{"up-dip", map[Param]float64{Mu1CP: 0.5, DipDeg: 20, Rho1: 1050, Rho2: 750, PermMD: 800, VelocityMPerDay: 0.1}},
		{"mobile initial", map[Param]float64{Mu1CP: 0.4, S1Init: 0.3}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			p := params(base)
			for k, v := range tc.set {
				p[k] = v
			}
			want := mustSolve(t, p)
			let := LET{S1r: p[S1r], S2r: p[S2r], Kr1Max: p[Kr1Max], Kr2Max: p[Kr2Max], L1: 1, E1: 1, T1: 1, L2: 1, E2: 1, T2: 1}
			var s Solver
			got := new(Solution)
			if err := s.solveRel(&p, &let, got); err != nil || got.Status != StatusOK {
				t.Fatalf("solveRel: %v, status %v", err, got.Status)
			}
			near := func(what string, g, w float64) {
				t.Helper()
				if !scalar.EqualWithinAbsOrRel(g, w, 1e-12, 1e-12) {
					t.Errorf("%s: LET %.16g, Corey %.16g", what, g, w)
				}
			}
			near("S_b", got.Inlet, want.Inlet)
			near("front saturation", got.FrontSaturation(), want.FrontSaturation())
			near("breakthrough", got.BreakthroughPVI(), want.BreakthroughPVI())
			for _, td := range []float64{0.2, 0.5, 1, 2, 5} {
				near(fmt.Sprintf("recovery at %g PVI", td), got.Recovery(td), want.Recovery(td))
				_, cg := got.Outlet(td)
				_, cw := want.Outlet(td)
				near(fmt.Sprintf("cut at %g PVI", td), cg, cw)
			}
			near("PVI at cut 0.95", got.PVIAtCut(0.95), want.PVIAtCut(0.95))
			t.Logf("G = %.4g, S_b = %.6f, breakthrough %.6f PVI", got.Flow.G, got.Inlet, got.BreakthroughPVI())
		})
	}
}
