package summarize

import (
	"cmp"
	"math"
	"math/bits"
	"slices"
	"sync"
)

// Ranking is the sorted order and the mid-ranks of one column of values,
// computed once by [Rank] and shared by everything that needs them: the
// sorted values for the percentiles ([Ranking.Sorted]), the mid-ranks
// ([Ranking.Ranks]), the ranks of the first rows only ([Ranking.Head]) and
// Spearman's ρ against another ranked column ([SpearmanRanked],
// [SpearmanRankedEach]), all bit for bit what [Ranks], [Spearman] and
// [SpearmanEach] give on the values.
//
// A Ranking takes 8 bytes per value (a row index and a rank, 4 bytes
// each) plus one bit per value when some are NaN. It is read-only once
// built and safe for concurrent use.
type Ranking struct {
	n, m int // values, non-NaN values
	// perm holds the rows of the non-NaN values in increasing order of
	// value, tied values in row order; tieBit is set on an entry whose
	// value equals the previous entry's.
	perm []uint32
	// twice holds, for each row, 2·(rank − (m+1)/2): twice its mid-rank's
	// distance from the mean rank, an integer; 0 for a NaN row.
	twice []int32
	nan   []uint64 // bit i set when row i is NaN; nil when none is
	sumSq float64  // Σ twice[i]², summed in row order
	// distinct is set when no value is NaN and none ties (RankStrata):
	// twice[i] = 2p + 1 − n for the sorted position p of row i.
	distinct bool

	// compact is set by Compact: perm is rebuilt from twice, once, the
	// first time it is needed.
	compact bool
	rebuild sync.Once
}

const (
	tieBit  = 1 << 31
	rowMask = tieBit - 1
)

// maxRankLen is the most values a Ranking holds (row indices and doubled
// ranks fit 31 bits).
const maxRankLen = 1<<31 - 2

// Rank returns the [Ranking] of x: the mid-ranks 1…m of its m non-NaN
// values (ties share the mean of the ranks they span; −0 and +0 tie),
// with NaN values unranked, exactly as [Ranks].
//
// Rank sorts (value key, row) pairs packed into one uint64 each by a
// radix sort over only the key bits that vary in x (Knuth 1998, TAOCP
// vol. 3, §5.2.5, from memory): after subtracting the smallest key, the
// top key bits that fit beside the row index (44 for a million values)
// are kept, sorted first by their top byte into buckets that fit in
// cache, then each bucket by its next bits and by insertion. Rows whose
// kept bits agree but whose values differ are sorted again by their full
// key. It runs in O(n) time for most data, O(n log n) at worst, with 16
// bytes per value of scratch; a [Ranker] keeps that scratch between
// calls.
//
// Rank panics if x holds more than 2^31 − 2 values.
func Rank(x []float64) *Ranking {
	var rk Ranker
	return rk.Rank(x)
}

// Ranker ranks columns one after another ([Ranker.Rank]) reusing its
// scratch memory. The zero value is ready to use; a Ranker is not safe
// for concurrent use.
type Ranker struct {
	buf    []uint64
	digits digitScratch
	run    []keyed
}

// Rank returns the [Ranking] of x, as the function [Rank] does. The
// Ranking does not share memory with the Ranker.
func (rk *Ranker) Rank(x []float64) *Ranking { return rk.RankInto(nil, x) }

// RankInto is [Ranker.Rank] storing the Ranking in dst, whose memory it
// reuses (what dst held is overwritten), and returns dst; with a nil dst
// it allocates a new Ranking. Reusing one Ranking for column after column
// spares allocating and clearing 8 bytes per value each time.
func (rk *Ranker) RankInto(dst *Ranking, x []float64) *Ranking {
	n := len(x)
	if n > maxRankLen {
		panic("summarize: too many values to rank")
	}
	r := dst
	if r == nil {
		r = &Ranking{}
	}
	twice, perm, nan := r.twice, r.perm, r.nan
	if cap(twice) < n {
		twice = make([]int32, n)
	}
	*r = Ranking{n: n, twice: twice[:n]}
	// The smallest and largest key, and the NaN rows.
	lo, hi := uint64(math.MaxUint64), uint64(0)
	m := 0
	for i, v := range x {
		if v != v {
			if r.nan == nil {
				if cap(nan) < (n+63)/64 {
					nan = make([]uint64, (n+63)/64)
				}
				r.nan = nan[:(n+63)/64]
				clear(r.nan)
			}
			r.nan[i/64] |= 1 << (i % 64)
			r.twice[i] = 0
			continue
		}
		k := floatKey(v)
		lo, hi = min(lo, k), max(hi, k)
		m++
	}
	r.m = m
	if cap(perm) < m {
		perm = make([]uint32, m)
	}
	r.perm = perm[:m]
	if m > 0 {
		rk.sort(r, x, lo, hi)
	}
	r.sumSq = sumSquares(r.twice)
	return r
}

// RankStrata returns the [Ranking] of x, the one [Ranker.Rank] gives,
// from a claimed order instead of a sort: pos[i] is the 0-based position
// of x[i] among the values in increasing order. A Latin hypercube column
// knows it without sorting: its values are the quantiles of one draw per
// stratum, and the quantile function does not decrease, so the stratum of
// a draw is its position (see sampler.Filler.FillStrata).
//
// The claim is checked first: pos must be a permutation of [0, len(x)),
// no value NaN, and the values placed at their positions must increase
// strictly. Tied values fail the check (a Ranking orders ties by row,
// which a stratum does not say), as does a quantile rounded out of order.
// When the check fails ok is false, r is nil and pos is as it was: rank x
// with [Ranker.Rank].
//
// When it holds, the Ranking takes pos over: it keeps the doubled ranks
// in pos's memory (pos must not be used after), and it is compact (see
// [Ranking.Compact]), so it needs no memory of its own but a header.
// [Ranking.Head] of it costs no order rebuilt.
//
// RankStrata panics if pos's length is not x's.
func (rk *Ranker) RankStrata(x []float64, pos []int32) (r *Ranking, ok bool) {
	n := len(x)
	if len(pos) != n {
		panic("summarize: slice length mismatch")
	}
	if n > maxRankLen {
		panic("summarize: too many values to rank")
	}
	if cap(rk.buf) < n {
		rk.buf = make([]uint64, n)
	}
	// The keys in claimed order. No value's key is 0 (that would be a
	// NaN's), so a position left 0 was not claimed by any row.
	keys := rk.buf[:n]
	clear(keys)
	for i, v := range x {
		p := pos[i]
		if p < 0 || int(p) >= n || v != v {
			return nil, false
		}
		keys[p] = floatKey(v)
	}
	last := uint64(0)
	for _, k := range keys {
		if k <= last {
			return nil, false
		}
		last = k
	}
	// Mid-rank p+1, no value tied: twice = 2·(p + 1) − (n + 1).
	twice := pos
	for i, p := range pos {
		twice[i] = int32(2*int(p) + 1 - n)
	}
	r = &Ranking{n: n, m: n, twice: twice, distinct: true, sumSq: sumSquares(twice)}
	r.Compact()
	return r, true
}

// sort fills r.perm and r.twice for the m non-NaN values of x, whose keys
// lie in [lo, hi].
func (rk *Ranker) sort(r *Ranking, x []float64, lo, hi uint64) {
	m := r.m
	idxBits := bits.Len(uint(r.n))
	used := bits.Len64(hi - lo)
	keep := 64 - idxBits
	shift := 0
	if used > keep {
		shift, used = used-keep, keep
	}
	w := walker{r: r, x: x, idxBits: idxBits, exact: shift == 0, run: rk.run[:0]}
	defer func() { rk.run = w.run }()

	// Pack (kept key bits, row), counting the top digit of the kept bits.
	topW := min(used, 8)
	topShift := uint(idxBits + used - topW)
	topMask := uint64(1)<<topW - 1
	var count [256]int
	if cap(rk.buf) < 2*m {
		rk.buf = make([]uint64, 2*m)
	}
	src, tmp := rk.buf[:m], rk.buf[m:2*m]
	j := 0
	for i, v := range x {
		if v != v {
			continue
		}
		p := (floatKey(v)-lo)>>shift<<idxBits | uint64(i)
		src[j] = p
		j++
		count[byte(p>>topShift)&byte(topMask)]++ // topW ≤ 8
	}
	if m < radixMin {
		slices.Sort(src) // by kept bits, then row: the order the radix sort gives
		w.walk(src, 0)
		return
	}
	// Most-significant digit first, into buckets that fit in cache; then
	// each bucket by its remaining kept bits, and its runs walked while
	// it is in cache. A run of equal kept bits never spans two buckets.
	var pos [256]int
	sum := 0
	for b, c := range count {
		pos[b], sum = sum, sum+c
	}
	for _, p := range src {
		b := byte(p>>topShift) & byte(topMask)
		tmp[pos[b]] = p
		pos[b]++
	}
	s := 0
	for _, c := range count {
		if c == 0 {
			continue
		}
		b := tmp[s : s+c]
		if c > 1 && used > topW {
			b = rk.digits.msd(b, src[s:s+c], idxBits, used-topW)
		}
		w.walk(b, s)
		s += c
	}
}

// walker turns sorted packed (kept key bits, row) words into the order
// and ranks of a Ranking.
type walker struct {
	r       *Ranking
	x       []float64
	idxBits int
	exact   bool // no key bit was dropped: equal kept bits are ties
	run     []keyed
}

// walk records the sorted words a, which hold sorted positions base…:
// each run of equal kept bits is one group of tied values or, when key
// bits were dropped, values to sort again by their full key.
func (w *walker) walk(a []uint64, base int) {
	r := w.r
	ib := uint(w.idxBits)
	mask := uint64(1)<<ib - 1
	m1 := r.m + 1
	perm := r.perm[base : base+len(a)]
	twice := r.twice
	for s := 0; s < len(a); {
		p := a[s] >> ib
		if s+1 == len(a) || a[s+1]>>ib != p {
			// A value of its own: the common case.
			i := uint32(a[s] & mask)
			perm[s] = i
			twice[i] = int32(2*(base+s) + 2 - m1)
			s++
			continue
		}
		e := s + 2
		for e < len(a) && a[e]>>ib == p {
			e++
		}
		if w.exact || w.sameKeys(a[s:e]) {
			tw := int32(2*base + s + 1 + e - m1)
			i := uint32(a[s] & mask)
			r.perm[base+s] = i
			r.twice[i] = tw
			for k := s + 1; k < e; k++ {
				i := uint32(a[k] & mask)
				r.perm[base+k] = i | tieBit
				r.twice[i] = tw
			}
			s = e
			continue
		}
		run := w.run[:0]
		for _, q := range a[s:e] {
			i := uint32(q & mask)
			run = append(run, keyed{floatKey(w.x[i]), i})
		}
		if !slices.IsSortedFunc(run, cmpKeyed) {
			slices.SortFunc(run, cmpKeyed)
		}
		for t := 0; t < len(run); {
			u := t + 1
			for u < len(run) && run[u].k == run[t].k {
				u++
			}
			tw := int32(2*base + 2*s + t + 1 + u - m1)
			for k := t; k < u; k++ {
				i := run[k].i
				if k > t {
					r.perm[base+s+k] = i | tieBit
				} else {
					r.perm[base+s+k] = i
				}
				r.twice[i] = tw
			}
			t = u
		}
		w.run = run
		s = e
	}
}

// sameKeys reports whether the words of a run of equal kept bits hold
// values with equal full keys: tied values (many zeros, say), which need
// no second sort.
func (w *walker) sameKeys(a []uint64) bool {
	mask := uint64(1)<<uint(w.idxBits) - 1
	k := floatKey(w.x[a[0]&mask])
	for _, q := range a[1:] {
		if floatKey(w.x[q&mask]) != k {
			return false
		}
	}
	return true
}

func cmpKeyed(p, q keyed) int {
	if c := cmp.Compare(p.k, q.k); c != 0 {
		return c
	}
	return cmp.Compare(p.i, q.i)
}

// msd sorts b, whose words agree above bit idxBits+nbits, by the bits
// below that down to idxBits, stably, with tmp (same length) as scratch,
// and returns the slice (b or tmp) that holds the result: by insertion
// below 64 values, else by the top digit of up to 12 bits (about two
// counters per value) into tmp and each digit's values again, with the
// counts of the next level in l's next scratch. Where every word has the
// same top digit (ties, or a narrow range), the words' smallest and
// largest give the highest bit that differs, and the sort goes on from
// there.
func (l *digitScratch) msd(b, tmp []uint64, idxBits, nbits int) []uint64 {
	if len(b) < 64 {
		insertionSort(b)
		return b
	}
	w := min(nbits, 12, bits.Len(uint(len(b)))+1)
	sh := uint(idxBits + nbits - w)
	mask := uint64(1)<<w - 1
	c := &l.count
	clear(c[:1<<w])
	for _, v := range b {
		c[(v>>sh)&mask&digitMask]++
	}
	if c[(b[0]>>sh)&mask&digitMask] == uint32(len(b)) {
		// One digit for all: skip to the highest bit that differs.
		lo, hi := b[0], b[0]
		for _, v := range b {
			lo, hi = min(lo, v), max(hi, v)
		}
		rest := bits.Len64((lo ^ hi) >> uint(idxBits))
		if rest == 0 {
			return b // equal kept bits throughout
		}
		return l.msd(b, tmp, idxBits, rest)
	}
	var sum uint32
	for k := range c[:1<<w] {
		c[k], sum = sum, sum+c[k]
	}
	for _, v := range b {
		k := (v >> sh) & mask & digitMask
		tmp[c[k]] = v
		c[k]++
	}
	if nbits == w {
		return tmp
	}
	// c[k] is now the end of digit k's values.
	start := uint32(0)
	for k := range 1 << w {
		end := c[k]
		if end-start > 1 {
			sub := tmp[start:end]
			if len(sub) < 64 {
				insertionSort(sub)
			} else {
				if l.next == nil {
					l.next = new(digitScratch)
				}
				if r := l.next.msd(sub, b[start:end], idxBits, nbits-w); &r[0] != &sub[0] {
					copy(sub, r)
				}
			}
		}
		start = end
	}
	return tmp
}

// insertionSort sorts a few values in place: packed words by their whole
// words, floats (no NaN) by value.
func insertionSort[T uint64 | float64](b []T) {
	for i := 1; i < len(b); i++ {
		v := b[i]
		k := i
		for k > 0 && b[k-1] > v {
			b[k] = b[k-1]
			k--
		}
		b[k] = v
	}
}

// digitScratch holds the digit counts of one level of digitScratch.msd,
// and the next level's scratch once it has been needed.
type digitScratch struct {
	count [digitMask + 1]uint32
	next  *digitScratch
}

// digitMask bounds msd's digits (12 bits); masking an index with it lets
// the compiler drop the bounds check.
const digitMask = 1<<12 - 1

// Compact frees the sorted order r keeps (4 of its 8 bytes per value),
// keeping the ranks: Spearman's ρ needs no more when neither column has a
// NaN. Whatever needs the order later ([Ranking.Sorted], [Ranking.Head],
// ρ with a column that has NaNs) rebuilds it from the ranks once, in
// O(n) time with 8 bytes per value of scratch. Compact must not be called
// while r is in use by another goroutine, nor on a Ranking a [Ranker]
// will reuse.
func (r *Ranking) Compact() {
	if r.m == 0 {
		return
	}
	r.perm, r.compact = nil, true
}

// order returns r.perm, rebuilding it after Compact.
func (r *Ranking) order() []uint32 {
	if r.compact {
		r.rebuild.Do(r.rebuildOrder)
	}
	return r.perm
}

// rebuildOrder rebuilds perm from twice: the tied values of one group
// share a doubled centred rank tw; a group of g values at sorted positions
// s…s+g−1 has tw = 2s + g − m, so s = (tw + m − g)/2. Counting the rows of
// each tw places every row, tied rows in row order.
func (r *Ranking) rebuildOrder() {
	m := r.m
	count := make([]int32, 2*m+1) // by tw + m
	for i, tw := range r.twice {
		if !r.isNaN(i) {
			count[int(tw)+m]++
		}
	}
	next := make([]int32, 2*m+1)
	for v, g := range count {
		if g > 0 {
			next[v] = int32((v - int(g)) / 2) // (tw + m − g)/2 with v = tw + m
		}
	}
	perm := make([]uint32, m)
	for i, tw := range r.twice {
		if r.isNaN(i) {
			continue
		}
		v := int(tw) + m
		j := next[v]
		next[v]++
		p := uint32(i)
		if j > int32((v-int(count[v]))/2) {
			p |= tieBit
		}
		perm[j] = p
	}
	r.perm = perm
}

// Len returns the number of values ranked, NaN included.
func (r *Ranking) Len() int { return r.n }

// Valid returns the number of non-NaN values.
func (r *Ranking) Valid() int { return r.m }

// isNaN reports whether row i is NaN.
func (r *Ranking) isNaN(i int) bool { return r.nan != nil && r.nan[i/64]&(1<<(i%64)) != 0 }

// Ranks writes the mid-ranks of the ranked values into dst, in row order,
// NaN for a NaN value, and returns dst; a nil or short dst is replaced by
// a new slice. The ranks are [Ranks] of the values, bit for bit.
func (r *Ranking) Ranks(dst []float64) []float64 {
	if cap(dst) < r.n {
		dst = make([]float64, r.n)
	}
	dst = dst[:r.n]
	for i, t := range r.twice {
		if r.isNaN(i) {
			dst[i] = math.NaN()
			continue
		}
		// The same value as ranksIntoBuf's float64(s+1+e)/2.
		dst[i] = float64(int64(t)+int64(r.m)+1) / 2
	}
	return dst
}

// Sorted writes the non-NaN values of x in increasing order into dst and
// returns them (dst[:r.Valid()]); a short dst is replaced by a new slice.
// x must be the column r was built from. Tied values come in row order, so
// −0 and +0 keep the order of their rows.
//
// Sorted panics if x's length is not r's.
func (r *Ranking) Sorted(x, dst []float64) []float64 {
	if len(x) != r.n {
		panic("summarize: slice length mismatch")
	}
	if cap(dst) < r.m {
		dst = make([]float64, r.m)
	}
	dst = dst[:r.m]
	for j, p := range r.order() {
		dst[j] = x[p&rowMask]
	}
	return dst
}

// Head returns the Ranking of the first k values, k ≤ r.Len(): what
// [Rank] gives on them, from r's order in one pass, without sorting again.
//
// Head panics if k is negative or larger than r.Len().
func (r *Ranking) Head(k int) *Ranking {
	if k < 0 || k > r.n {
		panic("summarize: head longer than the ranking")
	}
	if k == r.n {
		return r
	}
	if r.distinct && r.compact {
		return r.headDistinct(k)
	}
	h := &Ranking{n: k, twice: make([]int32, k)}
	for i := range k {
		if r.isNaN(i) {
			if h.nan == nil {
				h.nan = make([]uint64, (k+63)/64)
			}
			h.nan[i/64] |= 1 << (i % 64)
			continue
		}
		h.m++
	}
	h.perm = make([]uint32, 0, h.m)
	kk := uint32(k)
	// Kept values are tied when every value between them in r's order is
	// tied with its predecessor.
	start, m1 := 0, h.m+1
	broken := true
	for _, p := range r.order() {
		if p&tieBit == 0 {
			broken = true
		}
		i := p & rowMask
		if i >= kk {
			continue
		}
		j := len(h.perm)
		if j > 0 && !broken {
			h.perm = append(h.perm, i|tieBit)
		} else {
			h.setGroup(start, j, m1)
			start = j
			h.perm = append(h.perm, i)
		}
		broken = false
	}
	h.setGroup(start, len(h.perm), m1)
	h.sumSq = sumSquares(h.twice)
	return h
}

// headDistinct is Head(k) of a compact Ranking of distinct values from
// the sorted positions its ranks encode: the position of row i < k among
// the first k rows is the number of their positions below its own, read
// from a bit set of those positions with a running count per word.
func (r *Ranking) headDistinct(k int) *Ranking {
	n := r.n
	set := make([]uint64, (n+63)/64)
	for _, t := range r.twice[:k] {
		p := (int(t) + n - 1) / 2
		set[p/64] |= 1 << (p % 64)
	}
	below := make([]int32, len(set))
	c := 0
	for w, b := range set {
		below[w] = int32(c)
		c += bits.OnesCount64(b)
	}
	h := &Ranking{n: k, m: k, twice: make([]int32, k), distinct: true, compact: true}
	for i, t := range r.twice[:k] {
		p := (int(t) + n - 1) / 2
		q := int(below[p/64]) + bits.OnesCount64(set[p/64]&(1<<(p%64)-1))
		h.twice[i] = int32(2*q + 1 - k)
	}
	h.sumSq = sumSquares(h.twice)
	return h
}

// setGroup sets the doubled centred rank of the tied values at sorted
// positions s…e−1 of h.perm; m1 is h.m+1.
func (h *Ranking) setGroup(s, e, m1 int) {
	tw := int32(s + 1 + e - m1)
	for _, p := range h.perm[s:e] {
		h.twice[p&rowMask] = tw
	}
}

// filter walks the values of the rows keep accepts, m of them, in
// increasing order, and ranks them among themselves: rank(rows, tw) is
// called once per group of tied kept values with their doubled centred
// rank 2·(rank − (m+1)/2). Two kept values are tied exactly when every
// value between them in the full order is tied with its predecessor.
func (r *Ranking) filter(keep func(int) bool, m int, rank func(rows []uint32, tw int32)) {
	var grp []uint32
	j, start := 0, 0
	broken := true // a value since the last kept one starts a new group
	flush := func() {
		if len(grp) > 0 {
			rank(grp, int32(start+1+j-(m+1)))
			grp = grp[:0]
		}
	}
	for _, p := range r.order() {
		if p&tieBit == 0 {
			broken = true
		}
		i := p & rowMask
		if !keep(int(i)) {
			continue
		}
		if j == 0 || broken {
			flush()
			start = j
		}
		grp = append(grp, i)
		j++
		broken = false
	}
	flush()
}

// SpearmanRanked returns Spearman's rank correlation of the columns x and
// y were ranked from, and the number of complete pairs (rows where neither
// value is NaN): exactly [Spearman] of the two columns, bit for bit, with
// ranks taken over the complete pairs only. It panics if x and y rank
// columns of different lengths.
func SpearmanRanked(x, y *Ranking) (rho float64, n int) {
	r, c := SpearmanRankedEach([]*Ranking{x}, y)
	return r[0], c[0]
}

// SpearmanRankedEach returns [SpearmanRanked](xs[k], y) for every k: the
// way to correlate one output with all the inputs of a study. Where
// neither column has a NaN it costs one pass over the rows for every four
// columns of xs; otherwise each pair is ranked again over its complete
// pairs from the two orders, in O(n). It panics if a column's length
// differs from y's.
func SpearmanRankedEach(xs []*Ranking, y *Ranking) (rho []float64, n []int) {
	for _, x := range xs {
		if x.n != y.n {
			panic("summarize: slice length mismatch")
		}
	}
	rho, n = make([]float64, len(xs)), make([]int, len(xs))
	syy := y.sumSq
	var dense []int // columns without NaN, when y has none either
	var ax, by []int32
	for k, x := range xs {
		if x.nan == nil && y.nan == nil {
			dense = append(dense, k)
			n[k] = y.n
			continue
		}
		// Rank both over the complete pairs.
		both := func(i int) bool { return !x.isNaN(i) && !y.isNaN(i) }
		m := 0
		for i := range y.n {
			if both(i) {
				m++
			}
		}
		n[k] = m
		if m < 2 {
			rho[k] = math.NaN()
			continue
		}
		if ax == nil {
			ax, by = make([]int32, y.n), make([]int32, y.n)
		}
		x.rankOver(both, m, ax)
		y.rankOver(both, m, by)
		var s [1]float64
		dots([][]int32{ax}, by, s[:])
		rho[k] = correlation(s[0], sumSquares(ax), sumSquares(by))
	}
	if len(dense) == 0 {
		return rho, n
	}
	if y.n < 2 {
		for _, k := range dense {
			rho[k] = math.NaN()
		}
		return rho, n
	}
	cols := make([][]int32, len(dense))
	for j, k := range dense {
		cols[j] = xs[k].twice
	}
	sxy := make([]float64, len(dense))
	dots(cols, y.twice, sxy)
	for j, k := range dense {
		rho[k] = correlation(sxy[j], xs[k].sumSq, syy)
	}
	return rho, n
}

// rankOver writes into dst, for each row keep accepts (m rows), its
// doubled centred rank among those rows, and 0 for every other row.
func (r *Ranking) rankOver(keep func(int) bool, m int, dst []int32) {
	if m == r.m {
		// Every non-NaN row is kept: the ranks are r's own.
		copy(dst, r.twice)
		return
	}
	clear(dst)
	r.filter(keep, m, func(rows []uint32, tw int32) {
		for _, i := range rows {
			dst[i] = tw
		}
	})
}

// correlation returns the Pearson correlation from the sums of products of
// doubled centred ranks, as rankCorrelation does from the ranks: each sum
// here is 4 times rankCorrelation's exactly (every product is exact and
// scaling by a power of two commutes with rounding), so scaling back gives
// its sums bit for bit.
func correlation(sxy4, sxx4, syy4 float64) float64 {
	sxy, sxx, syy := sxy4/4, sxx4/4, syy4/4
	if sxx == 0 || syy == 0 {
		return math.NaN()
	}
	return max(-1, min(1, sxy/math.Sqrt(sxx*syy)))
}

// sumSquares returns Σ a[i]², summed in row order in float64.
func sumSquares(a []int32) float64 {
	var s float64
	for _, v := range a {
		f := float64(v)
		s += f * f
	}
	return s
}

// dots sets out[k] = Σ_i as[k][i]·b[i], each sum taken in row order in
// float64, four columns per pass over b.
func dots(as [][]int32, b []int32, out []float64) {
	k := 0
	for ; k+4 <= len(as); k += 4 {
		a0, a1, a2, a3 := as[k][:len(b)], as[k+1][:len(b)], as[k+2][:len(b)], as[k+3][:len(b)]
		var s0, s1, s2, s3 float64
		for i, v := range b {
			f := float64(v)
			s0 += float64(a0[i]) * f
			s1 += float64(a1[i]) * f
			s2 += float64(a2[i]) * f
			s3 += float64(a3[i]) * f
		}
		out[k], out[k+1], out[k+2], out[k+3] = s0, s1, s2, s3
	}
	for ; k < len(as); k++ {
		a0 := as[k][:len(b)]
		var s0 float64
		for i, v := range b {
			s0 += float64(a0[i]) * float64(v)
		}
		out[k] = s0
	}
}
