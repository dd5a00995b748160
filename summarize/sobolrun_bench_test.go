package summarize

import (
	"context"
	"fmt"
	"testing"

	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
)

// demoInputs returns the Inputs of the embedded demo study (13 leaders,
// five checkpoints).
func demoInputs(b *testing.B) (*studies.Study, *Inputs) {
	b.Helper()
	st, err := studies.Demo()
	if err != nil {
		b.Fatal(err)
	}
	d, err := sampler.New(st.Specs(), sampler.LHS, st.Seed, st.Cases, nil)
	if err != nil {
		b.Fatal(err)
	}
	in, err := NewInputs(st, d)
	if err != nil {
		b.Fatal(err)
	}
	return st, in
}

// BenchmarkSobol runs the demo study's Sobol design with base size 256
// (256·15 = 3840 solves), without and with 200 bootstrap replicates, on
// one and two workers: run with
//
//	go test -run '^$' -bench Sobol -benchtime 5x ./summarize
func BenchmarkSobol(b *testing.B) {
	st, in := demoInputs(b)
	const n = 256
	runs := SobolPlan{N: n, D: len(in.Leaders)}.Runs()
	for _, bootstrap := range []int{0, 200} {
		for _, workers := range []int{1, 2} {
			b.Run(fmt.Sprintf("bootstrap=%d/workers=%d", bootstrap, workers), func(b *testing.B) {
				for b.Loop() {
					if _, err := Sobol(context.Background(), in, st.Report.PVI, st.Report.CutLimit, n, 1, workers, bootstrap, nil); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(runs)*float64(b.N)/b.Elapsed().Seconds(), "cases/s")
			})
		}
	}
}

// BenchmarkTornado runs the demo study's tornado: 1 + 2·13 solves.
func BenchmarkTornado(b *testing.B) {
	st, in := demoInputs(b)
	b.ReportAllocs()
	for b.Loop() {
		Tornado(in, st.Report.PVI, st.Report.CutLimit, st.Tornado.Low, st.Tornado.High)
	}
	b.ReportMetric(float64(1+2*len(in.Leaders))*float64(b.N)/b.Elapsed().Seconds(), "cases/s")
}
