package batch

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"time"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"golang.org/x/sync/errgroup"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// File names inside a study's output folder (DESIGN §6).
const (
	CasesFile       = "cases.arrow"
	SummaryFile     = "summary.arrow"
	TornadoFile     = "tornado.arrow"
	SensitivityFile = "sensitivity.arrow"
	CurvesFile      = "curves.arrow"
	ReportFile      = "report.html"
	RunFile         = "run.json"
)

// NewDesign builds the sampling design of st. Problems the sampler finds
// (a correlation matrix that is not positive definite, say) come back as a
// studies.ErrorList positioned in the study file.
func NewDesign(st *studies.Study) (*sampler.Design, error) {
	method, ok := sampler.ParseMethod(st.Sampling)
	if !ok {
		return nil, fmt.Errorf("batch: unknown sampling %q", st.Sampling)
	}
	corr := make([]sampler.Correlation, len(st.Correlations))
	for i, c := range st.Correlations {
		corr[i] = sampler.Correlation{A: c.A, B: c.B, Rho: c.Rho}
	}
	d, err := sampler.New(st.Specs(), method, st.Seed, st.Cases, corr)
	if err == nil {
		return d, nil
	}
	var list studies.ErrorList
	for _, e := range unwrapAll(err) {
		var ce *sampler.CorrelationError
		var pe *sampler.ParamError
		switch {
		case errors.As(e, &ce):
			list.Add(st.CorrelationError(ce.Index, e))
		case errors.As(e, &pe) && pe.Index >= 0 && pe.Index < int(engine.NumParams):
			list.Add(st.ParameterError(engine.Param(pe.Index), pe.Field, e))
		default:
			list.Add(st.ParameterError(engine.Param(0), "", e))
		}
	}
	list.Sort()
	return nil, list
}

func unwrapAll(err error) []error {
	if m, ok := err.(interface{ Unwrap() []error }); ok {
		return m.Unwrap()
	}
	return []error{err}
}

// casesSchema returns the schema of cases.arrow: the case index, every
// parameter the study's model reads, every output column and the status.
func casesSchema(st *studies.Study, outs []engine.Output) *arrow.Schema {
	fields := []arrow.Field{field(engine.ColCase, arrow.PrimitiveTypes.Int64, "")}
	for _, p := range st.Model().Params() {
		fields = append(fields, field(p.String(), arrow.PrimitiveTypes.Float64, p.Unit()))
	}
	for _, o := range outs {
		fields = append(fields, field(o.Name, arrow.PrimitiveTypes.Float64, o.Unit))
	}
	fields = append(fields, field(engine.ColStatus, arrow.BinaryTypes.String, ""))
	return arrow.NewSchema(fields, nil)
}

// chunk is one record batch of cases: sampled inputs and solved outputs,
// column-wise.
type chunk struct {
	start, count int
	in           [][]float64 // engine.NumParams columns, resolved by the model
	out          [][]float64 // one column per output
	status       []string
	cases        []int64 // case numbers, filled by the writer
	done         chan struct{}
}

// worker holds one goroutine's sampler and solver state.
type worker struct {
	fill   *sampler.Filler
	solver engine.Solver
	res    engine.Result
	lay    *caseLayout
	strata [][]int32 // the run's strata (nil: none kept) …
	sub    [][]int32 // … and the chunk's part of them
}

// caseLayout says how a sampled row becomes engine inputs, worked out once
// per run: the inputs every case shares, the design columns that vary from
// case to case, and the parameter columns written back after the solve.
type caseLayout struct {
	base    engine.Params
	vary    []int          // design columns that are not fixed
	param   []engine.Param // the engine parameter of each design column
	written []engine.Param // the cases.arrow parameter columns
}

func newCaseLayout(st *studies.Study, specs []sampler.Spec) *caseLayout {
	l := &caseLayout{param: st.ParamIndex(), written: st.Model().Params()}
	row := make([]float64, len(specs))
	for j, sp := range specs {
		if sp.Kind == sampler.Fixed {
			row[j] = sp.Value
		} else {
			l.vary = append(l.vary, j)
		}
	}
	l.base = st.Case(row)
	return l
}

// solveChunk samples and solves the cases of c.
func (w *worker) solveChunk(st *studies.Study, outs []engine.Output, c *chunk) {
	if w.strata != nil {
		for j, s := range w.strata {
			if s != nil {
				w.sub[j] = s[c.start : c.start+c.count]
			}
		}
		w.fill.FillStrata(c.start, c.count, c.in, w.sub)
	} else {
		w.fill.Fill(c.start, c.count, c.in)
	}
	lay := w.lay
	for k := range c.count {
		p := lay.base
		for _, j := range lay.vary {
			p[lay.param[j]] = c.in[j][k]
		}
		w.solver.SolveCase(&p, st.Report.PVI, st.Report.CutLimit, &w.res)
		// The derived inputs (a rock sample's end points, the
		// cross-section, the flux) are written as the case used them.
		in := w.solver.Inputs()
		for _, q := range lay.written {
			c.in[q][k] = in[q]
		}
		for o := range outs {
			c.out[o][k] = outs[o].Get(&w.res)
		}
		if w.res.Status == engine.StatusOK {
			c.status[k] = "ok"
		} else {
			c.status[k] = w.res.StatusText()
		}
	}
}

// Run solves every case of st and writes the study's outputs into
// opt.Out/<st.Name>: cases.arrow streamed in case order, then the
// summaries computed from it, the report and run.json. Everything is
// written into a hidden staging folder that replaces the final folder
// only when complete; an existing folder is kept unless opt.Force is set,
// and is never removed before the new outputs are complete.
//
// With opt.Resume, an existing folder whose run.json matches st (study
// hash, seed, cases), opt.Version and the SHA-256 of every file it lists
// is kept: Run returns that Info with Skipped set. Any other existing
// folder is replaced as with Force, except one holding shards that are not
// merged yet (an error that is ErrExists).
//
// With opt.Shard set, Run runs [RunShard] instead and returns an Info
// describing the shard (Info.Shard set), which it does not write.
func Run(ctx context.Context, st *studies.Study, opt Options) (*Info, error) {
	if !opt.Shard.IsZero() {
		m, err := RunShard(ctx, st, opt)
		if err != nil {
			return nil, err
		}
		return m.info(st), nil
	}
	final := filepath.Join(opt.Out, st.Name)
	if _, err := os.Stat(final); err == nil {
		switch {
		case opt.Resume:
			if info := completeRun(final, st, opt.Version); info != nil {
				info.Skipped = true
				return info, nil
			}
			if pathExists(filepath.Join(final, ShardsDir)) {
				return nil, fmt.Errorf("%s holds shards not merged yet (run sweepstat merge, or --force to replace the folder): %w", final, ErrExists)
			}
		case !opt.Force:
			return nil, fmt.Errorf("%s: %w", final, ErrExists)
		}
	}
	r, err := newStudyRun(st, opt)
	if err != nil {
		return nil, err
	}
	if err := r.begin(); err != nil {
		return nil, err
	}
	ok := false
	defer func() { r.end(ok) }()

	start := r.now()
	info := r.info
	info.Started = start.UTC().Format(time.RFC3339)
	r.strata = caseStrata(st, r.design)
	rejected, sum, err := writeCases(ctx, st, r.design, filepath.Join(r.stage, CasesFile), 0, st.Cases, r.workers, r.opt, r.mem, &r.durable, r.strata)
	if err != nil {
		return nil, err
	}
	info.casesSHA256 = sum
	solved := r.now()
	info.Seconds["solve"] = solved.Sub(start).Seconds()
	info.CasesPerSec = float64(st.Cases) / max(info.Seconds["solve"], 1e-9)
	info.setRejected(rejected)
	if err := r.finish(ctx, start, solved); err != nil {
		return nil, err
	}
	if err := swapIn(r.stage, r.final); err != nil {
		return nil, err
	}
	ok = true
	return info, nil
}

// studyRun is what writing one study's outputs needs; [Run] and [Merge]
// share it: a staging folder is filled with cases.arrow (solved or
// merged), then finish adds the summaries, the report and run.json.
type studyRun struct {
	st      *studies.Study
	design  *sampler.Design
	opt     Options
	mem     memory.Allocator
	workers int
	now     func() time.Time
	final   string // opt.Out/<study name>
	stage   string // hidden staging folder beside final
	info    *Info
	lock    *folderLock
	// durable flushes the large cases.arrow to disk while the summaries
	// are computed from it; finish waits for it before run.json.
	durable errgroup.Group
	// strata are the design's strata of the Spearman inputs, by design
	// column, when writeCases kept them (see caseStrata).
	strata [][]int32
}

// caseStrata returns, by design column, a slice of N strata for each
// Spearman input of st that d stratifies, nil elsewhere, for writeCases to
// fill: the summaries then rank those columns from their strata instead
// of sorting them (summarize.Ranker.RankStrata; the ranks are the same).
// It returns nil, keeping nothing, when d is not a Latin hypercube or has
// more cases than the Spearman table ranks (its first rows are not one
// draw per stratum), and costs 4 bytes per case per input otherwise.
func caseStrata(st *studies.Study, d *sampler.Design) [][]int32 {
	if d.N() > SpearmanMaxRows {
		return nil
	}
	in, err := summarize.NewInputs(st, d)
	if err != nil {
		return nil // the summaries report it
	}
	var strata [][]int32
	for _, l := range in.Leaders {
		if j := int(l.Param); d.Stratified(j) {
			if strata == nil {
				strata = make([][]int32, d.NumParams())
			}
			strata[j] = make([]int32, d.N())
		}
	}
	return strata
}

// newStudyRun applies the defaults of opt and builds st's design.
func newStudyRun(st *studies.Study, opt Options) (*studyRun, error) {
	r := &studyRun{st: st, opt: opt, mem: opt.Alloc, workers: opt.Workers, now: opt.Now}
	if r.now == nil {
		r.now = time.Now
	}
	if r.mem == nil {
		r.mem = memory.DefaultAllocator
	}
	if r.workers <= 0 {
		r.workers = runtime.NumCPU()
	}
	r.opt.BatchRows = batchRows(opt)
	var err error
	if r.design, err = NewDesign(st); err != nil {
		return nil, err
	}
	r.final = filepath.Join(opt.Out, st.Name)
	r.stage = tempDirFor(r.final)
	r.info = &Info{
		Study: st.Name, Source: st.Source, StudyHash: st.Hash, Seed: st.Seed, Sampling: st.Sampling,
		Version: opt.Version, Cases: st.Cases, Workers: r.workers, Percentiles: st.Report.Percentiles,
		Seconds: map[string]float64{}, Caution: Caution,
	}
	return r, nil
}

// begin claims the study folder and creates an empty staging folder.
func (r *studyRun) begin() error {
	lock, err := acquireLock(r.final)
	if err != nil {
		return err
	}
	r.lock = lock
	if err := os.RemoveAll(r.stage); err != nil {
		return fmt.Errorf("clearing staging folder %s: %w", r.stage, err)
	}
	if err := os.MkdirAll(r.stage, 0o755); err != nil {
		return fmt.Errorf("creating staging folder %s: %w", r.stage, err)
	}
	return nil
}

// discard removes the staging folder.
func (r *studyRun) discard() { os.RemoveAll(r.stage) }

// end releases the claim on the study folder; after a failure it first
// removes the staging folder.
func (r *studyRun) end(ok bool) {
	r.durable.Wait() // a failure has been reported by finish, or ok is false
	if !ok {
		r.discard()
	}
	r.lock.release()
}

// finish writes the summaries and the report from the staged cases.arrow,
// then run.json with the SHA-256 of every file. start is when the run
// began, solved when cases.arrow was complete.
func (r *studyRun) finish(ctx context.Context, start, solved time.Time) error {
	info := r.info
	info.Files = []string{CasesFile}
	if err := writeSummaries(ctx, r.st, r.design, r.stage, r.workers, r.opt, r.mem, info, r.strata); err != nil {
		return err
	}
	info.SHA256 = make(map[string]string, len(info.Files))
	for _, f := range info.Files {
		if f == CasesFile && info.casesSHA256 != "" {
			info.SHA256[f] = info.casesSHA256
			continue
		}
		sum, _, err := fileSHA256(filepath.Join(r.stage, f))
		if err != nil {
			return err
		}
		info.SHA256[f] = sum
	}
	// Every file is on disk before run.json says the run is complete.
	if err := r.durable.Wait(); err != nil {
		return err
	}
	info.Seconds["summaries"] = r.now().Sub(solved).Seconds()
	info.Seconds["total"] = r.now().Sub(start).Seconds()
	info.Files = append(info.Files, RunFile)
	js, err := json.MarshalIndent(info, "", "  ")
	if err != nil {
		return err
	}
	if err := writeFileAtomic(filepath.Join(r.stage, RunFile), append(js, '\n')); err != nil {
		return err
	}
	return ctx.Err()
}

// setRejected records the rejected cases by status.
func (info *Info) setRejected(by map[string]int) {
	info.RejectedBy = by
	info.Rejected = 0
	for _, n := range by {
		info.Rejected += n
	}
}

// completeRun returns the Info of the finished outputs in dir if they
// belong to st and version and every file run.json lists is there with
// its SHA-256; otherwise nil.
func completeRun(dir string, st *studies.Study, version string) *Info {
	data, err := os.ReadFile(filepath.Join(dir, RunFile))
	if err != nil {
		return nil
	}
	info := new(Info)
	if json.Unmarshal(data, info) != nil || info.StudyHash != st.Hash || info.Seed != st.Seed ||
		info.Cases != st.Cases || info.Version != version {
		return nil
	}
	if !slices.Contains(info.Files, CasesFile) || len(info.SHA256) != len(info.Files)-1 {
		return nil
	}
	for _, f := range info.Files {
		if f == RunFile {
			continue
		}
		want, ok := info.SHA256[f]
		if !ok || filepath.IsAbs(f) || !filepath.IsLocal(f) {
			return nil
		}
		if sum, _, err := fileSHA256(filepath.Join(dir, f)); err != nil || sum != want {
			return nil
		}
	}
	return info
}

// swapIn moves the complete staging folder to final, replacing what was
// there only after the new folder is ready.
func swapIn(stage, final string) error {
	old := filepath.Join(filepath.Dir(final), "."+filepath.Base(final)+".old")
	os.RemoveAll(old)
	if _, err := os.Stat(final); err == nil {
		if err := os.Rename(final, old); err != nil {
			return fmt.Errorf("replacing %s: %w", final, err)
		}
	}
	if err := os.Rename(stage, final); err != nil {
		os.Rename(old, final)
		return fmt.Errorf("replacing %s: %w", final, err)
	}
	return os.RemoveAll(old)
}

// writeCases samples and solves the cases [lo, hi) in parallel and streams
// them in case order into an Arrow IPC file, in record batches of
// opt.BatchRows cases starting at lo. It returns the count of rejected
// cases by status and the file's SHA-256 (lower-case hex). Memory is
// bounded by 2·workers record batches. With a non-nil durable the file's
// flush to disk is left to it (see atomicFile.CommitTo). With a non-nil
// strata (by design column, see caseStrata) the strata of the cases
// [lo, hi) are written into each non-nil slice.
func writeCases(ctx context.Context, st *studies.Study, design *sampler.Design, path string, lo, hi, workers int, opt Options, mem memory.Allocator, durable *errgroup.Group, strata [][]int32) (map[string]int, string, error) {
	outs := st.Model().Outputs(st.Report.PVI)
	params := st.Model().Params() // the parameter columns, in schema order
	schema := casesSchema(st, outs)
	w, err := newIPCWriter(path, schema, mem)
	if err != nil {
		return nil, "", err
	}
	committed := false
	defer func() {
		if !committed {
			w.abort()
		}
	}()
	rows := opt.BatchRows
	if rows <= 0 {
		rows = DefaultBatchRows
	}
	if opt.Progress != nil {
		opt.Progress.Start(st.Name, "solving", hi-lo)
		defer opt.Progress.Finish()
	}

	pool := make(chan *worker, workers)
	lay := newCaseLayout(st, st.Specs())
	for range workers {
		wk := &worker{fill: design.NewFiller(), solver: engine.Solver{Model: st.Model()}, lay: lay, strata: strata}
		if strata != nil {
			wk.sub = make([][]int32, len(strata))
		}
		pool <- wk
	}
	free := make(chan *chunk, 2*workers)
	for range 2 * workers {
		c := &chunk{in: make([][]float64, engine.NumParams), out: make([][]float64, len(outs)), status: make([]string, rows), cases: make([]int64, rows)}
		for j := range c.in {
			c.in[j] = make([]float64, rows)
		}
		for j := range c.out {
			c.out[j] = make([]float64, rows)
		}
		free <- c
	}
	pending := make(chan *chunk, 2*workers)

	cctx, cancel := context.WithCancel(ctx)
	defer cancel()
	g, gctx := errgroup.WithContext(cctx)
	g.SetLimit(workers + 1)
	// The producer hands out chunks in case order; each is solved by one
	// goroutine into its own slots, and the writer below takes them back
	// in the same order.
	g.Go(func() error {
		defer close(pending)
		for s := lo; s < hi; s += rows {
			var c *chunk
			select {
			case c = <-free:
			case <-gctx.Done():
				return gctx.Err()
			}
			c.start, c.count = s, min(rows, hi-s)
			c.done = make(chan struct{})
			pending <- c
			g.Go(func() error {
				wk := <-pool
				defer func() { pool <- wk }()
				defer close(c.done)
				if gctx.Err() != nil {
					return gctx.Err()
				}
				wk.solveChunk(st, outs, c)
				return nil
			})
		}
		return nil
	})

	rejected := map[string]int{}
	status := array.NewStringBuilder(mem)
	defer status.Release()
	var werr error
	for c := range pending {
		select {
		case <-c.done:
		case <-gctx.Done():
		}
		if werr == nil && gctx.Err() == nil {
			rec := chunkRecord(schema, status, c, params, outs, rejected)
			werr = w.write(rec)
			rec.Release()
			if werr != nil {
				cancel() // stop solving what can no longer be written
			} else if opt.Progress != nil {
				opt.Progress.Add(c.count)
			}
		}
		<-c.done
		free <- c
	}
	// A write error cancels the solvers, which then report the
	// cancellation: the write error is the cause and is returned first.
	gerr := g.Wait()
	if werr != nil {
		return nil, "", werr
	}
	if gerr != nil {
		return nil, "", gerr
	}
	if err := ctx.Err(); err != nil {
		return nil, "", err
	}
	committed = true
	if err := w.commit(durable); err != nil {
		return nil, "", err
	}
	return rejected, w.sha256(), nil
}

// chunkRecord returns a solved chunk's rows as a record of the cases
// schema. The parameter and output columns are the chunk's own memory,
// not copied: the record must be released before the chunk is reused.
// status is the builder of the status column. It counts the rejected
// cases by status into rejected.
func chunkRecord(schema *arrow.Schema, status *array.StringBuilder, c *chunk, params []engine.Param, outs []engine.Output, rejected map[string]int) arrow.Record {
	n := c.count
	cols := make([]arrow.Array, 0, len(schema.Fields()))
	defer func() {
		for _, a := range cols {
			a.Release()
		}
	}()
	for k := range n {
		c.cases[k] = int64(c.start + k)
	}
	cols = append(cols, valuesArray(arrow.PrimitiveTypes.Int64, c.cases[:n]))
	for _, p := range params {
		cols = append(cols, valuesArray(arrow.PrimitiveTypes.Float64, c.in[p][:n]))
	}
	for j := range outs {
		cols = append(cols, valuesArray(arrow.PrimitiveTypes.Float64, c.out[j][:n]))
	}
	status.AppendValues(c.status[:n], nil)
	for _, s := range c.status[:n] {
		if s != "ok" {
			rejected[s]++
		}
	}
	cols = append(cols, status.NewArray())
	return array.NewRecord(schema, cols, int64(n))
}
