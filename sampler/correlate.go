package sampler

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// pdTol is the smallest eigenvalue a correlation matrix must exceed to count
// as positive definite.
const pdTol = 1e-8

// normalScore converts a target Spearman correlation to the Pearson
// correlation of normal scores that produces it. For a bivariate normal
// pair with correlation r the Spearman correlation is (6/π)·asin(r/2)
// (Pearson 1907; Kruskal 1958, J. Am. Stat. Assoc. 53, from memory), so
//
//	r = 2·sin(π·ρ_S/6).
//
// Imposing r on the van der Waerden scores makes the achieved rank
// correlation unbiased instead of a little below |ρ_S| (0.786 for 0.8).
func normalScore(rho float64) float64 { return 2 * math.Sin(math.Pi*rho/6) }

func entryText(c Correlation) string { return fmt.Sprintf("[%s, %s, %g]", c.A, c.B, c.Rho) }

// checkCorrelations returns the indices of the correlation entries that are
// valid and jointly positive definite, and an error for each other one.
func checkCorrelations(corr []Correlation, specs []Spec, byName map[string]int, root []int) ([]int, ErrorList) {
	var errs ErrorList
	side := func(name string) (string, bool) {
		j, ok := byName[name]
		switch {
		case !ok:
			return fmt.Sprintf("unknown parameter %q", name), false
		case specs[j].Kind == Fixed:
			return fmt.Sprintf("%s is fixed (a plain number) and cannot be correlated", name), false
		case specs[j].Kind == SameAs && root[j] < 0:
			return fmt.Sprintf("%s follows %q (same_as), which has no value", name, specs[j].SameAs), false
		case specs[j].Kind == SameAs && specs[root[j]].Kind == Fixed:
			return fmt.Sprintf("%s follows the fixed parameter %s (same_as) and cannot be correlated",
				name, specs[root[j]].Name), false
		case specs[j].Kind == SameAs:
			l := specs[root[j]].Name
			return fmt.Sprintf("%s takes its value from %s (same_as); correlate %s instead", name, l, l), false
		}
		return "", true
	}
	type pair struct{ a, b int }
	seen := make(map[pair]int)
	var candidates []int
	for k, c := range corr {
		var reasons []string
		if c.A == c.B {
			reasons = append(reasons, fmt.Sprintf("%s is correlated with itself", c.A))
		} else {
			if r, ok := side(c.A); !ok {
				reasons = append(reasons, r)
			}
			if r, ok := side(c.B); !ok {
				reasons = append(reasons, r)
			}
		}
		if !(math.Abs(c.Rho) < 1) {
			reasons = append(reasons, fmt.Sprintf("rho must lie strictly between -1 and 1, got %g", c.Rho))
		}
		ia, okA := byName[c.A]
		ib, okB := byName[c.B]
		if okA && okB && ia != ib {
			key := pair{min(ia, ib), max(ia, ib)}
			if prev, dup := seen[key]; dup {
				errs = append(errs, &CorrelationError{Index: k, Others: []int{prev},
					Reason: fmt.Sprintf("the pair %s, %s is already given by %s", c.A, c.B, entryText(corr[prev]))})
				continue
			}
			seen[key] = k
		}
		if len(reasons) > 0 {
			errs = append(errs, &CorrelationError{Index: k, Reason: strings.Join(reasons, "; ")})
			continue
		}
		candidates = append(candidates, k)
	}

	// Positive definiteness, entry by entry in list order: an entry that
	// makes the matrix of the entries accepted so far not positive definite
	// is rejected, naming a minimal set of earlier entries it conflicts with.
	var accepted []int
	for _, k := range candidates {
		trial := append(slices.Clone(accepted), k)
		if pdCheck(corr, byName, trial) == "" {
			accepted = trial
			continue
		}
		set := component(corr, byName, trial, k)
		for i := 0; i < len(set); {
			if set[i] == k {
				i++
				continue
			}
			without := slices.Delete(slices.Clone(set), i, i+1)
			if pdCheck(corr, byName, without) != "" {
				set = without
			} else {
				i++
			}
		}
		why := pdCheck(corr, byName, set)
		var others []int
		var texts []string
		for _, e := range set {
			if e != k {
				others = append(others, e)
				texts = append(texts, entryText(corr[e]))
			}
		}
		reason := entryText(corr[k]) + " " + why
		if len(others) > 0 {
			reason = fmt.Sprintf("%s conflicts with %s: together they %s", entryText(corr[k]),
				strings.Join(texts, ", "), why)
		}
		errs = append(errs, &CorrelationError{Index: k, Others: others, Reason: reason})
	}
	slices.SortStableFunc(errs, func(x, y error) int {
		return x.(*CorrelationError).Index - y.(*CorrelationError).Index
	})
	return accepted, errs
}

// component returns the entries of set connected to entry k through shared
// parameters, in list order.
func component(corr []Correlation, byName map[string]int, set []int, k int) []int {
	in := map[int]bool{byName[corr[k].A]: true, byName[corr[k].B]: true}
	member := map[int]bool{k: true}
	for grew := true; grew; {
		grew = false
		for _, e := range set {
			a, b := byName[corr[e].A], byName[corr[e].B]
			if !member[e] && (in[a] || in[b]) {
				member[e], in[a], in[b], grew = true, true, true, true
			}
		}
	}
	var out []int
	for _, e := range set {
		if member[e] {
			out = append(out, e)
		}
	}
	return out
}

// corrMatrix returns the parameters (ascending spec index) of the entries
// and their correlation matrix with f applied to each ρ, row-major.
func corrMatrix(corr []Correlation, byName map[string]int, entries []int, f func(float64) float64) ([]int, []float64) {
	var idx []int
	for _, e := range entries {
		idx = append(idx, byName[corr[e].A], byName[corr[e].B])
	}
	slices.Sort(idx)
	idx = slices.Compact(idx)
	m := len(idx)
	a := make([]float64, m*m)
	for i := range m {
		a[i*m+i] = 1
	}
	for _, e := range entries {
		i, _ := slices.BinarySearch(idx, byName[corr[e].A])
		j, _ := slices.BinarySearch(idx, byName[corr[e].B])
		a[i*m+j], a[j*m+i] = f(corr[e].Rho), f(corr[e].Rho)
	}
	return idx, a
}

// minEigen returns the smallest eigenvalue of the symmetric m × m matrix a
// (NaN if the decomposition fails).
func minEigen(m int, a []float64) float64 {
	var es mat.EigenSym
	if !es.Factorize(mat.NewSymDense(m, slices.Clone(a)), false) {
		return math.NaN()
	}
	return slices.Min(es.Values(nil))
}

// pdCheck returns "" if the entries' rank correlation matrix and its
// normal-score form are both positive definite, and the end of a sentence
// saying why not otherwise.
func pdCheck(corr []Correlation, byName map[string]int, entries []int) string {
	idx, a := corrMatrix(corr, byName, entries, func(r float64) float64 { return r })
	if l := minEigen(len(idx), a); !(l > pdTol) {
		return fmt.Sprintf("make a correlation matrix that is not positive definite (smallest eigenvalue %.3g; pairs not listed count as 0)", l)
	}
	_, a = corrMatrix(corr, byName, entries, normalScore)
	if l := minEigen(len(idx), a); !(l > pdTol) {
		return fmt.Sprintf("make a rank correlation matrix too close to singular to impose: its normal-score form 2·sin(πρ/6) has smallest eigenvalue %.3g", l)
	}
	return ""
}

// setCorrelation prepares the Iman–Conover blocks for the accepted entries.
func (d *Design) setCorrelation(corr []Correlation, accepted []int, specs []Spec, byName map[string]int) {
	d.nBlocks = max(1, d.n/d.block)
	if len(accepted) == 0 {
		return
	}
	idx, a := corrMatrix(corr, byName, accepted, normalScore)
	d.corrIdx = idx
	for c, j := range idx {
		d.params[j].corr = c
	}
	var ch mat.Cholesky
	if !ch.Factorize(mat.NewSymDense(len(idx), a)) {
		panic("sampler: accepted correlation matrix is not positive definite") // pdCheck passed
	}
	d.cholP = mat.NewTriDense(len(idx), mat.Lower, nil)
	ch.LTo(d.cholP)
	lo, hi := d.blockRange(d.nBlocks - 1)
	d.scoresLast = vanDerWaerden(hi - lo)
	if d.nBlocks > 1 {
		d.scoresFull = vanDerWaerden(d.block)
	}
}

// vanDerWaerden returns the n scores Φ⁻¹(k/(n+1)), k = 1 … n, ascending and
// exactly antisymmetric (Iman & Conover 1982 use them as the scores).
func vanDerWaerden(n int) []float64 {
	s := make([]float64, n)
	for k := range n / 2 {
		s[k] = phiInv(float64(k+1) / float64(n+1))
		s[n-1-k] = -s[k]
	}
	return s
}

func (d *Design) scores(n int) []float64 {
	if n == len(d.scoresFull) {
		return d.scoresFull
	}
	return d.scoresLast
}

// rankPair is a value, as its order key (see orderKey), and the position
// it came from. sortPairs orders them by value, ties by position: a total
// order, so every sort gives the same result.
type rankPair struct {
	k uint64
	i int32
}

// orderKey maps a float64 to a uint64 with the same order (−0 just below
// +0): the sign bit set for positive numbers, all bits flipped for negative.
func orderKey(v float64) uint64 {
	b := math.Float64bits(v)
	if b>>63 != 0 {
		return ^b
	}
	return b | 1<<63
}

// keyValue inverts orderKey.
func keyValue(k uint64) float64 {
	if k>>63 != 0 {
		return math.Float64frombits(k &^ (1 << 63))
	}
	return math.Float64frombits(^k)
}

// sortPairs sorts p by key, stably (so ties stay in position order when p
// was filled in position order), with a least-significant-digit radix sort
// on bytes; buf is scratch of at least len(p). Passes whose byte is the
// same for every key are skipped.
func sortPairs(p, buf []rankPair) {
	if len(p) < 2 {
		return
	}
	var count [8][256]int
	for _, x := range p {
		k := x.k
		for d := range 8 {
			count[d][byte(k>>(8*d))]++
		}
	}
	src, dst := p, buf[:len(p)]
	for d := range 8 {
		c := &count[d]
		shift := uint(8 * d)
		if c[byte(src[0].k>>shift)] == len(p) {
			continue
		}
		sum := 0
		for b := range c {
			c[b], sum = sum, sum+c[b]
		}
		for _, x := range src {
			b := byte(x.k >> shift)
			dst[c[b]] = x
			c[b]++
		}
		src, dst = dst, src
	}
	if &src[0] != &p[0] {
		copy(p, src)
	}
}

// spreadPairs sorts p as sortPairs does, for float keys (see orderKey)
// of values without far outliers (transformed scores): one pass into 2^13
// buckets of equal width in value, then each bucket by insertion, or by
// sortPairs if more than 32 keys share it. The bucket of a value is a
// non-decreasing function of it (rounding is monotone) and both passes keep
// positions in order among equal keys, so the result is sortPairs'
// exactly. buf is scratch of at least len(p).
func spreadPairs(p, buf []rankPair) {
	if len(p) < 64 {
		insertPairs(p)
		return
	}
	lo, hi := p[0].k, p[0].k
	for _, x := range p {
		lo, hi = min(lo, x.k), max(hi, x.k)
	}
	vlo, vhi := keyValue(lo), keyValue(hi)
	const buckets = 1 << 13
	scale := buckets / (vhi - vlo)
	if lo == hi || !(scale > 0 && scale < math.Inf(1)) {
		sortPairs(p, buf) // all tied, a range too narrow or too wide to scale
		return
	}
	bucket := func(k uint64) int {
		return min(int((keyValue(k)-vlo)*scale), buckets-1)
	}
	var count [buckets + 1]int32
	for _, x := range p {
		count[bucket(x.k)+1]++
	}
	for b := 1; b < len(count); b++ {
		count[b] += count[b-1]
	}
	// count[b] is now where bucket b starts.
	next := count
	out := buf[:len(p)]
	for _, x := range p {
		b := bucket(x.k)
		out[next[b]] = x
		next[b]++
	}
	for b := range buckets {
		s, e := count[b], count[b+1]
		switch {
		case e-s <= 1:
		case e-s <= 32:
			insertPairs(out[s:e])
		default:
			sortPairs(out[s:e], p[s:e])
		}
	}
	copy(p, out)
}

// insertPairs sorts a few pairs by key, stably.
func insertPairs(p []rankPair) {
	for i := 1; i < len(p); i++ {
		x := p[i]
		k := i
		for k > 0 && p[k-1].k > x.k {
			p[k] = p[k-1]
			k--
		}
		p[k] = x
	}
}

// build imposes the target rank correlations on block b (Iman & Conover
// 1982) and leaves in f.u[c][m] the uniform draw of case lo+m for correlated
// parameter c. The block's values of each parameter are those its cases
// have in the uncorrelated design (for LHS a subset of one exact Latin
// hypercube of N); only their assignment to cases changes:
//
//  1. R: n × m matrix, R[i][c] the van der Waerden score of the rank of case
//     i's draw of parameter c in the block;
//  2. T = corr(R) = Q·Qᵀ and the normal-score target C = P·Pᵀ (Cholesky);
//  3. R* = R·Sᵀ with S = P·Q⁻¹, whose correlation is exactly C;
//  4. each parameter's sorted block values are handed to the cases in the
//     rank order of R*'s column.
//
// If T is singular (a block smaller than the number of parameters) the
// block keeps the uncorrelated assignment.
func (f *Filler) build(b int) {
	if f.block == b {
		return
	}
	d := f.d
	lo, hi := d.blockRange(b)
	n, mc := hi-lo, len(d.corrIdx)
	sc := d.scores(n)
	pairs, buf, r := f.pairs[:n], f.buf[:n], f.r[:n*mc]
	tmp := f.tmp[:n]
	for c, j := range d.corrIdx {
		p := &d.params[j]
		if d.method == LHS {
			// A Latin hypercube draw lies strictly inside its stratum
			// (see uniform), so the strata order the draws exactly: a key
			// of log2(N) bits, which the radix sort needs fewer passes for
			// than a float's.
			for m := range pairs {
				var s uint64
				s, tmp[m] = d.lhsUniform(p, lo+m)
				pairs[m] = rankPair{s, int32(m)}
			}
		} else {
			for m := range pairs {
				tmp[m] = d.uniform(p, lo+m)
				pairs[m] = rankPair{orderKey(tmp[m]), int32(m)}
			}
		}
		sortPairs(pairs, buf)
		uc := f.u[c][:n]
		for k, pr := range pairs {
			uc[k] = tmp[pr.i]
			r[int(pr.i)*mc+c] = sc[k]
		}
	}
	if !f.transform(r, n, mc) {
		for c, j := range d.corrIdx {
			p := &d.params[j]
			for m := range n {
				f.u[c][m] = d.uniform(p, lo+m)
			}
		}
		f.block = b
		return
	}
	for c := range mc {
		row := f.s[c*mc : c*mc+c+1] // S is lower triangular
		for m := range pairs {
			rm := r[m*mc : m*mc+c+1]
			v := 0.0
			for k, s := range row {
				v += s * rm[k]
			}
			pairs[m] = rankPair{orderKey(v), int32(m)}
		}
		spreadPairs(pairs, buf)
		uc := f.u[c][:n]
		copy(tmp, uc)
		for k, pr := range pairs {
			uc[pr.i] = tmp[k]
		}
	}
	f.block = b
}

// transform sets f.s to S = P·Q⁻¹ (steps 2–3 of build) and reports whether
// the score correlation T was positive definite.
func (f *Filler) transform(r []float64, n, mc int) bool {
	t := make([]float64, mc*mc)
	for m := range n {
		rm := r[m*mc : (m+1)*mc]
		for a := range mc {
			ra := rm[a]
			for b := range a + 1 {
				t[a*mc+b] += ra * rm[b]
			}
		}
	}
	for a := range mc {
		for b := range a {
			t[a*mc+b] /= math.Sqrt(t[a*mc+a] * t[b*mc+b])
			t[b*mc+a] = t[a*mc+b]
		}
	}
	for a := range mc {
		t[a*mc+a] = 1
	}
	var ch mat.Cholesky
	if !ch.Factorize(mat.NewSymDense(mc, t)) {
		return false
	}
	var u, ui mat.TriDense
	ch.UTo(&u) // T = UᵀU, so Q = Uᵀ
	if err := ui.InverseTri(&u); err != nil {
		return false
	}
	var s mat.Dense
	s.Mul(f.d.cholP, ui.T()) // P·(Uᵀ)⁻¹ = P·(U⁻¹)ᵀ
	for a := range mc {
		for b := range mc {
			f.s[a*mc+b] = s.At(a, b)
		}
	}
	return true
}
