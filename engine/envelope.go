package engine

import "math"

// gridIntervals is the number of saturation intervals of the scan that
// locates the envelope's pieces before they are refined exactly. The scan
// only decides the pieces' order and rough ends; every end point is then
// solved to machine precision on the analytic derivatives.
const gridIntervals = 64

// maxPieces bounds the pieces of one envelope: the scan's hull has at most
// gridIntervals+1 edges, each giving at most one shock and one fan.
const maxPieces = 2*gridIntervals + 4

// tangencyTol is the saturation tolerance to which tangency points and
// outlet states are solved.
const tangencyTol = 1e-14

// Piece is one piece of the upper concave envelope F of f over
// [s1_init, S_b], in increasing saturation. A shock is a chord of the
// envelope: the saturation jumps from Lo (ahead) to Hi (behind) and the jump
// moves at Speed = (f(Hi) − f(Lo))/(Hi − Lo). A fan is a stretch where the
// envelope touches f: each saturation S in it moves at f'(S), from SpeedLo at
// Lo down to SpeedHi at Hi.
type Piece struct {
	Lo, Hi           float64 // saturation range
	FLo, FHi         float64 // f at Lo and Hi
	SpeedLo, SpeedHi float64 // dxD/dtD at Lo and Hi; equal for a shock
	Shock            bool
}

// scan holds the sampled f on the saturation grid and its upper hull.
type scan struct {
	x, y, dy [gridIntervals + 1]float64
	hull     [gridIntervals + 1]int
	nhull    int
	chords   [gridIntervals + 1]chord
}

// chord is a shock of the envelope between contact points p < q, found
// near grid indices i and j.
type chord struct {
	i, j int
	p, q float64
}

// build samples f over [a, b] and computes the upper hull of the samples.
// The first sample is a itself; the others are evenly spaced over
// [max(a, s1r), b], since f is zero below s1r.
func (sc *scan) build(ff *FracFlow, a, b float64) {
	s1r, _ := ff.Rel.Residuals()
	lo := max(a, s1r)
	sc.x[0] = a
	sc.y[0], sc.dy[0], _ = ff.Eval(a)
	h := (b - lo) / gridIntervals
	for k := 1; k <= gridIntervals; k++ {
		s := lo + float64(k)*h
		if k == gridIntervals {
			s = b
		}
		sc.x[k] = s
		sc.y[k], sc.dy[k], _ = ff.Eval(s)
	}
	sc.y[gridIntervals] = 1 // the inlet flux condition f(S_b) = 1

	// Upper hull by Andrew's monotone chain: drop a middle point that lies
	// on or below the chord of its neighbours.
	m := 0
	for i := 0; i <= gridIntervals; i++ {
		for m >= 2 {
			o, p := sc.hull[m-2], sc.hull[m-1]
			cross := (sc.x[p]-sc.x[o])*(sc.y[i]-sc.y[o]) - (sc.y[p]-sc.y[o])*(sc.x[i]-sc.x[o])
			if cross < 0 {
				break
			}
			m--
		}
		sc.hull[m] = i
		m++
	}
	sc.nhull = m
}

// fanEdge reports whether the hull edge between neighbouring grid points i
// and i+1 is a stretch where f itself is the envelope: the secant's slope
// lies between the end slopes, as it does where f is concave.
func (sc *scan) fanEdge(i int) bool {
	sec := (sc.y[i+1] - sc.y[i]) / (sc.x[i+1] - sc.x[i])
	tol := 1e-9 * (math.Abs(sec) + 1)
	return sc.dy[i] >= sec-tol && sc.dy[i+1] <= sec+tol
}

// envelope computes the pieces of the upper concave envelope of f over
// [sol.Init, sol.Inlet] into sol.
func (sc *scan) envelope(sol *Solution) {
	ff := &sol.Flow
	a, b := sol.Init, sol.Inlet
	sc.build(ff, a, b)

	// Hull edges that are not fan stretches are shocks; solve their ends.
	nc := 0
	for k := 0; k+1 < sc.nhull; k++ {
		i, j := sc.hull[k], sc.hull[k+1]
		if j == i+1 && sc.fanEdge(i) {
			continue
		}
		c := chord{i: i, j: j, p: sc.x[i], q: sc.x[j]}
		sc.refine(ff, &c)
		// A shock whose lower end passes the previous one's upper end has
		// swallowed the fan between them: merge the two and solve again.
		for nc > 0 && c.p <= sc.chords[nc-1].q {
			prev := sc.chords[nc-1]
			nc--
			c = chord{i: prev.i, j: c.j, p: prev.p, q: c.q}
			sc.refine(ff, &c)
		}
		if c.q-c.p > tangencyTol {
			sc.chords[nc] = c
			nc++
		}
	}

	// Pieces: fans between the shocks.
	sol.n = 0
	cur := a
	for _, c := range sc.chords[:nc] {
		if c.p > cur {
			sol.addFan(cur, c.p)
		}
		sol.addShock(c.p, c.q)
		cur = c.q
	}
	if cur < b {
		sol.addFan(cur, b)
	}
}

// refine solves the ends of the shock c exactly: the lower end p is a
// (when the chord leaves the initial state) or a tangency point, the upper
// end q is S_b or a tangency point. The two one-sided problems are solved
// in turn; at a bitangent the coupling between them vanishes (the
// Jacobian of the two tangency conditions is diagonal there because
// f'(p) = f'(q)), so a few rounds converge.
func (sc *scan) refine(ff *FracFlow, c *chord) {
	for range 8 {
		p := sc.lowerEnd(ff, c.i, c.q)
		q := sc.upperEnd(ff, c.j, p)
		done := math.Abs(p-c.p) <= tangencyTol && math.Abs(q-c.q) <= tangencyTol
		c.p, c.q = p, q
		if done {
			return
		}
	}
}

// lowerEnd returns the contact point p < q of the supporting line through
// (q, f(q)) on its left: the p that minimises the chord slope
// (f(q) − f(p))/(q − p). Its derivative has the sign of
// U(p) = f(q) − f(p) − f'(p)(q − p), negative left of the tangency and
// positive right of it, so p = a when U(a) ≥ 0 and otherwise U's root,
// bracketed on the grid near index i.
func (sc *scan) lowerEnd(ff *FracFlow, i int, q float64) float64 {
	fq := ff.F(q)
	if q == sc.x[gridIntervals] {
		fq = 1
	}
	u := func(k int) float64 { return fq - sc.y[k] - sc.dy[k]*(q-sc.x[k]) }
	k := min(i, gridIntervals)
	for k > 0 && sc.x[k] >= q {
		k--
	}
	var lo, hi int
	if u(k) < 0 {
		for k+1 <= gridIntervals && sc.x[k+1] < q && u(k+1) < 0 {
			k++
		}
		if k+1 > gridIntervals || sc.x[k+1] >= q {
			return sc.x[k]
		}
		lo, hi = k, k+1
	} else {
		for k > 0 && u(k) >= 0 {
			k--
		}
		if k == 0 && u(0) >= 0 {
			return sc.x[0]
		}
		lo, hi = k, k+1
	}
	return solveBracket(sc.x[lo], sc.x[hi], u(lo), u(hi), func(p float64) (float64, float64) {
		f, df, d2f := ff.Eval(p)
		return fq - f - df*(q-p), -d2f * (q - p)
	})
}

// upperEnd returns the contact point q > p of the supporting line through
// (p, f(p)) on its right: the q that maximises the chord slope. Its
// derivative has the sign of T(q) = f'(q)(q − p) − (f(q) − f(p)), positive
// left of the tangency, so q = S_b when T(S_b) ≥ 0 and otherwise T's root.
func (sc *scan) upperEnd(ff *FracFlow, j int, p float64) float64 {
	fp := ff.F(p)
	if p == sc.x[0] {
		fp = sc.y[0]
	}
	t := func(k int) float64 { return sc.dy[k]*(sc.x[k]-p) - (sc.y[k] - fp) }
	k := max(j, 0)
	for k < gridIntervals && sc.x[k] <= p {
		k++
	}
	var lo, hi int
	if t(k) > 0 {
		for k < gridIntervals && t(k) > 0 {
			k++
		}
		if k == gridIntervals && t(k) > 0 {
			return sc.x[gridIntervals]
		}
		lo, hi = k-1, k
	} else {
		for k-1 >= 0 && sc.x[k-1] > p && t(k-1) <= 0 {
			k--
		}
		if k-1 < 0 || sc.x[k-1] <= p {
			return sc.x[k]
		}
		lo, hi = k-1, k
	}
	return solveBracket(sc.x[lo], sc.x[hi], t(lo), t(hi), func(q float64) (float64, float64) {
		f, df, d2f := ff.Eval(q)
		return df*(q-p) - (f - fp), d2f * (q - p)
	})
}

// solveBracket returns a root of g in [lo, hi], where glo = g(lo) and
// ghi = g(hi) do not have the same strict sign. g returns its value and
// derivative. Newton steps are taken while they stay inside the shrinking
// bracket; otherwise the step is a bisection, so the iteration cannot fail.
func solveBracket(lo, hi, glo, ghi float64, g func(float64) (float64, float64)) float64 {
	if glo == 0 {
		return lo
	}
	if ghi == 0 {
		return hi
	}
	if glo > 0 {
		// Orient so that g(lo) < 0 < g(hi); lo may then exceed hi.
		lo, hi, glo, ghi = hi, lo, ghi, glo
	}
	x := 0.5 * (lo + hi)
	if xs := lo - glo*(hi-lo)/(ghi-glo); xs > math.Min(lo, hi) && xs < math.Max(lo, hi) {
		// Start from the secant through the bracket ends.
		x = xs
	}
	for range 100 {
		gx, dgx := g(x)
		if gx == 0 || math.IsNaN(gx) {
			return x
		}
		if gx < 0 {
			lo = x
		} else {
			hi = x
		}
		next := x - gx/dgx
		if !(next > math.Min(lo, hi) && next < math.Max(lo, hi)) {
			next = 0.5 * (lo + hi)
		}
		if math.Abs(next-x) <= tangencyTol || math.Abs(hi-lo) <= tangencyTol {
			return next
		}
		x = next
	}
	return x
}
