package summarize

import (
	"math"
	"math/bits"
	"slices"
)

// floatKey maps a non-NaN float64 to a uint64 whose unsigned order is the
// float order, with −0 and +0 mapped alike: flip every bit of a negative
// number, only the sign bit of a positive one. It is rawKey of v + 0, which is v except that −0 becomes +0 (IEEE 754
// round to nearest): no branch.
func floatKey(v float64) uint64 { return rawKey(v + 0) }

// sortFloats sorts x, which holds no NaN, in increasing order in place,
// allocating nothing: an in-place most-significant-digit radix sort
// (McIlroy, Bostic & McIlroy 1993, Computing Systems 6, "American flag
// sort"). A short x goes to slices.Sort. The relative order of −0 and +0 is
// unspecified, but fixed: it is that of msdSort, which sorts x when it
// holds both; any other x has one sorted order, which radixFloats finds
// faster.
func sortFloats(x []float64) {
	if len(x) < sortSmall {
		slices.Sort(x)
		return
	}
	if SignedZeros(x) {
		msdSort(x, 56)
		return
	}
	lo, hi := rawKey(x[0]), rawKey(x[0])
	for _, v := range x {
		k := rawKey(v)
		lo, hi = min(lo, k), max(hi, k)
	}
	if lo == hi {
		return
	}
	// Start at the highest bit in which two values differ, with a wide
	// first digit: buckets of a few thousand values then sort in cache.
	top := bits.Len64(lo ^ hi)
	w := min(top, max(8, bits.Len(uint(len(x)))-12))
	radixFloats(x, uint(top-w), w)
}

// rawKey maps a non-NaN float64 to a uint64 whose unsigned order is the
// float order, −0 just below +0: flip every bit of a negative number,
// only the sign bit of a positive one.
func rawKey(v float64) uint64 {
	b := math.Float64bits(v)
	return b ^ (uint64(int64(b)>>63) | 1<<63)
}

// radixFloats sorts x in place by the digit of w ≤ 12 bits at shift of
// rawKey, the bits above being equal in all of x, then each digit's values
// by the bits below, 8 at a time (radixFloats8).
func radixFloats(x []float64, shift uint, w int) {
	var count, next [1 << 12]int
	if !digitSort(x, shift, w, count[:1<<w], next[:1<<w]) || shift == 0 {
		return
	}
	sub := min(8, shift)
	start := 0
	for _, c := range count[:1<<w] {
		if c > 1 {
			radixFloats8(x[start:start+c], shift-sub)
		}
		start += c
	}
}

// radixFloats8 sorts x in place by the bits of rawKey below shift+8 (or
// below 8 when shift is 0 … 7), the bits above being equal in all of x:
// by insertion below 64 values, else by one digit and recursively.
func radixFloats8(x []float64, shift uint) {
	if len(x) < 64 {
		for i := 1; i < len(x); i++ {
			v := x[i]
			k := i
			for k > 0 && x[k-1] > v {
				x[k] = x[k-1]
				k--
			}
			x[k] = v
		}
		return
	}
	const w = 8 // at shift 0 the bits above those left are equal: harmless
	var count, next [256]int
	if !digitSort(x, shift, w, count[:1<<w], next[:1<<w]) || shift == 0 {
		return
	}
	sub := min(8, shift)
	start := 0
	for _, c := range count[:1<<w] {
		if c > 1 {
			radixFloats8(x[start:start+c], shift-sub)
		}
		start += c
	}
}

// digitSort permutes x in place into the order of the digit of w bits at
// shift of rawKey, leaving each digit's count in count (next is scratch
// of the same length). It returns false when all of x is one value (then
// nothing is left to sort).
func digitSort(x []float64, shift uint, w int, count, next []int) bool {
	mask := uint64(1)<<w - 1
	first, same := x[0], true
	for _, v := range x {
		count[(rawKey(v)>>shift)&mask]++
		same = same && v == first
	}
	if same {
		return false
	}
	if count[(rawKey(x[0])>>shift)&mask] == len(x) {
		return true // one digit for all: nothing to move
	}
	sum := 0
	for b, c := range count {
		next[b] = sum
		sum += c
	}
	// Follow each misplaced value's cycle until the value that belongs at
	// the bucket's next free slot turns up (McIlroy et al. 1993).
	end := 0
	for b, c := range count {
		end += c
		for next[b] < end {
			v := x[next[b]]
			for d := int((rawKey(v) >> shift) & mask); d != b; d = int((rawKey(v) >> shift) & mask) {
				x[next[d]], v = v, x[next[d]]
				next[d]++
			}
			x[next[b]] = v
			next[b]++
		}
	}
	return true
}

// sortSmall is the length below which sortFloats uses slices.Sort.
const sortSmall = 256

func msdSort(x []float64, shift uint) {
	if len(x) < sortSmall {
		slices.Sort(x)
		return
	}
	digit := func(v float64) int { return int((floatKey(v) >> shift) & 0xff) }
	var count [256]int
	first, same := x[0], true
	for _, v := range x {
		count[digit(v)]++
		same = same && v == first
	}
	if same {
		return
	}
	var start [256]int
	sum := 0
	for b := range start {
		start[b] = sum
		sum += count[b]
	}
	if count[digit(x[0])] < len(x) {
		// Permute in place: follow each misplaced value's cycle until the
		// value that belongs at the bucket's next free slot turns up.
		next := start
		for b := range next {
			end := start[b] + count[b]
			for next[b] < end {
				v := x[next[b]]
				for d := digit(v); d != b; d = digit(v) {
					x[next[d]], v = v, x[next[d]]
					next[d]++
				}
				x[next[b]] = v
				next[b]++
			}
		}
	}
	if shift == 0 {
		return
	}
	for b, c := range count {
		if c > 1 {
			msdSort(x[start[b]:start[b]+c], shift-8)
		}
	}
}

// SignedZeros reports whether x holds both −0 and +0, whose relative order
// after sorting is the one thing two exact sorts of x may disagree on.
func SignedZeros(x []float64) bool {
	neg, pos := false, false
	for _, v := range x {
		if v == 0 {
			if math.Signbit(v) {
				neg = true
			} else {
				pos = true
			}
		}
	}
	return neg && pos
}
