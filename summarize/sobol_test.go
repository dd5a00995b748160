package summarize

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat/distuv"
)

// The Ishigami function (Ishigami & Homma 1990) on x ~ U(−π, π)³:
//
//	f(x) = sin x1 + a sin² x2 + b x3⁴ sin x1,  a = 7, b = 0.1.
//
// Closed-form variances, derived here. Over U(−π, π):
//
//	E sin x = 0, E sin² x = 1/2, E sin⁴ x = 3/8, E x⁴ = π⁴/5, E x⁸ = π⁸/9.
//
// E f = a/2. The terms of the ANOVA (Sobol') decomposition are
//
//	f1(x1)     = E[f | x1] − E f       = (1 + bπ⁴/5) sin x1
//	f2(x2)     = E[f | x2] − E f       = a (sin² x2 − 1/2)
//	f3(x3)     = E[f | x3] − E f       = b x3⁴ E[sin x1] = 0
//	f13(x1,x3) = E[f | x1,x3] − E f − f1 − f3 = b sin x1 (x3⁴ − π⁴/5)
//
// and f12 = f23 = f123 = 0, since f = g(x1, x3) + h(x2). Hence
//
//	V1  = (1 + bπ⁴/5)² · E sin² x1           = (1 + bπ⁴/5)² / 2
//	V2  = a² (E sin⁴ x2 − 1/4) = a² (3/8 − 1/4) = a²/8
//	V3  = 0
//	V13 = b² · E sin² x1 · E (x3⁴ − π⁴/5)²    = b²/2 · (π⁸/9 − π⁸/25) = 8 b² π⁸ / 225
//	V   = V1 + V2 + V13                         = 1/2 + bπ⁴/5 + b²π⁸/18 + a²/8
//
// (the last line expands V1 + V13: b²π⁸/50 + 8b²π⁸/225 = b²π⁸/18), and
//
//	S1 = V1/V, S2 = V2/V, S3 = 0, ST1 = (V1 + V13)/V, ST2 = V2/V, ST3 = V13/V,
//
// about 0.3139, 0.4424, 0, 0.5576, 0.4424, 0.2437 (the published values,
// Saltelli et al. 2010 use the same function; from memory).
// TestIshigamiClosedForm verifies every line by quadrature.
const ishiA, ishiB = 7.0, 0.1

func ishigami(x []float64) float64 {
	s := math.Sin(x[0])
	x3 := x[2]
	return s + ishiA*math.Pow(math.Sin(x[1]), 2) + ishiB*x3*x3*x3*x3*s
}

func ishigamiVariances() (v, v1, v2, v3, v13 float64) {
	pi4, pi8 := math.Pow(math.Pi, 4), math.Pow(math.Pi, 8)
	v1 = math.Pow(1+ishiB*pi4/5, 2) / 2
	v2 = ishiA * ishiA / 8
	v13 = 8 * ishiB * ishiB * pi8 / 225
	v = 0.5 + ishiB*pi4/5 + ishiB*ishiB*pi8/18 + ishiA*ishiA/8
	return v, v1, v2, 0, v13
}

// Independent check of the derivation: conditional expectations by
// Gauss–Legendre quadrature (gonum integrate/quad, 40 nodes per axis, exact
// for the polynomial x3 parts and converged for sin), then
// V_u = E[(E[f | x_u])²] − (E f)² and V13 = V_{1,3} − V1 − V3.
func TestIshigamiClosedForm(t *testing.T) {
	t.Parallel()
	const nodes = 40
	mean := func(g func(float64) float64) float64 {
		return quad.Fixed(g, -math.Pi, math.Pi, nodes, quad.Legendre{}, 0) / (2 * math.Pi)
	}
	f := func(x1, x2, x3 float64) float64 { return ishigami([]float64{x1, x2, x3}) }
	// E[f | x1, x3], E[f | x1], E[f | x2], E[f | x3], E f and E f².
	e13 := func(x1, x3 float64) float64 { return mean(func(x2 float64) float64 { return f(x1, x2, x3) }) }
	e1 := func(x1 float64) float64 { return mean(func(x3 float64) float64 { return e13(x1, x3) }) }
	e2 := func(x2 float64) float64 {
		return mean(func(x1 float64) float64 { return mean(func(x3 float64) float64 { return f(x1, x2, x3) }) })
	}
	e3 := func(x3 float64) float64 { return mean(func(x1 float64) float64 { return e13(x1, x3) }) }
	ef := mean(e1)
	ef2 := mean(func(x1 float64) float64 {
		return mean(func(x2 float64) float64 {
			return mean(func(x3 float64) float64 { return math.Pow(f(x1, x2, x3), 2) })
		})
	})
	sq := func(g func(float64) float64) func(float64) float64 {
		return func(x float64) float64 { return g(x) * g(x) }
	}
	qv := ef2 - ef*ef
	qv1 := mean(sq(e1)) - ef*ef
	qv2 := mean(sq(e2)) - ef*ef
	qv3 := mean(sq(e3)) - ef*ef
	qv13 := mean(func(x1 float64) float64 {
		return mean(func(x3 float64) float64 { return math.Pow(e13(x1, x3), 2) })
	}) - ef*ef - qv1 - qv3

	v, v1, v2, v3, v13 := ishigamiVariances()
	for _, c := range []struct {
		name     string
		quad, cf float64
	}{
		{"E f = a/2", ef, ishiA / 2}, {"V", qv, v}, {"V1", qv1, v1}, {"V2", qv2, v2}, {"V3", qv3, v3}, {"V13", qv13, v13},
	} {
		if !scalar.EqualWithinAbsOrRel(c.quad, c.cf, 1e-9, 1e-9) {
			t.Errorf("%s: quadrature %.12g, closed form %.12g", c.name, c.quad, c.cf)
		}
	}
	// The published rounded indices (from memory), to 4 decimals.
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"S1", v1 / v, 0.3139}, {"S2", v2 / v, 0.4424}, {"ST1", (v1 + v13) / v, 0.5576}, {"ST3", v13 / v, 0.2437},
	} {
		if math.Abs(c.got-c.want) > 5e-5 {
			t.Errorf("%s = %.6f, published %.4f", c.name, c.got, c.want)
		}
	}
}

// runPlan evaluates model on the Saltelli design built from two independent
// N×d uniform matrices (drawn from rng) mapped through toInput, and returns
// the outputs in run order.
func runPlan(plan SobolPlan, rng *rand.Rand, toInput func(i int, u float64) float64, model func([]float64) float64) []float64 {
	a, b := make([][]float64, plan.N), make([][]float64, plan.N)
	for r := range a {
		a[r], b[r] = make([]float64, plan.D), make([]float64, plan.D)
		for i := range plan.D {
			a[r][i] = toInput(i, rng.Float64())
		}
		for i := range plan.D {
			b[r][i] = toInput(i, rng.Float64())
		}
	}
	f := make([]float64, plan.Runs())
	x := make([]float64, plan.D)
	for j := range f {
		block, row := plan.Locate(j)
		plan.Point(x, a[row], b[row], block)
		f[j] = model(x)
	}
	return f
}

// widened returns [lo − w, hi + w], w a quarter of the interval's width: a
// modest allowance for the bootstrap's approximation (common practice).
func widened(lo, hi float64) (float64, float64) {
	w := (hi - lo) / 4
	return lo - w, hi + w
}

func TestSobolIndices(t *testing.T) {
	t.Parallel()
	v, v1, v2, v3, v13 := ishigamiVariances()
	// Linear model y = c + Σ a_i x_i with independent x_i ~ N(0, σ_i²): it
	// is its own ANOVA decomposition, f_i = a_i x_i, so
	// S_i = ST_i = a_i²σ_i² / Σ_j a_j²σ_j²; the offset c changes no index.
	// Here a = (1, 2, 0.5, 0), σ = (2, 0.5, 2, 1): a²σ² = (4, 1, 1, 0), Σ = 6.
	linA := []float64{1, 2, 0.5, 0}
	linSigma := []float64{2, 0.5, 2, 1}
	tests := []struct {
		name         string
		n            int
		toInput      func(i int, u float64) float64
		model        func([]float64) float64
		first, total []float64
	}{
		{
			// Derived above; the 4th input is ignored by the model.
			name: "ishigami", n: 20_000,
			toInput: func(_ int, u float64) float64 { return -math.Pi + 2*math.Pi*u },
			model:   ishigami,
			first:   []float64{v1 / v, v2 / v, v3 / v, 0},
			total:   []float64{(v1 + v13) / v, v2 / v, v13 / v, 0},
		},
		{
			// Derived above: a²σ² = (4, 1, 1, 0) over 6, with offset 100.
			name: "linear", n: 10_000,
			toInput: func(i int, u float64) float64 {
				return distuv.Normal{Mu: 0, Sigma: linSigma[i], Src: rand.NewPCG(0, 0)}.Quantile(u)
			},
			model: func(x []float64) float64 {
				y := 100.0
				for i, v := range x {
					y += linA[i] * v
				}
				return y
			},
			first: []float64{4.0 / 6, 1.0 / 6, 1.0 / 6, 0},
			total: []float64{4.0 / 6, 1.0 / 6, 1.0 / 6, 0},
		},
	}
	for ti, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			plan := SobolPlan{N: tc.n, D: len(tc.first)}
			f := runPlan(plan, newRand(uint64(20+ti)), tc.toInput, tc.model)
			fA, fB, fAB := plan.Split(f)
			got := SobolIndices(fA, fB, fAB, 300, 0.95, 42)
			if len(got) != plan.D {
				t.Fatalf("got %d indices, want %d", len(got), plan.D)
			}
			for i, s := range got {
				if s.N != tc.n {
					t.Errorf("x%d: N = %d, want %d", i+1, s.N, tc.n)
				}
				if !(s.FirstLow <= s.First && s.First <= s.FirstHigh && s.TotalLow <= s.Total && s.Total <= s.TotalHigh) {
					t.Errorf("x%d: estimates outside their own bounds: %+v", i+1, s)
				}
				lo, hi := widened(s.FirstLow, s.FirstHigh)
				if !(lo <= tc.first[i] && tc.first[i] <= hi) {
					t.Errorf("x%d: S = %.4f [%.4f, %.4f], true %.4f", i+1, s.First, s.FirstLow, s.FirstHigh, tc.first[i])
				}
				lo, hi = widened(s.TotalLow, s.TotalHigh)
				if !(lo <= tc.total[i] && tc.total[i] <= hi) {
					t.Errorf("x%d: ST = %.4f [%.4f, %.4f], true %.4f", i+1, s.Total, s.TotalLow, s.TotalHigh, tc.total[i])
				}
				// The bounds must be informative, not merely wide (a sanity
				// limit, common practice).
				if s.FirstHigh-s.FirstLow > 0.1 || s.TotalHigh-s.TotalLow > 0.1 {
					t.Errorf("x%d: bounds too wide: %+v", i+1, s)
				}
			}
			// An input the model ignores: f(A_B^i) = f(A) run for run, so
			// both estimators are exactly zero in every resample.
			ign := got[plan.D-1]
			if ign.First != 0 || ign.Total != 0 || !(ign.FirstLow <= 0 && 0 <= ign.FirstHigh) ||
				!(ign.TotalLow <= 0 && 0 <= ign.TotalHigh) {
				t.Errorf("ignored input: %+v, want zero within its bounds", ign)
			}
		})
	}
}

// Rejected runs drop their row from every sum: the result equals the
// result on the complete rows alone, bit for bit.
func TestSobolIndicesNaNRows(t *testing.T) {
	t.Parallel()
	plan := SobolPlan{N: 2000, D: 3}
	f := runPlan(plan, newRand(30), func(_ int, u float64) float64 { return -math.Pi + 2*math.Pi*u }, ishigami)
	fA, fB, fAB := plan.Split(f)
	drop := map[int]bool{3: true, 10: true, 20: true, 1999: true}
	var cA, cB []float64
	cAB := make([][]float64, plan.D)
	for j := range fA {
		if !drop[j] {
			cA, cB = append(cA, fA[j]), append(cB, fB[j])
			for i := range cAB {
				cAB[i] = append(cAB[i], fAB[i][j])
			}
		}
	}
	want := SobolIndices(cA, cB, cAB, 50, 0.9, 7)
	nan := math.NaN()
	fA[3], fB[10], fAB[1][20], fAB[2][1999] = nan, nan, nan, nan
	got := SobolIndices(fA, fB, fAB, 50, 0.9, 7)
	if !slices.Equal(got, want) {
		t.Errorf("with NaN rows:\n%+v\nwant\n%+v", got, want)
	}
	if got[0].N != plan.N-len(drop) {
		t.Errorf("N = %d, want %d", got[0].N, plan.N-len(drop))
	}
}

func TestSobolIndicesDeterministic(t *testing.T) {
	t.Parallel()
	plan := SobolPlan{N: 1000, D: 3}
	f := runPlan(plan, newRand(31), func(_ int, u float64) float64 { return -math.Pi + 2*math.Pi*u }, ishigami)
	fA, fB, fAB := plan.Split(f)
	a := SobolIndices(fA, fB, fAB, 100, 0.95, 1)
	b := SobolIndices(fA, fB, fAB, 100, 0.95, 1)
	c := SobolIndices(fA, fB, fAB, 100, 0.95, 2)
	if !slices.Equal(a, b) {
		t.Errorf("same seed, different results:\n%+v\n%+v", a, b)
	}
	if slices.Equal(a, c) {
		t.Errorf("seeds 1 and 2 gave identical bootstrap bounds")
	}
	for i := range a {
		if a[i].First != c[i].First || a[i].Total != c[i].Total {
			t.Errorf("x%d: point estimates depend on the seed", i+1)
		}
	}
}

func TestSobolIndicesDegenerate(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	allNaN := func(s SobolIndex) bool {
		return math.IsNaN(s.First) && math.IsNaN(s.FirstLow) && math.IsNaN(s.FirstHigh) &&
			math.IsNaN(s.Total) && math.IsNaN(s.TotalLow) && math.IsNaN(s.TotalHigh)
	}
	// Constant output: V = 0, no index is defined.
	c := []float64{3, 3, 3}
	if got := SobolIndices(c, c, [][]float64{c, c}, 10, 0.9, 1); len(got) != 2 || !allNaN(got[0]) || !allNaN(got[1]) {
		t.Errorf("constant output: %+v, want NaN", got)
	}
	// One complete row left.
	if got := SobolIndices([]float64{1, nan}, []float64{2, 5}, [][]float64{{3, 4}}, 10, 0.9, 1); !allNaN(got[0]) || got[0].N != 1 {
		t.Errorf("one complete row: %+v, want NaN with N = 1", got)
	}
	// bootstrap = 0: estimates, NaN bounds. With fA = (0, 1), fB = (1, 0),
	// fAB = fB (the model depends on the one input only): pooled mean 1/2,
	// V = 1/3 (values 0, 1, 1, 0, divisor 3); Σ(fB − ½)(fAB − fA) =
	// ½·1 + (−½)(−1) = 1, so S = (1/2)/(1/3) = 1.5; Σ(fA − fAB)² = 2, so
	// ST = (2/4)/(1/3) = 1.5. (Unclipped sampling error at N = 2.)
	got := SobolIndices([]float64{0, 1}, []float64{1, 0}, [][]float64{{1, 0}}, 0, 0.9, 1)
	if g := got[0]; !scalar.EqualWithinAbsOrRel(g.First, 1.5, 1e-15, 1e-15) ||
		!scalar.EqualWithinAbsOrRel(g.Total, 1.5, 1e-15, 1e-15) || !math.IsNaN(g.FirstLow) || !math.IsNaN(g.TotalHigh) {
		t.Errorf("bootstrap 0: %+v, want First = Total = 1.5, NaN bounds", g)
	}
	if got := SobolIndices(nil, nil, nil, 0, 0.9, 1); len(got) != 0 {
		t.Errorf("no inputs: %+v", got)
	}
}

func TestSobolPlan(t *testing.T) {
	t.Parallel()
	p := SobolPlan{N: 2, D: 3}
	// N(D+2) = 2·5 runs; run j is row j mod 2 of block j / 2.
	if p.Runs() != 10 {
		t.Errorf("Runs() = %d, want 10", p.Runs())
	}
	for _, c := range []struct{ run, block, row int }{{0, 0, 0}, {1, 0, 1}, {3, 1, 1}, {4, 2, 0}, {9, 4, 1}} {
		if b, r := p.Locate(c.run); b != c.block || r != c.row {
			t.Errorf("Locate(%d) = %d, %d; want %d, %d", c.run, b, r, c.block, c.row)
		}
	}
	a, b := []float64{1, 2, 3}, []float64{10, 20, 30}
	for _, c := range []struct {
		block int
		want  []float64
	}{{0, a}, {1, b}, {2, []float64{10, 2, 3}}, {3, []float64{1, 20, 3}}, {4, []float64{1, 2, 30}}} {
		dst := make([]float64, 3)
		p.Point(dst, a, b, c.block)
		if !slices.Equal(dst, c.want) {
			t.Errorf("Point(block %d) = %v, want %v", c.block, dst, c.want)
		}
	}
	f := []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9}
	fA, fB, fAB := p.Split(f)
	if !slices.Equal(fA, []float64{0, 1}) || !slices.Equal(fB, []float64{2, 3}) || len(fAB) != 3 ||
		!slices.Equal(fAB[0], []float64{4, 5}) || !slices.Equal(fAB[2], []float64{8, 9}) {
		t.Errorf("Split = %v %v %v", fA, fB, fAB)
	}
	_ = append(fA, -1) // capacity is clipped: must not overwrite fB
	if fB[0] != 2 {
		t.Errorf("appending to fA overwrote fB")
	}
}
