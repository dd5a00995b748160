package sampler

import "testing"

// BenchmarkFill fills batches of 4096 cases of a 10-million-case design,
// one Filler, one goroutine, and reports parameter draws per second (every
// column counts, the fixed one included) and sampled draws per second
// (fixed and same_as columns excluded). Goal: ≥ 10 million draws/s per core
// for uncorrelated LHS with the typical mix.
func BenchmarkFill(b *testing.B) {
	typical := []Spec{
		uni("uniform", 0.2, 0.5),
		tri("triangular", 0.18, 0.25, 0.35),
		logn("lognormal-trunc", 3, 1.2, 0.8, inf),
		gauss("normal", 0, 4, -inf, inf),
		fixed("fixed", 1040),
	}
	corr := []Correlation{{"uniform", "triangular", 0.4}, {"lognormal-trunc", "normal", -0.3}}
	for _, c := range []struct {
		name   string
		specs  []Spec
		method Method
		corr   []Correlation
	}{
		{"typical/lhs", typical, LHS, nil},
		{"typical/random", typical, Random, nil},
		{"typical/lhs-corr", typical, LHS, corr},
		{"uniform/lhs", []Spec{uni("u", 0, 1)}, LHS, nil},
		{"normal/lhs", []Spec{gauss("n", 0, 1, -inf, inf)}, LHS, nil},
		{"pert/lhs", []Spec{pert("p", 0.6, 0.85, 0.95)}, LHS, nil},
	} {
		b.Run(c.name, func(b *testing.B) {
			const n, batch = 10_000_000, 4096
			d := mustNew(b, c.specs, c.method, 1, n, c.corr, BlockSize)
			f := d.NewFiller()
			cols := newCols(len(c.specs), batch)
			sampled := 0
			for _, s := range c.specs {
				if s.Kind != Fixed && s.Kind != SameAs {
					sampled++
				}
			}
			start, cases := 0, 0
			for b.Loop() {
				if start+batch > n {
					start = 0
				}
				f.Fill(start, batch, cols)
				start += batch
				cases += batch
			}
			sec := b.Elapsed().Seconds()
			b.ReportMetric(float64(cases*len(c.specs))/sec, "draws/s")
			b.ReportMetric(float64(cases*sampled)/sec, "sampled-draws/s")
			b.ReportMetric(float64(cases)/sec, "cases/s")
		})
	}
}
