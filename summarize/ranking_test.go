package summarize

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat"
)

// rankColumns are columns that exercise every path of Rank: the
// comparison sort of short columns, the radix sort with every key bit
// kept, runs of tied values, and (for values spanning more key steps than
// fit beside the row index) runs whose kept bits agree although the values
// differ.
func rankColumns() []struct {
	name string
	x    []float64
} {
	rng := newRand(40)
	nan, inf := math.NaN(), math.Inf(1)
	gen := func(n int, f func(i int) float64) []float64 {
		x := make([]float64, n)
		for i := range x {
			x[i] = f(i)
		}
		return x
	}
	normal := func(i int) float64 { return rng.NormFloat64() }
	withTies := func(i int) float64 { return math.Round(8*rng.NormFloat64()) / 8 }
	return []struct {
		name string
		x    []float64
	}{
		{"empty", nil},
		{"one", []float64{2.5}},
		{"two", []float64{3, -1}},
		{"two tied", []float64{7, 7}},
		{"one NaN", []float64{nan}},
		{"NaN and a value", []float64{nan, 4}},
		{"just below the radix sort", gen(radixMin-1, withTies)},
		{"radix sort", gen(radixMin, withTies)},
		{"just above", gen(radixMin+1, withTies)},
		{"normal", gen(5000, normal)},
		// Three values, as a discrete input: runs of thousands of ties.
		{"three values", gen(20_000, func(int) float64 { return []float64{0.15, 0.3, 0.6}[rng.IntN(3)] })},
		{"constant", gen(1000, func(int) float64 { return 0.25 })},
		// Values over hundreds of binades, one in seven NaN: key bits are
		// dropped, and equal kept bits need the full key.
		{"wide with NaN", gen(3000, func(int) float64 {
			if rng.IntN(7) == 0 {
				return nan
			}
			return math.Exp(50 * rng.NormFloat64())
		})},
		// A dense cluster a few ulps wide and two far outliers: every
		// cluster value shares its kept bits.
		{"cluster and outliers", gen(4000, func(i int) float64 {
			switch i {
			case 17:
				return 1e300
			case 1234:
				return -1e300
			}
			return 1 + float64(rng.IntN(1000))*0x1p-52
		})},
		// Mostly zeros (a water cut before breakthrough) beside values
		// over hundreds of binades: one run of thousands of equal keys
		// among runs whose kept bits agree although the values differ.
		{"mostly zeros", gen(20_000, func(int) float64 {
			if rng.IntN(5) > 0 {
				return 0
			}
			return rng.Float64() * math.Exp(-float64(rng.IntN(700)))
		})},
		// Signed zeros (which tie), infinities and tiny values.
		{"zeros and infinities", gen(2000, func(int) float64 {
			return []float64{0, math.Copysign(0, -1), inf, -inf, 5e-324, -5e-324, 1, nan}[rng.IntN(8)]
		})},
	}
}

// sortedValid returns the non-NaN values of x sorted by sort.Float64s.
func sortedValid(x []float64) []float64 {
	var s []float64
	for _, v := range x {
		if !math.IsNaN(v) {
			s = append(s, v)
		}
	}
	sort.Float64s(s)
	return s
}

// TestRankAgainstOracle compares the mid-ranks of a Ranking with the
// counting oracle (oracleRanks, mid-rank = #{x < v} + (#{x = v} + 1)/2,
// Kendall & Gibbons 1990, from memory) and with Ranks bit for bit, and its
// sorted values with sort.Float64s.
func TestRankAgainstOracle(t *testing.T) {
	t.Parallel()
	for _, tc := range rankColumns() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r := Rank(tc.x)
			want := oracleRanks(tc.x)
			got := r.Ranks(nil)
			radix := Ranks(tc.x)
			valid := 0
			for i := range tc.x {
				if !math.IsNaN(tc.x[i]) {
					valid++
				}
				if !sameBits(got[i], want[i]) {
					t.Fatalf("row %d (%v): rank %v, oracle %v", i, tc.x[i], got[i], want[i])
				}
				if !sameBits(got[i], radix[i]) {
					t.Fatalf("row %d (%v): rank %v, Ranks %v", i, tc.x[i], got[i], radix[i])
				}
			}
			if r.Len() != len(tc.x) || r.Valid() != valid {
				t.Errorf("Len, Valid = %d, %d; want %d, %d", r.Len(), r.Valid(), len(tc.x), valid)
			}
			sorted := r.Sorted(tc.x, nil)
			ref := sortedValid(tc.x)
			if len(sorted) != len(ref) {
				t.Fatalf("%d sorted values, want %d", len(sorted), len(ref))
			}
			for j := range ref {
				if sorted[j] != ref[j] {
					t.Fatalf("sorted[%d] = %v, sort.Float64s gives %v", j, sorted[j], ref[j])
				}
			}
			// Tied values come in row order: the zeros' signs in sorted
			// order are those of the zero rows in row order.
			var zr, zs []bool
			for _, v := range tc.x {
				if v == 0 {
					zr = append(zr, math.Signbit(v))
				}
			}
			for _, v := range sorted {
				if v == 0 {
					zs = append(zs, math.Signbit(v))
				}
			}
			if !slices.Equal(zr, zs) {
				t.Errorf("zero signs in sorted order %v, rows %v", zs, zr)
			}
		})
	}
}

// TestRankInto: a Ranking reused for column after column (longer,
// shorter, with and without NaN) holds what a new one would.
func TestRankInto(t *testing.T) {
	t.Parallel()
	var rk Ranker
	var r *Ranking
	for _, tc := range rankColumns() {
		r = rk.RankInto(r, tc.x)
		want := oracleRanks(tc.x)
		got := r.Ranks(nil)
		for i := range want {
			if !sameBits(got[i], want[i]) {
				t.Fatalf("%s row %d: rank %v, oracle %v", tc.name, i, got[i], want[i])
			}
		}
		if !slices.Equal(r.Sorted(tc.x, nil), sortedValid(tc.x)) {
			t.Errorf("%s: sorted values differ", tc.name)
		}
		if rho, _ := SpearmanRanked(r, Rank(tc.x)); len(tc.x) > 2 && r.Valid() == len(tc.x) && !math.IsNaN(rho) && rho != 1 {
			t.Errorf("%s: ρ with itself %v", tc.name, rho)
		}
	}
}

// TestRankCompact: a compacted Ranking rebuilds its order from its ranks
// (once, from several goroutines at a time) and then gives the same
// sorted values, heads and ρ as before.
func TestRankCompact(t *testing.T) {
	t.Parallel()
	for ci, tc := range rankColumns() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rng := newRand(uint64(43 + ci))
			full := Rank(tc.x)
			c := Rank(tc.x)
			c.Compact()
			y := make([]float64, len(tc.x))
			for i := range y {
				y[i] = ifNaN(rng.IntN(5) == 0, rng.Float64())
			}
			ry := Rank(y)
			wantRho, wantN := SpearmanRanked(full, ry)
			wantSorted := full.Sorted(tc.x, nil)
			k := len(tc.x) / 2
			wantHead := full.Head(k).Ranks(nil)
			done := make(chan string, 4)
			for g := range 4 {
				go func() {
					var msg string
					switch g % 3 {
					case 0:
						if rho, n := SpearmanRanked(c, ry); !sameBits(rho, wantRho) || n != wantN {
							msg = fmt.Sprintf("ρ, n = %v, %d; want %v, %d", rho, n, wantRho, wantN)
						}
					case 1:
						if got := c.Sorted(tc.x, nil); !slices.Equal(got, wantSorted) {
							msg = "sorted values differ"
						}
					case 2:
						got := c.Head(k).Ranks(nil)
						for i := range got {
							if !sameBits(got[i], wantHead[i]) {
								msg = fmt.Sprintf("head rank %d = %v, want %v", i, got[i], wantHead[i])
								break
							}
						}
					}
					done <- msg
				}()
			}
			for range 4 {
				if msg := <-done; msg != "" {
					t.Error(msg)
				}
			}
		})
	}
}

// TestRankHead: the Ranking of the first k rows equals the Ranking built
// from them, for every kind of column and cut.
func TestRankHead(t *testing.T) {
	t.Parallel()
	for _, tc := range rankColumns() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r := Rank(tc.x)
			n := len(tc.x)
			for _, k := range []int{0, 1, n / 3, n / 2, n - 1, n} {
				if k < 0 || k > n {
					continue
				}
				h := r.Head(k)
				want := Rank(tc.x[:k])
				if h.Len() != k || h.Valid() != want.Valid() {
					t.Fatalf("k=%d: Len, Valid = %d, %d; want %d, %d", k, h.Len(), h.Valid(), k, want.Valid())
				}
				got, wr := h.Ranks(nil), oracleRanks(tc.x[:k])
				for i := range wr {
					if !sameBits(got[i], wr[i]) {
						t.Fatalf("k=%d row %d: rank %v, oracle %v", k, i, got[i], wr[i])
					}
				}
				if !slices.Equal(h.Sorted(tc.x[:k], nil), want.Sorted(tc.x[:k], nil)) {
					t.Errorf("k=%d: sorted values differ", k)
				}
				// The head's order must serve its own heads and Spearman.
				if k > 2 {
					hh := h.Head(k / 2).Ranks(nil)
					for i, v := range oracleRanks(tc.x[:k/2]) {
						if !sameBits(hh[i], v) {
							t.Fatalf("k=%d: head of head row %d: %v, oracle %v", k, i, hh[i], v)
						}
					}
				}
			}
		})
	}
}

// completePairs returns the rows where neither x nor y is NaN.
func completePairs(x, y []float64) (xs, ys []float64) {
	for i := range x {
		if !math.IsNaN(x[i]) && !math.IsNaN(y[i]) {
			xs, ys = append(xs, x[i]), append(ys, y[i])
		}
	}
	return xs, ys
}

// TestSpearmanRanked checks ρ from two Rankings against gonum's Pearson
// correlation (stat.Correlation) of the oracle mid-ranks of the complete
// pairs (Spearman's definition with ties; Kendall & Gibbons 1990, from
// memory), and against Spearman bit for bit, with the complete-pair count.
func TestSpearmanRanked(t *testing.T) {
	t.Parallel()
	rng := newRand(41)
	nan := math.NaN()
	const n = 3000
	base := make([]float64, n)
	for i := range base {
		base[i] = rng.NormFloat64()
	}
	col := func(f func(i int) float64) []float64 {
		x := make([]float64, n)
		for i := range x {
			x[i] = f(i)
		}
		return x
	}
	ys := map[string][]float64{
		"clean":    col(func(i int) float64 { return base[i]*base[i] + 0.3*rng.NormFloat64() }),
		"tied":     col(func(i int) float64 { return math.Round(2 * base[i]) }),
		"some NaN": col(func(i int) float64 { return ifNaN(rng.IntN(9) == 0, base[i]+rng.NormFloat64()) }),
		"constant": col(func(int) float64 { return 1 }),
		"all NaN":  col(func(int) float64 { return nan }),
		"one left": col(func(i int) float64 { return ifNaN(i != 5, 2) }),
	}
	xs := map[string][]float64{
		"clean":    col(func(i int) float64 { return base[i] + 0.5*rng.NormFloat64() }),
		"discrete": col(func(int) float64 { return float64(rng.IntN(3)) }),
		"some NaN": col(func(i int) float64 { return ifNaN(rng.IntN(11) == 0, -base[i]) }),
	}
	for yn, y := range ys {
		for xn, x := range xs {
			t.Run(xn+" vs "+yn, func(t *testing.T) {
				t.Parallel()
				rho, m := SpearmanRanked(Rank(x), Rank(y))
				cx, cy := completePairs(x, y)
				if m != len(cx) {
					t.Errorf("n = %d, want %d complete pairs", m, len(cx))
				}
				if want := Spearman(x, y); !sameBits(rho, want) {
					t.Errorf("ρ = %v, Spearman gives %v", rho, want)
				}
				want := math.NaN()
				if len(cx) >= 2 {
					want = stat.Correlation(oracleRanks(cx), oracleRanks(cy), nil)
				}
				if math.IsNaN(want) || math.IsInf(want, 0) {
					if !math.IsNaN(rho) {
						t.Errorf("ρ = %v, want NaN (a constant column or fewer than 2 pairs)", rho)
					}
				} else if !scalar.EqualWithinAbs(rho, want, 1e-12) {
					t.Errorf("ρ = %v, gonum on oracle ranks %v", rho, want)
				}
			})
		}
	}
}

// TestSpearmanRankedEach: every column count (the dense path takes four
// columns at a time), with and without NaN, bit for bit as SpearmanEach.
func TestSpearmanRankedEach(t *testing.T) {
	t.Parallel()
	rng := newRand(42)
	const n = 2500
	for _, d := range []int{1, 2, 3, 4, 5, 8, 9} {
		for _, nanY := range []bool{false, true} {
			t.Run(fmt.Sprintf("%d columns, NaN in y %v", d, nanY), func(t *testing.T) {
				xs := make([][]float64, d)
				rs := make([]*Ranking, d)
				for k := range xs {
					xs[k] = make([]float64, n)
					for i := range xs[k] {
						xs[k][i] = rng.Float64()
						if k == 2 && i%13 == 0 {
							xs[k][i] = math.NaN()
						}
					}
					rs[k] = Rank(xs[k])
				}
				y := make([]float64, n)
				for i := range y {
					y[i] = xs[0][i] + xs[min(1, d-1)][i]*rng.Float64()
					if nanY && i%10 == 3 {
						y[i] = math.NaN()
					}
				}
				rho, m := SpearmanRankedEach(rs, Rank(y))
				want := SpearmanEach(xs, y)
				for k := range xs {
					if !sameBits(rho[k], want[k]) {
						t.Errorf("column %d: ρ = %v, SpearmanEach %v", k, rho[k], want[k])
					}
					cx, _ := completePairs(xs[k], y)
					if m[k] != len(cx) {
						t.Errorf("column %d: n = %d, want %d", k, m[k], len(cx))
					}
				}
			})
		}
	}
}

func ifNaN(cond bool, v float64) float64 {
	if cond {
		return math.NaN()
	}
	return v
}

// type7 is Hyndman & Fan (1996) definition 7 written out for the test,
// on data sorted by sort.Float64s: h = (n−1)p, j = ⌊h⌋,
// Q = x[j] + (h−j)(x[j+1] − x[j]), the weighted form (1−g)x[j] + g·x[j+1]
// where an end is infinite.
func type7(s []float64, p float64) float64 {
	n := len(s)
	if n == 0 {
		return math.NaN()
	}
	h := float64(n-1) * p
	j := int(math.Floor(h))
	if j >= n-1 {
		return s[n-1]
	}
	g := h - float64(j)
	if g == 0 {
		return s[j]
	}
	if math.IsInf(s[j], 0) || math.IsInf(s[j+1], 0) {
		if s[j] == s[j+1] {
			return s[j]
		}
		return (1-g)*s[j] + g*s[j+1]
	}
	return s[j] + g*(s[j+1]-s[j])
}

// TestDescribeSortedFromRanking: the statistics of the values a Ranking
// sorts are DescribeLevel's bit for bit, and their percentiles are
// definition 7 of the values sorted by sort.Float64s (within 1e-12), with
// NaN dropped and counted, for ties, infinities and n = 0, 1, 2.
func TestDescribeSortedFromRanking(t *testing.T) {
	t.Parallel()
	for _, tc := range rankColumns() {
		for _, conv := range []Convention{Exceedance, Cumulative} {
			t.Run(tc.name+"/"+conv.String(), func(t *testing.T) {
				t.Parallel()
				sorted := Rank(tc.x).Sorted(tc.x, nil)
				got := DescribeSorted(sorted, len(tc.x)-len(sorted), conv, 0.9)
				want := DescribeLevel(slices.Clone(tc.x), conv, 0.9)
				// Bit for bit, but for the sign of a zero where −0 and +0
				// are both present (their order is free in both sorts).
				same := statsBits(got, want)
				if slices.ContainsFunc(tc.x, func(v float64) bool { return v == 0 && math.Signbit(v) }) &&
					slices.ContainsFunc(tc.x, func(v float64) bool { return v == 0 && !math.Signbit(v) }) {
					same = statsClose(got, want, 0)
				}
				if !same {
					t.Fatalf("DescribeSorted =\n%+v\nDescribeLevel =\n%+v", got, want)
				}
				ref := sortedValid(tc.x)
				if got.N != len(ref) || got.NRejected != len(tc.x)-len(ref) {
					t.Errorf("N, NRejected = %d, %d; want %d, %d", got.N, got.NRejected, len(ref), len(tc.x)-len(ref))
				}
				for _, c := range []struct {
					label float64
					got   float64
				}{{90, got.P90}, {50, got.P50}, {10, got.P10}} {
					w := type7(ref, conv.Prob(c.label))
					if !(sameBits(c.got, w) || scalar.EqualWithinAbsOrRel(c.got, w, 1e-12, 1e-12)) {
						t.Errorf("P%v = %v, definition 7 gives %v", c.label, c.got, w)
					}
				}
				if len(ref) > 0 && (got.Min != ref[0] || got.Max != ref[len(ref)-1]) {
					t.Errorf("Min, Max = %v, %v; want %v, %v", got.Min, got.Max, ref[0], ref[len(ref)-1])
				}
			})
		}
	}
}

// statsBits reports whether every field of a and b is the same, floats bit
// for bit (any NaN equal to any NaN).
func statsBits(a, b Stats) bool {
	fa := []float64{a.Level, a.Mean, a.SD, a.Min, a.Max, a.P90, a.P50, a.P10, a.SwansonMean,
		a.P90Low, a.P90High, a.P50Low, a.P50High, a.P10Low, a.P10High}
	fb := []float64{b.Level, b.Mean, b.SD, b.Min, b.Max, b.P90, b.P50, b.P10, b.SwansonMean,
		b.P90Low, b.P90High, b.P50Low, b.P50High, b.P10Low, b.P10High}
	for i := range fa {
		if !sameBits(fa[i], fb[i]) {
			return false
		}
	}
	return a.Convention == b.Convention && a.N == b.N && a.NRejected == b.NRejected
}

func TestRankingPanics(t *testing.T) {
	t.Parallel()
	r := Rank([]float64{1, 2, 3})
	for _, tc := range []struct {
		name string
		f    func()
	}{
		{"head too long", func() { r.Head(4) }},
		{"negative head", func() { r.Head(-1) }},
		{"sorted of another column", func() { r.Sorted([]float64{1, 2}, nil) }},
		{"lengths differ", func() { SpearmanRanked(r, Rank([]float64{1, 2})) }},
		{"negative rejected", func() { DescribeSorted([]float64{1}, -1, Exceedance, 0.9) }},
		{"level", func() { DescribeSorted([]float64{1}, 0, Exceedance, 1) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			defer func() {
				if recover() == nil {
					t.Error("no panic")
				}
			}()
			tc.f()
		})
	}
}

// oraclePositions returns each row's position in x sorted by value, tied
// values by row (sort.SliceStable, independent of the radix sort), and
// whether x has a NaN or two values that tie (−0 and +0 included).
func oraclePositions(x []float64) (pos []int32, tiesOrNaN bool) {
	idx := make([]int, len(x))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return x[idx[a]] < x[idx[b]] })
	pos = make([]int32, len(x))
	for k, i := range idx {
		pos[i] = int32(k)
		if math.IsNaN(x[i]) || k > 0 && x[idx[k-1]] == x[i] {
			tiesOrNaN = true
		}
	}
	return pos, tiesOrNaN
}

// TestRankStrata: ranking from claimed positions gives, when the claim
// holds, the Ranking that Rank gives (order, mid-ranks against the
// counting oracle, ρ, heads, sorted values), and refuses every claim that
// does not hold, leaving the positions as they were: ties, NaN, repeated
// or out-of-range positions, two values out of order.
func TestRankStrata(t *testing.T) {
	t.Parallel()
	var rk Ranker
	cols := rankColumns()
	rng := newRand(44)
	spread := make([]float64, 50_000)
	for i, s := range rng.Perm(len(spread)) {
		spread[i] = math.Exp(float64(s)/1000) - 20 // distinct, either sign
	}
	cols = append(cols, struct {
		name string
		x    []float64
	}{"distinct", spread})
	for _, tc := range cols {
		pos, refused := oraclePositions(tc.x)
		r, ok := rk.RankStrata(tc.x, slices.Clone(pos))
		if ok == refused {
			t.Fatalf("%s: ok = %v with ties or NaN = %v", tc.name, ok, refused)
		}
		if !ok {
			if r != nil {
				t.Errorf("%s: refused with a Ranking", tc.name)
			}
			continue
		}
		want := Rank(tc.x)
		if !slices.Equal(r.twice, want.twice) || r.n != want.n || r.m != want.m || r.nan != nil || !sameBits(r.sumSq, want.sumSq) {
			t.Fatalf("%s: Ranking differs from Rank's", tc.name)
		}
		got, oracle := r.Ranks(nil), oracleRanks(tc.x)
		for i := range oracle {
			if !sameBits(got[i], oracle[i]) {
				t.Fatalf("%s row %d: rank %v, oracle %v", tc.name, i, got[i], oracle[i])
			}
		}
		for _, k := range []int{0, len(tc.x) / 3, len(tc.x) - 1, len(tc.x)} {
			k = max(k, 0)
			h, hw := r.Head(k), want.Head(k)
			if !slices.Equal(h.Ranks(nil), oracleRanks(tc.x[:k])) || !slices.Equal(h.twice, hw.twice) || !sameBits(h.sumSq, hw.sumSq) {
				t.Errorf("%s: head of %d ranks differ from the oracle's or Rank's", tc.name, k)
			}
		}
		if rho, n := SpearmanRanked(r, want); len(tc.x) > 1 && (rho != 1 || n != len(tc.x)) {
			t.Errorf("%s: ρ with Rank's Ranking %v over %d", tc.name, rho, n)
		}
		if !slices.Equal(r.Sorted(tc.x, nil), sortedValid(tc.x)) || !slices.Equal(r.order(), want.perm) {
			t.Errorf("%s: sorted values or order differ", tc.name)
		}
		if len(tc.x) < 2 {
			continue
		}
		// Claims that do not hold.
		bad := func(what string, edit func(p []int32)) {
			p := slices.Clone(pos)
			edit(p)
			claim := slices.Clone(p)
			if r, ok := rk.RankStrata(tc.x, p); ok || r != nil {
				t.Errorf("%s: %s accepted", tc.name, what)
			}
			if !slices.Equal(p, claim) {
				t.Errorf("%s: %s: positions changed", tc.name, what)
			}
		}
		first := slices.Index(pos, 0)
		second := slices.Index(pos, 1)
		bad("two values out of order", func(p []int32) { p[first], p[second] = 1, 0 })
		bad("a repeated position", func(p []int32) { p[first] = 1 })
		bad("a position past the end", func(p []int32) { p[first] = int32(len(p)) })
		bad("a negative position", func(p []int32) { p[first] = -1 })
	}
	// A short pos is a programming error.
	defer func() {
		if recover() == nil {
			t.Error("RankStrata with a short pos did not panic")
		}
	}()
	rk.RankStrata([]float64{1, 2}, []int32{0})
}
