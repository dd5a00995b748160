package summarize_test

import (
	"context"
	"fmt"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// An invented horizontal waterflood with three uncertain inputs; the
// critical water saturation follows the connate one.
const exampleStudy = `name: example-flood
cases: 1000
seed: 3
parameters:
  s1_init: {dist: uniform, min: 0.1, max: 0.2}
  s1r: {same_as: s1_init}
  s2r: {dist: triangular, min: 0.15, mode: 0.2, max: 0.3}
  kr1_max: 0.4
  kr2_max: 0.9
  n1: 2.5
  n2: 2
  mu1_cp: 0.5
  mu2_cp: {dist: lognormal, mean: 4, sd: 1.5}
`

func exampleInputs() (*studies.Study, *summarize.Inputs) {
	st, err := studies.Parse("example.yaml", []byte(exampleStudy))
	if err != nil {
		panic(err)
	}
	d, err := sampler.New(st.Specs(), sampler.LHS, st.Seed, st.Cases, nil)
	if err != nil {
		panic(err)
	}
	in, err := summarize.NewInputs(st, d)
	if err != nil {
		panic(err)
	}
	return st, in
}

func ExampleTornado() {
	st, in := exampleInputs()
	rows := summarize.Tornado(in, st.Report.PVI, st.Report.CutLimit, st.Tornado.Low, st.Tornado.High)
	for _, r := range rows {
		if r.Output == engine.ColBreakthroughPVI {
			fmt.Printf("%d %-7s %.4f..%.4f → %.6f..%.6f swing %.6f\n",
				r.Rank, r.Parameter, r.InputLow, r.InputHigh, r.OutputAtLow, r.OutputAtHigh, r.Swing)
		}
	}
	// Output:
	// 1 mu2_cp  2.3529..5.9618 → 0.484374..0.403029 swing 0.081344
	// 2 s2r     0.1774..0.2613 → 0.470000..0.411385 swing 0.058615
	// 3 s1_init 0.1100..0.1900 → 0.472787..0.416886 swing 0.055901
}

func ExampleSobol() {
	st, in := exampleInputs()
	rows, err := summarize.Sobol(context.Background(), in, st.Report.PVI, st.Report.CutLimit, 512, st.Seed, 2, 100, nil)
	if err != nil {
		panic(err)
	}
	for _, r := range rows {
		if r.Output == engine.ColBreakthroughPVI {
			fmt.Printf("%-7s first %.3f [%.3f, %.3f] total %.3f [%.3f, %.3f] n=%d\n",
				r.Parameter, r.First, r.FirstLow, r.FirstHigh, r.Total, r.TotalLow, r.TotalHigh, r.N)
		}
	}
	// Output:
	// s1_init first 0.244 [0.193, 0.303] total 0.244 [0.220, 0.283] n=512
	// s2r     first 0.286 [0.228, 0.344] total 0.256 [0.224, 0.295] n=512
	// mu2_cp  first 0.402 [0.321, 0.484] total 0.492 [0.438, 0.553] n=512
}
