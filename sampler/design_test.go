package sampler

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"sync"
	"testing"

	"gonum.org/v1/gonum/stat"
)

func TestParseMethod(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		in   string
		want Method
		ok   bool
	}{{"lhs", LHS, true}, {"random", Random, true}, {"LHS", 0, false}, {"", 0, false}} {
		got, ok := ParseMethod(c.in)
		if got != c.want || ok != c.ok {
			t.Errorf("ParseMethod(%q) = %v, %v; want %v, %v", c.in, got, ok, c.want, c.ok)
		}
		if ok && got.String() != c.in {
			t.Errorf("%v.String() = %q, want %q", got, got.String(), c.in)
		}
	}
}

// mixedSpecs is a study-like parameter list: every distribution, a fixed
// value and a same_as chain.
func mixedSpecs() []Spec {
	return []Spec{
		fixed("s1_init", 0.18),
		follow("s1r", "s1_init"),
		tri("s2r", 0.18, 0.25, 0.35),
		uni("kr1_max", 0.2, 0.5),
		pert("kr2_max", 0.6, 0.85, 0.95),
		uni("n1", 1.5, 4),
		uni("n2", 1.5, 3.5),
		gauss("mu1_cp", 0.5, 0.05, 0.3, inf),
		logn("mu2_cp", 3, 1.2, 0.8, inf),
		follow("mu2_copy", "mu2_alias"),
		follow("mu2_alias", "mu2_cp"),
		gauss("dip_deg", 0, 4, -8, 8),
		logn("perm_md", 150, 80, -inf, inf),
	}
}

// TestStratification: every continuous parameter of an LHS design, mapped
// back through its closed-form CDF, hits each of the N strata once
// (McKay, Beckman & Conover 1979), whether the design is filled at once or
// in random slices, with and without rank correlations (blocks).
func TestStratification(t *testing.T) {
	t.Parallel()
	corr := []Correlation{{"n1", "n2", 0.4}, {"kr1_max", "mu2_cp", -0.6}, {"s2r", "n1", 0.3}, {"perm_md", "dip_deg", 0.5}}
	for _, c := range []struct {
		name  string
		n     int
		corr  []Correlation
		block int
		split bool
	}{
		{"n=1", 1, nil, BlockSize, false},
		{"n=2", 2, nil, BlockSize, false},
		{"n=7", 7, nil, BlockSize, false},
		{"n=5000", 5000, nil, BlockSize, false},
		{"n=5000 slices", 5000, nil, BlockSize, true},
		{"corr n=3 (singular blocks)", 3, corr, BlockSize, false},
		{"corr n=5000 one block", 5000, corr, BlockSize, false},
		{"corr n=5000 blocks of 700", 5000, corr, 700, false},
		{"corr n=5000 blocks of 700 slices", 5000, corr, 700, true},
		{"corr n=20000 public blocks", 20000, corr, BlockSize, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			specs := mixedSpecs()
			d := mustNew(t, specs, LHS, 3, c.n, c.corr, c.block)
			var cols [][]float64
			if c.split {
				cols = fillSlices(d, rand.New(rand.NewPCG(1, 1)))
			} else {
				cols = fillAll(d)
			}
			for j, s := range specs {
				if s.Kind == Fixed || s.Kind == SameAs {
					continue
				}
				checkStrata(t, s.Name, cols[j], oracleOf(s).cdf)
			}
		})
	}
}

// fillSlices fills d in random slices of 1 to 3000 cases, in random order,
// each with a new Filler.
func fillSlices(d *Design, rng *rand.Rand) [][]float64 {
	cols := newCols(d.NumParams(), d.N())
	type span struct{ lo, hi int }
	var spans []span
	for lo := 0; lo < d.N(); {
		hi := min(d.N(), lo+1+rng.IntN(3000))
		spans = append(spans, span{lo, hi})
		lo = hi
	}
	rng.Shuffle(len(spans), func(i, j int) { spans[i], spans[j] = spans[j], spans[i] })
	for _, s := range spans {
		sub := make([][]float64, len(cols))
		for j := range cols {
			sub[j] = cols[j][s.lo:s.hi]
		}
		d.NewFiller().Fill(s.lo, s.hi-s.lo, sub)
	}
	return cols
}

// TestDiscreteLHS: under LHS a discrete value of probability p is drawn by
// the strata whose draw falls in its CDF interval of length p, so its count
// lies strictly within 2 of N·p.
func TestDiscreteLHS(t *testing.T) {
	t.Parallel()
	const n = 9999
	s := Spec{Name: "k", Kind: Discrete, Values: []float64{2, 1, 3, 4}, Weights: []float64{0.5, 1, 2.5, 0}}
	xs := fillAll(mustNew(t, []Spec{s}, LHS, 9, n, nil, BlockSize))[0]
	count := map[float64]int{}
	for _, x := range xs {
		count[x]++
	}
	for v, p := range map[float64]float64{1: 0.25, 2: 0.125, 3: 0.625, 4: 0} {
		if math.Abs(float64(count[v])-n*p) >= 2 {
			t.Errorf("value %v drawn %d times, want %v ± 2", v, count[v], n*p)
		}
	}
}

// TestUncorrelatedColumns: LHS columns with no target are independent: the
// sample Pearson correlation of two independent columns has standard
// deviation 1/√(N−1) (Fisher 1915, Biometrika 10), so |r| < 4/√N
// (common practice), here for every pair of 6 parameters, and for one
// parameter across two streams.
func TestUncorrelatedColumns(t *testing.T) {
	t.Parallel()
	const n = 20000
	specs := []Spec{uni("a", 0, 1), uni("b", 0, 1), gauss("c", 0, 1, -inf, inf), tri("d", 0, 1, 3), uni("e", 0, 1), uni("f", 0, 1)}
	for _, m := range []Method{LHS, Random} {
		d := mustNew(t, specs, m, 11, n, nil, BlockSize)
		cols := fillAll(d)
		other := fillAll(d.Stream(1))
		lim := 4 / math.Sqrt(n)
		for a := range cols {
			for b := range a {
				if r := stat.Correlation(cols[a], cols[b], nil); math.Abs(r) > lim {
					t.Errorf("%v: corr(%s, %s) = %.4f, want |r| < %.4f", m, specs[a].Name, specs[b].Name, r, lim)
				}
			}
			if r := stat.Correlation(cols[a], other[a], nil); math.Abs(r) > lim {
				t.Errorf("%v: corr across streams 0 and 1 of %s = %.4f", m, specs[a].Name, r)
			}
		}
		// Case i's stratum is not tied to i: corr(i, u_i) is also small.
		idx := make([]float64, n)
		for i := range idx {
			idx[i] = float64(i)
		}
		if r := stat.Correlation(idx, cols[0], nil); math.Abs(r) > lim {
			t.Errorf("%v: corr(case index, a) = %.4f", m, r)
		}
	}
}

// TestStreams: Stream(0) is the design itself; another stream differs in
// every column and is itself a Latin hypercube.
func TestStreams(t *testing.T) {
	t.Parallel()
	specs := mixedSpecs()
	d := mustNew(t, specs, LHS, 5, 3000, []Correlation{{"n1", "n2", 0.5}}, 1000)
	a, b, c := fillAll(d), fillAll(d.Stream(0)), fillAll(d.Stream(7))
	for j, s := range specs {
		same := 0
		for i := range a[j] {
			if math.Float64bits(a[j][i]) != math.Float64bits(b[j][i]) {
				t.Fatalf("%s case %d: Stream(0) differs from the design", s.Name, i)
			}
			if a[j][i] == c[j][i] {
				same++
			}
		}
		if s.Kind != Fixed && specs[d.params[j].root].Kind != Fixed && same > 3 {
			t.Errorf("%s: stream 7 repeats %d values of stream 0", s.Name, same)
		}
		if s.Kind != Fixed && s.Kind != SameAs {
			checkStrata(t, s.Name+" stream 7", c[j], oracleOf(s).cdf)
		}
	}
}

// TestSameAsAndFixed: followers copy their (chained) leader bit for bit;
// fixed values are constant.
func TestSameAsAndFixed(t *testing.T) {
	t.Parallel()
	specs := mixedSpecs()
	d := mustNew(t, specs, Random, 1, 500, nil, BlockSize)
	cols := fillAll(d)
	idx := func(name string) int {
		j, ok := d.Index(name)
		if !ok {
			t.Fatalf("no parameter %s", name)
		}
		return j
	}
	for i := range d.N() {
		if cols[idx("s1_init")][i] != 0.18 || cols[idx("s1r")][i] != 0.18 {
			t.Fatalf("case %d: fixed 0.18 and its follower are %v, %v", i, cols[idx("s1_init")][i], cols[idx("s1r")][i])
		}
		m := math.Float64bits(cols[idx("mu2_cp")][i])
		if math.Float64bits(cols[idx("mu2_alias")][i]) != m || math.Float64bits(cols[idx("mu2_copy")][i]) != m {
			t.Fatalf("case %d: same_as chain differs from its leader", i)
		}
	}
	if q, want := d.Quantile(idx("mu2_copy"), 0.9), d.Quantile(idx("mu2_cp"), 0.9); q != want {
		t.Errorf("follower quantile %v, leader %v", q, want)
	}
	if got := d.Names(); strings.Join(got, ",") != strings.Join(namesOf(specs), ",") {
		t.Errorf("Names() = %v", got)
	}
}

func namesOf(specs []Spec) []string {
	var s []string
	for _, p := range specs {
		s = append(s, p.Name)
	}
	return s
}

// TestConcurrentFill: the same design filled by 1, 2 and 8 goroutines, each
// with its own Filler and random slices, is bit-identical (DESIGN §3).
func TestConcurrentFill(t *testing.T) {
	t.Parallel()
	corr := []Correlation{{"n1", "n2", 0.4}, {"kr1_max", "mu2_cp", -0.6}, {"s2r", "n1", 0.3}}
	for _, c := range []struct {
		name   string
		method Method
		corr   []Correlation
		block  int
	}{
		{"lhs", LHS, nil, BlockSize},
		{"random", Random, nil, BlockSize},
		{"lhs corr", LHS, corr, 1500},
		{"random corr", Random, corr, 1500},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			const n = 12000
			d := mustNew(t, mixedSpecs(), c.method, 42, n, c.corr, c.block)
			want := fillAll(d)
			for wi, workers := range []int{1, 2, 8} {
				got := fillConcurrent(d, workers, rand.New(rand.NewPCG(uint64(wi), 2)))
				for j := range want {
					for i := range want[j] {
						if math.Float64bits(got[j][i]) != math.Float64bits(want[j][i]) {
							t.Fatalf("%d workers: parameter %d case %d = %v, want %v", workers, j, i, got[j][i], want[j][i])
						}
					}
				}
			}
		})
	}
}

// fillConcurrent cuts [0, N) at random points and lets workers goroutines,
// one Filler each, take slices from a channel.
func fillConcurrent(d *Design, workers int, rng *rand.Rand) [][]float64 {
	cols := newCols(d.NumParams(), d.N())
	spans := make(chan [2]int, 64)
	go func() {
		for lo := 0; lo < d.N(); {
			hi := min(d.N(), lo+1+rng.IntN(2500))
			spans <- [2]int{lo, hi}
			lo = hi
		}
		close(spans)
	}()
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			f := d.NewFiller()
			sub := make([][]float64, len(cols))
			for s := range spans {
				for j := range cols {
					sub[j] = cols[j][s[0]:s[1]]
				}
				f.Fill(s[0], s[1]-s[0], sub)
			}
		})
	}
	wg.Wait()
	return cols
}

// TestParamErrors: problems with the parameter list come back together,
// each naming the parameter and field.
func TestParamErrors(t *testing.T) {
	t.Parallel()
	specs := []Spec{
		uni("a", 0, 1),
		follow("b", "nowhere"),
		follow("c", "d"), follow("d", "e"), follow("e", "c"), // cycle c → d → e → c
		follow("f", "d"), // leads into the cycle: no extra error
		follow("g", "g"),
		uni("a", 0, 1),
		uni("h", 3, 1),
		follow("i", "j"), follow("j", "i"),
	}
	_, err := New(specs, LHS, 1, 0, nil)
	var list ErrorList
	if !errors.As(err, &list) {
		t.Fatalf("error %v is not an ErrorList", err)
	}
	want := []struct {
		index       int
		field, text string
	}{
		{-1, "", "number of cases"},
		{1, "same_as", `unknown parameter "nowhere"`},
		{6, "same_as", "cannot follow itself"},
		{7, "", "duplicate parameter name"},
		{8, "max", "greater than min"},
		{2, "same_as", "same_as cycle c → d → e → c"},
		{9, "same_as", "same_as cycle i → j → i"},
	}
	if len(list) != len(want) {
		t.Fatalf("got %d errors, want %d:\n%v", len(list), len(want), err)
	}
	for k, w := range want {
		var pe *ParamError
		if w.index < 0 {
			if !strings.Contains(list[k].Error(), w.text) {
				t.Errorf("error %d = %v, want it to mention %q", k, list[k], w.text)
			}
			continue
		}
		if !errors.As(list[k], &pe) || pe.Index != w.index || pe.Field != w.field || !strings.Contains(pe.Reason, w.text) {
			t.Errorf("error %d = %#v, want index %d field %q mentioning %q", k, list[k], w.index, w.field, w.text)
		}
	}
}

func TestFillPanics(t *testing.T) {
	t.Parallel()
	d := mustNew(t, []Spec{uni("a", 0, 1)}, LHS, 1, 10, nil, BlockSize)
	for _, c := range []struct {
		name         string
		start, count int
		cols         [][]float64
	}{
		{"past N", 5, 6, newCols(1, 6)},
		{"negative", -1, 2, newCols(1, 2)},
		{"columns", 0, 2, newCols(2, 2)},
		{"short column", 0, 3, newCols(1, 2)},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			defer func() {
				if r := recover(); r == nil || !strings.HasPrefix(r.(string), "sampler: ") {
					t.Errorf("recovered %v, want a sampler panic", r)
				}
			}()
			d.Fill(c.start, c.count, c.cols)
		})
	}
}

// TestBlocks: blocks are BlockSize long, the remainder folded into the last.
func TestBlocks(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		n, i, lo, hi int
	}{
		{10, 3, 0, 10},
		{2*BlockSize - 1, 2*BlockSize - 2, 0, 2*BlockSize - 1},
		{2 * BlockSize, BlockSize, BlockSize, 2 * BlockSize},
		{3*BlockSize + 5, 3 * BlockSize, 2 * BlockSize, 3*BlockSize + 5},
		{3*BlockSize + 5, BlockSize - 1, 0, BlockSize},
	} {
		d := mustNew(t, []Spec{uni("a", 0, 1)}, LHS, 1, c.n, nil, BlockSize)
		if lo, hi := d.BlockOf(c.i); lo != c.lo || hi != c.hi {
			t.Errorf("N=%d: BlockOf(%d) = [%d, %d), want [%d, %d)", c.n, c.i, lo, hi, c.lo, c.hi)
		}
	}
}

// TestFillStrata: FillStrata writes the values Fill writes and, for each
// stratified parameter, the stratum of every draw: the one its value maps
// back to through the closed-form CDF (the test oracles), so the strata
// are a permutation of [0, N) and the values increase with the stratum
// (the order summarize.Ranker.RankStrata relies on), with and without rank
// correlations, filled in random slices.
func TestFillStrata(t *testing.T) {
	t.Parallel()
	corr := []Correlation{{"n1", "n2", 0.4}, {"kr1_max", "mu2_cp", -0.6}, {"s2r", "n1", 0.3}, {"perm_md", "dip_deg", 0.5}}
	for _, c := range []struct {
		name  string
		n     int
		corr  []Correlation
		block int
	}{
		{"n=1", 1, nil, BlockSize},
		{"n=5000", 5000, nil, BlockSize},
		{"corr n=3 (singular blocks)", 3, corr, BlockSize},
		{"corr n=5000 blocks of 700", 5000, corr, 700},
		{"corr n=20000 public blocks", 20000, corr, BlockSize},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			specs := mixedSpecs()
			d := mustNew(t, specs, LHS, 3, c.n, c.corr, c.block)
			want := fillAll(d)
			cols := newCols(d.NumParams(), d.N())
			strata := make([][]int32, d.NumParams())
			for j, s := range specs {
				if got := d.Stratified(j); got != (s.Kind != Fixed && s.Kind != SameAs) {
					t.Fatalf("%s: Stratified = %v", s.Name, got)
				}
				if d.Stratified(j) {
					strata[j] = make([]int32, d.N())
				}
			}
			rng := rand.New(rand.NewPCG(2, 2))
			for lo := 0; lo < d.N(); {
				hi := min(d.N(), lo+1+rng.IntN(3000))
				sub, ssub := make([][]float64, len(cols)), make([][]int32, len(cols))
				for j := range cols {
					sub[j] = cols[j][lo:hi]
					if strata[j] != nil {
						ssub[j] = strata[j][lo:hi]
					}
				}
				d.NewFiller().FillStrata(lo, hi-lo, sub, ssub)
				lo = hi
			}
			for j, s := range specs {
				for i := range want[j] {
					if math.Float64bits(cols[j][i]) != math.Float64bits(want[j][i]) {
						t.Fatalf("%s case %d: FillStrata %v, Fill %v", s.Name, i, cols[j][i], want[j][i])
					}
				}
				if strata[j] == nil {
					continue
				}
				cdf := oracleOf(s).cdf
				at := make([]int, d.N()) // case of each stratum
				for i := range at {
					at[i] = -1
				}
				for i, st := range strata[j] {
					if f := int(math.Floor(cdf(cols[j][i]) * float64(d.N()))); f != int(st) {
						t.Fatalf("%s case %d: stratum %d, F(x)·N = %d", s.Name, i, st, f)
					}
					if at[st] >= 0 {
						t.Fatalf("%s: cases %d and %d both in stratum %d", s.Name, at[st], i, st)
					}
					at[st] = i
				}
				for s := 1; s < len(at); s++ {
					if !(cols[j][at[s-1]] < cols[j][at[s]]) {
						t.Fatalf("%s: stratum %d holds %v, stratum %d %v", specs[j].Name, s-1, cols[j][at[s-1]], s, cols[j][at[s]])
					}
				}
			}
		})
	}
}

func TestFillStrataPanics(t *testing.T) {
	t.Parallel()
	specs := []Spec{uni("a", 0, 1), fixed("b", 2), follow("c", "a")}
	lhs := mustNew(t, specs, LHS, 1, 10, nil, BlockSize)
	random := mustNew(t, specs, Random, 1, 10, nil, BlockSize)
	for _, c := range []struct {
		name   string
		d      *Design
		strata [][]int32
	}{
		{"random method", random, [][]int32{make([]int32, 10), nil, nil}},
		{"fixed", lhs, [][]int32{nil, make([]int32, 10), nil}},
		{"same_as", lhs, [][]int32{nil, nil, make([]int32, 10)}},
		{"short", lhs, [][]int32{make([]int32, 9), nil, nil}},
		{"too few slices", lhs, [][]int32{nil}},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			defer func() {
				if r := recover(); r == nil || !strings.HasPrefix(r.(string), "sampler: ") {
					t.Errorf("recovered %v, want a sampler panic", r)
				}
			}()
			c.d.NewFiller().FillStrata(0, 10, newCols(3, 10), c.strata)
		})
	}
}
