package engine

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// params builds a case from DefaultParams with the given overrides.
func params(set map[Param]float64) Params {
	p := DefaultParams()
	for k, v := range set {
		p[k] = v
	}
	return p
}

func mustSolve(t *testing.T, p Params) *Solution {
	t.Helper()
	sol, err := Solve(p)
	if err != nil {
		t.Fatalf("Solve(%v): %v", p, err)
	}
	if sol.Status != StatusOK {
		t.Fatalf("Solve(%v): status %v", p, sol.Status)
	}
	return sol
}

// TestQuadraticCoreyClosedForm checks the classic symmetric case against
// its closed form, derived here (Buckley & Leverett 1942; Welge 1952).
//
// With n1 = n2 = 2, equal viscosities and end points and no residuals,
// f = S²/D with D = S² + (1 − S)² = 2S² − 2S + 1, so
//
//	f' = (2S·D − S²·(4S − 2))/D² = 2S(1 − S)/D².
//
// Welge's tangent from S = 0 touches where f'(S) = f(S)/S:
//
//	2S(1 − S)/D² = S/D  ⇔  2(1 − S) = 2S² − 2S + 1  ⇔  S² = 1/2,
//
// so the front saturation is 1/√2. The front speed is f(S)/S = S/D with
// D(1/√2) = 2 − √2, hence breakthrough at tD = (2 − √2)·√2 = 2(√2 − 1).
// Recovery at breakthrough is S̄ = tD (1 − f(0)) = 2(√2 − 1). After
// breakthrough the outlet state solves f'(S) = 1/tD; at the fan's end
// S = 1, f'(1) = 0, so recovery tends to 1 and never reaches it.
func TestQuadraticCoreyClosedForm(t *testing.T) {
	t.Parallel()
	sol := mustSolve(t, DefaultParams())
	if got, want := sol.FrontSaturation(), 1/math.Sqrt2; math.Abs(got-want) > 1e-12 {
		t.Errorf("front saturation = %.16g, want 1/√2 = %.16g", got, want)
	}
	if got, want := sol.BreakthroughPVI(), 2*(math.Sqrt2-1); math.Abs(got-want) > 1e-12 {
		t.Errorf("breakthrough = %.16g PVI, want 2(√2−1) = %.16g", got, want)
	}
	if got, want := sol.Recovery(sol.BreakthroughPVI()), 2*(math.Sqrt2-1); math.Abs(got-want) > 1e-12 {
		t.Errorf("recovery at breakthrough = %.16g, want %.16g", got, want)
	}
	if got := sol.MaxRecovery(); got != 1 {
		t.Errorf("max recovery = %g, want 1", got)
	}
	// Outlet state at tD = 2: f'(S) = 1/2 with f' = 2S(1−S)/D² (derived above).
	s, _ := sol.Outlet(2)
	if d := 2 * s * (1 - s) / math.Pow(2*s*s-2*s+1, 2); math.Abs(d-0.5) > 1e-12 {
		t.Errorf("outlet state at tD=2 has f' = %.16g, want 0.5", d)
	}
	// Cut limit 0.98: f = S²/D = 0.98 ⇔ 0.02 S² = 0.98 (1 − S)² ⇔ S/(1 − S) = 7,
	// so S = 7/8, D = 0.78125, f'(7/8) = 2·(7/8)(1/8)/D² = 0.3584, tD = 1/f'
	// = 2.790178…, recovery S + tD(1 − 0.98) = 0.930803…
	sCut := 0.875
	dCut := 2 * sCut * (1 - sCut) / math.Pow(2*sCut*sCut-2*sCut+1, 2)
	var solver Solver
	var r Result
	p := DefaultParams()
	solver.SolveCase(&p, []float64{1, 2, 3}, 0.98, &r)
	if math.Abs(r.PVIAtCutLimit-1/dCut) > 1e-12 || math.Abs(r.RecoveryAtCutLimit-(sCut+0.02/dCut)) > 1e-12 {
		t.Errorf("cut limit 0.98: tD = %.16g, recovery %.16g; want %.16g, %.16g",
			r.PVIAtCutLimit, r.RecoveryAtCutLimit, 1/dCut, sCut+0.02/dCut)
	}
	if got := sol.PVIAtCut(1); !math.IsNaN(got) {
		t.Errorf("cut never reaches 1 when f'(1) = 0, got tD = %g", got)
	}
}

// TestLinearRelPermClosedForm checks linear curves (Corey n = 1) against
// closed forms derived here. With kr1 = S, kr2 = 1 − S and R = mu1/mu2,
//
//	f = S/(R + (1 − R)S),  f' = R/(R + (1 − R)S)²,  f'' = −2R(1 − R)/(R + (1 − R)S)³.
//
// R > 1 (favourable): f is convex, the envelope over [0, 1] is the chord
// of slope 1, a piston front: breakthrough at 1 PVI with S_front = 1 and
// full recovery from then on.
//
// R < 1 (unfavourable): f is concave, the solution is a single fan. The
// front moves at f'(0) = 1/R, so breakthrough is at tD = R. After it the
// outlet state solves R/(R + (1 − R)S)² = 1/tD, i.e.
//
//	S_out = (√(R tD) − R)/(1 − R)   for R ≤ tD ≤ 1/R,
//
// and Welge gives S̄ = S_out + tD(1 − f(S_out)), with f evaluated from
// its formula above.
func TestLinearRelPermClosedForm(t *testing.T) {
	t.Parallel()
	linear := map[Param]float64{N1: 1, N2: 1}

	t.Run("favourable", func(t *testing.T) {
		for _, r := range []float64{1.5, 4, 100} {
			set := map[Param]float64{Mu1CP: r, Mu2CP: 1}
			for k, v := range linear {
				set[k] = v
			}
			sol := mustSolve(t, params(set))
			if got := sol.BreakthroughPVI(); math.Abs(got-1) > 1e-12 {
				t.Errorf("R=%g: breakthrough = %.16g, want 1", r, got)
			}
			if got := sol.FrontSaturation(); math.Abs(got-1) > 1e-12 {
				t.Errorf("R=%g: front saturation = %.16g, want 1", r, got)
			}
			if got := sol.Recovery(1.5); math.Abs(got-1) > 1e-12 {
				t.Errorf("R=%g: recovery at 1.5 PVI = %.16g, want 1", r, got)
			}
		}
	})

	t.Run("unfavourable", func(t *testing.T) {
		for _, r := range []float64{0.5, 0.1, 1e-3} {
			set := map[Param]float64{Mu1CP: r, Mu2CP: 1}
			for k, v := range linear {
				set[k] = v
			}
			sol := mustSolve(t, params(set))
			if got := sol.BreakthroughPVI(); math.Abs(got-r) > 1e-12*r {
				t.Errorf("R=%g: breakthrough = %.16g, want R", r, got)
			}
			if got := sol.FrontSaturation(); got != 0 {
				t.Errorf("R=%g: front saturation = %g, want 0 (no shock)", r, got)
			}
			f := func(s float64) float64 { return s / (r + (1-r)*s) }
			for _, x := range []float64{0.3, 1, 0.9} {
				td := r + x*(1/r-r)
				sOut := (math.Sqrt(r*td) - r) / (1 - r)
				got, cut := sol.Outlet(td)
				if !scalar.EqualWithinAbsOrRel(got, sOut, 1e-11, 1e-11) {
					t.Errorf("R=%g tD=%g: outlet S = %.16g, want %.16g", r, td, got, sOut)
				}
				if !scalar.EqualWithinAbsOrRel(cut, f(sOut), 1e-11, 1e-11) {
					t.Errorf("R=%g tD=%g: cut = %.16g, want %.16g", r, td, cut, f(sOut))
				}
				want := sOut + td*(1-f(sOut))
				if got := sol.Recovery(td); !scalar.EqualWithinAbsOrRel(got, want, 1e-11, 1e-11) {
					t.Errorf("R=%g tD=%g: recovery = %.16g, want %.16g", r, td, got, want)
				}
			}
		}
	})
}

// TestInletSaturationUnderGravity checks S_b against the closed form
// derived in [InletSaturation]: with linear curves (kr1 = Se) and G < 0,
// f reaches 1 at Se_b = R/|G|.
func TestInletSaturationUnderGravity(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		g, r float64
		want float64 // Se_b, derived above
	}{
		{"lifted", -4, 1, 0.25},
		{"lifted, viscous injectant", -10, 2, 0.2},
		{"not lifted", -0.5, 1, 1},
		{"up-dip heavy injectant", 3, 1, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := params(map[Param]float64{N1: 1, N2: 1, Mu1CP: tc.r, S2r: 0.2, S1r: 0.1, S1Init: 0.1})
			ff := NewFracFlow(&p)
			ff.G = tc.g
			sb := InletSaturation(&p, &ff)
			want := 0.1 + tc.want*0.7
			if math.Abs(sb-want) > 1e-14 {
				t.Errorf("S_b = %.16g, want %.16g", sb, want)
			}
			if f := ff.F(sb); math.Abs(f-1) > 1e-12 {
				t.Errorf("f(S_b) = %.16g, want 1", f)
			}
		})
	}
}

// TestGravityNumber checks G against a hand calculation: k = 100 mD =
// 9.869233e-14 m², Δρ = 200 kg/m³, sin 30° = 1/2, mu2 = 1 mPa·s and
// u = 0.3 m/day = 3.4722…e-6 m/s give
//
//	G = 9.869233e-14 · 200 · 9.80665 · 0.5 / (1e-3 · 0.3/86400) = 27.87…
func TestGravityNumber(t *testing.T) {
	t.Parallel()
	p := params(map[Param]float64{DipDeg: 30, Rho1: 1000, Rho2: 800, PermMD: 100, VelocityMPerDay: 0.3})
	want := 9.869233e-14 * 200 * 9.80665 * 0.5 / (1e-3 * 0.3 / 86400)
	if got := GravityNumber(&p); !scalar.EqualWithinRel(got, want, 1e-14) {
		t.Errorf("G = %.16g, want %.16g", got, want)
	}
	p[Rho2] = p[Rho1]
	if got := GravityNumber(&p); got != 0 {
		t.Errorf("equal densities: G = %g, want 0", got)
	}
}

func TestValidity(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		set  map[Param]float64
		bad  Param
	}{
		{"residuals sum to one", map[Param]float64{S1r: 0.5, S2r: 0.5}, S2r},
		{"initial above mobile range", map[Param]float64{S2r: 0.3, S1Init: 0.7}, S1Init},
		{"end point above one", map[Param]float64{Kr2Max: 1.2}, Kr2Max},
		{"zero exponent", map[Param]float64{N1: 0}, N1},
		{"negative viscosity", map[Param]float64{Mu2CP: -1}, Mu2CP},
		{"NaN", map[Param]float64{Kr1Max: math.NaN()}, Kr1Max},
		{"dip without flux", map[Param]float64{DipDeg: 5, VelocityMPerDay: 0}, VelocityMPerDay},
	} {
		p := params(tc.set)
		_, err := Solve(p)
		var ve *ValidityError
		if !errors.As(err, &ve) || !errors.Is(err, ErrInvalid) || ve.Param != tc.bad {
			t.Errorf("%s: err = %v, want a ValidityError on %v", tc.name, err, tc.bad)
		}
	}
	// s1_init below s1r is valid (DESIGN §2).
	if _, err := Solve(params(map[Param]float64{S1r: 0.05, S1Init: 0})); err != nil {
		t.Errorf("s1_init < s1r: %v", err)
	}
}

// TestCounterCurrentInitialState: a mobile initial phase 1 pushed back by
// strong gravity, f(s1_init) < 0, is outside the 1-D model (DESIGN §2).
func TestCounterCurrentInitialState(t *testing.T) {
	t.Parallel()
	// G kr2(s1_init) > 1 makes f(s1_init) negative.
	p := params(map[Param]float64{S1Init: 0.3, DipDeg: 90, Rho1: 1100, Rho2: 700, PermMD: 2000, VelocityMPerDay: 0.05})
	var s Solver
	var r Result
	s.SolveCase(&p, []float64{1}, 0.98, &r)
	if r.Status != StatusCounterCurrent || !math.IsNaN(r.BreakthroughPVI) || r.GravityNumber <= 0 {
		t.Errorf("status %v, breakthrough %g, G %g; want counter-current with NaN outputs", r.Status, r.BreakthroughPVI, r.GravityNumber)
	}
}
