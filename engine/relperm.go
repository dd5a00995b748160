package engine

import "math"

// RelPerm is a relative-permeability model of saturation S, the injected
// (phase-1) saturation. Eval returns both phases' relative permeabilities
// and their first and second derivatives with respect to S. Between the
// residuals, kr1 must be non-decreasing and kr2 non-increasing; at and below
// S1r() kr1 is zero, at and above 1 − S2r() kr2 is zero.
//
// Derivatives may be +Inf or −Inf at the residual end points (a Corey
// exponent, or a LET L or T, below one has an infinite slope there);
// callers handle that. Implementations: [Corey], [LET], [ScaledTable].
type RelPerm interface {
	Eval(s float64) RelPermValue
	Residuals() (s1r, s2r float64)
}

// RelPermValue holds relative permeabilities and their derivatives with
// respect to the phase-1 saturation.
type RelPermValue struct {
	Kr1, Kr2     float64
	DKr1, DKr2   float64 // first derivatives
	D2Kr1, D2Kr2 float64 // second derivatives
}

// Corey is the Corey (1954) power-law model with end-point scaling:
//
//	Se  = (S − S1r)/(1 − S1r − S2r), clipped to [0, 1]
//	kr1 = Kr1Max·Se^N1
//	kr2 = Kr2Max·(1 − Se)^N2
//
// A Corey value is valid when 0 ≤ S1r, 0 ≤ S2r, S1r + S2r < 1, the end
// points are positive and the exponents are positive.
type Corey struct {
	S1r, S2r       float64
	Kr1Max, Kr2Max float64
	N1, N2         float64
}

var _ RelPerm = (*Corey)(nil)

// Residuals returns S1r and S2r.
func (c *Corey) Residuals() (s1r, s2r float64) { return c.S1r, c.S2r }

// Eval returns the Corey relative permeabilities at saturation s with their
// derivatives. Outside the mobile range the derivatives of the immobile
// phase's curve are zero; at the end points they take their one-sided
// limits, which are infinite for an exponent below one; beyond the end
// points the curves are flat.
func (c *Corey) Eval(s float64) RelPermValue {
	span := 1 - c.S1r - c.S2r
	se := (s - c.S1r) / span
	var v RelPermValue
	switch rangeOf(s, c.S1r, c.S2r, se) {
	case belowRange:
		v.Kr2 = c.Kr2Max
	case aboveRange:
		v.Kr1 = c.Kr1Max
	case atLow:
		v.Kr2 = c.Kr2Max
		v.DKr1, v.D2Kr1 = powEndSlope(c.Kr1Max, c.N1, span)
		v.DKr2 = -c.Kr2Max * c.N2 / span
		v.D2Kr2 = c.Kr2Max * c.N2 * (c.N2 - 1) / (span * span)
	case atHigh:
		v.Kr1 = c.Kr1Max
		v.DKr1 = c.Kr1Max * c.N1 / span
		v.D2Kr1 = c.Kr1Max * c.N1 * (c.N1 - 1) / (span * span)
		d, dd := powEndSlope(c.Kr2Max, c.N2, span)
		v.DKr2, v.D2Kr2 = -d, dd
	default:
		v = c.inner(se, pow(se, c.N1), pow(1-se, c.N2), span)
	}
	return v
}

// rangePart says where a saturation lies against a curve's mobile range
// [s1r, 1 − s2r].
type rangePart uint8

const (
	insideRange rangePart = iota // s1r < S < 1 − s2r and 0 < Se < 1
	belowRange                   // S < s1r: the curves are flat
	aboveRange                   // S > 1 − s2r: the curves are flat
	atLow                        // S = s1r, or Se ≤ 0 by rounding
	atHigh                       // S = 1 − s2r, or Se ≥ 1 by rounding
)

// rangeOf classifies s for curves with residuals s1r and s2r, se being
// the caller's normalised saturation of s. The end points are compared in
// saturation, so that S = s1r and S = 1 − s2r, written the same way by
// callers, hit them exactly; se decides where rounding puts a saturation
// a hair inside them at an end. Every RelPerm of the package classifies
// through it, so their end-point branches agree.
func rangeOf(s, s1r, s2r, se float64) rangePart {
	switch top := 1 - s2r; {
	case s < s1r:
		return belowRange
	case s > top:
		return aboveRange
	case s == s1r || se <= 0:
		return atLow
	case s == top || se >= 1:
		return atHigh
	}
	return insideRange
}

// inner returns the curves for 0 < se < 1 from p1 = se^N1 and
// p2 = (1 − se)^N2.
func (c *Corey) inner(se, p1, p2, span float64) RelPermValue {
	var v RelPermValue
	a, b := 1/(se*span), 1/((1-se)*span)
	v.Kr1 = c.Kr1Max * p1
	v.Kr2 = c.Kr2Max * p2
	v.DKr1 = v.Kr1 * c.N1 * a
	v.DKr2 = -v.Kr2 * c.N2 * b
	v.D2Kr1 = v.DKr1 * (c.N1 - 1) * a
	v.D2Kr2 = -v.DKr2 * (c.N2 - 1) * b
	return v
}

// powEndSlope returns the one-sided first and second derivatives with
// respect to S of k·x^n at x = 0, where x = (S − S0)/span.
func powEndSlope(k, n, span float64) (d, dd float64) {
	switch {
	case n < 1:
		return math.Inf(1), math.Inf(-1)
	case n == 1:
		return k / span, 0
	case n < 2:
		return 0, math.Inf(1)
	case n == 2:
		return 0, 2 * k / (span * span)
	}
	return 0, 0
}

// pow returns x^y for 0 < x < 1 and y > 0, the only arguments the
// relative-permeability curves need. Integer exponents 1 to 4 are
// multiplied out; others go through exp(y·ln x), which is several times
// faster than math.Pow and accurate to a few ulps here, with the same
// bits on every CPU (see fastExp).
func pow(x, y float64) float64 {
	switch y {
	case 1:
		return x
	case 2:
		return x * x
	case 3:
		return x * x * x
	case 4:
		x2 := x * x
		return x2 * x2
	}
	return fastExp(float64(y * fastLog(x)))
}

// powLog returns x^y given lx = ln x, with the same integer shortcuts as pow.
func powLog(x, lx, y float64) float64 {
	switch y {
	case 1, 2, 3, 4:
		return pow(x, y)
	}
	return fastExp(float64(y * lx))
}
