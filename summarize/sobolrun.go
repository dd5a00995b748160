package summarize

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"

	"golang.org/x/sync/errgroup"

	"github.com/sweepstat/sweepstat/engine"
)

// SobolAssumption is the caveat every report of [Sobol]'s indices should
// carry: variance-based indices are defined for independent inputs, so the
// Sobol design draws each leader independently from its marginal and the
// study's rank correlations play no part in it.
const SobolAssumption = "Sobol indices assume independent inputs: each parameter is drawn from its marginal distribution alone and the study's rank correlations are ignored"

// SobolRow holds the Sobol indices of one parameter for one output (the
// sobol_first and sobol_total columns of sensitivity.arrow, DESIGN §6),
// estimated under [SobolAssumption].
type SobolRow struct {
	Output    string // output column name, engine.Outputs order
	Parameter string // the leader (its same_as followers move with it)

	First               float64 // first-order index S_i, see [SobolIndices]
	FirstLow, FirstHigh float64 // bootstrap bounds of First at [DefaultLevel]; NaN without bootstrap
	Total               float64 // total index S_Ti
	TotalLow, TotalHigh float64 // bootstrap bounds of Total at [DefaultLevel]; NaN without bootstrap

	N int // complete rows of the design behind the estimates (rows with a rejected run dropped)
}

// Streams of the Sobol design: the purpose words hashed with the seed.
const (
	sobolMatrixA   = 0xa5a5_0001 // matrix A of Saltelli's design
	sobolMatrixB   = 0xa5a5_0002 // matrix B
	sobolBootstrap = 0xa5a5_0003 // the bootstrap of each output
)

// sobolChunk is about the number of solves one task of [Sobol] does.
const sobolChunk = 256

// Sobol runs the variance-based sensitivity study of in: Saltelli's design
// (Saltelli et al. 2010, Comput. Phys. Commun. 181, §3; [SobolPlan]) with
// base sample size n over the d = len(in.Leaders) leaders, n·(d+2) cases
// solved with the engine at the PVI checkpoints pvi and the cut limit
// cutLimit, and [SobolIndices] for every output column of
// in.Model.Outputs(pvi). It returns one [SobolRow] per output (engine order)
// and leader (in.Leaders order), and nil without leaders.
//
// Design. The rows of the matrices A and B are independent draws: row r of
// A holds, for each leader k, Quantile_k(u) with u the k-th draw of a
// math/rand/v2 PCG stream seeded by hashing (seed, A, r); B likewise with
// its own purpose. Each u = (m + ½)/2⁵³ from the top 53 bits m of a draw,
// strictly inside (0, 1). Followers take their leader's value and fixed
// parameters their in.Base value. Inputs are independent by construction
// ([SobolAssumption]); correlations between the study's parameters are not
// imposed.
//
// Determinism. Row r depends only on (seed, matrix, r), each case's outputs
// go into their own slot, and the indices are reduced in run order after
// all solves, so the result is bit-identical for any worker count. The
// bootstrap of output j is seeded from (seed, j).
//
// Rejected cases (NaN outputs) drop their row of the design from that
// output's estimates, as [SobolIndices] documents; N in a row says how many
// remain.
//
// Concurrency. Up to workers goroutines solve (workers < 1: GOMAXPROCS),
// each with its own engine.Solver, and then reduce the outputs. progress,
// when not nil, is called after each batch of solves with the number of
// solves done so far (increasing, n·(d+2) at the end), never concurrently
// with itself. Sobol stops promptly when ctx is cancelled and returns its
// error, wrapped.
//
// Memory: the outputs of all runs, 8·n·(d+2)·len(in.Model.Outputs(pvi))
// bytes (with five checkpoints, so 18 outputs, 12 leaders and n = 10⁵: 202 MB), plus the
// bootstrap scratch of [SobolIndices] per worker.
//
// Sobol returns an error if n < 2 or bootstrap < 0.
func Sobol(ctx context.Context, in *Inputs, pvi []float64, cutLimit float64, n int, seed uint64, workers int, bootstrap int, progress func(done int)) ([]SobolRow, error) {
	if n < 2 {
		return nil, fmt.Errorf("sobol study: base sample size %d < 2", n)
	}
	if bootstrap < 0 {
		return nil, fmt.Errorf("sobol study: negative bootstrap count %d", bootstrap)
	}
	if len(in.Leaders) == 0 {
		return nil, nil
	}
	f := NewSobolRuns(in, pvi, n)
	if err := SobolSolve(ctx, in, pvi, cutLimit, n, seed, workers, 0, n, f, progress); err != nil {
		return nil, err
	}
	return SobolReduce(ctx, in, pvi, n, seed, workers, bootstrap, f)
}

// NewSobolRuns returns the storage of every run's outputs for [SobolSolve]
// and [SobolReduce]: f[j][run] is output j (engine.Outputs order) of run
// number block·n + row of the Saltelli design ([SobolPlan]), NaN until
// solved.
func NewSobolRuns(in *Inputs, pvi []float64, n int) [][]float64 {
	runs := n * (len(in.Leaders) + 2)
	f := make([][]float64, len(in.Model.Outputs(pvi)))
	for j := range f {
		f[j] = make([]float64, runs)
		for k := range f[j] {
			f[j][k] = math.NaN()
		}
	}
	return f
}

// SobolSolve solves the runs of rows [lo, hi) of the design of [Sobol]
// (each row's d+2 runs) into f, which [NewSobolRuns] made, and leaves the
// other rows alone: shards of a study solve disjoint row ranges and a
// merge puts them together before [SobolReduce]. Row r depends only on
// (seed, matrix, r), so any split gives the same values.
func SobolSolve(ctx context.Context, in *Inputs, pvi []float64, cutLimit float64, n int, seed uint64, workers int, lo, hi int, f [][]float64, progress func(done int)) error {
	d := len(in.Leaders)
	if lo < 0 || hi > n || lo > hi {
		return fmt.Errorf("sobol study: rows [%d, %d) outside [0, %d)", lo, hi, n)
	}
	for k := range in.Leaders {
		if in.Leaders[k].Quantile == nil {
			return errors.New("sobol study: leader " + in.Leaders[k].Name() + " has no Quantile")
		}
	}
	if workers < 1 {
		workers = runtime.GOMAXPROCS(0)
	}
	plan := SobolPlan{N: n, D: d}
	outs := in.Model.Outputs(pvi)

	// Tasks of whole rows, each solving a row's d+2 runs.
	pool := make(chan *sobolWorker, workers) // one Solver per running task
	for range workers {
		pool <- newSobolWorker(d, in.Model)
	}
	var mu sync.Mutex
	done := 0
	rowsPer := max(1, sobolChunk/(d+2))
	g, gctx := errgroup.WithContext(ctx)
	g.SetLimit(workers)
	for start := lo; start < hi && gctx.Err() == nil; start += rowsPer {
		end := min(hi, start+rowsPer)
		g.Go(func() error {
			w := <-pool
			defer func() { pool <- w }()
			for r := start; r < end; r++ {
				if err := gctx.Err(); err != nil {
					return err
				}
				w.solveRow(in, plan, r, seed, pvi, cutLimit, outs, f)
			}
			if progress != nil {
				mu.Lock()
				done += (end - start) * (d + 2)
				progress(done)
				mu.Unlock()
			}
			return nil
		})
	}
	if err := g.Wait(); err != nil {
		return fmt.Errorf("sobol study: %w", err)
	}
	if err := ctx.Err(); err != nil { // cancelled between tasks
		return fmt.Errorf("sobol study: %w", err)
	}
	return nil
}

// SobolReduce computes the indices of [Sobol] from the outputs f of every
// run (all rows solved by [SobolSolve]).
func SobolReduce(ctx context.Context, in *Inputs, pvi []float64, n int, seed uint64, workers int, bootstrap int, f [][]float64) ([]SobolRow, error) {
	d := len(in.Leaders)
	if d == 0 {
		return nil, nil
	}
	if bootstrap < 0 {
		return nil, fmt.Errorf("sobol study: negative bootstrap count %d", bootstrap)
	}
	if workers < 1 {
		workers = runtime.GOMAXPROCS(0)
	}
	plan := SobolPlan{N: n, D: d}
	outs := in.Model.Outputs(pvi)
	if len(f) != len(outs) {
		return nil, fmt.Errorf("sobol study: %d output columns of runs, want %d", len(f), len(outs))
	}
	for j := range f {
		if len(f[j]) != plan.Runs() {
			return nil, fmt.Errorf("sobol study: output %s has %d runs, want %d", outs[j].Name, len(f[j]), plan.Runs())
		}
	}
	idx := make([][]SobolIndex, len(outs))
	g, gctx := errgroup.WithContext(ctx)
	g.SetLimit(workers)
	for j := range outs {
		g.Go(func() error {
			if err := gctx.Err(); err != nil {
				return err
			}
			fA, fB, fAB := plan.Split(f[j])
			idx[j] = SobolIndices(fA, fB, fAB, bootstrap, DefaultLevel, streamSeed(seed, sobolBootstrap, uint64(j)))
			return nil
		})
	}
	if err := g.Wait(); err != nil {
		return nil, fmt.Errorf("sobol study: %w", err)
	}

	rows := make([]SobolRow, 0, len(outs)*d)
	for j, o := range outs {
		for k, s := range idx[j] {
			rows = append(rows, SobolRow{
				Output: o.Name, Parameter: in.Leaders[k].Name(),
				First: s.First, FirstLow: s.FirstLow, FirstHigh: s.FirstHigh,
				Total: s.Total, TotalLow: s.TotalLow, TotalHigh: s.TotalHigh,
				N: s.N,
			})
		}
	}
	return rows, nil
}

// sobolWorker is the scratch of one running task of [Sobol].
type sobolWorker struct {
	s       engine.Solver
	r       engine.Result
	a, b, x []float64 // leader values of row r of A and B, and of one run
}

func newSobolWorker(d int, m *engine.Model) *sobolWorker {
	return &sobolWorker{s: engine.Solver{Model: m}, a: make([]float64, d), b: make([]float64, d), x: make([]float64, d)}
}

// solveRow solves the d+2 runs of row r (A, B and every A_B^i) and stores
// their outputs in f at their run indices.
func (w *sobolWorker) solveRow(in *Inputs, plan SobolPlan, r int, seed uint64, pvi []float64, cutLimit float64, outs []engine.Output, f [][]float64) {
	sobolPoint(w.a, in, seed, sobolMatrixA, r)
	sobolPoint(w.b, in, seed, sobolMatrixB, r)
	for block := range plan.D + 2 {
		plan.Point(w.x, w.a, w.b, block)
		p := in.Base
		for k, v := range w.x {
			in.set(&p, k, v)
		}
		w.s.SolveCase(&p, pvi, cutLimit, &w.r)
		run := block*plan.N + r
		for j, o := range outs {
			f[j][run] = o.Get(&w.r)
		}
	}
}

// sobolPoint writes into dst row r of the design matrix named by purpose:
// leader k's quantile at the k-th uniform of the row's own PCG stream.
func sobolPoint(dst []float64, in *Inputs, seed, purpose uint64, r int) {
	var src rand.PCG
	src.Seed(streamSeeds(seed, purpose, uint64(r)))
	for k := range dst {
		dst[k] = in.Leaders[k].Quantile(openUnit(src.Uint64()))
	}
}

// openUnit maps 64 random bits to (m + ½)/2⁵³, m their top 53 bits: a
// uniform strictly inside (0, 1), so a quantile function never sees 0 or 1.
func openUnit(x uint64) float64 {
	return (float64(x>>11) + 0.5) * 0x1p-53
}

// streamSeeds hashes (seed, purpose, index) into the two seed words of a
// PCG stream with SplitMix64 (STYLE §7: Go's PCG has one fixed increment,
// so raw sequential seeds would be nearby points of one sequence).
func streamSeeds(seed, purpose, index uint64) (uint64, uint64) {
	h := streamSeed(seed, purpose, index)
	return h, splitMix64(h ^ sobolStream)
}

// streamSeed hashes (seed, purpose, index) into one word.
func streamSeed(seed, purpose, index uint64) uint64 {
	return splitMix64(splitMix64(splitMix64(seed)^purpose) ^ index)
}
