package sampler

import "math/bits"

// The streams below are defined by this file alone (no math/rand state), so
// they are frozen: changing any constant or step changes every design, and
// TestGolden fails.

// golden is SplitMix64's increment, 2⁶⁴/φ rounded to odd.
const golden = 0x9e3779b97f4a7c15

// mix64 is the SplitMix64 output function (Steele, Lea & Flood 2014,
// "Fast splittable pseudorandom number generators", OOPSLA; constants of
// Stafford's variant 13), a bijection of uint64 with full avalanche.
func mix64(z uint64) uint64 {
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// hashWords hashes a short list of words into a key, absorbing one word per
// SplitMix64 step.
func hashWords(ws ...uint64) uint64 {
	h := uint64(0x243f6a8885a308d3) // π's fraction bits: an arbitrary fixed start
	for _, w := range ws {
		h = mix64((h ^ w) + golden)
	}
	return h
}

// nth returns the i-th output (i ≥ 0) of a SplitMix64 sequence whose state
// starts at key: a counter-based hash, so any element costs the same.
func nth(key uint64, i uint64) uint64 { return mix64(key + (i+1)*golden) }

// Purpose tags that separate the hash streams of one parameter.
const (
	tagFeistel = 1 + iota
	tagJitter
	tagRandom
)

// feistelRounds is the number of half-updates of the permutation; four is
// the Luby–Rackoff bound for a pseudorandom permutation from pseudorandom
// round functions (Luby & Rackoff 1988, SIAM J. Comput. 17).
const feistelRounds = 4

// permutation is a keyed pseudo-random bijection of [0, n): a generalized
// (alternating, possibly unbalanced) Feistel network on the k-bit integers,
// 2^k the smallest power of two ≥ n (k ≥ 2), restricted to [0, n) by cycle
// walking (Black & Rogaway 2002, "Ciphers with arbitrary finite domains",
// CT-RSA). Each evaluation walks fewer than two cycles on average since
// 2^k < 2n.
type permutation struct {
	n            uint64
	rb           uint // bits of the right half
	maskL, maskR uint64
	keys         [feistelRounds]uint64
}

func newPermutation(n uint64, key uint64) permutation {
	k := max(2, bits.Len64(n-1))
	lb := k / 2
	rb := k - lb
	p := permutation{n: n, rb: uint(rb), maskL: 1<<lb - 1, maskR: 1<<rb - 1}
	for r := range p.keys {
		p.keys[r] = hashWords(key, uint64(r))
	}
	return p
}

// at returns π(i) for i in [0, n).
func (p *permutation) at(i uint64) uint64 {
	x := i
	for {
		l, r := x>>p.rb, x&p.maskR
		l ^= mix64(r^p.keys[0]) & p.maskL
		r ^= mix64(l^p.keys[1]) & p.maskR
		l ^= mix64(r^p.keys[2]) & p.maskL
		r ^= mix64(l^p.keys[3]) & p.maskR
		x = l<<p.rb | r
		if x < p.n {
			return x
		}
	}
}
