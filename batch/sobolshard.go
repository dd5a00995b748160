package batch

import (
	"context"
	"fmt"
	"path/filepath"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"

	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// sobolRunColumn is the run index column of a shard's Sobol file.
const sobolRunColumn = "run"

// sobolRows returns shard sh's share [lo, hi) of the n rows of the Sobol
// design: contiguous, as even as integer division makes them.
func sobolRows(sh Shard, n int) (lo, hi int) {
	return (sh.K - 1) * n / sh.N, sh.K * n / sh.N
}

// SobolFile returns the name of the shard's file of Sobol runs.
func (s Shard) SobolFile() string { return "sobol." + s.tag() + ".arrow" }

// sobolInputs returns the Sobol model of st, or nil when the study asks
// for no Sobol indices or has nothing uncertain.
func sobolInputs(r *studyRun) (*summarize.Inputs, error) {
	if r.st.Sensitivity.Sobol <= 0 {
		return nil, nil
	}
	in, err := summarize.NewInputs(r.st, r.design)
	if err != nil || len(in.Leaders) == 0 {
		return nil, err
	}
	return in, nil
}

// writeShardSobol solves shard sh's rows of the Sobol design and writes
// their runs to path: the run index (block·n + row) and every output.
func writeShardSobol(ctx context.Context, r *studyRun, in *summarize.Inputs, sh Shard, path string) (lo, hi int, err error) {
	st := r.st
	n := st.Sensitivity.Sobol
	lo, hi = sobolRows(sh, n)
	f := summarize.NewSobolRuns(in, st.Report.PVI, n)
	if err := summarize.SobolSolve(ctx, in, st.Report.PVI, st.Report.CutLimit, n, sobolSeed(st.Seed), r.workers, lo, hi, f, nil); err != nil {
		return 0, 0, err
	}
	blocks := len(in.Leaders) + 2
	runs := make([]int64, 0, blocks*(hi-lo))
	for b := range blocks {
		for row := lo; row < hi; row++ {
			runs = append(runs, int64(b*n+row))
		}
	}
	t := &Table{}
	t.Add(sobolRunColumn, "", runs)
	for j, o := range st.Model().Outputs(st.Report.PVI) {
		col := make([]float64, len(runs))
		for k, run := range runs {
			col[k] = f[j][run]
		}
		t.Add(o.Name, o.Unit, col)
	}
	return lo, hi, writeTable(path, t, r.mem)
}

// readShardSobol puts the runs of every shard's Sobol file into one set
// of run outputs, checking that each run appears exactly once.
func readShardSobol(p *MergePlan, in *summarize.Inputs, mem memory.Allocator) ([][]float64, error) {
	st := p.Study
	n := st.Sensitivity.Sobol
	outs := st.Model().Outputs(st.Report.PVI)
	f := summarize.NewSobolRuns(in, st.Report.PVI, n)
	seen := make([]bool, n*(len(in.Leaders)+2))
	for _, m := range p.Shards {
		path := filepath.Join(p.Dir, ShardsDir, m.SobolFile)
		err := forEachRecord(path, mem, func(rec arrow.Record) error {
			runs, ok := rec.Column(0).(*array.Int64)
			if !ok || rec.Schema().Field(0).Name != sobolRunColumn || int(rec.NumCols()) != len(outs)+1 {
				return fmt.Errorf("reading %s: not a Sobol runs table", path)
			}
			for j := range outs {
				col, ok := rec.Column(j + 1).(*array.Float64)
				if !ok || rec.Schema().Field(j+1).Name != outs[j].Name {
					return fmt.Errorf("reading %s: column %d is not %s", path, j+1, outs[j].Name)
				}
				for k, run := range runs.Int64Values() {
					if run < 0 || int(run) >= len(seen) {
						return fmt.Errorf("reading %s: run %d outside the design", path, run)
					}
					f[j][run] = col.Value(k)
				}
			}
			for _, run := range runs.Int64Values() {
				if seen[run] {
					return fmt.Errorf("reading %s: run %d appears twice", path, run)
				}
				seen[run] = true
			}
			return nil
		})
		if err != nil {
			return nil, err
		}
	}
	for run, ok := range seen {
		if !ok {
			return nil, fmt.Errorf("merging Sobol runs of %s: run %d is in no shard", st.Name, run)
		}
	}
	return f, nil
}

// sobolShardProblem says what is wrong with shard m's Sobol file for
// study st, or "" when it is complete or not needed.
func sobolShardProblem(dir string, st *studies.Study, m *ShardManifest, leaders int) string {
	if st == nil || st.Sensitivity.Sobol <= 0 || leaders == 0 {
		return ""
	}
	if m.SobolFile == "" {
		return "has no Sobol runs (written by a version without sharded Sobol solves)"
	}
	lo, hi := sobolRows(m.Of(), st.Sensitivity.Sobol)
	if m.SobolFirst != lo || m.SobolEnd != hi {
		return fmt.Sprintf("has Sobol rows [%d, %d), want [%d, %d)", m.SobolFirst, m.SobolEnd, lo, hi)
	}
	sum, size, err := fileSHA256(filepath.Join(dir, m.SobolFile))
	switch {
	case err != nil:
		return "Sobol runs: " + err.Error()
	case size != m.SobolBytes || sum != m.SobolSHA256:
		return "Sobol runs file " + m.SobolFile + " is not the one its manifest describes"
	}
	return ""
}
