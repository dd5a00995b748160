package batch

import (
	"context"
	"runtime"
	"testing"

	"github.com/sweepstat/sweepstat/studies"
)

// BenchmarkRun runs the demo study at 1,000,000 cases end to end:
// sampling, solving, writing cases.arrow and the summaries. Goal (issue 4)
// on a 2-core machine: ≥ 250,000 cases/s.
//
//	go test ./batch -run '^$' -bench Run -benchtime 1x
func BenchmarkRun(b *testing.B) {
	st, err := studies.Demo()
	if err != nil {
		b.Fatal(err)
	}
	st.Cases = 1_000_000
	st.Sensitivity.Sobol = 0
	n := 0
	for b.Loop() {
		out := b.TempDir()
		info, err := Run(context.Background(), st, Options{Out: out, Workers: runtime.NumCPU()})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(info.CasesPerSec, "solve-cases/s")
		n += st.Cases
	}
	b.ReportMetric(float64(n)/b.Elapsed().Seconds(), "cases/s")
}
