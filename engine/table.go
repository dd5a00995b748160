package engine

import (
	"fmt"
	"math"
)

// Table is one rock sample's measured relative-permeability curves,
// normalised to the sample's own mobile window and interpolated by
// monotone piecewise cubic Hermite curves. A Table is immutable and safe
// for concurrent use; [ScaledTable] scales it to a case's end points.
//
// The table's end points are read off its rows: s1r_t is the largest S
// with kr1 = 0, 1 − s2r_t the smallest S with kr2 = 0, Kr1Max_t = kr1 at
// 1 − s2r_t and Kr2Max_t = kr2 at s1r_t. Inside the mobile window
// [s1r_t, 1 − s2r_t] the rows are normalised to
//
//	Se_t = (S − s1r_t)/(1 − s1r_t − s2r_t),  kr1n = kr1/Kr1Max_t,  kr2n = kr2/Kr2Max_t,
//
// so that kr1n rises from 0 to 1 and kr2n falls from 1 to 0. Each is
// interpolated with the slopes of Fritsch & Butland (1984), which keep
// monotone data monotone (Fritsch & Carlson 1980): at an interior knot the
// weighted harmonic mean of the neighbouring secant slopes δ0, δ1 (zero
// when they differ in sign or one is zero),
//
//	d = 3(h0 + h1)/((2h1 + h0)/δ0 + (h1 + 2h0)/δ1),
//
// and at the two end knots the three-point estimate
// ((2h0 + h1)δ0 − h0δ1)/(h0 + h1), set to zero when its sign differs from
// δ0's and limited to 3δ0 when δ0 and δ1 differ in sign. The curves are
// C¹; their second derivative jumps at the knots. Rows outside the window
// only locate it.
type Table struct {
	name                     string
	s1r, s2r, kr1max, kr2max float64

	xs     []float64    // knots in Se_t, xs[0] = 0, xs[len−1] = 1
	c1, c2 [][4]float64 // kr1n, kr2n on piece i: c[0] + c[1]t + c[2]t² + c[3]t³, t = Se_t − xs[i]
	// bins[k] is the piece that holds Se_t = k/nbins, for a bounded
	// binary search inside one bin.
	bins  []int32
	nbins float64
}

// Name returns the sample's label.
func (t *Table) Name() string { return t.name }

// EndPoints returns the table's own end points: the residual saturations
// s1r_t and s2r_t and the end-point relative permeabilities Kr1Max_t and
// Kr2Max_t (see [Table]).
func (t *Table) EndPoints() (s1r, s2r, kr1max, kr2max float64) {
	return t.s1r, t.s2r, t.kr1max, t.kr2max
}

// Knots returns copies of the interpolation knots: normalised saturation
// Se_t and the normalised curves kr1n and kr2n there.
func (t *Table) Knots() (se, kr1n, kr2n []float64) {
	se = append([]float64(nil), t.xs...)
	kr1n = make([]float64, len(t.xs))
	kr2n = make([]float64, len(t.xs))
	for i := range t.c1 {
		kr1n[i], kr2n[i] = t.c1[i][0], t.c2[i][0]
	}
	kr1n[len(t.xs)-1], kr2n[len(t.xs)-1] = 1, 0
	return se, kr1n, kr2n
}

// The columns of a table, for error reports.
const (
	colS = iota
	colKr1
	colKr2
	colNone = -1
)

var tableColumnNames = [...]string{colS: "s", colKr1: "kr1", colKr2: "kr2"}

// tableIssue is one broken rule of a table: at a row and column, or of the
// whole table when row is −1.
type tableIssue struct {
	row, col int
	msg      string
}

// minTableRows is the fewest rows of a table, and the fewest inside its
// mobile window.
const minTableRows = 3

// checkTable returns every rule of [NewTable] that the rows break, in row
// order, the whole-table rules last.
func checkTable(s, kr1, kr2 []float64) []tableIssue {
	var out []tableIssue
	add := func(row, col int, format string, a ...any) {
		out = append(out, tableIssue{row: row, col: col, msg: fmt.Sprintf(format, a...)})
	}
	n := len(s)
	if n < minTableRows {
		add(-1, colNone, "%d rows; a table needs at least %d", n, minTableRows)
		return out
	}
	for i := range n {
		for c, v := range [3]float64{s[i], kr1[i], kr2[i]} {
			if !(v >= 0 && v <= 1) {
				add(i, c, "%g is outside [0, 1]", v)
			}
		}
		if i == 0 {
			if kr1[0] != 0 {
				add(0, colKr1, "must be 0 at the first row, got %g", kr1[0])
			}
			continue
		}
		if !(s[i] > s[i-1]) {
			add(i, colS, "must increase from row to row: %g after %g", s[i], s[i-1])
		}
		if kr1[i] < kr1[i-1] {
			add(i, colKr1, "must not decrease: %g after %g", kr1[i], kr1[i-1])
		}
		if kr2[i] > kr2[i-1] {
			add(i, colKr2, "must not increase: %g after %g", kr2[i], kr2[i-1])
		}
		if i == n-1 && kr2[i] != 0 {
			add(i, colKr2, "must be 0 at the last row, got %g", kr2[i])
		}
	}
	if len(out) > 0 {
		return out
	}
	i0, i1 := window(kr1, kr2)
	switch {
	case i0 >= i1:
		add(-1, colNone, "no mobile window: kr1 is 0 up to S = %g and kr2 is 0 from S = %g", s[i0], s[i1])
	case i1-i0+1 < minTableRows:
		add(-1, colNone, "%d rows in the mobile window S = %g to %g; at least %d are needed", i1-i0+1, s[i0], s[i1], minTableRows)
	default:
		span := 1 - s[i0] - (1 - s[i1])
		prev := 0.0
		for i := i0 + 1; i < i1; i++ {
			if x := (s[i] - s[i0]) / span; !(x > prev && x < 1) {
				add(i, colS, "%g is too close to its neighbours to resolve in normalised saturation", s[i])
			} else {
				prev = x
			}
		}
	}
	return out
}

// window returns the rows of the table's mobile window: i0 the last row
// with kr1 = 0, i1 the first with kr2 = 0.
func window(kr1, kr2 []float64) (i0, i1 int) {
	for i0+1 < len(kr1) && kr1[i0+1] == 0 {
		i0++
	}
	for i1 < len(kr2)-1 && kr2[i1] != 0 {
		i1++
	}
	return i0, i1
}

// NewTable returns the table of one sample from its rows of S, kr1 and kr2
// (phase 1 the injected phase). The rules: at least three rows; S strictly
// increasing; every S, kr1 and kr2 in [0, 1]; kr1 non-decreasing and kr2
// non-increasing; kr1 = 0 at the first row and kr2 = 0 at the last; and
// s1r_t < 1 − s2r_t with at least three rows in the mobile window (see
// [Table]). Every broken rule is reported, as [TableErrors] whose entries
// name the column (Field "s", "kr1" or "kr2", or "table" for a rule of the
// whole table) and the 0-based row in Msg. The slices are not retained.
func NewTable(name string, s, kr1, kr2 []float64) (*Table, error) {
	if len(kr1) != len(s) || len(kr2) != len(s) {
		return nil, TableErrors{{Field: "table", Msg: fmt.Sprintf("s, kr1 and kr2 have %d, %d and %d rows", len(s), len(kr1), len(kr2))}}
	}
	if issues := checkTable(s, kr1, kr2); len(issues) > 0 {
		errs := make(TableErrors, len(issues))
		for k, is := range issues {
			e := &TableError{Field: "table", Msg: is.msg}
			if is.col != colNone {
				e.Field = tableColumnNames[is.col]
			}
			if is.row >= 0 {
				e.Msg = fmt.Sprintf("row %d: %s", is.row, is.msg)
			}
			errs[k] = e
		}
		return nil, errs
	}
	return buildTable(name, s, kr1, kr2), nil
}

// buildTable builds a table from rows that pass checkTable.
func buildTable(name string, s, kr1, kr2 []float64) *Table {
	i0, i1 := window(kr1, kr2)
	t := &Table{name: name, s1r: s[i0], s2r: 1 - s[i1], kr1max: kr1[i1], kr2max: kr2[i0]}
	span := 1 - t.s1r - t.s2r
	n := i1 - i0 + 1
	t.xs = make([]float64, n)
	y1, y2 := make([]float64, n), make([]float64, n)
	for k := range n {
		i := i0 + k
		t.xs[k] = (s[i] - t.s1r) / span
		y1[k], y2[k] = kr1[i]/t.kr1max, kr2[i]/t.kr2max
	}
	t.xs[0], t.xs[n-1] = 0, 1
	y1[0], y1[n-1], y2[0], y2[n-1] = 0, 1, 1, 0
	t.c1 = hermitePieces(t.xs, y1)
	t.c2 = hermitePieces(t.xs, y2)

	// Twice as many bins as pieces, at least 16: most bins then hold a
	// knot or none, and the search inside a bin takes a step or two.
	nb := max(16, 2*(n-1))
	t.bins = make([]int32, nb+1)
	t.nbins = float64(nb)
	i := 0
	for k := range nb + 1 {
		x := float64(k) / t.nbins
		for i+1 < n-1 && t.xs[i+1] <= x {
			i++
		}
		t.bins[k] = int32(i)
	}
	return t
}

// hermitePieces returns the cubic coefficients of the monotone Hermite
// interpolant of (xs, ys) with Fritsch–Butland slopes (see [Table]). On a
// piece of width h with end values y0, y1, slopes d0, d1 and secant δ,
//
//	c = [y0, d0, (3δ − 2d0 − d1)/h, (d0 + d1 − 2δ)/h²].
func hermitePieces(xs, ys []float64) [][4]float64 {
	n := len(xs)
	m := n - 1
	delta := make([]float64, m)
	for i := range m {
		delta[i] = (ys[i+1] - ys[i]) / (xs[i+1] - xs[i])
	}
	d := make([]float64, n)
	for i := 1; i < m; i++ {
		if delta[i-1]*delta[i] > 0 {
			h0, h1 := xs[i]-xs[i-1], xs[i+1]-xs[i]
			w0, w1 := 2*h1+h0, h1+2*h0
			d[i] = (w0 + w1) / (w0/delta[i-1] + w1/delta[i])
		}
	}
	d[0] = hermiteEndSlope(xs[1]-xs[0], xs[2]-xs[1], delta[0], delta[1])
	d[m] = hermiteEndSlope(xs[m]-xs[m-1], xs[m-1]-xs[m-2], delta[m-1], delta[m-2])
	c := make([][4]float64, m)
	for i := range m {
		h := xs[i+1] - xs[i]
		c[i] = [4]float64{ys[i], d[i], (3*delta[i] - 2*d[i] - d[i+1]) / h, (d[i] + d[i+1] - 2*delta[i]) / (h * h)}
	}
	return c
}

// hermiteEndSlope is the shape-preserving three-point slope at an end knot
// whose piece has width h0 and secant d0, next to a piece of width h1 and
// secant d1.
func hermiteEndSlope(h0, h1, d0, d1 float64) float64 {
	g := ((2*h0+h1)*d0 - h0*d1) / (h0 + h1)
	switch {
	case g*d0 <= 0:
		return 0
	case d0*d1 <= 0 && math.Abs(g) > 3*math.Abs(d0):
		return 3 * d0
	}
	return g
}

// piece returns the index of the piece holding 0 ≤ x ≤ 1: the last knot
// at or below x, but at most the last piece.
func (t *Table) piece(x float64) int {
	k := int(x * t.nbins)
	if k < 0 {
		k = 0
	} else if k > len(t.bins)-2 {
		k = len(t.bins) - 2
	}
	lo, hi := int(t.bins[k]), int(t.bins[k+1])
	for lo < hi {
		mid := int(uint(lo+hi+1) >> 1)
		if t.xs[mid] <= x {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	// x·nbins may round across a bin edge: step to the right piece.
	for lo > 0 && t.xs[lo] > x {
		lo--
	}
	for lo+1 < len(t.c1) && t.xs[lo+1] <= x {
		lo++
	}
	return lo
}

// ScaledTable is a [Table] scaled to a case's end points by two-point
// end-point scaling:
//
//	Se  = (S − S1r)/(1 − S1r − S2r), clipped to [0, 1]
//	kr1 = Kr1Max·kr1n(Se),  kr2 = Kr2Max·kr2n(Se)
//
// with kr1n, kr2n the table's normalised curves. With the table's own end
// points it reproduces the table's rows. A ScaledTable is usable when T is
// not nil, 0 ≤ S1r, 0 ≤ S2r, S1r + S2r < 1 and the end points are
// positive; Eval does not check this.
type ScaledTable struct {
	T              *Table
	S1r, S2r       float64
	Kr1Max, Kr2Max float64
}

var (
	_ RelPerm    = (*ScaledTable)(nil)
	_ scanHinter = (*ScaledTable)(nil)
)

// scanSplit is the number of parts the scan divides each piece of a table
// into. With the knots alone, f″ may change sign twice inside one piece
// unseen; quartering the pieces, with the fan search of splitHidden for
// what the quarters still miss, leaves none in 800 random tables
// (TestOtherCurvesProperties) nor in 20,000 (seeds 7 and 11 by hand).
const scanSplit = 4

// knotGap is how far from a knot, as a fraction of the shorter piece,
// the scan samples on either side of it: close enough that f″ there is the
// piece's end value, far enough that the two points' hull stays free of
// rounding (points 1e-12 or 1e-6 of a piece apart made spurious hull edges).
const knotGap = 1e-3

// scanPoints appends, for the scan, points on both sides of each interior
// knot (knotGap of the shorter piece away, so that the grid sees each
// piece's own f″ at its ends) and scanSplit − 1 evenly spaced points inside each piece,
// fewer when that would pass maxScanHints.
func (st *ScaledTable) scanPoints(dst []float64) []float64 {
	xs := st.T.xs
	m := len(xs) - 1 // pieces
	span := 1 - st.S1r - st.S2r
	q := max(1, min(scanSplit, (maxScanHints+2)/m-1))
	side := (m - 1 + maxScanHints/2 - 1) / (maxScanHints / 2) // knots to skip: every side-th is split
	if q > 1 {
		side = 1
	}
	for i := range m {
		if i > 0 && i%side == 0 {
			d := knotGap * min(xs[i]-xs[i-1], xs[i+1]-xs[i])
			dst = append(dst, st.S1r+(xs[i]-d)*span, st.S1r+(xs[i]+d)*span)
		}
		for k := 1; k < q; k++ {
			dst = append(dst, st.S1r+(xs[i]+(xs[i+1]-xs[i])*float64(k)/float64(q))*span)
		}
	}
	return dst
}

// Residuals returns S1r and S2r.
func (st *ScaledTable) Residuals() (s1r, s2r float64) { return st.S1r, st.S2r }

// Eval returns the scaled curves at saturation s with their derivatives
// with respect to S (the derivatives in Se divided by the span
// 1 − S1r − S2r). The second derivative is that of the cubic piece holding
// Se, the right-hand piece at a knot. At the end points the one-sided
// values are used; beyond them the curves are flat, as for [Corey.Eval].
// Eval does not allocate.
func (st *ScaledTable) Eval(s float64) RelPermValue {
	t := st.T
	ispan := 1 / (1 - st.S1r - st.S2r)
	se := (s - st.S1r) * ispan
	var v RelPermValue
	k1, k2 := st.Kr1Max*ispan, st.Kr2Max*ispan
	switch rangeOf(s, st.S1r, st.S2r, se) {
	case belowRange:
		v.Kr2 = st.Kr2Max
	case aboveRange:
		v.Kr1 = st.Kr1Max
	case atLow:
		a, b := &t.c1[0], &t.c2[0]
		v.Kr2 = st.Kr2Max
		v.DKr1, v.DKr2 = k1*a[1], k2*b[1]
		v.D2Kr1, v.D2Kr2 = 2*k1*ispan*a[2], 2*k2*ispan*b[2]
	case atHigh:
		m := len(t.c1) - 1
		h := t.xs[m+1] - t.xs[m]
		a, b := &t.c1[m], &t.c2[m]
		v.Kr1 = st.Kr1Max
		v.DKr1 = k1 * ((3*a[3]*h+2*a[2])*h + a[1])
		v.DKr2 = k2 * ((3*b[3]*h+2*b[2])*h + b[1])
		v.D2Kr1 = k1 * ispan * (6*a[3]*h + 2*a[2])
		v.D2Kr2 = k2 * ispan * (6*b[3]*h + 2*b[2])
	default:
		i := t.piece(se)
		x := se - t.xs[i]
		a, b := &t.c1[i], &t.c2[i]
		// Rounding may take a value a hair outside [0, 1] where a curve
		// is flat at an end of its range: clip it.
		y1 := ((a[3]*x+a[2])*x+a[1])*x + a[0]
		if y1 < 0 {
			y1 = 0
		} else if y1 > 1 {
			y1 = 1
		}
		y2 := ((b[3]*x+b[2])*x+b[1])*x + b[0]
		if y2 < 0 {
			y2 = 0
		} else if y2 > 1 {
			y2 = 1
		}
		v.Kr1, v.Kr2 = st.Kr1Max*y1, st.Kr2Max*y2
		v.DKr1 = k1 * ((3*a[3]*x+2*a[2])*x + a[1])
		v.DKr2 = k2 * ((3*b[3]*x+2*b[2])*x + b[1])
		v.D2Kr1 = k1 * ispan * (6*a[3]*x + 2*a[2])
		v.D2Kr2 = k2 * ispan * (6*b[3]*x + 2*b[2])
	}
	return v
}
