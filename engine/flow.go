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
// are. Where a curve's slope is infinite (an exponent below one at its end
// point) the derivatives are the one-sided limits, ±Inf.
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
		return f, ff.infSlope(v), math.NaN()
	}
	dn := v.DKr1*(1-g*v.Kr2) - g*v.Kr1*v.DKr2
	dd := v.DKr1 + r*v.DKr2
	df = (dn - f*dd) * inv
	switch {
	case math.IsInf(v.D2Kr1, 0):
		// At Se = 0 with 1 < n1 < 2: f'' = kr1''(1 − G kr2)/D.
		return f, df, math.Copysign(math.Inf(1), 1-g*v.Kr2)
	case math.IsInf(v.D2Kr2, 0):
		// At Se = 1 with 1 < n2 < 2: f'' = −(G kr1 + R) kr2''/D.
		return f, df, math.Copysign(math.Inf(1), -(g*v.Kr1 + r))
	}
	d2n := v.D2Kr1*(1-g*v.Kr2) - 2*g*v.DKr1*v.DKr2 - g*v.Kr1*v.D2Kr2
	d2d := v.D2Kr1 + r*v.D2Kr2
	d2f = (d2n - f*d2d - 2*df*dd) * inv
	return f, df, d2f
}

// infSlope returns the sign-correct infinite slope of f at an end point
// where one curve's slope is infinite. At Se = 0 (kr1 = 0, kr1' = +Inf),
// f' = kr1'(1 − G kr2)/D; at Se = 1 (kr2 = 0, kr2' = −Inf),
// f' = −(G kr1 + R) kr2'/kr1.
func (ff *FracFlow) infSlope(v RelPermValue) float64 {
	if math.IsInf(v.DKr1, 0) {
		return math.Copysign(math.Inf(1), 1-ff.G*v.Kr2)
	}
	return math.Copysign(math.Inf(1), ff.G*v.Kr1+ff.R)
}

// Slope returns f'(S).
func (ff *FracFlow) Slope(s float64) float64 {
	_, df, _ := ff.Eval(s)
	return df
}

// InletSaturation returns S_b, the inlet state of the flux boundary
// condition f(S_b) = 1 (DESIGN §2): the smallest saturation above s1_init
// where f reaches 1, which is 1 − s2r unless gravity lifts f to 1 earlier.
//
// Derivation: f ≥ 1 ⇔ kr1(1 − G kr2) ≥ kr1 + R kr2 ⇔ −G kr1 kr2 ≥ R kr2, so
// for kr2 > 0 this needs G < 0 and kr1 ≥ R/|G|. For Corey curves
// kr1 = Kr1Max·Se^N1 gives the crossing in closed form,
// Se_b = (R/(|G| Kr1Max))^(1/N1), when that is below one.
func InletSaturation(p *Params, ff *FracFlow) float64 {
	s1r, s2r := p[S1r], p[S2r]
	top := 1 - s2r
	if ff.G >= 0 {
		return top
	}
	x := ff.R / (-ff.G * p[Kr1Max])
	if x >= 1 {
		return top
	}
	seb := fastExp(float64(fastLog(x) / p[N1]))
	sb := s1r + seb*(1-s1r-s2r)
	if sb > top {
		sb = top
	}
	if sb <= p[S1Init] {
		// The initial state already flows at f ≥ 1; the caller rejects it.
		return p[S1Init]
	}
	return sb
}
