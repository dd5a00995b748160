package engine

import (
	"math"
	"slices"
	"testing"
)

// refFlux is the fractional flow written out from its definition (DESIGN
// §2, Dake 1978) with math.Pow, independently of the engine's FracFlow:
//
//	f = kr1 (1 − G kr2)/(kr1 + (mu1/mu2) kr2).
func refFlux(p *Params, g float64) func(float64) float64 {
	span := 1 - p[S1r] - p[S2r]
	r := p[Mu1CP] / p[Mu2CP]
	return func(s float64) float64 {
		se := math.Min(1, math.Max(0, (s-p[S1r])/span))
		kr1 := p[Kr1Max] * math.Pow(se, p[N1])
		kr2 := p[Kr2Max] * math.Pow(1-se, p[N2])
		return kr1 * (1 - g*kr2) / (kr1 + r*kr2)
	}
}

// godunov is a first-order Godunov finite-volume solver for
// ∂S/∂t + ∂f(S)/∂x = 0 on [0, 1] with the inlet flux condition (the inlet
// face carries flux 1, phase 1 only) and free outflow, as in LeVeque (1992),
// §13–§15. The exact Riemann flux at a face with left state uL and right
// state uR is min f over [uL, uR] when uL ≤ uR and max f over [uR, uL]
// otherwise (LeVeque 1992, eq. 14.? "Godunov flux for scalar laws",
// from memory); the extrema are taken over the interval's end points and
// the critical points of f, found once on a fine grid.
type godunov struct {
	f        func(float64) float64
	crit     []float64 // saturations where f' changes sign
	critF    []float64
	maxSlope float64
}

func newGodunov(f func(float64) float64, lo, hi float64) *godunov {
	g := &godunov{f: f}
	const n = 20000
	h := (hi - lo) / n
	prevD := math.NaN()
	for i := 0; i < n; i++ {
		x0, x1 := lo+float64(i)*h, lo+float64(i+1)*h
		d := (f(x1) - f(x0)) / h
		g.maxSlope = math.Max(g.maxSlope, math.Abs(d))
		if i > 0 && d*prevD < 0 {
			// A sign change of the secant slope: refine the extremum by
			// golden-section-like bisection on the secant sign.
			a, b := x0-h, x1
			for range 60 {
				m := 0.5 * (a + b)
				e := 1e-9 * h
				dm := f(m+e) - f(m-e)
				if dm*prevD > 0 {
					a = m
				} else {
					b = m
				}
			}
			c := 0.5 * (a + b)
			g.crit = append(g.crit, c)
			g.critF = append(g.critF, f(c))
		}
		if d != 0 {
			prevD = d
		}
	}
	return g
}

func (g *godunov) flux(uL, uR, fL, fR float64) float64 {
	if uL == uR {
		return fL
	}
	if uL < uR {
		m := math.Min(fL, fR)
		for k, c := range g.crit {
			if c > uL && c < uR {
				m = math.Min(m, g.critF[k])
			}
		}
		return m
	}
	m := math.Max(fL, fR)
	for k, c := range g.crit {
		if c > uR && c < uL {
			m = math.Max(m, g.critF[k])
		}
	}
	return m
}

// run returns the cell averages after tD pore volumes on n cells.
func (g *godunov) run(n int, init, tD float64) []float64 {
	s := make([]float64, n)
	fs := make([]float64, n)
	fl := make([]float64, n+1)
	for i := range s {
		s[i] = init
	}
	dx := 1 / float64(n)
	dt := 0.45 * dx / g.maxSlope
	for t := 0.0; t < tD; {
		step := math.Min(dt, tD-t)
		for i := range s {
			fs[i] = g.f(s[i])
		}
		fl[0] = 1 // inlet: phase 1 only
		for i := 1; i < n; i++ {
			fl[i] = g.flux(s[i-1], s[i], fs[i-1], fs[i])
		}
		fl[n] = fs[n-1] // free outflow
		for i := range s {
			s[i] += step / dx * (fl[i] - fl[i+1])
		}
		t += step
	}
	return s
}

// TestGodunovConvergence checks that an independent finite-volume solution
// converges to the analytic profile as the grid is refined (LeVeque 1992:
// a monotone first-order scheme converges to the entropy solution). The L1
// error on three grids must fall, and the finest must be small.
func TestGodunovConvergence(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		set  map[Param]float64
		tD   float64
	}{
		{"S-shaped", map[Param]float64{S1r: 0.15, S2r: 0.2, S1Init: 0.15, Mu1CP: 0.5, Mu2CP: 5, Kr1Max: 0.4, Kr2Max: 0.9}, 0.3},
		{"S-shaped after breakthrough", map[Param]float64{S1r: 0.15, S2r: 0.2, S1Init: 0.15, Mu1CP: 0.5, Mu2CP: 5, Kr1Max: 0.4, Kr2Max: 0.9}, 0.8},
		{"strong up-dip", map[Param]float64{S1r: 0.1, S2r: 0.15, S1Init: 0.1, N1: 2.5, N2: 2, Mu1CP: 1, Mu2CP: 2,
			DipDeg: 30, Rho1: 1050, Rho2: 750, PermMD: 5000, VelocityMPerDay: 0.05}, 0.4},
		{"down-dip, gravity lifts f above 1", map[Param]float64{S1r: 0.1, S2r: 0.15, S1Init: 0.1, N1: 2, N2: 3, Mu1CP: 1, Mu2CP: 2,
			DipDeg: -30, Rho1: 1050, Rho2: 750, PermMD: 1200, VelocityMPerDay: 0.05}, 0.25},
		{"mobile initial saturation", map[Param]float64{S1r: 0.1, S2r: 0.2, S1Init: 0.3, N1: 3, N2: 2, Mu1CP: 0.4, Mu2CP: 2}, 0.3},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			p := params(tc.set)
			sol := mustSolve(t, p)
			fv := newGodunov(refFlux(&p, sol.Flow.G), p[S1Init], 1-p[S2r])
			checkConvergence(t, fv, sol, p[S1Init], tc.tD)
		})
	}
}

// checkConvergence runs fv on 100, 400 and 1600 cells (100 and 400 with
// -short) from the initial state init to tD, logs the L1 errors against
// sol's profile, and requires them to fall with every refinement and the
// finest to be below 0.01.
func checkConvergence(t *testing.T, fv *godunov, sol *Solution, init, tD float64) {
	t.Helper()
	grids := []int{100, 400, 1600}
	if testing.Short() {
		grids = grids[:2]
	}
	var errs []float64
	for _, n := range grids {
		s := fv.run(n, init, tD)
		l1 := 0.0
		for i, v := range s {
			x := (float64(i) + 0.5) / float64(n)
			l1 += math.Abs(v-sol.Saturation(x, tD)) / float64(n)
		}
		errs = append(errs, l1)
	}
	t.Logf("G = %.4g, S_b = %.6f, pieces %d, L1 error on %v cells: %.3e", sol.Flow.G, sol.Inlet, len(sol.Pieces()), grids, errs)
	for i := 1; i < len(errs); i++ {
		if !(errs[i] < errs[i-1]) {
			t.Errorf("L1 error did not fall: %v", errs)
		}
	}
	if last := errs[len(errs)-1]; last > 0.01 {
		t.Errorf("finest L1 error %.3e > 0.01", last)
	}
}

// meanSaturation is the average saturation over [0, 1] that mass balance
// demands at tD: s1_init + tD(1 − f(s1_init)) before breakthrough
// (injected minus produced phase 1), Welge's average after.
func meanSaturation(sol *Solution, tD float64) float64 {
	if tD < sol.BreakthroughPVI() {
		return sol.Init + tD*(1-sol.FInit)
	}
	return sol.AverageSaturation(tD)
}

// TestMassBalance: the integral of the analytic profile S(xD) over [0, 1]
// equals s1_init + tD(1 − f(s1_init)) before breakthrough (injected minus
// produced phase 1) and Welge's average after. The integral is taken
// piecewise with Gauss–Legendre rules between the profile's jumps, an
// independent route from the Welge formula.
func TestMassBalance(t *testing.T) {
	t.Parallel()
	for _, tc := range massBalanceCases() {
		p := params(tc)
		sol := mustSolve(t, p)
		tbt := sol.BreakthroughPVI()
		for _, tD := range []float64{0.5 * tbt, 0.99 * tbt, 1.01 * tbt, 2 * tbt, 5 * tbt} {
			got := integrateProfile(sol, tD)
			want := meanSaturation(sol, tD)
			if math.Abs(got-want) > 1e-9 {
				t.Errorf("%v tD=%g: ∫S dx = %.12f, want %.12f", tc, tD, got, want)
			}
		}
	}
}

func massBalanceCases() []map[Param]float64 {
	return []map[Param]float64{
		{},
		{S1r: 0.15, S2r: 0.2, S1Init: 0.15, Mu1CP: 0.5, Mu2CP: 5, Kr1Max: 0.4, Kr2Max: 0.9},
		{S1r: 0.1, S2r: 0.15, S1Init: 0.1, N1: 2.5, Mu2CP: 2, DipDeg: 30, Rho1: 1050, Rho2: 750, PermMD: 5000, VelocityMPerDay: 0.05},
		{S1r: 0.1, S2r: 0.15, S1Init: 0.1, N2: 3, Mu2CP: 2, DipDeg: -30, Rho1: 1050, Rho2: 750, PermMD: 5000, VelocityMPerDay: 0.05},
		{S1r: 0.1, S2r: 0.2, S1Init: 0.3, N1: 3, Mu1CP: 0.4, Mu2CP: 2},
		{S1r: 0.05, S2r: 0.3, S1Init: 0, N1: 4, N2: 1.5, Mu1CP: 0.05, Mu2CP: 0.8, DipDeg: 10, Rho1: 650, Rho2: 1080, PermMD: 300, VelocityMPerDay: 0.1},
		{N1: 0.7, N2: 0.6, Mu1CP: 3},
	}
}

// integrateProfile integrates S(xD, tD) over [0, 1] with tanh-sinh
// quadrature (Takahasi & Mori 1974) on the intervals between the
// profile's shocks and fan ends, where S or its slope jumps. Inside them S
// may still have power-law singularities at the ends (an exponent near one
// at a residual), which the double-exponential change of variables
// integrates to near machine precision.
func integrateProfile(sol *Solution, tD float64) float64 {
	return integrateProfileAt(sol, tD, nil)
}

// integrateProfileAt is integrateProfile with the profile also split where
// the saturation passes one of kinks: knots of tabulated curves, where f″
// jumps and so does the slope of S(x) inside a fan.
func integrateProfileAt(sol *Solution, tD float64, kinks []float64) float64 {
	breaks := []float64{0, 1}
	for _, p := range sol.Pieces() {
		for _, v := range []float64{p.SpeedLo, p.SpeedHi} {
			if x := v * tD; x > 0 && x < 1 {
				breaks = append(breaks, x)
			}
		}
		if !p.Shock {
			for _, sk := range kinks {
				if sk > p.Lo && sk < p.Hi {
					if x := sol.Flow.Slope(sk) * tD; x > 0 && x < 1 {
						breaks = append(breaks, x)
					}
				}
			}
			// Split each fan where S steps by 1/64 of its range: with an
			// exponent near one, S(x) can fall almost like a step inside
			// a fan, and the breaks keep each piece of the integrand tame.
			for k := 1; k < 64; k++ {
				sk := p.Lo + (p.Hi-p.Lo)*float64(k)/64
				if x := sol.Flow.Slope(sk) * tD; x > 0 && x < 1 {
					breaks = append(breaks, x)
				}
			}
		}
	}
	slices.Sort(breaks)
	total := 0.0
	f := func(x float64) float64 { return sol.Saturation(x, tD) }
	for i := 1; i < len(breaks); i++ {
		if a, b := breaks[i-1], breaks[i]; b > a {
			total += tanhSinh(f, a, b)
		}
	}
	return total
}

// tanhSinh integrates f over [a, b] with the substitution
// x = m + h·tanh(π/2·sinh t), step 1/16 in t over [−4, 4]; the weights
// fall below 1e-30 at the ends, so the truncation error is negligible and
// the discretisation error decays like exp(−c/step).
func tanhSinh(f func(float64) float64, a, b float64) float64 {
	const step = 1.0 / 16
	m, h := 0.5*(a+b), 0.5*(b-a)
	sum := 0.0
	for k := -64; k <= 64; k++ {
		t := float64(k) * step
		u := 0.5 * math.Pi * math.Sinh(t)
		// 1 − tanh(u) computed without cancellation for the nodes near b.
		e := math.Exp(-2 * math.Abs(u))
		d := 2 * e / (1 + e) // 1 − |tanh u|
		w := 0.5 * math.Pi * math.Cosh(t) * (1 - math.Tanh(u)*math.Tanh(u))
		if w == 0 || d == 0 {
			continue
		}
		x := m + h*math.Copysign(1-d, u)
		if x <= a || x >= b {
			continue
		}
		sum += w * f(x)
	}
	return sum * h * step
}
