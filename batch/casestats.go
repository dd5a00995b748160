package batch

import (
	"cmp"
	"context"
	"slices"
	"sync"

	"golang.org/x/sync/errgroup"

	"github.com/sweepstat/sweepstat/summarize"
)

// statsPlan lists what to compute from the columns of cases.arrow in one
// pass per column ([caseStats]).
type statsPlan struct {
	conv  summarize.Convention
	level float64 // of the percentile intervals

	// summary are the output columns described over every row
	// (summary.arrow), exceed those whose exceedance curve the report
	// draws.
	summary []string
	exceed  []string
	// spearmanOutputs are ranked against spearmanParams over the first
	// SpearmanMaxRows rows (sensitivity.arrow).
	spearmanOutputs, spearmanParams []string
	// hist are histograms of parameter columns, bins set, counts zero,
	// each counted over every row.
	hist []histogram
	// corr are the parameter columns of the report's rank-correlation
	// matrix, ranked over the first CorrelationMaxRows rows.
	corr []string
	// spearmanRows and corrRows, when positive, replace SpearmanMaxRows
	// and CorrelationMaxRows (tests).
	spearmanRows, corrRows int
	// strata, when known, are the design's strata of parameter columns
	// (one per row): such a column ranked over every row is ranked from
	// them (summarize.Ranker.RankStrata), or sorted if they do not order
	// its values.
	strata map[string][]int32
}

// caseStats are the results of a statsPlan.
type caseStats struct {
	rows      int
	summary   map[string]summarize.Stats
	exceed    map[string]exceedance
	spearman  []summarize.SpearmanRow // by output, then parameter
	hist      []histogram             // plan.hist, counted
	corrRanks [][]float64             // mid-ranks of plan.corr's first rows
}

// statsScratch is one goroutine's reusable column storage.
type statsScratch struct {
	col, sorted []float64
	rank        summarize.Ranker
	out         *summarize.Ranking // an output column's, reused
}

// paramResult and outputResult are what one column's job leaves in its
// slot.
type paramResult struct {
	rank    *summarize.Ranking // over the first SpearmanMaxRows rows, for Spearman
	corr    []float64
	histIdx int
	hist    histogram
	hasHist bool
}

type outputResult struct {
	stats  summarize.Stats
	exceed exceedance
	rho    []float64
	n      []int
}

// computeCaseStats computes plan from the columns of cf with up to
// workers goroutines, one column per goroutine at a time: the parameter
// columns first (histograms, and ranks, which Spearman keeps), then the
// output columns (each sorted once for its summary and exceedance curve,
// and ranked once for Spearman against every parameter; an output waits
// for the parameters' ranks only to correlate). Every result goes into
// its column's slot, so the results do not depend on workers. step is
// called once per column done, from the calling goroutine.
//
// Memory: one column per goroutine (8 bytes per row) with 24 bytes per
// ranked row of scratch, plus 4 bytes per ranked row of every Spearman
// parameter and 8 per head row of every rank-correlation column.
//
// The summaries, exceedance curves and rank correlations are those of
// [summarize.DescribeLevel], newExceedance and [summarize.SpearmanTable]
// (with summarize.Ranks for the correlation matrix) on the same columns,
// bit for bit.
func computeCaseStats(ctx context.Context, cf *columnFile, plan *statsPlan, workers int, step func()) (*caseStats, error) {
	rows, err := cf.numRows()
	if err != nil {
		return nil, err
	}
	if workers <= 0 {
		workers = 1
	}
	res := &caseStats{rows: rows, summary: map[string]summarize.Stats{}, exceed: map[string]exceedance{}}
	spearRows := min(rows, cmp.Or(plan.spearmanRows, SpearmanMaxRows))
	corrRows := min(rows, cmp.Or(plan.corrRows, CorrelationMaxRows))

	// The parameter columns, in first-seen order.
	var params []string
	pidx := map[string]int{}
	addParam := func(name string) int {
		if k, ok := pidx[name]; ok {
			return k
		}
		pidx[name] = len(params)
		params = append(params, name)
		return len(params) - 1
	}
	type paramJob struct {
		spearman, corr bool
		hist           int // index in plan.hist, or -1
	}
	var pjobs []paramJob
	job := func(name string) *paramJob {
		k := addParam(name)
		if k == len(pjobs) {
			pjobs = append(pjobs, paramJob{hist: -1})
		}
		return &pjobs[k]
	}
	if len(plan.spearmanOutputs) > 0 {
		for _, p := range plan.spearmanParams {
			job(p).spearman = true
		}
	}
	for _, p := range plan.corr {
		job(p).corr = true
	}
	for i := range plan.hist {
		job(plan.hist[i].Param.String()).hist = i
	}

	// The output columns, in first-seen order.
	var outputs []string
	type outputJob struct{ describe, exceed, spearman bool }
	var ojobs []outputJob
	oidx := map[string]int{}
	ojob := func(name string) *outputJob {
		k, ok := oidx[name]
		if !ok {
			k = len(outputs)
			oidx[name] = k
			outputs = append(outputs, name)
			ojobs = append(ojobs, outputJob{})
		}
		return &ojobs[k]
	}
	for _, o := range plan.summary {
		ojob(o).describe = true
	}
	for _, o := range plan.exceed {
		ojob(o).exceed = true
	}
	if len(plan.spearmanParams) > 0 {
		for _, o := range plan.spearmanOutputs {
			ojob(o).spearman = true
		}
	}

	presults := make([]paramResult, len(params))
	oresults := make([]outputResult, len(outputs))
	// Spearman needs every parameter's ranks: an output job waits for
	// them only just before it correlates, so that the first outputs are
	// read and ranked while the last parameters are.
	ready := make(chan struct{})
	left := len(params)
	var spearParams []*summarize.Ranking
	paramDone := func() {
		if left--; left == 0 {
			for _, p := range plan.spearmanParams {
				spearParams = append(spearParams, presults[pidx[p]].rank)
			}
			close(ready)
		}
	}
	if left == 0 {
		close(ready)
	}
	var mu sync.Mutex // guards left and spearParams
	err = runJobs(ctx, len(params)+len(outputs), workers, step, func(ctx context.Context, k int, sc *statsScratch) error {
		if k < len(params) {
			err := paramColumn(ctx, cf, params[k], pjobs[k].spearman, pjobs[k].corr, pjobs[k].hist, plan, spearRows, corrRows, sc, &presults[k])
			if err == nil { // after an error ready stays open: the outputs see the cancellation
				mu.Lock()
				paramDone()
				mu.Unlock()
			}
			return err
		}
		k -= len(params)
		j := ojobs[k]
		r := &oresults[k]
		col, err := cf.read(outputs[k], 0, sc.col)
		if err != nil {
			return err
		}
		sc.col = col
		var rk *summarize.Ranking
		if j.spearman {
			rk = sc.rank.RankInto(sc.out, col[:spearRows])
			sc.out = rk
			select {
			case <-ready:
			case <-ctx.Done():
				return ctx.Err()
			}
			if len(spearParams) > 0 {
				r.rho, r.n = summarize.SpearmanRankedEach(spearParams, rk)
			}
		}
		if !j.describe && !j.exceed {
			return ctx.Err()
		}
		var sorted []float64
		switch {
		case rk != nil && rk.Len() == rows && !summarize.SignedZeros(col):
			// The ranking of the whole column orders it: the sorted values
			// are DescribeLevel's (whose sort only leaves the order of −0
			// and +0 free), without sorting again.
			sorted = rk.Sorted(col, sc.sorted)
			sc.sorted = sorted
			r.stats = summarize.DescribeSorted(sorted, rows-len(sorted), plan.conv, plan.level)
		default:
			r.stats = summarize.DescribeLevel(col, plan.conv, plan.level)
			sorted = col[:r.stats.N]
		}
		if j.exceed {
			r.exceed = newExceedanceSorted(outputs[k], sorted, r.stats.NRejected, plan.conv)
		}
		return ctx.Err()
	})
	if err != nil {
		return nil, err
	}
	res.hist = make([]histogram, len(plan.hist))
	copy(res.hist, plan.hist)
	for k := range presults {
		if r := &presults[k]; r.hasHist {
			res.hist[r.histIdx] = r.hist
		}
	}
	for _, p := range plan.corr {
		res.corrRanks = append(res.corrRanks, presults[pidx[p]].corr)
	}
	for k, name := range outputs {
		r := &oresults[k]
		if ojobs[k].describe {
			res.summary[name] = r.stats
		}
		if ojobs[k].exceed {
			res.exceed[name] = r.exceed
		}
	}
	if len(spearParams) > 0 {
		for _, o := range plan.spearmanOutputs {
			r := &oresults[oidx[o]]
			for q, p := range plan.spearmanParams {
				res.spearman = append(res.spearman, summarize.SpearmanRow{Output: o, Parameter: p, Spearman: r.rho[q], N: r.n[q]})
			}
		}
	}
	return res, nil
}

// numColumns returns the number of columns computeCaseStats reads for p
// (the steps it reports).
func (p *statsPlan) numColumns() int {
	seen := map[string]bool{}
	if len(p.spearmanOutputs) > 0 {
		for _, c := range p.spearmanParams {
			seen[c] = true
		}
	}
	for _, c := range p.corr {
		seen[c] = true
	}
	for _, h := range p.hist {
		seen[h.Param.String()] = true
	}
	for _, c := range p.summary {
		seen[c] = true
	}
	for _, c := range p.exceed {
		seen[c] = true
	}
	if len(p.spearmanParams) > 0 {
		for _, c := range p.spearmanOutputs {
			seen[c] = true
		}
	}
	return len(seen)
}

// runJobs runs fn(ctx, k, scratch) for k = 0…n−1 on up to workers
// goroutines, started in order of k, each with a scratch of its own for
// the time of the call; the first error cancels the rest. step is called
// once per job done, from the calling goroutine.
func runJobs(ctx context.Context, n, workers int, step func(), fn func(ctx context.Context, k int, sc *statsScratch) error) error {
	pool := make(chan *statsScratch, workers)
	for range workers {
		pool <- &statsScratch{}
	}
	done := make(chan struct{}, n)
	finished := make(chan error, 1)
	go func() {
		g, gctx := errgroup.WithContext(ctx)
		g.SetLimit(workers)
		for k := range n {
			if gctx.Err() != nil {
				break
			}
			g.Go(func() error {
				defer func() { done <- struct{}{} }()
				if err := gctx.Err(); err != nil {
					return err
				}
				sc := <-pool
				defer func() { pool <- sc }()
				return fn(gctx, k, sc)
			})
		}
		finished <- g.Wait()
	}()
	for {
		select {
		case <-done:
			step()
		case err := <-finished:
			for len(done) > 0 {
				<-done
				step()
			}
			return err
		}
	}
}

// paramColumn reads one parameter column: its histogram over every row
// (hist ≥ 0: plan.hist[hist]), its ranks over the first spearRows rows
// for Spearman, kept compact in r.rank, and over the first corrRows rows
// for the rank-correlation matrix.
func paramColumn(ctx context.Context, cf *columnFile, name string, spearman, corr bool, hist int, plan *statsPlan, spearRows, corrRows int, sc *statsScratch, r *paramResult) error {
	head := 0
	if spearman {
		head = spearRows
	}
	if corr {
		head = max(head, corrRows)
	}
	limit := head
	if hist >= 0 {
		limit = 0 // every row
		r.hist = plan.hist[hist]
		r.hist.Counts = slices.Clone(r.hist.Counts)
		r.histIdx, r.hasHist = hist, true
	}
	if cap(sc.col) < head {
		sc.col = make([]float64, 0, head)
	}
	sc.col = sc.col[:0]
	err := cf.scan(name, limit, func(start int, vals []float64) error {
		if r.hasHist {
			for _, v := range vals {
				r.hist.add(v)
			}
		}
		if start < head {
			sc.col = append(sc.col, vals[:min(len(vals), head-start)]...)
		}
		return nil
	})
	if err != nil || !spearman && !corr {
		return err
	}
	var rk *summarize.Ranking
	if pos := plan.strata[name]; len(pos) > 0 && len(pos) == len(sc.col) {
		rk, _ = sc.rank.RankStrata(sc.col, pos)
	}
	if rk == nil {
		rk = sc.rank.Rank(sc.col)
	}
	if corr {
		r.corr = rk.Head(corrRows).Ranks(nil)
	}
	if spearman {
		rk.Compact()
		r.rank = rk
	}
	return ctx.Err()
}
