package engine

import (
	"fmt"
	"math"
)

// Status says whether a case could be solved.
type Status uint8

// The statuses of a case.
const (
	// StatusOK: the case was solved.
	StatusOK Status = iota
	// StatusCounterCurrent: the initial state does not flow forward,
	// f(s1_init) < 0 or ≥ 1, which is outside the 1-D model (DESIGN §2).
	StatusCounterCurrent
	// StatusInvalid: the parameters break a validity rule.
	StatusInvalid
	// StatusNoFront: gravity lifts f to 1 at the initial saturation itself
	// (S_b = s1_init to rounding), so no displacement front exists; the
	// case is outside what the 1-D model resolves.
	StatusNoFront
)

// String returns the status word written to the status column's prefix.
func (s Status) String() string {
	switch s {
	case StatusOK:
		return "ok"
	case StatusCounterCurrent:
		return "counter-current initial state"
	case StatusInvalid:
		return "invalid"
	case StatusNoFront:
		return "no front"
	}
	return fmt.Sprintf("Status(%d)", uint8(s))
}

// Solution is the entropy solution of the Riemann problem
//
//	∂S/∂tD + ∂f(S)/∂xD = 0,   S(xD, 0) = s1_init,   f(S(0, tD)) = 1,
//
// given by the upper concave envelope of f over [s1_init, S_b] (LeVeque
// 1992, §16; Lake 1989 for non-convex fractional flow). The saturation at
// (xD, tD) depends on xD/tD only: it is the state whose envelope slope is
// xD/tD. A Solution is filled by [Solve] or [Solver.Solve] and may be
// reused; its methods do not allocate.
type Solution struct {
	Flow FracFlow
	// The curves Flow.Rel points at, one per family, kept here so that
	// Solve does not allocate.
	corey  Corey
	let    LET
	scaled ScaledTable
	cf     coreyFlow // Flow's fast Corey evaluator, set by Solve (inactive for other curves)
	Params Params
	Init   float64 // s1_init
	Inlet  float64 // S_b
	FInit  float64 // f(s1_init)
	Status Status
	Err    error // the validity error when Status is StatusInvalid

	n      int
	pieces [maxPieces]Piece
}

// Pieces returns the envelope's pieces in increasing saturation, from
// s1_init to S_b. The slice aliases the solution.
func (sol *Solution) Pieces() []Piece { return sol.pieces[:sol.n] }

func (sol *Solution) addShock(lo, hi float64) {
	sol.addShockF(lo, hi, sol.f(lo), sol.f(hi))
}

// addShockF adds a shock given f at its ends, which are replaced by the
// exact values at the end states.
func (sol *Solution) addShockF(lo, hi, flo, fhi float64) {
	if lo == sol.Init {
		flo = sol.FInit
	}
	if hi == sol.Inlet {
		fhi = 1
	}
	speed := (fhi - flo) / (hi - lo)
	sol.pieces[sol.n] = Piece{Lo: lo, Hi: hi, FLo: flo, FHi: fhi, SpeedLo: speed, SpeedHi: speed, Shock: true}
	sol.n++
}

// addFanF adds a fan given f and f' at its ends; f is replaced by the
// exact values at the end states.
func (sol *Solution) addFanF(lo, hi, flo, dlo, fhi, dhi float64) {
	if lo == sol.Init {
		flo = sol.FInit
	}
	if hi == sol.Inlet {
		fhi = 1
	}
	sol.pieces[sol.n] = Piece{Lo: lo, Hi: hi, FLo: flo, FHi: fhi, SpeedLo: dlo, SpeedHi: dhi}
	sol.n++
}

// f evaluates f, exact at the two end states.
func (sol *Solution) f(s float64) float64 {
	switch s {
	case sol.Init:
		return sol.FInit
	case sol.Inlet:
		return 1
	}
	return sol.cf.f(&sol.Flow, s)
}

// FrontSpeed returns the envelope's slope at s1_init: the speed of the
// leading shock, or of the fan's leading edge when the solution starts with
// a fan. It is +Inf when f'(s1_init) is infinite (a Corey exponent n1 < 1,
// or a LET L1 < 1, with s1_init = s1r), in which case breakthrough is
// immediate.
func (sol *Solution) FrontSpeed() float64 {
	if sol.n == 0 {
		return math.NaN()
	}
	return sol.pieces[0].SpeedLo
}

// FrontSaturation returns the saturation just behind the leading shock, or
// s1_init when the solution starts with a fan.
func (sol *Solution) FrontSaturation() float64 {
	if sol.n == 0 {
		return math.NaN()
	}
	if p := sol.pieces[0]; p.Shock {
		return p.Hi
	}
	return sol.Init
}

// BreakthroughPVI returns the pore volumes injected when the front reaches
// the outlet, 1/FrontSpeed.
func (sol *Solution) BreakthroughPVI() float64 {
	return 1 / sol.FrontSpeed()
}

// MaxRecovery returns the 1-D limit of recovery, (S_b − s1_init)/(1 − s1_init).
func (sol *Solution) MaxRecovery() float64 {
	return (sol.Inlet - sol.Init) / (1 - sol.Init)
}

// State returns the saturation moving at speed xi = xD/tD and f there. For
// xi above the front speed it is the initial state; for xi below the
// slowest speed, the inlet state. Exactly at a shock's speed it returns the
// state behind the shock.
func (sol *Solution) State(xi float64) (s, f float64) {
	return sol.state(xi, nil)
}

// state is State, with the scan that built the envelope as an optional
// hint for the root brackets.
func (sol *Solution) state(xi float64, sc *scan) (s, f float64) {
	if sol.n == 0 {
		return math.NaN(), math.NaN()
	}
	if xi > sol.pieces[0].SpeedLo {
		return sol.Init, sol.FInit
	}
	for k := range sol.n {
		p := &sol.pieces[k]
		if p.Shock {
			if xi >= p.Speed() {
				return p.Hi, p.FHi
			}
			continue
		}
		if xi >= p.SpeedHi {
			return sol.fanState(p, xi, sc)
		}
	}
	return sol.Inlet, 1
}

// Speed returns a shock's speed.
func (p *Piece) Speed() float64 { return p.SpeedLo }

// fanState solves f'(S) = xi on the fan p, where f' falls from SpeedLo to
// SpeedHi. With a scan, the bracket is first narrowed to the grid interval
// whose end slopes straddle xi.
func (sol *Solution) fanState(p *Piece, xi float64, sc *scan) (s, f float64) {
	switch {
	case xi >= p.SpeedLo:
		return p.Lo, p.FLo
	case xi <= p.SpeedHi:
		return p.Hi, p.FHi
	}
	lo, hi, glo, ghi := p.Lo, p.Hi, p.SpeedLo-xi, p.SpeedHi-xi
	x0 := math.NaN()
	if sc != nil {
		var klo, khi int
		lo, hi, glo, ghi, klo, khi = sc.narrowAt(lo, hi, glo, ghi, &sc.dy, xi)
		if klo >= 0 && khi == klo+1 {
			// Both ends are grid points with f'' known: start Newton from
			// the root of the cubic through f' and f'' there.
			x0 = hermiteRoot(lo, hi, glo, ghi, sc.d2y[klo], sc.d2y[khi])
		}
	}
	fe := math.NaN() // f at the last point evaluated, if any
	nf := sol.cf.near(&sol.Flow)
	s, se, _ := solveBracketFrom(lo, hi, glo, ghi, x0, func(s float64) (float64, float64) {
		f, df, d2f := nf.eval(s)
		fe = f
		return df - xi, d2f
	})
	if p.Hi == sol.Inlet && sol.Inlet-s < snapTol {
		// Within rounding of S_b, where f'' may be huge: take the end state.
		return sol.Inlet, 1
	}
	if math.IsNaN(fe) {
		// The root was a bracket end (a grid point where f' = xi exactly).
		return s, sol.cf.f(&sol.Flow, s)
	}
	if s == se {
		return s, fe
	}
	if math.Abs(s-se) <= newtonAccept {
		// One accepted Newton step from se: f(s) = f(se) + f'(se)(s − se)
		// to within f″·1e-24, and f′(se) ≈ xi there.
		return s, fe + xi*(s-se)
	}
	return s, sol.cf.f(&sol.Flow, s)
}

// Saturation returns S(xD, tD), the phase-1 saturation at dimensionless
// distance xD ∈ [0, 1] after tD pore volumes injected.
func (sol *Solution) Saturation(xD, tD float64) float64 {
	if tD <= 0 {
		if xD <= 0 {
			return sol.Inlet
		}
		return sol.Init
	}
	s, _ := sol.State(xD / tD)
	return s
}

// Outlet returns the outlet saturation and the outlet phase-1 fractional
// flow (the cut) after tD pore volumes injected.
func (sol *Solution) Outlet(tD float64) (s, cut float64) {
	if tD <= 0 {
		return sol.Init, sol.FInit
	}
	return sol.State(1 / tD)
}

// AverageSaturation returns the mean phase-1 saturation over [0, 1] after
// tD pore volumes injected: s1_init + tD(1 − f(s1_init)) before
// breakthrough and, after it, Welge's (1952) S̄ = S_out + tD(1 − f(S_out)).
func (sol *Solution) AverageSaturation(tD float64) float64 {
	s, _ := sol.averageAndCut(tD, nil)
	return s
}

// averageAndCut returns the average saturation and the outlet cut after
// tD pore volumes, from one outlet state.
func (sol *Solution) averageAndCut(tD float64, sc *scan) (avg, cut float64) {
	if tD <= 0 {
		return sol.Init, sol.FInit
	}
	if 1/tD > sol.FrontSpeed() {
		return sol.Init + tD*(1-sol.FInit), sol.FInit
	}
	s, f := sol.state(1/tD, sc)
	// S̄ ≤ S_b holds exactly (the envelope is concave and F(S_b) = 1); the
	// bound guards against rounding of f just below S_b times a large tD.
	return min(s+tD*(1-f), sol.Inlet), f
}

// Recovery returns the fraction of the initial phase 2 produced after tD
// pore volumes injected, (S̄ − s1_init)/(1 − s1_init).
func (sol *Solution) Recovery(tD float64) float64 {
	return (sol.AverageSaturation(tD) - sol.Init) / (1 - sol.Init)
}

// PVIAtCut returns the first tD at which the outlet cut reaches limit,
// or NaN if it never does. The cut is f(s1_init) until breakthrough, then
// follows the envelope; it jumps where a shock arrives.
func (sol *Solution) PVIAtCut(limit float64) float64 {
	t, _, _ := sol.pviAtCut(limit, nil)
	return t
}

// pviAtCut returns PVIAtCut(limit) and, when the limit is reached inside a
// fan, the outlet state there (f(state) = limit) with ok = true, from which
// SolveCase computes the recovery without solving for the state again.
func (sol *Solution) pviAtCut(limit float64, sc *scan) (t, state float64, ok bool) {
	if sol.n == 0 || math.IsNaN(limit) {
		return math.NaN(), 0, false
	}
	if limit <= sol.FInit {
		return 0, 0, false
	}
	for k := range sol.n {
		p := &sol.pieces[k]
		if p.FHi < limit {
			continue
		}
		if p.Shock {
			return 1 / p.Speed(), 0, false
		}
		if limit <= p.FLo {
			return 1 / p.SpeedLo, 0, false
		}
		lo, hi, glo, ghi := p.Lo, p.Hi, p.FLo-limit, p.FHi-limit
		x0 := math.NaN()
		if sc != nil {
			var klo, khi int
			lo, hi, glo, ghi, klo, khi = sc.narrowAt(lo, hi, glo, ghi, &sc.y, limit)
			if klo >= 0 && khi == klo+1 {
				// Start Newton from the root of the cubic through f and f'
				// at the grid points.
				x0 = hermiteRoot(lo, hi, glo, ghi, sc.dy[klo], sc.dy[khi])
			}
		}
		var d2e float64 // f'' at the last point evaluated
		nf := sol.cf.near(&sol.Flow)
		s, se, speed := solveBracketFrom(lo, hi, glo, ghi, x0, func(s float64) (float64, float64) {
			f, df, d2f := nf.eval(s)
			d2e = d2f
			return f - limit, df
		})
		if s != se || math.IsNaN(speed) {
			if math.Abs(s-se) <= newtonAccept && !math.IsNaN(speed) && !math.IsNaN(d2e) {
				speed += d2e * (s - se)
			} else {
				_, speed, _ = sol.cf.eval(&sol.Flow, s)
			}
		}
		if !(speed > 0) {
			return math.NaN(), 0, false
		}
		return 1 / speed, s, true
	}
	return math.NaN(), 0, false
}
