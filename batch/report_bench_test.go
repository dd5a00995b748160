package batch

import (
	"context"
	"path/filepath"
	"testing"

	"github.com/sweepstat/sweepstat/studies"
)

// BenchmarkReport rebuilds the report of a 200,000-case demo run from its
// files (Report): the column reads, the input scans, the charts and the
// page.
//
//	go test ./batch -run '^$' -bench Report -benchtime 3x -benchmem
func BenchmarkReport(b *testing.B) {
	st, err := studies.Demo()
	if err != nil {
		b.Fatal(err)
	}
	st.Cases = 200_000
	st.Sensitivity.Sobol = 0
	out := b.TempDir()
	if _, err := Run(context.Background(), st, Options{Out: out}); err != nil {
		b.Fatal(err)
	}
	dir := filepath.Join(out, st.Name)
	n := 0
	for b.Loop() {
		if err := Report(context.Background(), dir, ReportOptions{Version: "bench"}); err != nil {
			b.Fatal(err)
		}
		n += st.Cases
	}
	b.ReportMetric(float64(n)/b.Elapsed().Seconds(), "cases/s")
}
