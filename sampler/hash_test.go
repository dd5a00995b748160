package sampler

import "testing"

// TestSplitMix64: nth(0, i) is the SplitMix64 sequence seeded with 0, whose
// first outputs are e220a8397b1dcdaf, 6e789e6aa1b965f4, 06c45d188009454f
// (reference implementation of Vigna's splitmix64.c, from memory).
func TestSplitMix64(t *testing.T) {
	t.Parallel()
	for i, want := range []uint64{0xe220a8397b1dcdaf, 0x6e789e6aa1b965f4, 0x06c45d188009454f} {
		if got := nth(0, uint64(i)); got != want {
			t.Errorf("output %d = %#016x, want %#016x", i, got, want)
		}
	}
}

// TestPermutation: the keyed permutation is a bijection of [0, n) for
// sizes around powers of two (odd and even bit counts, cycle walking).
func TestPermutation(t *testing.T) {
	t.Parallel()
	for _, n := range []uint64{1, 2, 3, 4, 5, 7, 8, 9, 255, 256, 257, 1000, 4097, 65535, 100003} {
		p := newPermutation(n, hashWords(n))
		seen := make([]bool, n)
		for i := range n {
			v := p.at(i)
			if v >= n || seen[v] {
				t.Fatalf("n=%d: π(%d) = %d repeated or out of range", n, i, v)
			}
			seen[v] = true
		}
	}
}
