package engine

import "math"

// The scan that locates the envelope's pieces samples f on a grid in
// normalised saturation Se: uniformIntervals even steps plus geometric
// clusters of geomLevels points at Se = 2^−k and 1 − 2^−k (k = 7, 9, …, 29)
// towards both ends, where power-law curves and extreme viscosity ratios
// put their structure (kr1 ≈ R·kr2 happens near Se ≈ R^(1/n1) for small R).
// The clusters step by a factor of four, which resolves power laws
// x^n at every scale for the exponents allowed (a factor of four in x is a
// factor of 2 or more in x^n for n ≥ 0.5).
// The scan only decides the pieces' order and rough ends; every end point
// is then solved to machine precision on the analytic derivatives.
const (
	uniformIntervals = 32
	geomFirst        = 7
	geomLevels       = 12
	geomStep         = 2 // in powers of two
	tableSize        = uniformIntervals - 1 + 2*geomLevels
	// minTablePoints is the fewest table points inside [s1_init, S_b] for
	// which the fixed table is used; a narrower range gets a grid of its own.
	minTablePoints = 40
	maxGrid        = tableSize + 2 + 48 + maxScanHints // the table, both end states, points added where the grid was too coarse and the curves' own knots
	// maxScanHints bounds the points a piecewise curve adds to the grid
	// (see scanHinter).
	maxScanHints = 256
)

// scanHinter is implemented by curves that are smooth only piecewise, such
// as tabulated ones: scanPoints appends to dst, in increasing order, at most
// maxScanHints saturations for the scan to sample as well, on both sides of
// each knot (where f″ jumps) and inside each piece, so that no grid
// interval spans a knot and the grid is finer than the curves' pieces.
type scanHinter interface {
	scanPoints(dst []float64) []float64
}

// maxPieces bounds the pieces of one envelope: the scan's hull has at most
// maxGrid−1 edges, each giving at most one shock and one fan.
const maxPieces = 2*maxGrid + 2

// minShock is the narrowest shock kept, in saturation. A narrower chord
// bridges a convex wiggle of f so small that the chord and f differ by less
// than f”·minShock²/8 (about 1e-15 for f” of order 1); it is left to the
// fan around it, where the tangency equations are too ill-conditioned to
// solve reliably.
const minShock = 1e-7

// minShockRise is the smallest rise of f across a kept shock: below it the
// rise is rounding noise of f near a flat stretch (f ≈ 1 close to S_b), and
// the shock would only matter after more than 1e12 pore volumes.
const minShockRise = 1e-12

// hintGap is the closest, as a fraction of the span 1 − s1r − s2r, that a
// point asked for by a scanHinter may come to another grid point.
const hintGap = 1e-9

// flatTop is how close to 1 f may come in the scan's cluster at Se → 1
// before the cluster is cut short, for curves other than Corey's.
const flatTop = 1e-9

// nearlyOne is how close to 1 f(s1_init) may come before the envelope is
// taken as one shock to S_b.
const nearlyOne = 1e-12

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

// seTable is the fixed scan grid in Se with its logarithms, so that Corey
// curves cost at most two exponentials a point (about one on the even
// grid, see [scan.evenPowers]).
type seTable struct {
	se, l1, l2 [tableSize]float64 // Se, ln Se, ln(1 − Se)
	inv1, inv2 [tableSize]float64 // 1/Se, 1/(1 − Se)
}

func (t *seTable) fill() {
	k := 0
	add := func(se, l1, l2 float64) {
		t.se[k], t.l1[k], t.l2[k] = se, l1, l2
		t.inv1[k], t.inv2[k] = 1/se, 1/(1-se)
		k++
	}
	for i := geomFirst + geomStep*(geomLevels-1); i >= geomFirst; i -= geomStep {
		se := math.Ldexp(1, -i)
		add(se, -float64(i)*math.Ln2, math.Log1p(-se))
	}
	for j := 1; j < uniformIntervals; j++ {
		se := float64(j) / uniformIntervals
		add(se, math.Log(se), math.Log1p(-se))
	}
	for i := geomFirst; i < geomFirst+geomStep*geomLevels; i += geomStep {
		d := math.Ldexp(1, -i)
		add(1-d, math.Log1p(-d), -float64(i)*math.Ln2)
	}
}

// scan holds the sampled f on the saturation grid and its upper hull.
type scan struct {
	table    *seTable
	n        int // grid points; x[0] = s1_init, x[n−1] = S_b
	x, y, dy [maxGrid]float64
	d2y      [maxGrid]float64
	tmp      [geomLevels][4]float64
	u1, u2   [uniformIntervals]float64 // (j/32)^n1 and (j/32)^n2 on the even grid, for Corey curves
	hull     [maxGrid]int
	nhull    int
	chords   [maxGrid]chord

	hints [maxScanHints]float64 // scratch for scanHinter points

	collapsed  [4][2]int // hull edges whose shock could not be solved
	ncollapsed int

	minWidth, minRise float64 // minShock and minShockRise scaled to the case

	cf coreyFlow // the evaluator of the Solution being built

	// memo holds the last evaluations at contact points, which the
	// chord, bump and piece steps ask for again; reset for every case.
	memo     [2]evalAt
	memoNext int
}

// evalAt is f and its derivatives at one saturation.
type evalAt struct {
	s, f, df, d2f float64
}

// chord is a shock of the envelope between contact points p < q, found
// near grid indices i and j.
type chord struct {
	i, j int
	p, q float64
}

func (sc *scan) add(s, f, df, d2f float64) {
	sc.x[sc.n], sc.y[sc.n], sc.dy[sc.n], sc.d2y[sc.n] = s, f, df, d2f
	sc.n++
}

// build samples f over [a, b] and computes the upper hull of the samples.
// The first sample is a itself and the last b, where f = 1 by the inlet
// condition; in between, the grid covers Se in (Se(a), Se(b)), skipping
// S < s1r where f is zero.
func (sc *scan) build(ff *FracFlow, a, b float64) {
	if sc.table == nil {
		sc.table = new(seTable)
		sc.table.fill()
	}
	s1r, s2r := ff.Rel.Residuals()
	span := 1 - s1r - s2r
	ua := max(0, (a-s1r)/span)
	ub := min(1, (b-s1r)/span)
	if b == 1-s2r {
		ub = 1 // exactly: the cluster at Se → 1 is needed whenever S_b is the end point
	}
	sc.n = 0
	sc.memo = [len(sc.memo)]evalAt{{s: math.NaN()}, {s: math.NaN()}}
	f, df, d2f := sc.cf.eval(ff, a)
	sc.add(a, f, df, d2f)

	t := sc.table
	lo, hi := 0, tableSize
	for lo < tableSize && t.se[lo] <= ua {
		lo++
	}
	for hi > lo && t.se[hi-1] >= ub {
		hi--
	}
	corey, isCorey := ff.Rel.(*Corey)
	// Points asked for by a piecewise curve; when there are many, they
	// replace the even steps of the fixed grid (the geometric clusters
	// stay).
	var hints []float64
	if !isCorey {
		if h, ok := ff.Rel.(scanHinter); ok {
			hints = h.scanPoints(sc.hints[:0])
		}
	}
	skipEven := len(hints) >= 2*uniformIntervals
	if hi-lo >= minTablePoints {
		ispan := 1 / span
		if isCorey {
			sc.evenPowers(lo, hi)
		}
		eval := func(k int) (s, f, df, d2f float64) {
			s = s1r + t.se[k]*span
			if isCorey {
				// A cluster point (the even grid has its own loop below).
				cf := &sc.cf
				p1, p2 := powLog(t.se[k], t.l1[k], cf.n1), powLog(1-t.se[k], t.l2[k], cf.n2)
				f, df, d2f = cf.at(ff, p1, p2, t.inv1[k]*ispan, t.inv2[k]*ispan)
			} else {
				f, df, d2f = ff.Eval(s)
			}
			return s, f, df, d2f
		}
		// The cluster at Se → 0 (only inside the range when s1_init ≤ s1r)
		// is scanned from its coarse end down and cut short once a point
		// lies far below every chord from s1_init: with n1 ≥ 1 the ratio
		// f/(S − s1_init) only falls towards Se = 0, so no finer point can
		// be on the hull.
		low := min(geomLevels, hi)
		if lo < low {
			cmin := (1 - sc.y[0]) / (b - a)
			first := lo
			for k := low - 1; k >= lo; k-- {
				s, f, df, d2f := eval(k)
				sc.tmp[k] = [4]float64{s, f, df, d2f}
				first = k
				if isCorey && corey.N1 >= 1 && k <= low-3 && f < 0.25*cmin*(s-a) {
					break
				}
			}
			for k := first; k < low; k++ {
				if v := sc.tmp[k]; v[0] > a && v[0] < b {
					sc.add(v[0], v[1], v[2], v[3])
				}
			}
			lo = low
		}
		k := lo
		if isCorey {
			// The even grid, from the powers evenPowers prepared.
			cf := &sc.cf
			for mid := min(hi, tableSize-geomLevels); k < mid; k++ {
				s := s1r + t.se[k]*span
				if s <= a || s >= b {
					continue
				}
				j := k - (geomLevels - 1)
				f, df, d2f := cf.at(ff, sc.u1[j], sc.u2[uniformIntervals-j], t.inv1[k]*ispan, t.inv2[k]*ispan)
				sc.add(s, f, df, d2f)
			}
		}
		concave := 0
		if skipEven {
			k = max(k, tableSize-geomLevels) // past the even steps
		}
		for ; k < hi; k++ {
			s, f, df, d2f := eval(k)
			if s <= a || s >= b {
				continue
			}
			sc.add(s, f, df, d2f)
			// The cluster at Se → 1 is cut short once f is concave at two
			// levels in a row: with n2 ≥ 1 it stays concave up to S_b, a
			// fan whose finer points would add nothing to the hull.
			if k >= tableSize-geomLevels && isCorey && corey.N2 >= 1 {
				if d2f < 0 {
					concave++
				} else {
					concave = 0
				}
				if concave >= 2 {
					break
				}
			}
			// For other curves it is cut once f is within flatTop of 1:
			// finer points differ from 1 by rounding noise, whose hull
			// edges only cost ill-conditioned tangency solves, and any
			// shock among them would rise by less than flatTop.
			if k >= tableSize-geomLevels && !isCorey && 1-f <= flatTop {
				break
			}
		}
	} else {
		// A narrow range: even steps over it, clustered geometrically
		// towards an end that is a residual saturation.
		w := ub - ua
		if ua == 0 {
			for i := geomFirst + geomStep*(geomLevels-1); i >= geomFirst; i -= geomStep {
				sc.addSe(ff, s1r, span, ua+w*math.Ldexp(1, -i), a, b)
			}
		}
		for j := 1; j < uniformIntervals; j++ {
			sc.addSe(ff, s1r, span, ua+w*float64(j)/uniformIntervals, a, b)
		}
		if ub == 1 {
			for i := geomFirst; i < geomFirst+geomStep*geomLevels; i += geomStep {
				sc.addSe(ff, s1r, span, ub-w*math.Ldexp(1, -i), a, b)
			}
		}
	}
	if len(hints) > 0 {
		sc.addHints(ff, hints, a, b)
	}
	_, df, d2f = sc.cf.eval(ff, b)
	sc.add(b, 1, df, d2f) // the inlet flux condition f(S_b) = 1
	sc.hullOf()
}

// evenPowers fills sc.u1[j] = (j/32)^n1 and sc.u2[32 − j] = (1 − j/32)^n2
// for the even grid points Se = j/32 among the table indices [lo, hi).
func (sc *scan) evenPowers(lo, hi int) {
	jlo := max(lo-(geomLevels-1), 1)
	jhi := min(hi-1-(geomLevels-1), uniformIntervals-1)
	if jlo > jhi {
		return
	}
	evenPowerRow(&sc.u1, sc.table, sc.cf.n1, jlo, jhi)
	evenPowerRow(&sc.u2, sc.table, sc.cf.n2, uniformIntervals-jhi, uniformIntervals-jlo)
}

// evenPowerRow sets u[j] = (j/32)^n for j in [jlo, jhi]. The upper half,
// j ≥ 16, costs an exponential each, as powLog does; below it
// (j/32)^n = (2j/32)^n·(1/2)^n, one product. The product's error is that of
// the direct exponential (the arguments' rounding errors n·ln(2j/32)·ε and
// n·ln(1/2)·ε add up to n·ln(j/32)·ε) plus one rounding.
func evenPowerRow(u *[uniformIntervals]float64, t *seTable, n float64, jlo, jhi int) {
	const k0 = geomLevels - 1 // table index of Se = j/32 is k0 + j
	if n == 1 || n == 2 || n == 3 || n == 4 {
		for j := jlo; j <= jhi; j++ {
			u[j] = pow(t.se[k0+j], n)
		}
		return
	}
	// Direct where 2j is beyond the range, then products downwards.
	mid := jhi / 2
	l := t.l1[k0 : k0+uniformIntervals]
	for j := max(jlo, mid+1); j <= jhi; j++ {
		u[j] = fastExp(float64(n * l[j]))
	}
	if jlo > mid {
		return
	}
	var half float64 // (1/2)^n
	if jhi >= uniformIntervals/2 {
		half = u[uniformIntervals/2]
	} else {
		half = fastExp(float64(n * l[uniformIntervals/2]))
	}
	for j := mid; j >= jlo; j-- {
		u[j] = u[2*j] * half
	}
}

// addHints merges the increasing saturations pts that lie strictly inside
// (a, b) into the grid, skipping any within hintGap of a point already
// taken (two points an ulp apart would only feed rounding noise to the
// hull). The grid is moved to the top of the arrays and merged down with
// the new points; the write index never passes the read index because
// len(pts) ≤ maxScanHints leaves that much room above the grid.
func (sc *scan) addHints(ff *FracFlow, pts []float64, a, b float64) {
	s1r, s2r := ff.Rel.Residuals()
	gap := hintGap * (1 - s1r - s2r)
	n := sc.n
	off := maxGrid - n
	copy(sc.x[off:], sc.x[:n])
	copy(sc.y[off:], sc.y[:n])
	copy(sc.dy[off:], sc.dy[:n])
	copy(sc.d2y[off:], sc.d2y[:n])
	i, j, k := 0, 0, 0
	for i < n || j < len(pts) {
		if j < len(pts) && (pts[j] <= a+gap || pts[j] >= b-gap ||
			(k > 0 && pts[j] <= sc.x[k-1]+gap) || (i < n && math.Abs(sc.x[off+i]-pts[j]) <= gap)) {
			j++
			continue
		}
		if i < n && (j == len(pts) || sc.x[off+i] <= pts[j]) {
			sc.x[k], sc.y[k], sc.dy[k], sc.d2y[k] = sc.x[off+i], sc.y[off+i], sc.dy[off+i], sc.d2y[off+i]
			i++
		} else {
			f, df, d2f := ff.Eval(pts[j])
			sc.x[k], sc.y[k], sc.dy[k], sc.d2y[k] = pts[j], f, df, d2f
			j++
		}
		k++
	}
	sc.n = k
}

// hullOf computes the upper hull of the samples by Andrew's monotone
// chain: a middle point on or below the chord of its neighbours is dropped.
func (sc *scan) hullOf() {
	n := sc.n
	x, y, h := sc.x[:n], sc.y[:n], sc.hull[:n]
	m := 0
	for i := range n {
		xi, yi := x[i], y[i]
		for m >= 2 {
			o, p := h[m-2], h[m-1]
			cross := (x[p]-x[o])*(yi-y[o]) - (y[p]-y[o])*(xi-x[o])
			if cross < 0 {
				break
			}
			m--
		}
		h[m] = i
		m++
	}
	sc.nhull = m
}

// addSe adds the grid point at normalised saturation se when it lies
// strictly inside (a, b).
func (sc *scan) addSe(ff *FracFlow, s1r, span, se, a, b float64) {
	s := s1r + se*span
	if s <= a || s >= b || (sc.n > 0 && s <= sc.x[sc.n-1]) {
		return
	}
	f, df, d2f := sc.cf.eval(ff, s)
	sc.add(s, f, df, d2f)
}

// fanEdge reports whether the hull edge between neighbouring grid points i
// and i+1 is a stretch where f itself is the envelope: f is not convex at
// either end and the secant's slope lies between the end slopes, as it does
// where f is concave.
func (sc *scan) fanEdge(i int) bool {
	dx := sc.x[i+1] - sc.x[i]
	sec := (sc.y[i+1] - sc.y[i]) / dx
	// The secant's rounding error grows as the points close in (the
	// geometric clusters are 2^−30 apart at the ends), so the tolerance
	// carries it along with a relative part.
	const eps = 0x1p-52
	tol := 1e-9 * (math.Abs(sec) + 1)
	if sc.d2y[i]*dx <= tol && sc.d2y[i+1]*dx <= tol && sc.dy[i] >= sec-tol && sc.dy[i+1] <= sec+tol {
		// A fan edge even without the rounding part of the tolerance,
		// which only widens it.
		return true
	}
	tol += 8 * eps * (math.Abs(sc.y[i]) + math.Abs(sc.y[i+1]) + math.Abs(sec)*(math.Abs(sc.x[i])+math.Abs(sc.x[i+1]))) / dx
	if sc.d2y[i]*dx > tol || sc.d2y[i+1]*dx > tol {
		// f is convex at an end: a shock leaves or reaches it.
		return false
	}
	return sc.dy[i] >= sec-tol && sc.dy[i+1] <= sec+tol
}

// envelope computes the pieces of the upper concave envelope of f over
// [sol.Init, sol.Inlet] into sol.
func (sc *scan) envelope(sol *Solution) {
	ff := &sol.Flow
	sc.cf = sol.cf
	a, b := sol.Init, sol.Inlet
	sol.n = 0
	if 1-sol.FInit <= nearlyOne {
		// The initial state already flows at f = 1 to within rounding: f
		// cannot be resolved between 1 − 1e-12 and 1, and the envelope is
		// taken as the single chord to S_b (it differs from the exact one
		// by less than 1e-12 in f).
		sol.addShock(a, b)
		return
	}
	sc.build(ff, a, b)
	sc.ncollapsed = 0
	// The thresholds shrink with the problem: a range [s1_init, S_b] only
	// 1e-9 wide (s1_init just below 1 − s2r) is one shock of that width.
	sc.minWidth = min(minShock, 1e-4*(b-a))
	sc.minRise = min(minShockRise, 1e-4*(1-sc.y[0]))

	var nc int
	for range maxBumpRounds {
		nc = sc.chordsOfHull(ff)
		if !sc.splitBumps(ff, nc) {
			break
		}
		sc.hullOf()
	}

	// Pieces: fans between the shocks.
	sol.n = 0
	cur := a
	for _, c := range sc.chords[:nc] {
		if c.p > cur {
			sc.addFan(sol, cur, c.p)
		}
		sol.addShockF(c.p, c.q, sc.fAt(ff, c.p), sc.fAt(ff, c.q))
		cur = c.q
	}
	if cur < b {
		sc.addFan(sol, cur, b)
	}
}

// addFan adds the fan [lo, hi] to sol with f and f' at its ends from
// the grid or the memo.
func (sc *scan) addFan(sol *Solution, lo, hi float64) {
	flo, dlo, _ := sc.evalMemo(&sol.Flow, lo)
	fhi, dhi, _ := sc.evalMemo(&sol.Flow, hi)
	sol.addFanF(lo, hi, flo, dlo, fhi, dhi)
}

// maxBumpRounds bounds the rounds of [scan.splitBumps]: each round adds
// the peaks of bumps the grid stepped over and solves the chords again.
const maxBumpRounds = 4

// chordsOfHull turns the hull edges that are not fan stretches into
// shocks with exactly solved ends, in sc.chords, and returns their number.
func (sc *scan) chordsOfHull(ff *FracFlow) int {
	nc := 0
	for k := 0; k+1 < sc.nhull; k++ {
		i, j := sc.hull[k], sc.hull[k+1]
		if j == i+1 && sc.fanEdge(i) {
			continue
		}
		if sc.y[j]-sc.y[i] <= sc.minRise {
			// Rounding noise where f is flat (f ≈ 1 near S_b).
			continue
		}
		c := chord{i: i, j: j, p: sc.x[i], q: sc.x[j]}
		solved := sc.refine(ff, &c)
		// A shock whose lower end passes the previous one's upper end has
		// swallowed the fan between them: merge the two and solve again.
		for nc > 0 && c.p <= sc.chords[nc-1].q {
			prev := sc.chords[nc-1]
			nc--
			c = chord{i: prev.i, j: c.j, p: prev.p, q: c.q}
			solved = sc.refine(ff, &c)
		}
		// A shock from s1_init or to S_b is kept however narrow: its one
		// tangency is well conditioned, and the front may be all there is
		// (with R ≪ 1 and n1 ≈ 1 the whole S-curve lies within Se < 1e-5).
		// That tangency being well conditioned, refine settles on it. A
		// chord refine did not settle is judged like any other: its
		// tangency conditions were rounding noise along the edge (an edge
		// between the last samples of the cluster at Se → 1, where f is so
		// flat that chord and f agree to rounding; which noise roots the
		// rounds hit depends on their starting points).
		width := sc.minWidth
		if solved && (c.p == sc.x[0] || c.q == sc.x[sc.n-1]) {
			width = 0
		}
		if c.q-c.p > width && sc.fAt(ff, c.q)-sc.fAt(ff, c.p) > sc.minRise {
			sc.chords[nc] = c
			nc++
		} else if sc.convexBetween(i, j) && sc.ncollapsed < len(sc.collapsed) {
			// f is convex somewhere on the edge, so a shock must bridge
			// it, but the tangencies could not be found from the edge's
			// ends: the grid is too coarse there. Mark it for sampling.
			sc.collapsed[sc.ncollapsed] = [2]int{i, j}
			sc.ncollapsed++
		}
	}
	return nc
}

// convexBetween reports whether f” > 0 at a grid point of [x_i, x_j].
func (sc *scan) convexBetween(i, j int) bool {
	for k := i; k <= j; k++ {
		if sc.d2y[k] > 0 && !math.IsInf(sc.d2y[k], 1) {
			return true
		}
	}
	return false
}

// splitBumps looks under every shock for a bump of f narrower than the
// grid: between neighbouring grid points where f' − c falls through zero
// (c the shock speed), f − chord has a local maximum. Its peak solves
// f'(S) = c; if f rises above the chord there, the peak is added to the
// grid so that the next hull includes it. It reports whether any was
// added.
func (sc *scan) splitBumps(ff *FracFlow, nc int) bool {
	added := false
	// Edges whose shock could not be solved: sample each of their grid
	// intervals at three more points, from the last edge down so that the
	// indices of the earlier ones stay valid.
	for e := sc.ncollapsed - 1; e >= 0; e-- {
		i, j := sc.collapsed[e][0], sc.collapsed[e][1]
		for k := j - 1; k >= i; k-- {
			x0, x1 := sc.x[k], sc.x[k+1]
			for m := 3; m >= 1 && sc.n < maxGrid; m-- {
				s := x0 + (x1-x0)*float64(m)/4
				f, df, d2f := sc.cf.eval(ff, s)
				sc.insert(k+1, s, f, df, d2f)
				added = true
			}
		}
	}
	sc.ncollapsed = 0
	if _, ok := ff.Rel.(*Corey); !ok {
		return sc.splitHidden(ff, nc) || added
	}
	for _, c := range sc.chords[:nc] {
		fp := sc.fAt(ff, c.p)
		speed := (sc.fAt(ff, c.q) - fp) / (c.q - c.p)
		for k := 0; k+1 < sc.n && sc.n < maxGrid; k++ {
			x0, x1 := sc.x[k], sc.x[k+1]
			if x0 <= c.p || x1 >= c.q {
				continue
			}
			g0, g1 := sc.dy[k]-speed, sc.dy[k+1]-speed
			if !(g0 > 0 && g1 < 0) {
				continue
			}
			nf := sc.cf.near(ff)
			s, _, _ := solveBracketFrom(x0, x1, g0, g1, hermiteRoot(x0, x1, g0, g1, sc.d2y[k], sc.d2y[k+1]), func(s float64) (float64, float64) {
				_, df, d2f := nf.eval(s)
				return df - speed, d2f
			})
			f, df, d2f := sc.cf.eval(ff, s)
			if gap := f - (fp + speed*(s-c.p)); gap > 1e-13*(1+math.Abs(f)) {
				sc.insert(k+1, s, f, df, d2f)
				added = true
				k++
			}
		}
	}
	return added
}

// splitHidden is the bump search of [scan.splitBumps] for curves other
// than Corey's, which may hide structure inside one grid interval (a short
// steep stretch of a table, a LET curve with large exponents):
//
//   - A hull edge between neighbouring samples where f″ ≤ 0 may still
//     hide a convex stretch: where the cubic Hermite interpolant of f'
//     through f″ at the edge's ends rises, f is sampled at the
//     interpolant's steepest rise, and the sample is kept if f″ > 0 there,
//     so that the next hull sees it.
//   - Under a shock of speed c, a bump may sit inside one interval with
//     f' − c of one sign at both ends: there the cubic Hermite interpolant
//     of f' − c is asked whether it crosses zero and back, and f' − c is
//     evaluated at its extremum to split the interval. The intervals at the
//     shock's own end states (s1_init or S_b on the grid) are searched too.
//   - A sample where f″ > 0 between two shocks (or between a shock and an
//     end state) sits in what would be a fan, where f must be concave: the
//     hull stepped over a convex stretch (a hull edge whose shock was
//     solved to a tangency short of the edge's far end, say, leaving
//     samples past it unaccounted for). Where f″ turns from > 0 to ≤ 0
//     between neighbouring samples, f is sampled at the maximum of the
//     cubic Hermite interpolant of f' there (the inflection of f, where
//     the stretch rises most above chords from its left), so that the
//     next hull sees the stretch.
//
// It reports whether any sample was added.
func (sc *scan) splitHidden(ff *FracFlow, nc int) bool {
	added := false
	for e := sc.nhull - 2; e >= 0 && sc.n < maxGrid; e-- {
		i := sc.hull[e]
		if sc.hull[e+1] != i+1 || sc.d2y[i] > 0 || sc.d2y[i+1] > 0 {
			continue
		}
		z := hermiteRise(sc.x[i], sc.x[i+1], sc.dy[i], sc.dy[i+1], sc.d2y[i], sc.d2y[i+1])
		if math.IsNaN(z) {
			continue
		}
		if f, df, d2f := ff.Eval(z); d2f > 0 {
			sc.insert(i+1, z, f, df, d2f)
			added = true
		}
	}
	for _, c := range sc.chords[:nc] {
		fp := sc.fAt(ff, c.p)
		speed := (sc.fAt(ff, c.q) - fp) / (c.q - c.p)
		for k := 0; k+1 < sc.n && sc.n < maxGrid; k++ {
			x0, x1 := sc.x[k], sc.x[k+1]
			if x0 < c.p || x1 > c.q || ((x0 == c.p || x1 == c.q) && x0 != sc.x[0] && x1 != sc.x[sc.n-1]) {
				continue
			}
			g0, g1 := sc.dy[k]-speed, sc.dy[k+1]-speed
			if !(g0 > 0 && g1 < 0) {
				z := hermiteTurn(x0, x1, g0, g1, sc.d2y[k], sc.d2y[k+1])
				if math.IsNaN(z) {
					continue
				}
				_, dfz, _ := ff.Eval(z)
				switch gz := dfz - speed; {
				case gz > 0 && g1 < 0:
					x0, g0 = z, gz
				case g0 > 0 && gz < 0:
					x1, g1 = z, gz
				default:
					continue
				}
			}
			s, _, _ := solveBracketFrom(x0, x1, g0, g1, math.NaN(), func(s float64) (float64, float64) {
				_, df, d2f := ff.Eval(s)
				return df - speed, d2f
			})
			f, df, d2f := ff.Eval(s)
			if gap := f - (fp + speed*(s-c.p)); gap > 1e-13*(1+math.Abs(f)) {
				sc.insert(k+1, s, f, df, d2f)
				added = true
				k++
			}
		}
	}
	// Last: the first search indexes the grid through the hull, which
	// splitFans's insertions would shift.
	return sc.splitFans(ff, nc) || added
}

// splitFans is the third search of [scan.splitHidden]: it samples f at
// the inflections that follow samples with f″ > 0 inside the stretches
// between the shocks sc.chords[:nc], and reports whether it added any.
func (sc *scan) splitFans(ff *FracFlow, nc int) bool {
	added := false
	k := 0
	for ci := 0; ci <= nc && sc.n < maxGrid; ci++ {
		lo, hi := sc.x[0], sc.x[sc.n-1]
		if ci > 0 {
			lo = sc.chords[ci-1].q
		}
		if ci < nc {
			hi = sc.chords[ci].p
		}
		for ; k+1 < sc.n && sc.x[k] < hi && sc.n < maxGrid; k++ {
			d0, d1 := sc.d2y[k], sc.d2y[k+1]
			if sc.x[k] <= lo || !(d0 > 0) || math.IsInf(d0, 1) || !(d1 <= 0) {
				continue
			}
			x0, x1 := sc.x[k], sc.x[k+1]
			top := max(sc.dy[k], sc.dy[k+1])
			z := hermiteTurn(x0, x1, sc.dy[k]-top, sc.dy[k+1]-top, d0, d1)
			if math.IsNaN(z) {
				z = 0.5 * (x0 + x1)
			}
			if !(z > x0 && z < x1) {
				continue
			}
			f, df, d2f := ff.Eval(z)
			sc.insert(k+1, z, f, df, d2f)
			added = true
			k++
		}
		if ci < nc {
			// Past the shock: on to the first sample at or above its upper end.
			for k+1 < sc.n && sc.x[k] < sc.chords[ci].q {
				k++
			}
		}
	}
	return added
}

// hermiteTurn returns the point of (x0, x1) where the cubic Hermite
// interpolant of g through (x0, g0, d0) and (x1, g1, d1) turns back across
// zero: its interior maximum when g0, g1 ≤ 0 and that maximum is positive,
// its interior minimum when g0, g1 ≥ 0 and that minimum is negative; NaN
// otherwise (no such turn, or d0, d1 not finite).
func hermiteTurn(x0, x1, g0, g1, d0, d1 float64) float64 {
	h := x1 - x0
	if !(h > 0) || math.IsNaN(d0+d1) || math.IsInf(d0+d1, 0) {
		return math.NaN()
	}
	var sign float64
	switch {
	case g0 <= 0 && g1 <= 0:
		sign = 1
	case g0 >= 0 && g1 >= 0:
		sign = -1
	default:
		return math.NaN()
	}
	// p(t) = g0 + m0 t + c2 t² + c3 t³ on t ∈ [0, 1]; p'(t) = m0 + 2c2 t + 3c3 t².
	m0, m1 := h*d0, h*d1
	c2 := 3*(g1-g0) - 2*m0 - m1
	c3 := 2*(g0-g1) + m0 + m1
	best, bestT := 0.0, math.NaN()
	try := func(t float64) {
		if t > 0 && t < 1 {
			if v := sign * (g0 + t*(m0+t*(c2+t*c3))); v > best {
				best, bestT = v, t
			}
		}
	}
	if a := 3 * c3; a == 0 {
		if c2 != 0 {
			try(-m0 / (2 * c2))
		}
	} else if disc := c2*c2 - a*m0; disc >= 0 {
		r := math.Sqrt(disc)
		try((-c2 + r) / a)
		try((-c2 - r) / a)
	}
	if math.IsNaN(bestT) {
		return math.NaN()
	}
	return x0 + bestT*h
}

// hermiteRise returns the point of (x0, x1) where the slope of the cubic
// Hermite interpolant of g through (x0, g0, d0) and (x1, g1, d1) is
// largest, if that slope is positive there; NaN otherwise. For g = f' on
// a stretch where f″ ≤ 0 at both ends, a positive value means f' rises
// inside: f is convex somewhere between the two samples.
func hermiteRise(x0, x1, g0, g1, d0, d1 float64) float64 {
	h := x1 - x0
	if !(h > 0) || math.IsNaN(d0+d1) || math.IsInf(d0+d1, 0) {
		return math.NaN()
	}
	// p'(t) = m0 + 2c2 t + 3c3 t², a parabola with its top inside (0, 1)
	// only when c3 < 0.
	m0, m1 := h*d0, h*d1
	c2 := 3*(g1-g0) - 2*m0 - m1
	c3 := 2*(g0-g1) + m0 + m1
	if !(c3 < 0) {
		return math.NaN()
	}
	t := -c2 / (3 * c3)
	if !(t > 0 && t < 1) || !(m0+t*(2*c2+3*c3*t) > 0) {
		return math.NaN()
	}
	return x0 + t*h
}

// insert puts a sample at index k of the grid, shifting the rest up.
func (sc *scan) insert(k int, s, f, df, d2f float64) {
	copy(sc.x[k+1:sc.n+1], sc.x[k:sc.n])
	copy(sc.y[k+1:sc.n+1], sc.y[k:sc.n])
	copy(sc.dy[k+1:sc.n+1], sc.dy[k:sc.n])
	copy(sc.d2y[k+1:sc.n+1], sc.d2y[k:sc.n])
	sc.x[k], sc.y[k], sc.dy[k], sc.d2y[k] = s, f, df, d2f
	sc.n++
}

// refine solves the ends of the shock c exactly: the lower end p is a
// (when the chord leaves the initial state) or a tangency point, the upper
// end q is S_b or a tangency point. The two one-sided problems are solved
// in turn; at a bitangent the coupling between them vanishes (the
// Jacobian of the two tangency conditions is diagonal there because
// f'(p) = f'(q)), so a few rounds converge. It reports whether they did:
// false means c holds the last round's ends, which need not be
// consistent (the last p was solved for the q before the last).
func (sc *scan) refine(ff *FracFlow, c *chord) bool {
	if c.i == 0 {
		// A shock that may leave the initial state: start from it, since
		// the tangency can lie anywhere inside the first grid interval.
		c.p = sc.x[0]
		c.q = sc.upperEnd(ff, c.j, c.p)
	}
	solvedFor := math.NaN() // the p that c.q was last solved from
	if c.i == 0 {
		solvedFor = c.p
	}
	for range 8 {
		p := sc.lowerEnd(ff, c.i, c.q)
		if p == solvedFor {
			// q was solved from this very p: both ends are consistent.
			c.p = p
			return true
		}
		q := sc.upperEnd(ff, c.j, p)
		solvedFor = p
		done := math.Abs(p-c.p) <= tangencyTol && math.Abs(q-c.q) <= tangencyTol
		c.p, c.q = p, q
		if done {
			return true
		}
	}
	return false
}

// snapTol is the distance in saturation within which a contact point is
// taken to be the end state itself: closer than this, f and its
// derivatives cannot tell the two apart in double precision.
const snapTol = 1e-13

// lowerEnd returns the contact point p < q of the supporting line through
// (q, f(q)) on its left: the p that minimises the chord slope
// (f(q) − f(p))/(q − p). Its derivative has the sign of
// U(p) = f(q) − f(p) − f'(p)(q − p), negative left of the tangency and
// positive right of it, so p = a when U(a) ≥ 0 and otherwise U's root,
// bracketed on the grid near index i. When U < 0 right up to q the slope
// falls all the way and p = q: no shock ends at q from the left.
func (sc *scan) lowerEnd(ff *FracFlow, i int, q float64) float64 {
	a := sc.x[0]
	fq := sc.fAt(ff, q)
	ug := func(k int) float64 { return fq - sc.y[k] - sc.dy[k]*(q-sc.x[k]) }
	nf := sc.cf.near(ff)
	u := func(p float64) (float64, float64) {
		f, df, d2f := nf.eval(p)
		if p == a {
			f = sc.y[0]
		}
		return fq - f - df*(q-p), -d2f * (q - p)
	}
	last := sc.n - 1
	k := min(i, last)
	for k > 0 && sc.x[k] >= q {
		k--
	}
	// U' = −f''(p)(q − p): on a grid bracket, Newton starts from the root
	// of the cubic Hermite interpolant of U.
	var lo, hi, ulo, uhi float64
	x0 := math.NaN()
	if ug(k) < 0 {
		for k+1 <= last && sc.x[k+1] < q && ug(k+1) < 0 {
			k++
		}
		lo, ulo = sc.x[k], ug(k)
		if k+1 <= last && sc.x[k+1] < q {
			hi, uhi = sc.x[k+1], ug(k+1)
			x0 = hermiteRoot(lo, hi, ulo, uhi, -sc.d2y[k]*(q-lo), -sc.d2y[k+1]*(q-hi))
		} else {
			// The root, if any, lies between the last grid point and q,
			// where U > 0 only close to q: probe towards q.
			z, uz, ok := probe(u, q, lo, ulo)
			if !ok {
				return q
			}
			hi, uhi = z, uz
			lo, ulo = probeLast(u, q, lo, z, ulo)
		}
	} else {
		for k > 0 && ug(k) >= 0 {
			k--
		}
		if k == 0 && ug(0) >= 0 {
			return a
		}
		lo, hi, ulo, uhi = sc.x[k], sc.x[k+1], ug(k), ug(k+1)
		x0 = hermiteRoot(lo, hi, ulo, uhi, -sc.d2y[k]*(q-lo), -sc.d2y[k+1]*(q-hi))
	}
	p, _, _ := solveBracketFrom(lo, hi, ulo, uhi, x0, u)
	if p-a < snapTol {
		return a
	}
	return p
}

// upperEnd returns the contact point q > p of the supporting line through
// (p, f(p)) on its right: the q that maximises the chord slope. Its
// derivative has the sign of T(q) = f'(q)(q − p) − (f(q) − f(p)), positive
// left of the tangency, so q = S_b when T(S_b) ≥ 0 and otherwise T's root.
// When T ≤ 0 right from p the chord slope only falls and q = p: no shock
// leaves p.
func (sc *scan) upperEnd(ff *FracFlow, j int, p float64) float64 {
	last := sc.n - 1
	b := sc.x[last]
	fp := sc.fAt(ff, p)
	tg := func(k int) float64 { return sc.dy[k]*(sc.x[k]-p) - (sc.y[k] - fp) }
	nf := sc.cf.near(ff)
	t := func(q float64) (float64, float64) {
		f, df, d2f := nf.eval(q)
		if q == b {
			f = 1
		}
		return df*(q-p) - (f - fp), d2f * (q - p)
	}
	k := max(j, 0)
	for k < last && sc.x[k] <= p {
		k++
	}
	// T' = f''(q)(q − p): on a grid bracket, Newton starts from the root
	// of the cubic Hermite interpolant of T.
	var lo, hi, tlo, thi float64
	x0 := math.NaN()
	if tg(k) > 0 {
		for k < last && tg(k) > 0 {
			k++
		}
		if k == last && tg(k) > 0 {
			return b
		}
		lo, hi, tlo, thi = sc.x[k-1], sc.x[k], tg(k-1), tg(k)
		x0 = hermiteRoot(lo, hi, tlo, thi, sc.d2y[k-1]*(lo-p), sc.d2y[k]*(hi-p))
	} else {
		for k-1 >= 0 && sc.x[k-1] > p && tg(k-1) <= 0 {
			k--
		}
		hi, thi = sc.x[k], tg(k)
		if k-1 >= 0 && sc.x[k-1] > p {
			lo, tlo = sc.x[k-1], tg(k-1)
			x0 = hermiteRoot(lo, hi, tlo, thi, sc.d2y[k-1]*(lo-p), sc.d2y[k]*(hi-p))
		} else {
			// The root, if any, lies between p and the first grid point,
			// where T > 0 only close to p (or to s1r, below which f is
			// flat): probe towards it.
			s1r, _ := ff.Rel.Residuals()
			z, tz, ok := probe(t, max(p, s1r), hi, thi)
			if !ok {
				return p
			}
			lo, tlo = z, tz
			hi, thi = probeLast(t, p, hi, z, thi)
		}
	}
	q, _, _ := solveBracketFrom(lo, hi, tlo, thi, x0, t)
	if b-q < snapTol {
		return b
	}
	return q
}

// probe looks for a point z between end and from where g changes sign
// from its value gfrom at from, trying from + (end − from)/2^i for growing
// i until z is within snapTol of end.
func probe(g func(float64) (float64, float64), end, from, gfrom float64) (z, gz float64, ok bool) {
	d := from - end
	for range 60 {
		d /= 2
		if math.Abs(d) < snapTol {
			return 0, 0, false
		}
		z = end + d
		if gz, _ = g(z); (gz > 0) != (gfrom > 0) && gz != 0 {
			return z, gz, true
		}
	}
	return 0, 0, false
}

// probeLast returns the probe point just before z on the way from from to
// end (twice as far from end as z), with g there: the other end of the
// bracket that probe found.
func probeLast(g func(float64) (float64, float64), end, from, z, gfrom float64) (float64, float64) {
	w := end + 2*(z-end)
	if math.Abs(w-end) >= math.Abs(from-end) {
		return from, gfrom
	}
	gw, _ := g(w)
	return w, gw
}

// narrowAt shrinks the bracket [lo, hi] of a root of g(S) = v(S) − c, a
// function monotone on it whose values at lo and hi are glo and ghi, to the
// grid interval where its grid values g(k) = v[k] − c change sign, and
// returns the grid indices of the new ends, −1 for an end that is still lo
// or hi. Grid values are the scan's, so the narrowed ends keep a sign
// change only approximately; a grid point whose sign disagrees with its
// neighbour's end is simply not used.
func (sc *scan) narrowAt(lo, hi, glo, ghi float64, v *[maxGrid]float64, c float64) (float64, float64, float64, float64, int, int) {
	klo, khi := -1, -1
	x := sc.x[:sc.n]
	// Grid points strictly inside (lo, hi): from i, the first above lo,
	// to j, the last below hi.
	i, k := 0, len(x)
	for i < k {
		if m := int(uint(i+k) >> 1); x[m] <= lo {
			i = m + 1
		} else {
			k = m
		}
	}
	j, k := i, len(x)
	for j < k {
		if m := int(uint(j+k) >> 1); x[m] < hi {
			j = m + 1
		} else {
			k = m
		}
	}
	j--
	if i > j {
		return lo, hi, glo, ghi, klo, khi
	}
	neg := glo < 0
	// Binary search for the last inside point whose sign matches lo's.
	a, b := i, j+1
	for a < b {
		m := (a + b) / 2
		if (v[m]-c < 0) == neg {
			a = m + 1
		} else {
			b = m
		}
	}
	if a > i {
		lo, glo, klo = x[a-1], v[a-1]-c, a-1
	}
	if a <= j {
		hi, ghi, khi = x[a], v[a]-c, a
	}
	return lo, hi, glo, ghi, klo, khi
}

// fAt returns f at a contact point, exact at the grid's end states.
func (sc *scan) fAt(ff *FracFlow, s float64) float64 {
	switch s {
	case sc.x[0]:
		return sc.y[0]
	case sc.x[sc.n-1]:
		return 1
	}
	f, _, _ := sc.evalMemo(ff, s)
	return f
}

// evalMemo returns f, f′ and f″ at s, from the grid's end states or the
// memo when s was evaluated there.
func (sc *scan) evalMemo(ff *FracFlow, s float64) (f, df, d2f float64) {
	switch s {
	case sc.x[0]:
		return sc.y[0], sc.dy[0], sc.d2y[0]
	case sc.x[sc.n-1]:
		return sc.y[sc.n-1], sc.dy[sc.n-1], sc.d2y[sc.n-1]
	}
	for i := range sc.memo {
		if m := &sc.memo[i]; m.s == s {
			return m.f, m.df, m.d2f
		}
	}
	f, df, d2f = sc.cf.eval(ff, s)
	sc.memo[sc.memoNext] = evalAt{s, f, df, d2f}
	sc.memoNext = (sc.memoNext + 1) % len(sc.memo)
	return f, df, d2f
}

// hermiteRoot returns the root in (x0, x1) of the cubic Hermite
// interpolant of g through (x0, g0, d0) and (x1, g1, d1), where g0 and g1
// have opposite signs, or NaN when the interpolant does not give one: a
// starting point for Newton on g accurate to O(h⁴) where g is smooth.
func hermiteRoot(x0, x1, g0, g1, d0, d1 float64) float64 {
	h := x1 - x0
	if !(h > 0) || math.IsNaN(d0+d1) || math.IsInf(d0+d1, 0) || g0*g1 >= 0 {
		return math.NaN()
	}
	// p(t) on t ∈ [0, 1] with p(0) = g0, p(1) = g1, p'(0) = h d0, p'(1) = h d1.
	m0, m1 := h*d0, h*d1
	c2 := 3*(g1-g0) - 2*m0 - m1
	c3 := 2*(g0-g1) + m0 + m1
	t := g0 / (g0 - g1) // false position start
	for range 4 {
		p := g0 + t*(m0+t*(c2+t*c3))
		dp := m0 + t*(2*c2+3*t*c3)
		if dp == 0 {
			break
		}
		t -= p / dp
	}
	if !(t > 0 && t < 1) {
		return math.NaN()
	}
	return x0 + t*h
}

// newtonPatience is the number of iterations of [solveBracketFrom] after
// which a Newton step that is not at most half the previous step is
// replaced by a bracketing step.
const newtonPatience = 6

// newtonAccept is the Newton step below which the next iterate is taken
// without another evaluation: Newton's error after a step of size h is of
// order (g″/g′)·h², far below tangencyTol for h ≤ 1e-12 unless g″/g′ is
// huge (near a residual with an exponent below one), where the step is
// not Newton-small anyway.
const newtonAccept = 1e-12

// solveBracketFrom returns a root x of g in [lo, hi], where glo = g(lo)
// and ghi = g(hi) do not have the same strict sign; g returns its value
// and derivative. Newton steps are taken while they stay inside the
// shrinking bracket, so the iteration cannot fail. It also returns the
// last point evaluated, xe, and the derivative there, dge; the root x
// differs from xe by at most one accepted Newton step, so callers can
// extrapolate values at x from xe to first order instead of evaluating
// again.
//
// A step that Newton would take outside the bracket is replaced by a
// false-position step with the Illinois modification (Dowell & Jarratt
// 1971), which keeps superlinear convergence where g has a power-law
// singularity at a bracket end (f″ infinite at a residual saturation) and
// Newton alone would stall; a bisection follows when even that fails to
// halve the bracket.
//
// x0, when inside the bracket, is the first point evaluated; NaN starts
// from false position.
func solveBracketFrom(lo, hi, glo, ghi, x0 float64, g func(float64) (float64, float64)) (x, xe, dge float64) {
	if glo == 0 {
		return lo, lo, math.NaN()
	}
	if ghi == 0 {
		return hi, hi, math.NaN()
	}
	if glo > 0 {
		// Orient so that g(lo) < 0 < g(hi); lo may then exceed hi.
		lo, hi, glo, ghi = hi, lo, ghi, glo
	}
	falsePos := func() float64 {
		if xs := lo - glo*(hi-lo)/(ghi-glo); xs > min(lo, hi) && xs < max(lo, hi) {
			return xs
		}
		return 0.5 * (lo + hi)
	}
	x = falsePos()
	if x0 > min(lo, hi) && x0 < max(lo, hi) {
		x = x0
	}
	prevStep := math.Inf(1)
	side := 0 // which end the last false-position step replaced: −1 lo, +1 hi
	width := math.Abs(hi - lo)
	for it := range 100 {
		gx, dgx := g(x)
		if gx == 0 || math.IsNaN(gx) {
			return x, x, dgx
		}
		if gx < 0 {
			lo, glo = x, gx
			if side == -1 {
				ghi *= 0.5 // Illinois: the other end has been kept twice
			}
			side = -1
		} else {
			hi, ghi = x, gx
			if side == 1 {
				glo *= 0.5
			}
			side = 1
		}
		step := gx / dgx
		if math.Abs(step) <= tangencyTol {
			// Converged: the step is below the tolerance (and may round
			// onto a bracket end).
			return x - step, x, dgx
		}
		next := x - step
		newton := next > min(lo, hi) && next < max(lo, hi)
		if newton && it >= newtonPatience && math.Abs(step) > 0.5*prevStep {
			// Newton stays inside the bracket but its steps stopped
			// shrinking: a cycle across a jump of g' (a knot of a
			// tabulated curve, where f″ jumps). Bisect instead, as
			// rtsafe does (Press et al. 2007, §9.4, from memory).
			newton = false
		}
		if !newton {
			next = falsePos()
			if w := math.Abs(hi - lo); w > 0.5*width {
				next = 0.5 * (lo + hi)
				width = w
			} else {
				width = w
			}
		}
		// Accept a small Newton step only once convergence is visibly
		// quadratic; near a singular end point it is not.
		small := newton && math.Abs(step) <= newtonAccept && math.Abs(step) <= 1e-3*prevStep
		if math.Abs(next-x) <= tangencyTol || math.Abs(hi-lo) <= tangencyTol || small {
			return next, x, dgx
		}
		prevStep = math.Abs(next - x)
		x = next
	}
	return x, x, math.NaN()
}
