package sampler_test

import (
	"fmt"

	"github.com/sweepstat/sweepstat/sampler"
)

// Five cases of a small study: a fixed value and its follower, a triangular
// and a truncated lognormal parameter, and two rank-correlated exponents.
func Example() {
	specs := []sampler.Spec{
		{Name: "s1_init", Kind: sampler.Fixed, Value: 0.18},
		{Name: "s1r", Kind: sampler.SameAs, SameAs: "s1_init"},
		{Name: "s2r", Kind: sampler.Triangular, Min: 0.18, Mode: 0.25, Max: 0.35, HasMin: true, HasMax: true},
		{Name: "mu2_cp", Kind: sampler.LogNormal, Mean: 3, SD: 1.2, Min: 0.8, HasMin: true},
		{Name: "n1", Kind: sampler.Uniform, Min: 1.5, Max: 4, HasMin: true, HasMax: true},
		{Name: "n2", Kind: sampler.Uniform, Min: 1.5, Max: 3.5, HasMin: true, HasMax: true},
	}
	corr := []sampler.Correlation{{A: "n1", B: "n2", Rho: 0.4}}
	d, err := sampler.New(specs, sampler.LHS, 7, 5, corr)
	if err != nil {
		fmt.Println(err)
		return
	}
	cols := make([][]float64, d.NumParams())
	for j := range cols {
		cols[j] = make([]float64, d.N())
	}
	d.NewFiller().Fill(0, d.N(), cols)
	for j, name := range d.Names() {
		fmt.Printf("%-8s", name)
		for _, x := range cols[j] {
			fmt.Printf(" %9.6f", x)
		}
		fmt.Println()
	}
	fmt.Printf("mu2_cp P50 %.6f\n", d.Quantile(3, 0.5))

	_, err = sampler.New(specs, sampler.LHS, 7, 5, []sampler.Correlation{{A: "s1r", B: "n2", Rho: 0.2}})
	fmt.Println(err)
	// Output:
	// s1_init   0.180000  0.180000  0.180000  0.180000  0.180000
	// s1r       0.180000  0.180000  0.180000  0.180000  0.180000
	// s2r       0.251266  0.195845  0.284092  0.338881  0.245028
	// mu2_cp    3.145598  1.813050  5.603529  2.340707  2.653774
	// n1        1.987525  3.256370  3.873547  2.034962  2.937486
	// n2        2.904057  1.594584  3.357528  2.618387  2.031359
	// mu2_cp P50 2.786239
	// correlations[0]: s1r follows the fixed parameter s1_init (same_as) and cannot be correlated
}
