package summarize

import (
	"cmp"
	"math"
	"slices"
)

// Ranks returns the ranks 1…m of the m non-NaN values of x, in the order of
// x, with tied values given the mean of the ranks they span (the mid-rank
// rule; Kendall & Gibbons 1990, Rank Correlation Methods, from memory).
// NaN values get a NaN rank and do not count towards m; −0 and +0 tie.
//
// Ranks runs in O(n) time with a radix sort (a comparison sort below a few
// hundred values) and allocates O(n) memory beyond the result.
func Ranks(x []float64) []float64 {
	r := make([]float64, len(x))
	ranksInto(r, x)
	return r
}

// Spearman returns Spearman's rank correlation coefficient of x and y: the
// Pearson correlation of their mid-ranks ([Ranks]), which stays exact with
// ties. Pairs in which either value is NaN (a rejected case, or an output
// that is undefined for that case) are skipped, and the ranks are taken over
// the remaining pairs only.
//
// Spearman returns NaN when fewer than two complete pairs remain or when
// either column is constant over them (its rank variance is zero: there is
// no ordering to correlate). It panics if x and y differ in length. It runs
// in O(n) time (see [Ranks]).
//
// To correlate one column with many, [SpearmanEach] ranks it only once.
func Spearman(x, y []float64) float64 {
	if len(x) != len(y) {
		panic("summarize: slice length mismatch")
	}
	m := 0
	for i := range x {
		if !math.IsNaN(x[i]) && !math.IsNaN(y[i]) {
			m++
		}
	}
	if m < 2 {
		return math.NaN()
	}
	xs, ys := x, y
	if m < len(x) {
		xs, ys = make([]float64, 0, m), make([]float64, 0, m)
		for i := range x {
			if !math.IsNaN(x[i]) && !math.IsNaN(y[i]) {
				xs = append(xs, x[i])
				ys = append(ys, y[i])
			}
		}
	}
	rx := make([]float64, m)
	ry := make([]float64, m)
	buf := ranksIntoBuf(rx, xs, nil)
	ranksIntoBuf(ry, ys, buf)
	return rankCorrelation(rx, ry)
}

// SpearmanEach returns Spearman(xs[k], y) ([Spearman]) for every column
// xs[k], bit for bit, ranking y once: the way to correlate one output with
// all the inputs of a study. A column with a NaN where y has none costs a
// separate [Spearman] call. SpearmanEach panics if a column's length
// differs from y's.
func SpearmanEach(xs [][]float64, y []float64) []float64 {
	for _, x := range xs {
		if len(x) != len(y) {
			panic("summarize: slice length mismatch")
		}
	}
	out := make([]float64, len(xs))
	m := 0
	for _, v := range y {
		if !math.IsNaN(v) {
			m++
		}
	}
	if m < 2 {
		for k := range out {
			out[k] = math.NaN()
		}
		return out
	}
	ys := y
	if m < len(y) {
		ys = make([]float64, 0, m)
		for _, v := range y {
			if !math.IsNaN(v) {
				ys = append(ys, v)
			}
		}
	}
	ry := make([]float64, m)
	buf := ranksIntoBuf(ry, ys, nil)
	rx := make([]float64, m)
	xs1 := make([]float64, m) // the column over y's valid rows
	for k, x := range xs {
		complete := true
		j := 0
		for i, v := range y {
			if math.IsNaN(v) {
				continue
			}
			if math.IsNaN(x[i]) {
				complete = false
				break
			}
			xs1[j] = x[i]
			j++
		}
		if !complete {
			out[k] = Spearman(x, y)
			continue
		}
		buf = ranksIntoBuf(rx, xs1, buf)
		out[k] = rankCorrelation(rx, ry)
	}
	return out
}

// rankCorrelation returns the Pearson correlation of two columns of
// mid-ranks of the same m ≥ 2 rows, NaN if either is constant.
func rankCorrelation(rx, ry []float64) float64 {
	// Mid-ranks of m values always average (m+1)/2.
	c := float64(len(rx)+1) / 2
	ry = ry[:len(rx)]
	var sxy, sxx, syy float64
	for i := range rx {
		dx, dy := rx[i]-c, ry[i]-c
		sxy += dx * dy
		sxx += dx * dx
		syy += dy * dy
	}
	if sxx == 0 || syy == 0 {
		return math.NaN()
	}
	return max(-1, min(1, sxy/math.Sqrt(sxx*syy)))
}

// keyed is a value's sort key with the value's position in its column.
type keyed struct {
	k uint64
	i uint32
}

// radixMin is the length below which ranking uses a comparison sort.
const radixMin = 256

func ranksInto(r, x []float64) { ranksIntoBuf(r, x, nil) }

// ranksIntoBuf writes the mid-ranks of x into r (len(r) == len(x)), using
// buf as scratch when large enough, and returns the scratch for reuse.
func ranksIntoBuf(r, x []float64, buf []keyed) []keyed {
	n := len(x)
	if uint64(n) > math.MaxUint32 {
		panic("summarize: too many values to rank")
	}
	if cap(buf) < 2*n {
		buf = make([]keyed, 2*n)
	}
	a, tmp := buf[:0], buf[n:2*n]
	for i, v := range x {
		if math.IsNaN(v) {
			r[i] = math.NaN()
			continue
		}
		a = append(a, keyed{floatKey(v), uint32(i)})
	}
	a = sortKeyed(a, tmp[:len(a)])
	for s := 0; s < len(a); {
		e := s + 1
		for e < len(a) && a[e].k == a[s].k {
			e++
		}
		// Positions s…e−1 hold ranks s+1…e; their mean is (s+1+e)/2.
		rank := float64(s+1+e) / 2
		for _, v := range a[s:e] {
			r[v.i] = rank
		}
		s = e
	}
	return buf
}

// sortKeyed sorts a by key, using tmp (same length) as scratch, and returns
// the slice (a or tmp) that holds the result. Large inputs use a
// least-significant-digit radix sort in six 11-bit digits, skipping a digit
// that every key shares.
func sortKeyed(a, tmp []keyed) []keyed {
	if len(a) < radixMin {
		slices.SortFunc(a, func(p, q keyed) int { return cmp.Compare(p.k, q.k) })
		return a
	}
	const (
		bits    = 11
		buckets = 1 << bits
		digits  = (64 + bits - 1) / bits
	)
	var count [digits][buckets]uint32
	for _, v := range a {
		k := v.k
		for d := range digits {
			count[d][(k>>(d*bits))&(buckets-1)]++
		}
	}
	src, dst := a, tmp
	for d := range digits {
		c := &count[d]
		if c[(src[0].k>>(d*bits))&(buckets-1)] == uint32(len(src)) {
			continue // every key has this digit
		}
		var sum uint32
		for b := range c {
			c[b], sum = sum, sum+c[b]
		}
		shift := uint(d * bits)
		for _, v := range src {
			b := (v.k >> shift) & (buckets - 1)
			dst[c[b]] = v
			c[b]++
		}
		src, dst = dst, src
	}
	return src
}
