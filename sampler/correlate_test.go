package sampler

import (
	"cmp"
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

// TestRankCorrelation: the achieved Spearman correlations (gonum
// stat.Correlation on ranks, independent of the code under test) are within
// ±0.02 of their targets at N = 10,000 for |ρ| ≤ 0.8, pairs not listed stay
// near 0, and every marginal stays an exact Latin hypercube (Iman & Conover
// 1982, Commun. Stat. Simul. Comput. 11).
func TestRankCorrelation(t *testing.T) {
	t.Parallel()
	specs := []Spec{
		uni("a", 0, 1),
		tri("b", 0, 1, 4),
		gauss("c", 10, 2, -inf, inf),
		logn("d", 3, 1.2, 0.8, inf),
		pert("e", 0, 0.2, 1),
		uni("f", -1, 1),
	}
	for _, c := range []struct {
		name   string
		method Method
		n      int
		block  int
		corr   []Correlation
	}{
		{"pair 0.8", LHS, 10000, BlockSize, []Correlation{{"a", "b", 0.8}}},
		{"pair -0.8", LHS, 10000, BlockSize, []Correlation{{"c", "d", -0.8}}},
		{"pair 0.3", LHS, 10000, BlockSize, []Correlation{{"a", "e", 0.3}}},
		{"pair -0.5 random", Random, 10000, BlockSize, []Correlation{{"b", "f", -0.5}}},
		{"three", LHS, 10000, BlockSize, []Correlation{{"a", "b", 0.6}, {"b", "c", -0.4}, {"a", "c", -0.3}}},
		{"three blocks of 1000", LHS, 10000, 1000, []Correlation{{"a", "b", 0.6}, {"b", "c", -0.4}, {"a", "c", -0.3}}},
		{"chain with implied zero", LHS, 10000, BlockSize, []Correlation{{"a", "b", 0.5}, {"b", "c", 0.5}}},
		{"four 0.8 / -0.2", LHS, 10000, 2500, []Correlation{{"c", "d", 0.8}, {"d", "e", -0.2}, {"c", "e", 0}, {"e", "f", 0.7}}},
		{"two groups, 3 public blocks", LHS, 3*BlockSize + 100, BlockSize, []Correlation{{"a", "b", -0.7}, {"e", "f", 0.45}}},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			d := mustNew(t, specs, c.method, 17, c.n, c.corr, c.block)
			cols := fillAll(d)
			target := func(a, b string) (float64, bool) {
				for _, e := range c.corr {
					if e.A == a && e.B == b || e.A == b && e.B == a {
						return e.Rho, true
					}
				}
				return 0, false
			}
			in := map[string]bool{}
			for _, e := range c.corr {
				in[e.A], in[e.B] = true, true
			}
			for i := range specs {
				for j := range i {
					a, b := specs[i].Name, specs[j].Name
					want, listed := target(a, b)
					if !listed && !(in[a] && in[b]) {
						want = 0 // independent columns: only the sampling noise bound applies
						if r := spearman(cols[i], cols[j]); math.Abs(r) > 4/math.Sqrt(float64(c.n)) {
							t.Errorf("spearman(%s, %s) = %.4f, want ≈ 0", a, b, r)
						}
						continue
					}
					if r := spearman(cols[i], cols[j]); math.Abs(r-want) > 0.02 {
						t.Errorf("spearman(%s, %s) = %.4f, want %.2f ± 0.02", a, b, r, want)
					}
				}
			}
			if c.method == LHS {
				for j, s := range specs {
					checkStrata(t, s.Name, cols[j], oracleOf(s).cdf)
				}
			}
		})
	}
}

// TestBlockMultiset: with correlations each block's values of a parameter
// are exactly those its cases have in the uncorrelated design (same
// seed): Iman–Conover only re-pairs them.
func TestBlockMultiset(t *testing.T) {
	t.Parallel()
	specs := []Spec{uni("a", 0, 1), gauss("b", 0, 1, -inf, inf), uni("c", 0, 1)}
	corr := []Correlation{{"a", "b", 0.7}}
	plain := fillAll(mustNew(t, specs, LHS, 23, 3500, nil, 1000))
	cor := mustNew(t, specs, LHS, 23, 3500, corr, 1000)
	got := fillAll(cor)
	for _, blk := range [][2]int{{0, 1000}, {1000, 2000}, {2000, 3500}} {
		if lo, hi := cor.BlockOf(blk[0]); lo != blk[0] || hi != blk[1] {
			t.Fatalf("BlockOf(%d) = [%d, %d), want %v", blk[0], lo, hi, blk)
		}
		for j := range specs {
			x := slices.Clone(plain[j][blk[0]:blk[1]])
			y := slices.Clone(got[j][blk[0]:blk[1]])
			slices.Sort(x)
			slices.Sort(y)
			if !slices.Equal(x, y) {
				t.Errorf("block %v parameter %s: values differ from the uncorrelated design's", blk, specs[j].Name)
			}
		}
	}
	// The uncorrelated parameter keeps its assignment.
	if !slices.Equal(plain[2], got[2]) {
		t.Errorf("uncorrelated parameter c changed")
	}
}

// TestCorrelationErrors: every invalid entry is reported with its index and
// a message naming it; a matrix that is not positive definite names the
// entries involved.
func TestCorrelationErrors(t *testing.T) {
	t.Parallel()
	specs := []Spec{uni("a", 0, 1), uni("b", 0, 1), uni("c", 0, 1), uni("d", 0, 1), fixed("k", 1),
		follow("f", "a"), follow("g", "k")}
	for _, c := range []struct {
		name   string
		corr   []Correlation
		index  int
		others []int
		in     []string
	}{
		{"unknown", []Correlation{{"a", "zz", 0.2}}, 0, nil, []string{`unknown parameter "zz"`}},
		{"fixed", []Correlation{{"a", "b", 0.1}, {"k", "b", 0.2}}, 1, nil, []string{"k is fixed"}},
		{"follower", []Correlation{{"f", "b", 0.2}}, 0, nil, []string{"f takes its value from a", "correlate a instead"}},
		{"follower of fixed", []Correlation{{"b", "g", 0.2}}, 0, nil, []string{"g follows the fixed parameter k"}},
		{"itself", []Correlation{{"c", "c", 0.2}}, 0, nil, []string{"c is correlated with itself"}},
		{"rho 1", []Correlation{{"a", "b", 1}}, 0, nil, []string{"strictly between -1 and 1, got 1"}},
		{"rho -1.5", []Correlation{{"a", "b", -1.5}}, 0, nil, []string{"got -1.5"}},
		{"rho NaN", []Correlation{{"a", "b", math.NaN()}}, 0, nil, []string{"got NaN"}},
		{"duplicate", []Correlation{{"a", "b", 0.2}, {"c", "d", 0.1}, {"b", "a", 0.3}}, 2, []int{0},
			[]string{"the pair b, a is already given by [a, b, 0.2]"}},
		{"not PD triangle", []Correlation{{"a", "b", 0.6}, {"b", "c", 0.6}, {"a", "c", -0.6}}, 2, []int{0, 1},
			[]string{"[a, c, -0.6] conflicts with [a, b, 0.6], [b, c, 0.6]", "not positive definite"}},
		// The implied zero of the unlisted pair (a, c) makes 0.8² + 0.8² > 1
		// impossible; the unrelated (c, d) entry is not named.
		{"not PD implied zero", []Correlation{{"c", "d", 0.3}, {"a", "b", 0.8}, {"b", "c", 0.8}}, 2, []int{1},
			[]string{"[b, c, 0.8] conflicts with [a, b, 0.8]", "pairs not listed count as 0"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			_, err := New(specs, LHS, 1, 100, c.corr)
			var list ErrorList
			if !errors.As(err, &list) || len(list) != 1 {
				t.Fatalf("error %v, want one error", err)
			}
			var ce *CorrelationError
			if !errors.As(list[0], &ce) {
				t.Fatalf("error %#v is not a *CorrelationError", list[0])
			}
			if ce.Index != c.index || !slices.Equal(ce.Others, c.others) {
				t.Errorf("Index, Others = %d, %v; want %d, %v", ce.Index, ce.Others, c.index, c.others)
			}
			for _, s := range c.in {
				if !strings.Contains(ce.Error(), s) {
					t.Errorf("%q does not mention %q", ce.Error(), s)
				}
			}
		})
	}
}

// TestCorrelationErrorsOnePass: all problems at once, in list order.
func TestCorrelationErrorsOnePass(t *testing.T) {
	t.Parallel()
	specs := []Spec{uni("a", 0, 1), uni("b", 0, 1), uni("c", 0, 1), fixed("k", 1)}
	corr := []Correlation{{"a", "b", 0.6}, {"b", "c", 0.6}, {"k", "a", 0.1}, {"a", "c", -0.6}, {"x", "a", 0.1}}
	_, err := New(specs, LHS, 1, 100, corr)
	var list ErrorList
	errors.As(err, &list)
	var got []int
	for _, e := range list {
		got = append(got, e.(*CorrelationError).Index)
	}
	if !slices.Equal(got, []int{2, 3, 4}) {
		t.Errorf("error indices %v, want [2 3 4]:\n%v", got, err)
	}
	if !strings.HasPrefix(list[0].Error(), "correlations[2]: ") {
		t.Errorf("message %q", list[0])
	}
}

// TestNormalScore: Spearman ρ_S = (6/π)·asin(r/2) for a bivariate normal
// (Kruskal 1958, from memory); the conversion inverts it.
func TestNormalScore(t *testing.T) {
	t.Parallel()
	for _, rho := range []float64{-0.99, -0.5, 0, 0.3, 0.8} {
		if got := 6 / math.Pi * math.Asin(normalScore(rho)/2); math.Abs(got-rho) > 1e-12 {
			t.Errorf("round trip of %v = %v", rho, got)
		}
	}
}

// TestPairSorts checks both pair sorts, the radix sort
// and the bucket sort used for the transformed scores, against the
// standard library's stable sort by key, on keys of every kind they may
// meet: normal scores, heavy ties, one far outlier (all other keys in one
// bucket), all equal, signed zeros, and short blocks.
func TestPairSorts(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	gens := map[string]func(m int) float64{
		"normal":  func(int) float64 { return rng.NormFloat64() },
		"ties":    func(int) float64 { return float64(rng.IntN(7)) - 3 },
		"outlier": func(m int) float64 { return map[bool]float64{true: 1e300, false: rng.Float64()}[m == 5] },
		"equal":   func(int) float64 { return 0.25 },
		"zeros":   func(m int) float64 { return map[bool]float64{true: math.Copysign(0, -1), false: 0}[m%3 == 0] },
	}
	for name, gen := range gens {
		for _, n := range []int{1, 2, 63, 64, 100, 8192, 16383} {
			p := make([]rankPair, n)
			for m := range p {
				p[m] = rankPair{orderKey(gen(m)), int32(m)}
			}
			want := slices.Clone(p)
			slices.SortStableFunc(want, func(a, b rankPair) int { return cmp.Compare(a.k, b.k) })
			radix, spread := slices.Clone(p), slices.Clone(p)
			sortPairs(radix, make([]rankPair, n))
			spreadPairs(spread, make([]rankPair, n))
			if !slices.Equal(radix, want) {
				t.Errorf("%s, %d keys: sortPairs differs from a stable sort", name, n)
			}
			if !slices.Equal(spread, want) {
				t.Errorf("%s, %d keys: spreadPairs differs from a stable sort", name, n)
			}
		}
	}
}
