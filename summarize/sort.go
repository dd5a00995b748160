package summarize

import (
	"math"
	"slices"
)

// floatKey maps a non-NaN float64 to a uint64 whose unsigned order is the
// float order, with −0 and +0 mapped alike: flip every bit of a negative
// number, only the sign bit of a positive one.
func floatKey(v float64) uint64 {
	if v == 0 {
		return 1 << 63
	}
	b := math.Float64bits(v)
	if b>>63 == 1 {
		return ^b
	}
	return b | 1<<63
}

// sortFloats sorts x, which holds no NaN, in increasing order in place: an
// in-place most-significant-digit radix sort on [floatKey] in 8-bit digits
// (McIlroy, Bostic & McIlroy 1993, Computing Systems 6, "American flag
// sort"), handing buckets of fewer than sortSmall values, and the whole of
// a short x, to slices.Sort. A bucket whose values are all equal stops the
// descent. The relative order of −0 and +0 is unspecified.
func sortFloats(x []float64) { msdSort(x, 56) }

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
