package engine

import "math"

// Physical constants used by the gravity number.
const (
	// StandardGravity is g in m/s² (CGPM 1901, exact by definition).
	StandardGravity = 9.80665
	// MilliDarcy is one millidarcy in m² (1 D = 9.869233e-13 m², NIST SP 811).
	MilliDarcy = 9.869233e-16
	// CentiPoise is one centipoise (mPa·s) in Pa·s.
	CentiPoise = 1e-3
	// SecondsPerDay converts a flux in m/day to m/s.
	SecondsPerDay = 86400
)

// GravityNumber returns the dimensionless gravity number of a case,
//
//	G = k (rho1 − rho2) g sin(dip) / (mu2 u)
//
// in SI units (Dake 1978, fractional flow with dip). It is zero when the dip
// is zero or the densities are equal, whatever the permeability and flux.
func GravityNumber(p *Params) float64 {
	if p[DipDeg] == 0 || p[Rho1] == p[Rho2] {
		return 0
	}
	k := p[PermMD] * MilliDarcy
	mu2 := p[Mu2CP] * CentiPoise
	u := p[VelocityMPerDay] / SecondsPerDay
	return k * (p[Rho1] - p[Rho2]) * StandardGravity * sinDeg(p[DipDeg]) / (mu2 * u)
}

// sinDeg returns sin(d°), exact at multiples of 90°.
func sinDeg(d float64) float64 {
	switch d {
	case 90:
		return 1
	case -90:
		return -1
	}
	return math.Sin(d * math.Pi / 180)
}

// FracFlow is the fractional flow of the injected phase with gravity,
//
//	f(S) = λ1 (1 − G·kr2) / (λ1 + λ2),   λi = kri/mui
//
// (Buckley & Leverett 1942; Dake 1978 for the gravity term). Written with the
// viscosity ratio R = mu1/mu2 this is f = kr1 (1 − G kr2)/(kr1 + R kr2).
// f may leave [0, 1] when |G| is large: that is counter-current flow.
type FracFlow struct {
	Rel RelPerm
	R   float64 // viscosity ratio mu1/mu2
	G   float64 // gravity number
}

// NewFracFlow returns the Corey fractional flow of the case p. It does not
// validate p; see [Params.Validate].
func NewFracFlow(p *Params) FracFlow {
	c := coreyOf(p)
	return FracFlow{Rel: &c, R: p[Mu1CP] / p[Mu2CP], G: GravityNumber(p)}
}

func coreyOf(p *Params) Corey {
	return Corey{S1r: p[S1r], S2r: p[S2r], Kr1Max: p[Kr1Max], Kr2Max: p[Kr2Max], N1: p[N1], N2: p[N2]}
}

// F returns f(S).
func (ff *FracFlow) F(s float64) float64 {
	v := ff.Rel.Eval(s)
	return v.Kr1 * (1 - ff.G*v.Kr2) / (v.Kr1 + ff.R*v.Kr2)
}

// Eval returns f(S) and its first two derivatives. With N = kr1(1 − G kr2)
// and D = kr1 + R kr2, f = N/D, and differentiating N = f·D twice gives
//
//	f'  = (N' − f D')/D
//	f'' = (N'' − f D'' − 2 f' D')/D
//	N'  = kr1'(1 − G kr2) − G kr1 kr2'
//	N'' = kr1''(1 − G kr2) − 2G kr1' kr2' − G kr1 kr2''
//
// D > 0 on the whole saturation range, so f is smooth wherever the curves
// are. Where a curve's derivative is infinite (an exponent below one, or
// between one and two for f″, at a residual end point) the derivatives are
// the one-sided limits, which may be ±Inf; see [FracFlow.endLimits].
func (ff *FracFlow) Eval(s float64) (f, df, d2f float64) {
	return ff.combine(ff.Rel.Eval(s))
}

// combine evaluates f and its derivatives from relative permeabilities.
func (ff *FracFlow) combine(v RelPermValue) (f, df, d2f float64) {
	g, r := ff.G, ff.R
	n := v.Kr1 * (1 - g*v.Kr2)
	inv := 1 / (v.Kr1 + r*v.Kr2)
	f = n * inv
	if math.IsInf(v.DKr1, 0) || math.IsInf(v.DKr2, 0) {
		df, d2f = ff.endLimits(v)
		return f, df, d2f
	}
	dn := v.DKr1*(1-g*v.Kr2) - g*v.Kr1*v.DKr2
	dd := v.DKr1 + r*v.DKr2
	df = (dn - f*dd) * inv
	if math.IsInf(v.D2Kr1, 0) || math.IsInf(v.D2Kr2, 0) {
		// The slopes are finite, so df above is exact; only f'' needs its
		// limit.
		_, d2f = ff.endLimits(v)
		return f, df, d2f
	}
	d2n := v.D2Kr1*(1-g*v.Kr2) - 2*g*v.DKr1*v.DKr2 - g*v.Kr1*v.D2Kr2
	d2d := v.D2Kr1 + r*v.D2Kr2
	d2f = (d2n - f*d2d - 2*df*dd) * inv
	return f, df, d2f
}

// endLimits returns the one-sided limits of f' and f″ at an end point of
// the mobile range where a derivative of the curves is infinite. The
// formulas of [FracFlow.Eval] then hold terms 0·Inf whose limits follow
// from the power-law behaviour of the curves there (Corey and LET: the
// phase at its residual goes like x^L, the other like c − b·x^T, x the
// distance to the end point in Se), worked out below.
//
// At Se = 0 (kr1 = 0, D = R kr2): f = kr1·g with g = (1 − G kr2)/D, so
//
//	f'  = kr1' g + kr1 g'
//	f'' = kr1'' g + 2 kr1' g' + kr1 g''
//	g'  = [−G kr2' D − (1 − G kr2)(kr1' + R kr2')]/D².
//
// With kr1 ~ x^L1 and kr2' ~ x^(T2−1), the terms with kr1 are of order
// x^(L1+T2−1) against kr1' ~ x^(L1−1) in f', so f' = kr1' g. In f″ the
// term kr1″ g ~ x^(L1−2) dominates whenever kr1″ is infinite; otherwise
// (L1 = 1 or L1 ≥ 2) the rest is 2 kr1' g' (kr1 g″ ~ x^(L1+T2−2) → 0 for
// L1 ≥ 2, and is of the order of 2 kr1' g' for L1 = 1), infinite when
// kr1' > 0 and kr2' = −Inf, where g' → −R kr2'/D² = +Inf: f″ = +Inf.
// (For L1 = 1 the two terms add to kr1' g'·(1 + T2) > 0 in the expansion.)
//
// At Se = 1 (kr2 = 0, D = kr1): f = 1 − kr2·h with h = (R + G kr1)/D, so
//
//	f'  = −(kr2' h + kr2 h')
//	f'' = −(kr2'' h + 2 kr2' h' + kr2 h'')
//	h'  = −R [kr1'(1 − G kr2) + (R + G kr1) kr2']/D².
//
// The kr1' terms cancel in f' (kr2 h' ~ x^(L2+T1−1) against kr2' h ~
// x^(L2−1)), leaving f' = −kr2' h = −(G kr1 + R) kr2'/kr1. In f″ the term
// −kr2″ h dominates whenever kr2″ is infinite; otherwise it is
// −kr2″ h − 2 kr2' h', which is −Inf when kr2' < 0 is finite (L2 = 1) and
// kr1' = +Inf (T1 < 1), where h' → −R kr1'/D² = −Inf.
//
// Elsewhere an infinite slope breaks the [RelPerm] contract, and both
// results are NaN.
func (ff *FracFlow) endLimits(v RelPermValue) (df, d2f float64) {
	g, r := ff.G, ff.R
	switch {
	case v.Kr1 == 0 && v.Kr2 > 0:
		d := r * v.Kr2
		gv := (1 - g*v.Kr2) / d
		df = mulLimit(v.DKr1, gv)
		if math.IsInf(v.D2Kr1, 0) {
			return df, mulLimit(v.D2Kr1, gv)
		}
		var cross float64
		switch {
		case v.DKr1 == 0:
		case math.IsInf(v.DKr2, 0):
			cross = mulLimit(v.DKr1, -v.DKr2)
		default:
			gd := (-g*v.DKr2*d - (1-g*v.Kr2)*(v.DKr1+r*v.DKr2)) / (d * d)
			cross = 2 * v.DKr1 * gd
		}
		return df, v.D2Kr1*gv + cross
	case v.Kr2 == 0 && v.Kr1 > 0:
		h := (r + g*v.Kr1) / v.Kr1
		df = -mulLimit(v.DKr2, h)
		if math.IsInf(v.D2Kr2, 0) {
			return df, -mulLimit(v.D2Kr2, h)
		}
		var cross float64
		switch {
		case v.DKr2 == 0:
		case math.IsInf(v.DKr1, 0):
			cross = mulLimit(v.DKr2, v.DKr1)
		default:
			hd := -r * (v.DKr1*(1-g*v.Kr2) + (r+g*v.Kr1)*v.DKr2) / (v.Kr1 * v.Kr1)
			cross = -2 * v.DKr2 * hd
		}
		return df, -v.D2Kr2*h + cross
	}
	return math.NaN(), math.NaN()
}

// mulLimit returns a·b, taking 0·Inf as 0: at an end point a vanishing
// factor decides the limit (a zero slope or a zero coefficient).
func mulLimit(a, b float64) float64 {
	if a == 0 || b == 0 {
		return 0
	}
	return a * b
}

// Slope returns f'(S).
func (ff *FracFlow) Slope(s float64) float64 {
	_, df, _ := ff.Eval(s)
	return df
}

// InletSaturation returns S_b, the inlet state of the flux boundary
// condition f(S_b) = 1 (DESIGN §2): the smallest saturation above s1_init
// where f reaches 1, which is 1 − s2r unless gravity lifts f to 1 earlier.
// p supplies s1_init; the curves are ff.Rel's.
//
// Derivation: f ≥ 1 ⇔ kr1(1 − G kr2) ≥ kr1 + R kr2 ⇔ −G kr1 kr2 ≥ R kr2, so
// for kr2 > 0 this needs G < 0 and kr1 ≥ R/|G|. For Corey curves
// kr1 = Kr1Max·Se^N1 gives the crossing in closed form,
// Se_b = (R/(|G| Kr1Max))^(1/N1), when that is below one. For other curves
// (kr1 non-decreasing, kr2 > 0 below 1 − s2r) S_b is the smallest S with
// kr1(S) ≥ R/|G|, found by bisection on kr1 to the last bit of S.
func InletSaturation(p *Params, ff *FracFlow) float64 {
	var sb float64
	if c, ok := ff.Rel.(*Corey); ok {
		top := 1 - c.S2r
		if ff.G >= 0 {
			return top
		}
		x := ff.R / (-ff.G * c.Kr1Max)
		if x >= 1 {
			return top
		}
		seb := fastExp(float64(fastLog(x) / c.N1))
		sb = c.S1r + seb*(1-c.S1r-c.S2r)
		if sb > top {
			sb = top
		}
	} else {
		s1r, s2r := ff.Rel.Residuals()
		top := 1 - s2r
		if ff.G >= 0 {
			return top
		}
		sb = liftedInlet(ff.Rel, ff.R/-ff.G, max(p[S1Init], s1r), top)
	}
	if sb <= p[S1Init] {
		// The initial state already flows at f ≥ 1; the caller rejects it.
		return p[S1Init]
	}
	return sb
}

// liftedInlet returns the smallest S in [lo, top] with kr1(S) ≥ c, or top
// when kr1 stays below c before top, by bisection: kr1 is non-decreasing,
// so {S : kr1(S) ≥ c} is an interval ending at top. The loop halves
// [lo, hi] until no double lies between them (at most about 1100 halvings
// in theory, about 55 for the saturations that occur).
func liftedInlet(rel RelPerm, c, lo, top float64) float64 {
	if rel.Eval(lo).Kr1 >= c {
		return lo
	}
	hi := top
	if rel.Eval(math.Nextafter(top, lo)).Kr1 < c {
		return top
	}
	for {
		mid := lo + 0.5*(hi-lo)
		if mid <= lo || mid >= hi {
			return hi
		}
		if rel.Eval(mid).Kr1 >= c {
			hi = mid
		} else {
			lo = mid
		}
	}
}
