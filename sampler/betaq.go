package sampler

import (
	"math"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/stat/distuv"
)

// betaQuantile is the quantile function of a beta distribution with both
// shapes ≥ 1 (every PERT distribution has shapes in [1, 5]), tabulated once
// so that a draw costs a polynomial evaluation instead of an inverse
// incomplete beta function (about 2 µs in gonum, which made PERT the
// costliest of all marginals).
//
// The lower half p ≤ 1/2 uses the table of Beta(a, b) and the upper half
// the table of Beta(b, a) at 1 − p (Q(p; a, b) = 1 − Q(1 − p; b, a), since
// X ~ Beta(a, b) means 1 − X ~ Beta(b, a)), so both tails keep their
// relative accuracy. Each table covers p in [2^−41, 1/2) by octaves
// [2^e, 2^(e+1)), each cut into betaCells cells of equal width; on a cell Q
// is a polynomial of degree betaDeg interpolating it at the Chebyshev–
// Lobatto points (Trefethen 2013, Approximation Theory and Approximation
// Practice, ch. 2–8). Q is analytic on (0, 1) and its only singularities
// are at p = 0, where Q ~ (p·a·B(a, b))^(1/a), and at p = 1; the nearest
// one lies at least 9 half-widths from a cell's centre, so the
// interpolant converges like 17.9^−n (Bernstein ellipse ρ = 9 + √80,
// Trefethen ch. 8) and degree 12 leaves about 10^−16 (measured by
// TestBetaQuantileAccuracy). Below 2^−41 (a probability of 10^−12 per
// draw) the quantile comes from gonum directly.
//
// The node values are gonum's quantile polished by Newton steps on
// gonum's regularised incomplete beta function, so the table is as exact
// as that CDF: within about 2·10^−15 relative. A table belongs to its
// distribution (copies share it) and is built on first use, an octave at
// a time (about 0.2 ms each; a run of n cases reaches about log2(n)
// octaves); its coefficients depend on the shapes alone, so every draw is
// the same whichever goroutine built it and in whatever order.
type betaQuantile struct {
	lower, upper *betaHalf
}

const (
	betaSplit   = 2 // cells per octave = 2^betaSplit
	betaCells   = 1 << betaSplit
	betaOctaves = 40 // octaves 2^−2…2^−41 below 1/2
	betaDeg     = 12 // polynomial degree on a cell
	betaCoef    = betaDeg + 1
)

// betaLowest is the smallest p a table covers: 2^−41.
var betaLowest = math.Ldexp(1, -1-betaOctaves)

func newBetaQuantile(a, b float64) betaQuantile {
	if !(a >= 1 && b >= 1) {
		panic("sampler: beta quantile table needs shapes ≥ 1")
	}
	q := betaQuantile{lower: &betaHalf{exact: distuv.Beta{Alpha: a, Beta: b}}}
	q.upper = q.lower // a symmetric distribution has one half table
	if a != b {
		q.upper = &betaHalf{exact: distuv.Beta{Alpha: b, Beta: a}}
	}
	return q
}

// Quantile returns Q(p) for p in [0, 1]; NaN for any other p.
func (q betaQuantile) Quantile(p float64) float64 {
	if badP(p) {
		return math.NaN()
	}
	if p <= 0.5 {
		return q.lower.at(p)
	}
	return 1 - q.upper.at(1-p) // 1 − p is exact for p ≥ 1/2
}

// CDF returns P(X ≤ x), from gonum.
func (q betaQuantile) CDF(x float64) float64 { return q.lower.exact.CDF(x) }

// betaHalf is the tabulated quantile of one Beta(a, b) on p ≤ 1/2. Each
// octave is fitted the first time a p falls in it (a run of n cases
// reaches about log2(n) octaves), under mu; ready[o] is set once octave
// o's coefficients are written, so readers need no lock.
type betaHalf struct {
	exact distuv.Beta
	ready [betaOctaves]atomic.Bool
	mu    sync.Mutex
	// coef holds betaCoef monomial coefficients in t ∈ [−1, 1] per cell,
	// the cells of octave o at o·betaCells….
	coef [betaOctaves * betaCells * betaCoef]float64
}

// at returns Q(p) for p in [0, 1/2].
func (h *betaHalf) at(p float64) float64 {
	if p < betaLowest {
		return h.exact.Quantile(p)
	}
	cell, t := betaCell(p)
	if o := cell >> betaSplit; !h.ready[o].Load() {
		h.fit(o)
	}
	c := h.coef[cell*betaCoef : cell*betaCoef+betaCoef]
	y := c[betaDeg]
	for k := betaDeg - 1; k >= 0; k-- {
		y = y*t + c[k]
	}
	return y
}

// betaCell returns the cell holding p, in [2^−41, 1/2], and p's position
// t ∈ [−1, 1] in it. p = 1/2 is the right end of the last cell.
func betaCell(p float64) (int, float64) {
	if p >= 0.5 {
		return betaCells - 1, 1
	}
	const mant = 52 - betaSplit
	bits := math.Float64bits(p)
	e := int(bits>>52) - 1023 // p in [2^e, 2^(e+1)), e in [−41, −2]
	o := -2 - e
	m := int(bits>>mant) & (betaCells - 1)
	lo := math.Float64frombits(bits &^ (1<<mant - 1)) // the cell's left end
	// (p − lo) is exact (Sterbenz), and 2^(betaSplit+1−e) maps the cell
	// width 2^(e−betaSplit) to 2.
	scale := math.Float64frombits(uint64(1023+betaSplit+1-e) << 52)
	return o<<betaSplit | m, (p-lo)*scale - 1
}

// fit fits the cells of octave o, [2^(−2−o), 2^(−1−o)), if no other
// goroutine has.
func (h *betaHalf) fit(o int) {
	h.mu.Lock()
	defer h.mu.Unlock()
	if h.ready[o].Load() {
		return
	}
	var nodes, y [betaCoef]float64
	for j := range nodes {
		nodes[j] = chebCos[j][1]
	}
	width := math.Ldexp(1, -2-o-betaSplit)
	for m := range betaCells {
		lo := math.Ldexp(1, -2-o) + float64(m)*width
		mid, half := lo+width/2, width/2
		for j, t := range nodes {
			y[j] = h.node(mid + t*half)
		}
		cell := o<<betaSplit | m
		fitCell(nodes[:], y[:], h.coef[cell*betaCoef:(cell+1)*betaCoef])
	}
	h.ready[o].Store(true)
}

// fitCell writes to dst the monomial coefficients of the polynomial of
// degree betaDeg through (nodes[j], y[j]), the Chebyshev–Lobatto points.
// The coefficients come from a discrete cosine transform (Trefethen ch. 3),
// whose rounding leaves the interpolant some 10–30 ulp off the node
// values; two rounds of iterative refinement, with the residuals from a
// compensated Horner scheme (Graillat, Langlois & Louvet 2005), bring it
// to the rounding of the coefficients themselves.
func fitCell(nodes, y, dst []float64) {
	var r, d [betaCoef]float64
	chebFit(y, dst)
	for range 2 {
		for j, t := range nodes {
			s, e := hornerComp(dst, t)
			r[j] = (y[j] - s) - e
		}
		chebFit(r[:], d[:])
		for i := range dst {
			dst[i] += d[i]
		}
	}
}

// chebFit is fitCell without the refinement.
func chebFit(y, dst []float64) {
	var cheb [betaCoef]float64
	for k := range cheb {
		s := 0.0
		for j := range y {
			w := 1.0
			if j == 0 || j == betaDeg {
				w = 0.5
			}
			s += w * y[j] * chebCos[j][k]
		}
		cheb[k] = 2 * s / betaDeg
	}
	cheb[0] /= 2
	cheb[betaDeg] /= 2
	chebToMonomial(cheb[:], dst)
}

// chebCos[j][k] is cos(πjk/betaDeg): the Lobatto points are chebCos[j][1]
// and the discrete cosine transform of chebFit weighs by all of them.
var chebCos = func() (c [betaCoef][betaCoef]float64) {
	for j := range c {
		for k := range c[j] {
			c[j][k] = math.Cos(math.Pi * float64(j*k) / betaDeg)
		}
	}
	return c
}()

// hornerComp evaluates Σ c_k t^k as s + e, s the plain Horner value and e
// its rounding error to first order: every product and sum error is found
// exactly (math.FMA and Knuth's two-sum) and carried along.
func hornerComp(c []float64, t float64) (s, e float64) {
	n := len(c)
	s = c[n-1]
	for i := n - 2; i >= 0; i-- {
		p := s * t
		pe := math.FMA(s, t, -p)
		q := p + c[i]
		z := q - p
		se := (p - (q - z)) + (c[i] - z)
		e = e*t + (pe + se)
		s = q
	}
	return s, e
}

// node returns Q(p) as exactly as gonum's CDF allows: its quantile, then
// Newton steps x ← x − (F(x) − p)/f(x) until the step is below 2 ulp.
func (h *betaHalf) node(p float64) float64 {
	x := h.exact.Quantile(p)
	for range 4 {
		d := (mathext.RegIncBeta(h.exact.Alpha, h.exact.Beta, x) - p) / h.exact.Prob(x)
		if d != d || math.IsInf(d, 0) {
			break
		}
		nx := x - d
		if nx <= 0 || nx >= 1 {
			break
		}
		x = nx
		if math.Abs(d) <= 2*ulp(x) {
			break
		}
	}
	return x
}

func ulp(x float64) float64 {
	return math.Nextafter(x, math.Inf(1)) - x
}

// chebToMonomial writes the monomial coefficients of Σ c_k T_k(t) to dst,
// by the recurrence T_{k+1} = 2t·T_k − T_{k−1}.
func chebToMonomial(c, dst []float64) {
	var prev, cur, next [betaCoef]float64 // T_{k−1}, T_k, T_{k+1}
	clear(dst)
	prev[0] = 1 // T_0
	dst[0] += c[0]
	cur[1] = 1 // T_1
	dst[1] += c[1]
	for k := 2; k < len(c); k++ {
		for i := range next {
			v := -prev[i]
			if i > 0 {
				v += 2 * cur[i-1]
			}
			next[i] = v
		}
		for i := range dst {
			dst[i] += c[k] * next[i]
		}
		prev, cur = cur, next
	}
}
