package batch

import (
	"context"
	"path/filepath"
	"runtime"
	"testing"

	"github.com/apache/arrow/go/v17/arrow/memory"

	"github.com/sweepstat/sweepstat/studies"
)

// BenchmarkRun runs the demo study at 1,000,000 cases end to end:
// sampling, solving, writing cases.arrow and the summaries. Goal (issue 4)
// on a 2-core machine: ≥ 250,000 cases/s. solve-s/op and post-solve-s/op
// split each run's time as run.json does: sampling, solving and writing
// cases.arrow, then the summaries, tornado, Spearman and the report.
//
//	go test ./batch -run '^$' -bench 'BenchmarkRun$' -benchtime 1x
func BenchmarkRun(b *testing.B) {
	st, err := studies.Demo()
	if err != nil {
		b.Fatal(err)
	}
	st.Cases = 1_000_000
	st.Sensitivity.Sobol = 0
	n := 0
	var solve, post float64
	for b.Loop() {
		out := b.TempDir()
		info, err := Run(context.Background(), st, Options{Out: out, Workers: runtime.NumCPU()})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(info.CasesPerSec, "solve-cases/s")
		solve += info.Seconds["solve"]
		post += info.Seconds["summaries"]
		n += st.Cases
	}
	b.ReportMetric(float64(n)/b.Elapsed().Seconds(), "cases/s")
	b.ReportMetric(solve/float64(b.N), "solve-s/op")
	b.ReportMetric(post/float64(b.N), "post-solve-s/op")
}

// BenchmarkPostSolve computes the summaries, tornado, Spearman table and
// report of a 1,000,000-case demo run again from its cases.arrow (the
// phase after the solve; the run itself is set-up). Goal (issue 4) on a
// 2-core machine: ≤ 1.5 s/op.
//
//	go test ./batch -run '^$' -bench PostSolve -benchtime 3x
func BenchmarkPostSolve(b *testing.B) {
	st, err := studies.Demo()
	if err != nil {
		b.Fatal(err)
	}
	st.Cases = 1_000_000
	st.Sensitivity.Sobol = 0
	out := b.TempDir()
	info, err := Run(context.Background(), st, Options{Out: out, Workers: runtime.NumCPU()})
	if err != nil {
		b.Fatal(err)
	}
	design, err := NewDesign(st)
	if err != nil {
		b.Fatal(err)
	}
	dir := filepath.Join(out, st.Name)
	n := 0
	for b.Loop() {
		files := info.Files
		err := writeSummaries(context.Background(), st, design, dir, runtime.NumCPU(), Options{}, memory.DefaultAllocator, info, nil)
		info.Files = files
		if err != nil {
			b.Fatal(err)
		}
		n += st.Cases
	}
	b.ReportMetric(float64(n)/b.Elapsed().Seconds(), "cases/s")
}
