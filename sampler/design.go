package sampler

import (
	"fmt"
	"math"
	"math/bits"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// Method is a sampling method.
type Method int

// The sampling methods of a study file's `sampling:` key.
const (
	LHS    Method = iota // Latin hypercube (the default): each parameter's N strata each hit once
	Random               // independent uniform draws
)

// String returns the method's name in a study file: "lhs" or "random".
func (m Method) String() string {
	switch m {
	case LHS:
		return "lhs"
	case Random:
		return "random"
	}
	return fmt.Sprintf("Method(%d)", int(m))
}

// ParseMethod returns the method named name ("lhs" or "random").
func ParseMethod(name string) (Method, bool) {
	switch name {
	case "lhs":
		return LHS, true
	case "random":
		return Random, true
	}
	return 0, false
}

// Correlation is one entry [A, B, Rho] of a study's `correlations:` list: the
// target Spearman rank correlation Rho between parameters A and B.
type Correlation struct {
	A, B string
	Rho  float64
}

// BlockSize is the number of cases in which rank correlations are imposed
// together. Cases are split into blocks [b·BlockSize, (b+1)·BlockSize); the
// remainder of N/BlockSize is folded into the last block, so every block
// holds between BlockSize and 2·BlockSize − 1 cases (a design of fewer than
// 2·BlockSize cases is one block). It is part of the definition of a
// correlated design: changing it changes the draws.
const BlockSize = 8192

// MaxCases is the largest case count [New] accepts (2⁴⁰).
const MaxCases = 1 << 40

// param is one parameter of a design.
type param struct {
	name string
	kind Kind
	dist Dist // its marginal: the leader's for a follower, the point mass for a fixed value
	root int  // SameAs: index of the resolved (non-SameAs) leader; otherwise its own index
	corr int  // column among the correlated parameters, or -1

	perm       permutation // LHS strata
	jkey, rkey uint64      // LHS jitter, random-method draws
}

// Design is a sampling design: N cases of a list of parameters, each case's
// values a pure function of (specs, method, seed, stream, N, case index).
// A Design is immutable after [New] and safe for concurrent use; filling
// cases concurrently needs one [Filler] per goroutine.
type Design struct {
	n      int
	method Method
	seed   uint64
	stream uint64
	params []param
	byName map[string]int

	jshift uint    // LHS jitter: keep the top 64 − jshift bits of a hash …
	jscale float64 // … and scale them by 2^−(64 − jshift)

	// Rank correlation (Iman–Conover by blocks); corrIdx is empty without.
	corrIdx    []int         // parameters taking part, ascending spec index
	cholP      *mat.TriDense // lower Cholesky factor of the normal-score target matrix
	block      int           // block size
	nBlocks    int
	scoresFull []float64 // van der Waerden scores for a block of size block
	scoresLast []float64 // and for the last block
}

// New returns the design of n cases of the parameters specs (in that order)
// drawn with method from seed, with the rank correlations corr imposed.
//
// Every spec must pass [Spec.Validate], names must be unique and non-empty,
// a SameAs leader must exist and chains of them must not form a cycle. Each
// correlation must name two different, known parameters that are neither
// fixed nor SameAs followers (correlate the leader), each pair at most once,
// with |Rho| < 1, and all of them together must form a positive definite
// matrix (pairs not listed count as 0). New checks everything in one pass and
// returns every problem found as an [ErrorList] of [*ParamError] and
// [*CorrelationError] (plus plain errors for n and method); it returns no
// design unless there are none. 1 ≤ n ≤ [MaxCases].
func New(specs []Spec, method Method, seed uint64, n int, corr []Correlation) (*Design, error) {
	return newDesign(specs, method, seed, n, corr, BlockSize)
}

func newDesign(specs []Spec, method Method, seed uint64, n int, corr []Correlation, block int) (*Design, error) {
	var errs ErrorList
	if method != LHS && method != Random {
		errs = append(errs, fmt.Errorf("unknown sampling method %v", method))
	}
	if n < 1 || n > MaxCases {
		errs = append(errs, fmt.Errorf("the number of cases must lie in [1, %d], got %d", MaxCases, n))
	}

	byName := make(map[string]int, len(specs))
	valid := make([]bool, len(specs))
	for j := range specs {
		s := &specs[j]
		valid[j] = true
		if s.Name == "" {
			errs = append(errs, &ParamError{Index: j, Reason: fmt.Sprintf("parameter %d has no name", j)})
		} else if k, dup := byName[s.Name]; dup {
			errs = append(errs, &ParamError{Index: j, Name: s.Name,
				Reason: fmt.Sprintf("duplicate parameter name (parameter %d has it too)", k)})
		} else {
			byName[s.Name] = j
		}
		for _, fe := range s.Validate() {
			valid[j] = false
			errs = append(errs, &ParamError{Index: j, Name: s.Name, Field: fe.Field, Reason: fe.Reason})
		}
		if valid[j] && s.Kind == SameAs {
			if _, ok := byName[s.SameAs]; !ok && !nameIn(specs, s.SameAs) {
				valid[j] = false
				errs = append(errs, &ParamError{Index: j, Name: s.Name, Field: "same_as",
					Reason: fmt.Sprintf("unknown parameter %q", s.SameAs)})
			}
		}
	}
	root, cycleErrs := resolveLeaders(specs, byName, valid)
	errs = append(errs, cycleErrs...)

	accepted, corrErrs := checkCorrelations(corr, specs, byName, root)
	errs = append(errs, corrErrs...)
	if len(errs) > 0 {
		return nil, errs
	}

	d := &Design{n: n, method: method, seed: seed, byName: byName, block: block}
	d.params = make([]param, len(specs))
	for j, s := range specs {
		p := &d.params[j]
		p.name, p.kind, p.root, p.corr = s.Name, s.Kind, j, -1
		if s.Kind != SameAs {
			p.dist = newDist(s)
		}
	}
	for j := range d.params {
		if p := &d.params[j]; p.kind == SameAs {
			p.root = root[j]
			p.dist = d.params[p.root].dist
		}
	}
	k := max(2, bits.Len64(uint64(n-1))) // bits of the LHS permutation domain
	b := 50 - k                          // jitter bits: stratum + jitter exact in 51 bits
	d.jshift, d.jscale = uint(64-b), 1/float64(uint64(1)<<b)
	d.setKeys()
	d.setCorrelation(corr, accepted, specs, byName)
	return d, nil
}

// nameIn reports whether a spec named name exists (byName holds only the
// names seen so far while specs are being checked).
func nameIn(specs []Spec, name string) bool {
	for i := range specs {
		if specs[i].Name == name {
			return true
		}
	}
	return false
}

// resolveLeaders returns, for each spec, the index of the non-SameAs
// parameter its same_as chain ends at (its own index if it is not SameAs; −1
// if the chain is broken), and an error for each cycle found, reported once
// at its member with the smallest index.
func resolveLeaders(specs []Spec, byName map[string]int, valid []bool) ([]int, ErrorList) {
	const (
		todo = iota
		onPath
		done
	)
	var errs ErrorList
	root := make([]int, len(specs))
	state := make([]int, len(specs))
	for j := range specs {
		var path []int
		cur, r := j, -1
		for {
			if specs[cur].Kind != SameAs {
				r = cur
				break
			}
			if state[cur] == done {
				r = root[cur]
				break
			}
			if state[cur] == onPath {
				cycle := path[slices.Index(path, cur):]
				first := slices.Min(cycle)
				at := slices.Index(cycle, first)
				names := make([]string, 0, len(cycle)+1)
				for i := range cycle {
					names = append(names, specs[cycle[(at+i)%len(cycle)]].Name)
				}
				names = append(names, specs[first].Name)
				errs = append(errs, &ParamError{Index: first, Name: specs[first].Name, Field: "same_as",
					Reason: "same_as cycle " + strings.Join(names, " → ")})
				break
			}
			leader, ok := byName[specs[cur].SameAs]
			if !ok || !valid[cur] {
				break
			}
			state[cur] = onPath
			path = append(path, cur)
			cur = leader
		}
		for _, p := range path {
			root[p], state[p] = r, done
		}
		if specs[j].Kind != SameAs {
			root[j] = j
		}
	}
	return root, errs
}

// setKeys derives every parameter's hash keys from (seed, stream, index).
func (d *Design) setKeys() {
	for j := range d.params {
		p := &d.params[j]
		base := hashWords(d.seed, d.stream, uint64(j))
		p.perm = newPermutation(uint64(d.n), hashWords(base, tagFeistel))
		p.jkey = hashWords(base, tagJitter)
		p.rkey = hashWords(base, tagRandom)
	}
}

// N returns the number of cases.
func (d *Design) N() int { return d.n }

// Method returns the sampling method.
func (d *Design) Method() Method { return d.method }

// Seed returns the seed.
func (d *Design) Seed() uint64 { return d.seed }

// NumParams returns the number of parameters (fixed and same_as included).
func (d *Design) NumParams() int { return len(d.params) }

// Names returns the parameter names in spec order (a new slice).
func (d *Design) Names() []string {
	names := make([]string, len(d.params))
	for j := range d.params {
		names[j] = d.params[j].name
	}
	return names
}

// Index returns the position of the parameter called name.
func (d *Design) Index(name string) (int, bool) {
	j, ok := d.byName[name]
	return j, ok
}

// Dist returns the marginal distribution of parameter j (its leader's for a
// same_as follower, a point mass for a fixed value). It panics if j is out
// of range.
func (d *Design) Dist(j int) Dist { return d.params[j].dist }

// Quantile returns the p-quantile of parameter j's marginal distribution
// (see [Dist]): the value a case with uniform draw p gets, and what a
// tornado uses for its low, base and high inputs. It returns NaN if p is NaN
// or outside [0, 1] and panics if j is out of range.
func (d *Design) Quantile(j int, p float64) float64 { return d.params[j].dist.Quantile(p) }

// Correlated reports whether parameter j takes part in a rank correlation
// (a same_as follower does when its leader does).
func (d *Design) Correlated(j int) bool { return d.params[d.params[j].root].corr >= 0 }

// BlockOf returns the block [start, end) of cases that contains case i (see
// [BlockSize]). A correlated design is cheapest to fill in whole blocks,
// since filling part of a block builds all of it. It panics if i is not in
// [0, N).
func (d *Design) BlockOf(i int) (start, end int) {
	if i < 0 || i >= d.n {
		panic("sampler: case index out of range")
	}
	return d.blockRange(d.blockIndex(i))
}

func (d *Design) blockIndex(i int) int { return min(i/d.block, d.nBlocks-1) }

func (d *Design) blockRange(b int) (lo, hi int) {
	lo, hi = b*d.block, (b+1)*d.block
	if b == d.nBlocks-1 {
		hi = d.n
	}
	return lo, hi
}

// Stream returns the design drawn from the independent stream k: same
// parameters, method, N and correlations, every draw from different hash
// keys (k = 0 is the receiver's own stream, as returned by [New]). Sobol
// estimators take their two independent matrices from two streams.
func (d *Design) Stream(k uint64) *Design {
	e := *d
	e.stream = k
	e.params = slices.Clone(d.params)
	e.setKeys()
	return &e
}

// uniform returns case i's uniform draw for parameter p before any
// correlation is imposed, strictly inside (0, 1).
//
// LHS: u = (π(i) + v)/N with π a keyed permutation of [0, N) (the stratum)
// and v in (0, 1) a jitter with 50 − k bits (2^k ≥ N), so that π(i) + v is
// exact and at least 2^(k−51) away from an integer: u falls strictly inside
// stratum π(i) after rounding (McKay, Beckman & Conover 1979).
// Random: u = (h + ½)/2⁵² from the top 52 bits h of a hash of (key, i).
func (d *Design) uniform(p *param, i int) float64 {
	if d.method == Random {
		return (float64(nth(p.rkey, uint64(i))>>12) + 0.5) * 0x1p-52
	}
	_, u := d.lhsUniform(p, i)
	return u
}

// lhsUniform returns the stratum s = π(i) of case i's Latin hypercube
// draw of p and the draw u itself (see uniform).
func (d *Design) lhsUniform(p *param, i int) (s uint64, u float64) {
	s = p.perm.at(uint64(i))
	v := (float64(nth(p.jkey, uint64(i))>>d.jshift) + 0.5) * d.jscale
	return s, (float64(s) + v) / float64(d.n)
}

// Filler fills cases of one [Design]. It holds scratch space and the last
// correlation block it built, so it must not be used by two goroutines at
// once; use one Filler per goroutine. Its memory is independent of N: for a
// correlated design about (2·m·8 + 24)·B bytes, m the number of correlated
// parameters and B ≤ 2·BlockSize the largest block; next to nothing
// otherwise.
type Filler struct {
	d     *Design
	block int         // block held in u, −1 if none
	u     [][]float64 // correlated parameter c: uniform of case lo+m after IC
	r     []float64   // scores, row-major n × m
	tmp   []float64
	pairs []rankPair
	buf   []rankPair
	s     []float64 // m × m transform
}

// NewFiller returns a Filler for d.
func (d *Design) NewFiller() *Filler {
	f := &Filler{d: d, block: -1}
	if mc := len(d.corrIdx); mc > 0 {
		lo, hi := d.blockRange(d.nBlocks - 1) // the last block is the largest
		nb := hi - lo
		f.u = make([][]float64, mc)
		for c := range f.u {
			f.u[c] = make([]float64, nb)
		}
		f.r = make([]float64, nb*mc)
		f.tmp = make([]float64, nb)
		f.pairs = make([]rankPair, nb)
		f.buf = make([]rankPair, nb)
		f.s = make([]float64, mc*mc)
	}
	return f
}

// Fill writes cases [start, start+count) column-wise: cols[j][k] becomes
// parameter j (spec order) of case start+k. It allocates a [Filler] per call;
// use [Design.NewFiller] to fill many slices.
func (d *Design) Fill(start, count int, cols [][]float64) { d.NewFiller().Fill(start, count, cols) }

// Fill writes cases [start, start+count) column-wise: cols[j][k] becomes
// parameter j (spec order) of case start+k; values beyond count are left
// alone. The values depend only on the design and the case indices, never on
// how the range is split or which Filler fills it. Fill panics if the range
// is not within [0, N), len(cols) is not the number of parameters or a
// column is shorter than count.
func (f *Filler) Fill(start, count int, cols [][]float64) { f.fill(start, count, cols, nil) }

// Stratified reports whether parameter j is drawn once per stratum: by
// Latin hypercube sampling, with a distribution of its own (not fixed,
// not same_as). Its N draws then lie one in each of the N strata
// [s/N, (s+1)/N) of the unit interval, rank correlations imposed or not
// (they only pair the draws differently), and [Filler.FillStrata] tells
// which draw lies in which.
func (d *Design) Stratified(j int) bool {
	k := d.params[j].kind
	return d.method == LHS && k != Fixed && k != SameAs
}

// FillStrata is [Filler.Fill] that also writes, for every parameter j with
// a non-nil strata[j], the stratum of each case's draw: strata[j][k] = s
// when the uniform behind parameter j of case start+k lies in
// [s/N, (s+1)/N). Over all N cases the strata of a parameter are a
// permutation of [0, N), and as a quantile function does not decrease,
// the stratum of a value is its 0-based position among the parameter's
// values in increasing order, up to ties and rounding (which a caller
// relying on it checks: see summarize.Ranker.RankStrata).
//
// FillStrata panics, besides as Fill does, if len(strata) is not the
// number of parameters, a non-nil strata[j] is shorter than count, or
// belongs to a parameter that is not [Design.Stratified], or N exceeds
// 2³¹ − 1 (a stratum would not fit an int32).
func (f *Filler) FillStrata(start, count int, cols [][]float64, strata [][]int32) {
	d := f.d
	if len(strata) != len(d.params) {
		panic("sampler: FillStrata needs one strata slice per parameter")
	}
	for j, st := range strata {
		switch {
		case st == nil:
		case !d.Stratified(j):
			panic("sampler: FillStrata of a parameter that is not stratified")
		case len(st) < count:
			panic("sampler: FillStrata strata slice shorter than count")
		case d.n > math.MaxInt32:
			panic("sampler: FillStrata with more than 2³¹ − 1 cases")
		}
	}
	f.fill(start, count, cols, strata)
}

// fill is Fill, writing the strata too when strata is not nil.
func (f *Filler) fill(start, count int, cols [][]float64, strata [][]int32) {
	d := f.d
	if start < 0 || count < 0 || start > d.n-count {
		panic("sampler: Fill range out of [0, N)")
	}
	if len(cols) != len(d.params) {
		panic("sampler: Fill needs one column per parameter")
	}
	for j := range cols {
		if len(cols[j]) < count {
			panic("sampler: Fill column shorter than count")
		}
	}
	stratum := func(j int) []int32 {
		if strata == nil {
			return nil
		}
		return strata[j]
	}
	for j := range d.params {
		p := &d.params[j]
		col := cols[j][:count]
		switch {
		case p.kind == SameAs || p.corr >= 0:
			// below
		case p.kind == Fixed:
			v := p.dist.Quantile(0.5)
			for k := range col {
				col[k] = v
			}
		case d.method == Random:
			for k := range col {
				col[k] = p.dist.Quantile((float64(nth(p.rkey, uint64(start+k))>>12) + 0.5) * 0x1p-52)
			}
		default:
			fn := float64(d.n)
			st := stratum(j)
			for k := range col {
				i := uint64(start + k)
				s := p.perm.at(i)
				v := (float64(nth(p.jkey, i)>>d.jshift) + 0.5) * d.jscale
				col[k] = p.dist.Quantile((float64(s) + v) / fn)
				if st != nil {
					st[k] = int32(s)
				}
			}
		}
	}
	if len(d.corrIdx) > 0 {
		end := start + count
		for i := start; i < end; {
			b := d.blockIndex(i)
			lo, hi := d.blockRange(b)
			f.build(b)
			seg := min(end, hi)
			for c, j := range d.corrIdx {
				dist, u, col := d.params[j].dist, f.u[c], cols[j]
				for ii := i; ii < seg; ii++ {
					col[ii-start] = dist.Quantile(u[ii-lo])
				}
				if st := stratum(j); st != nil {
					// u·N rounds to within N·u·2⁻⁵² < 2^(k−52) of the
					// exact s + v, which lies at least 2^(k−51) inside
					// stratum s (see uniform): the floor is s.
					fn := float64(d.n)
					for ii := i; ii < seg; ii++ {
						st[ii-start] = int32(u[ii-lo] * fn)
					}
				}
			}
			i = seg
		}
	}
	for j := range d.params {
		if p := &d.params[j]; p.kind == SameAs {
			copy(cols[j][:count], cols[p.root][:count])
		}
	}
}
