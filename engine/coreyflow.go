package engine

// coreyFlow evaluates f, f′ and f″ of a Corey fractional flow at
// saturations strictly inside the mobile range with the arithmetic of
// Corey.Eval followed by FracFlow.combine, but without the RelPerm
// interface, the end-point branches or the struct in between. Anywhere
// else (at and beyond the residuals, where a derivative is infinite, or
// for curves that are not Corey) it defers to FracFlow.Eval, so it gives
// the same bits as FracFlow.Eval everywhere.
//
// It holds no pointers, so a Solution carries one by value; [Solver.Solve]
// sets it from the Solution's Flow.
type coreyFlow struct {
	corey          bool // Flow.Rel is a *Corey; false: every call goes to FracFlow.Eval
	s1r, top, span float64
	k1, k2, n1, n2 float64
	r, g           float64
	// pow multiplies integer exponents 1–4 out; the series continuation
	// in [nearFlow] is only used for the others.
	int1, int2 bool
	// lim1, lim2 bound the relative change of Se and 1 − Se for which
	// [nearFlow] continues a power by its binomial series.
	lim1, lim2 float64
}

// set takes the curves of ff.
func (cf *coreyFlow) set(ff *FracFlow) {
	c, ok := ff.Rel.(*Corey)
	if !ok {
		*cf = coreyFlow{}
		return
	}
	isInt := func(n float64) bool { return n == 1 || n == 2 || n == 3 || n == 4 }
	*cf = coreyFlow{
		corey: true,
		s1r:   c.S1r, top: 1 - c.S2r, span: 1 - c.S1r - c.S2r,
		k1: c.Kr1Max, k2: c.Kr2Max, n1: c.N1, n2: c.N2,
		r: ff.R, g: ff.G,
		int1: isInt(c.N1), int2: isInt(c.N2),
		lim1: seriesStep / max(1, c.N1), lim2: seriesStep / max(1, c.N2),
	}
}

// interior returns Se for a saturation strictly inside the mobile range,
// where Corey.Eval takes its general branch, and ok = false elsewhere.
func (cf *coreyFlow) interior(s float64) (se float64, ok bool) {
	if !cf.corey || !(s > cf.s1r && s < cf.top) {
		return 0, false
	}
	se = (s - cf.s1r) / cf.span
	return se, se > 0 && se < 1
}

// eval returns f(s), f′(s) and f″(s), as FracFlow.Eval does.
func (cf *coreyFlow) eval(ff *FracFlow, s float64) (f, df, d2f float64) {
	se, ok := cf.interior(s)
	if !ok {
		return ff.Eval(s)
	}
	a, b := 1/(se*cf.span), 1/((1-se)*cf.span)
	return cf.at(ff, pow(se, cf.n1), pow(1-se, cf.n2), a, b)
}

// f returns f(s) alone, as FracFlow.F does.
func (cf *coreyFlow) f(ff *FracFlow, s float64) float64 {
	se, ok := cf.interior(s)
	if !ok {
		return ff.F(s)
	}
	kr1, kr2 := cf.k1*pow(se, cf.n1), cf.k2*pow(1-se, cf.n2)
	return kr1 * (1 - cf.g*kr2) / (kr1 + cf.r*kr2)
}

// at returns f, f′ and f″ at an interior Se from p1 = Se^n1,
// p2 = (1 − Se)^n2, a = 1/(Se·span) and b = 1/((1 − Se)·span): the
// formulas of Corey.inner and FracFlow.combine, operation for operation.
func (cf *coreyFlow) at(ff *FracFlow, p1, p2, a, b float64) (f, df, d2f float64) {
	kr1 := cf.k1 * p1
	kr2 := cf.k2 * p2
	dkr1 := kr1 * cf.n1 * a
	dkr2 := -kr2 * cf.n2 * b
	d2kr1 := dkr1 * (cf.n1 - 1) * a
	d2kr2 := -dkr2 * (cf.n2 - 1) * b
	if t := dkr1 + dkr2 + d2kr1 + d2kr2; t-t != 0 {
		// A derivative overflowed (Se within about 1e-308 of an end):
		// combine's end-point branches decide.
		return ff.combine(RelPermValue{Kr1: kr1, Kr2: kr2, DKr1: dkr1, DKr2: dkr2, D2Kr1: d2kr1, D2Kr2: d2kr2})
	}
	g, r := cf.g, cf.r
	n := kr1 * (1 - g*kr2)
	inv := 1 / (kr1 + r*kr2)
	f = n * inv
	dn := dkr1*(1-g*kr2) - g*kr1*dkr2
	dd := dkr1 + r*dkr2
	df = (dn - f*dd) * inv
	d2n := d2kr1*(1-g*kr2) - 2*g*dkr1*dkr2 - g*kr1*d2kr2
	d2d := d2kr1 + r*d2kr2
	d2f = (d2n - f*d2d - 2*df*dd) * inv
	return f, df, d2f
}

// seriesStep is the largest |n·δ| for which a power x^n at x(1 + δ) is
// continued from its value at x by the binomial series
//
//	(1 + δ)^n = 1 + nδ + n(n − 1)/2·δ² + n(n − 1)(n − 2)/6·δ³ + R,
//
// whose remainder R is about n(n − 1)(n − 2)(n − 3)/24·δ⁴ (Lagrange form),
// below 1e-20 for |δ| ≤ 1e-5 and |nδ| ≤ 1e-5: far below the rounding of
// the result.
const seriesStep = 1e-5

// nearFlow evaluates f, f′ and f″ along an iteration that closes in on
// a root. The first point costs a logarithm and an exponential per
// curve; a later point within a relative 1e-5 in Se and 1 − Se of the
// last fully evaluated one continues its powers by the binomial series
// instead, which agrees with the direct evaluation to rounding. Its zero
// value is not usable: make it with [coreyFlow.near].
type nearFlow struct {
	cf         *coreyFlow
	ff         *FracFlow
	ok         bool // se, p1, p2 hold a full evaluation
	se, p1, p2 float64
}

// near returns a nearFlow for one root iteration.
func (cf *coreyFlow) near(ff *FracFlow) nearFlow {
	return nearFlow{cf: cf, ff: ff}
}

// eval returns f(s), f′(s) and f″(s).
func (nf *nearFlow) eval(s float64) (f, df, d2f float64) {
	cf := nf.cf
	se, ok := cf.interior(s)
	if !ok {
		return nf.ff.Eval(s)
	}
	x := 1 - se
	a, b := 1/(se*cf.span), 1/(x*cf.span)
	if nf.ok {
		d1 := (se - nf.se) / nf.se
		x0 := 1 - nf.se
		d2 := (x - x0) / x0
		if d1 <= cf.lim1 && d1 >= -cf.lim1 && d2 <= cf.lim2 && d2 >= -cf.lim2 {
			// Integer exponents are multiplied out as pow does.
			var p1, p2 float64
			if cf.int1 {
				p1 = pow(se, cf.n1)
			} else {
				p1 = nf.p1 + nf.p1*binomialTail(cf.n1, d1)
			}
			if cf.int2 {
				p2 = pow(x, cf.n2)
			} else {
				p2 = nf.p2 + nf.p2*binomialTail(cf.n2, d2)
			}
			return cf.at(nf.ff, p1, p2, a, b)
		}
	}
	p1, p2 := pow(se, cf.n1), pow(x, cf.n2)
	nf.ok, nf.se, nf.p1, nf.p2 = true, se, p1, p2
	return cf.at(nf.ff, p1, p2, a, b)
}

// binomialTail returns (1 + d)^n − 1 to third order in d (see seriesStep).
func binomialTail(n, d float64) float64 {
	return n * d * (1 + (n-1)*0.5*d*(1+(n-2)*(1.0/3)*d))
}
