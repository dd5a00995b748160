package summarize

import (
	"math"
	"math/rand/v2"
	"slices"
)

// SobolPlan lays out the N·(D+2) model runs of Saltelli's design for
// variance-based sensitivity indices of D inputs from base sample size N
// (Saltelli et al. 2010, Comput. Phys. Commun. 181, §3).
//
// The design takes two independent N×D input matrices A and B (for example
// two independent samples of the study's inputs) and, for each input i, the
// matrix A_B^i: A with column i taken from B. Runs are numbered block by
// block: block 0 is A, block 1 is B and block 2+i is A_B^i, each holding N
// runs in row order, so run j is row j mod N of block j / N. With outputs
// stored in run order, [SobolPlan.Split] hands them to [SobolIndices]
// without copying.
type SobolPlan struct {
	N int // base sample size: rows of A and of B
	D int // inputs
}

// Runs returns the number of model evaluations, N·(D+2).
func (p SobolPlan) Runs() int { return p.N * (p.D + 2) }

// Locate returns the block (0 = A, 1 = B, 2+i = A_B^i) and the row of run j.
// It panics if j is outside [0, Runs()).
func (p SobolPlan) Locate(j int) (block, row int) {
	if j < 0 || j >= p.Runs() {
		panic("summarize: run index out of range")
	}
	return j / p.N, j % p.N
}

// Point writes into dst the inputs of a run in the given block from row a
// of A and the same row b of B: a for block 0, b for block 1, and a with
// element i replaced by b[i] for block 2+i. It panics unless dst, a and b
// have length D and 0 ≤ block < D+2.
func (p SobolPlan) Point(dst, a, b []float64, block int) {
	if len(dst) != p.D || len(a) != p.D || len(b) != p.D {
		panic("summarize: slice length mismatch")
	}
	if block < 0 || block >= p.D+2 {
		panic("summarize: block out of range")
	}
	switch block {
	case 0:
		copy(dst, a)
	case 1:
		copy(dst, b)
	default:
		copy(dst, a)
		dst[block-2] = b[block-2]
	}
}

// Split cuts the outputs f of all runs, in run order, into f(A), f(B) and
// f(A_B^i) for i = 0…D−1. The results alias f. Split panics unless
// len(f) == Runs().
func (p SobolPlan) Split(f []float64) (fA, fB []float64, fAB [][]float64) {
	if len(f) != p.Runs() {
		panic("summarize: slice length mismatch")
	}
	block := func(k int) []float64 { return f[k*p.N : (k+1)*p.N : (k+1)*p.N] }
	fAB = make([][]float64, p.D)
	for i := range fAB {
		fAB[i] = block(2 + i)
	}
	return block(0), block(1), fAB
}

// SobolIndex holds the first-order and total Sobol indices of one input,
// with percentile-bootstrap confidence bounds.
type SobolIndex struct {
	First               float64 // first-order index S_i
	FirstLow, FirstHigh float64 // bootstrap bounds of First
	Total               float64 // total index S_Ti
	TotalLow, TotalHigh float64 // bootstrap bounds of Total
	N                   int     // complete rows the estimates use
}

// SobolIndices estimates the first-order and total Sobol indices of each
// input from the outputs of a [SobolPlan]: fA[j] = f(A_j), fB[j] = f(B_j),
// fAB[i][j] = f((A_B^i)_j). Over the N complete rows (see below), V is the
// sample variance (divisor 2N−1) of the 2N values of fA and fB pooled: both
// are independent draws of the output.
//
// The first-order index, from Saltelli et al. (2010, Table 2 (b)):
//
//	S_i = (1/N) Σ_j (f(B)_j − f̄)·(f(A_B^i)_j − f(A)_j) / V
//
// where f̄ is the pooled mean of fA and fB. Since E[f(A_B^i) − f(A)] = 0,
// subtracting a constant leaves the expectation unchanged (f̄ adds an
// O(1/N) bias); it keeps the estimator's variance from growing with the
// output's squared mean when |mean| ≫ SD (common practice).
//
// The total index, from Jansen (1999, Comput. Phys. Commun. 117), as
// recommended by Saltelli et al. (2010, Table 2 (f)):
//
//	S_Ti = (1/2N) Σ_j (f(A)_j − f(A_B^i)_j)² / V
//
// Sampling error can put S_i slightly below 0 or either index above 1; the
// estimates are not clipped.
//
// Rejected runs: a row j is dropped from every sum when any of fA[j], fB[j]
// or fAB[i][j] (any i) is NaN, so all estimates and bootstrap replicates use
// the same complete rows (N in the result). When rejection does not depend
// on the inputs the estimators keep their properties; otherwise the indices
// describe the output over the accepted runs only approximately.
//
// Bounds: when bootstrap > 0, the complete rows are resampled with
// replacement bootstrap times and the estimators recomputed on each
// resample (f̄ fixed at its full-sample value); the bounds are the
// (1−level)/2 and (1+level)/2 quantiles ([Quantile]) of the replicates,
// ignoring replicates whose variance is zero (percentile bootstrap; Efron
// & Tibshirani 1993, An Introduction to the Bootstrap, §13.3, from memory).
// The resampling is drawn from a PCG generator seeded from seed alone, so
// the result is deterministic. With bootstrap = 0 the bounds are NaN.
//
// When fewer than two complete rows remain, or V is zero, the indices and
// bounds are NaN. SobolIndices panics if the slices differ in length, if
// bootstrap < 0, or if level is outside (0, 1).
func SobolIndices(fA, fB []float64, fAB [][]float64, bootstrap int, level float64, seed uint64) []SobolIndex {
	if len(fB) != len(fA) {
		panic("summarize: slice length mismatch")
	}
	for _, f := range fAB {
		if len(f) != len(fA) {
			panic("summarize: slice length mismatch")
		}
	}
	if bootstrap < 0 {
		panic("summarize: negative bootstrap count")
	}
	checkLevel(level)
	d := len(fAB)
	out := make([]SobolIndex, d)

	fA, fB, fAB = completeRows(fA, fB, fAB)
	n := len(fA)
	nan := math.NaN()
	for i := range out {
		out[i] = SobolIndex{First: nan, FirstLow: nan, FirstHigh: nan, Total: nan, TotalLow: nan, TotalHigh: nan, N: n}
	}
	if n < 2 {
		return out
	}
	var sum float64
	for j := range n {
		sum += fA[j] + fB[j]
	}
	mean := sum / float64(2*n)

	first := make([]float64, d)
	total := make([]float64, d)
	if !sobolEstimate(first, total, fA, fB, fAB, mean) {
		return out
	}
	for i := range out {
		out[i].First, out[i].Total = first[i], total[i]
	}
	if bootstrap == 0 {
		return out
	}

	// Each replicate gathers its resampled rows into contiguous scratch.
	rng := rand.New(rand.NewPCG(splitMix64(seed), splitMix64(seed^sobolStream)))
	rows := make([]int, n)
	ra, rb := make([]float64, n), make([]float64, n)
	rab := make([][]float64, d)
	bf := make([][]float64, d) // replicates of First, per input
	bt := make([][]float64, d)
	for i := range d {
		rab[i] = make([]float64, n)
		bf[i] = make([]float64, 0, bootstrap)
		bt[i] = make([]float64, 0, bootstrap)
	}
	for range bootstrap {
		for r := range rows {
			rows[r] = rng.IntN(n)
		}
		for r, j := range rows {
			ra[r], rb[r] = fA[j], fB[j]
		}
		for i, f := range fAB {
			g := rab[i]
			for r, j := range rows {
				g[r] = f[j]
			}
		}
		if !sobolEstimate(first, total, ra, rb, rab, mean) {
			continue
		}
		for i := range d {
			bf[i] = append(bf[i], first[i])
			bt[i] = append(bt[i], total[i])
		}
	}
	lo, hi := (1-level)/2, (1+level)/2
	for i := range out {
		if len(bf[i]) == 0 {
			continue
		}
		slices.Sort(bf[i])
		slices.Sort(bt[i])
		out[i].FirstLow, out[i].FirstHigh = Quantile(bf[i], lo), Quantile(bf[i], hi)
		out[i].TotalLow, out[i].TotalHigh = Quantile(bt[i], lo), Quantile(bt[i], hi)
	}
	return out
}

// sobolEstimate writes into first and total the indices estimated from the
// complete rows fA, fB, fAB (all of one length n ≥ 2), with centre the
// pooled mean of the full sample. It returns false, leaving first and total
// alone, when the pooled variance is not positive.
func sobolEstimate(first, total, fA, fB []float64, fAB [][]float64, centre float64) bool {
	n := len(fA)
	// Pooled variance about the fixed centre, corrected for the sample's
	// own mean (the centre only improves the rounding).
	var s, ss float64
	for j := range n {
		a, b := fA[j]-centre, fB[j]-centre
		s += a + b
		ss += a*a + b*b
	}
	m := float64(2 * n)
	v := (ss - s*s/m) / (m - 1)
	if !(v > 0) {
		return false
	}
	fB = fB[:n]
	for i, fi := range fAB {
		fi = fi[:n]
		var s1, st float64
		for j := range n {
			diff := fi[j] - fA[j]
			s1 += (fB[j] - centre) * diff
			st += diff * diff
		}
		first[i] = s1 / float64(n) / v
		total[i] = st / float64(2*n) / v
	}
	return true
}

// sobolStream separates the bootstrap generator's second seed word from
// the first (an arbitrary odd constant).
const sobolStream = 0x5851f42d4c957f2d

// completeRows returns fA, fB and fAB restricted to the rows where none of
// them is NaN, copying only when some row is dropped.
func completeRows(fA, fB []float64, fAB [][]float64) ([]float64, []float64, [][]float64) {
	bad := func(j int) bool {
		if math.IsNaN(fA[j]) || math.IsNaN(fB[j]) {
			return true
		}
		for _, f := range fAB {
			if math.IsNaN(f[j]) {
				return true
			}
		}
		return false
	}
	n := 0
	for j := range fA {
		if !bad(j) {
			n++
		}
	}
	if n == len(fA) {
		return fA, fB, fAB
	}
	a, b := make([]float64, 0, n), make([]float64, 0, n)
	ab := make([][]float64, len(fAB))
	for i := range ab {
		ab[i] = make([]float64, 0, n)
	}
	for j := range fA {
		if bad(j) {
			continue
		}
		a = append(a, fA[j])
		b = append(b, fB[j])
		for i, f := range fAB {
			ab[i] = append(ab[i], f[j])
		}
	}
	return a, b, ab
}

// splitMix64 is the output function of Steele, Lea & Flood's SplitMix64
// (2014, OOPSLA), used to spread a user seed over PCG's state so that
// nearby seeds give unrelated streams.
func splitMix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}
