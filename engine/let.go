package engine

import "math"

// LET is the LET relative-permeability correlation of Lomeland, Ebeltoft
// & Thomas (2005) with end-point scaling:
//
//	Se  = (S − S1r)/(1 − S1r − S2r), clipped to [0, 1]
//	kr1 = Kr1Max·Se^L1/(Se^L1 + E1·(1 − Se)^T1)
//	kr2 = Kr2Max·(1 − Se)^L2/((1 − Se)^L2 + E2·Se^T2)
//
// L shapes a curve near its own residual, T near the other end and E
// positions its steep part. With L = E = T = 1 both curves are linear in Se
// (Se/(Se + 1 − Se) = Se), the Corey curves of exponent one.
//
// A LET value is usable when 0 ≤ S1r, 0 ≤ S2r, S1r + S2r < 1, the end
// points are positive and L, E, T > 0; Eval does not check this. Exponents
// above a few hundred can underflow both terms of a denominator.
type LET struct {
	S1r, S2r       float64
	Kr1Max, Kr2Max float64
	L1, E1, T1     float64
	L2, E2, T2     float64
}

var _ RelPerm = (*LET)(nil)

// Residuals returns S1r and S2r.
func (m *LET) Residuals() (s1r, s2r float64) { return m.S1r, m.S2r }

// Both LET curves are one function of a variable x in [0, 1],
//
//	q(x) = a/(a + b),   a = x^L,   b = E·(1 − x)^T,
//
// with kr1 = Kr1Max·q(Se; L1, E1, T1) and kr2 = Kr2Max·q(1 − Se; L2, E2, T2).
// Derivatives with respect to S follow from dSe/dS = 1/span, span =
// 1 − S1r − S2r: kr1' = Kr1Max·q'/span, kr1'' = Kr1Max·q''/span², and,
// because 1 − Se falls with S, kr2' = −Kr2Max·q'/span, kr2'' = Kr2Max·q''/span².
//
// Derivation of q' and q'' for 0 < x < 1. With s = a + b, p = b/s = 1 − q,
// a' = L·a/x and b' = −T·b/(1 − x):
//
//	q'  = (a'·b − a·b')/s² = q·p·w,   w = L/x + T/(1 − x)
//	q'' = (q·p)'·w + q·p·w' = q·p·[(p − q)·w² + w'],
//	      since (q·p)' = q'·(1 − 2q) = q'·(p − q), and w' = −L/x² + T/(1 − x)².
//
// Expanding (p − q)·w² + w' with p − q = 1 − 2q = 2p − 1 removes the
// cancellation between the L²/x² and −L/x² terms (complete for L = 1):
//
//	(p − q)w² + w' = [L(L − 1) − 2L²q]/x² + 2LT(p − q)/(x(1 − x))
//	               + [2T²p − T(T − 1)]/(1 − x)².
//
// End points (one-sided limits). Near x = 0, q = (x^L/E)(1 + O(x) + O(x^L)),
// so q'(0) is +Inf (L < 1), 1/E (L = 1) or 0 (L > 1), and q''(0) is −Inf
// (L < 1), +Inf (1 < L < 2), 2/E (L = 2) or 0 (L > 2). For L = 1,
// q = x/(E + (1 − ET)x + O(x²)) = x/E − (1 − ET)x²/E² + O(x³), so
// q''(0) = −2(1 − ET)/E².
// Near x = 1, with y = 1 − x, q = 1/(1 + E·y^T·(1 − y)^−L)
// = 1 − E·y^T(1 + L·y) + E²·y^(2T) + …, and d/dx = −d/dy: q'(1) is +Inf
// (T < 1), E (T = 1) or 0 (T > 1), and q''(1) is +Inf (T < 1), −Inf
// (1 < T < 2), −2E (T = 2) or 0 (T > 2). For T = 1,
// q = 1 − E·y + (E² − E·L)y² + O(y³), so q''(1) = 2E(E − L).

// Eval returns the LET relative permeabilities at saturation s with their
// derivatives. At the end points the derivatives take their one-sided
// limits, which are infinite where an exponent below one (or between one
// and two, for the second derivative) makes them so; beyond the end points
// the curves are flat, as for [Corey.Eval].
func (m *LET) Eval(s float64) RelPermValue {
	span := 1 - m.S1r - m.S2r
	se := (s - m.S1r) / span
	var v RelPermValue
	switch rangeOf(s, m.S1r, m.S2r, se) {
	case belowRange:
		v.Kr2 = m.Kr2Max
	case aboveRange:
		v.Kr1 = m.Kr1Max
	case atLow:
		// Se = 0: kr1's curve at x = 0, kr2's at x = 1.
		d, dd := letEndZero(m.L1, m.E1, m.T1)
		v.DKr1, v.D2Kr1 = m.Kr1Max*d/span, m.Kr1Max*dd/(span*span)
		v.Kr2 = m.Kr2Max
		d, dd = letEndOne(m.L2, m.E2, m.T2)
		v.DKr2, v.D2Kr2 = -m.Kr2Max*d/span, m.Kr2Max*dd/(span*span)
	case atHigh:
		// Se = 1: kr1's curve at x = 1, kr2's at x = 0.
		v.Kr1 = m.Kr1Max
		d, dd := letEndOne(m.L1, m.E1, m.T1)
		v.DKr1, v.D2Kr1 = m.Kr1Max*d/span, m.Kr1Max*dd/(span*span)
		d, dd = letEndZero(m.L2, m.E2, m.T2)
		v.DKr2, v.D2Kr2 = -m.Kr2Max*d/span, m.Kr2Max*dd/(span*span)
	default:
		x, y := se, 1-se
		lx, ly := fastLog(x), fastLog(y)
		ispan := 1 / span
		q, dq, d2q := letInner(x, y, powLog(x, lx, m.L1), m.E1*powLog(y, ly, m.T1), m.L1, m.T1)
		v.Kr1 = m.Kr1Max * q
		v.DKr1 = m.Kr1Max * dq * ispan
		v.D2Kr1 = m.Kr1Max * d2q * ispan * ispan
		q, dq, d2q = letInner(y, x, powLog(y, ly, m.L2), m.E2*powLog(x, lx, m.T2), m.L2, m.T2)
		v.Kr2 = m.Kr2Max * q
		v.DKr2 = -m.Kr2Max * dq * ispan
		v.D2Kr2 = m.Kr2Max * d2q * ispan * ispan
	}
	return v
}

// letInner returns q, q' and q″ of the LET curve at 0 < x < 1 given
// y = 1 − x, a = x^L and b = E·y^T (derivation above).
func letInner(x, y, a, b, l, t float64) (q, dq, d2q float64) {
	s := a + b
	q, p := a/s, b/s
	ix, iy := 1/x, 1/y
	qx, py := q*ix, p*iy // kept apart so that tiny q or p cannot overflow a product
	dq = l*qx*p + t*q*py
	d2q = (l*(l-1)-2*l*l*q)*p*qx*ix + 2*l*t*(p-q)*qx*py + (2*t*t*p-t*(t-1))*q*py*iy
	return q, dq, d2q
}

// letEndZero returns the one-sided q'(0) and q″(0) of the LET curve
// (derived above).
func letEndZero(l, e, t float64) (d, dd float64) {
	switch {
	case l < 1:
		return math.Inf(1), math.Inf(-1)
	case l == 1:
		return 1 / e, -2 * (1 - e*t) / (e * e)
	case l < 2:
		return 0, math.Inf(1)
	case l == 2:
		return 0, 2 / e
	}
	return 0, 0
}

// letEndOne returns the one-sided q'(1) and q″(1) of the LET curve
// (derived above).
func letEndOne(l, e, t float64) (d, dd float64) {
	switch {
	case t < 1:
		return math.Inf(1), math.Inf(1)
	case t == 1:
		return e, 2 * e * (e - l)
	case t < 2:
		return 0, math.Inf(-1)
	case t == 2:
		return 0, -2 * e
	}
	return 0, 0
}
