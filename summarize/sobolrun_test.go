package summarize

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"sync"
	"testing"

	"github.com/sweepstat/sweepstat/engine"
)

var update = flag.Bool("update", false, "rewrite testdata/sobol_streams.json")

// sobolRowsOf indexes Sobol rows by (output, parameter).
func sobolRowsOf(rows []SobolRow) map[[2]string]SobolRow {
	m := make(map[[2]string]SobolRow, len(rows))
	for _, r := range rows {
		m[[2]string{r.Output, r.Parameter}] = r
	}
	return m
}

func within(v, lo, hi float64) bool { return v >= lo && v <= hi }

func TestSobolStudy(t *testing.T) {
	t.Parallel()
	st, _, in := mustInputs(t, narrowStudy)
	pvi, cut := st.Report.PVI, st.Report.CutLimit
	const n, bootstrap, seed = 512, 200, 5
	rows, err := Sobol(context.Background(), in, pvi, cut, n, seed, 1, bootstrap, nil)
	if err != nil {
		t.Fatal(err)
	}
	outs := engine.Outputs(pvi)
	nl := len(in.Leaders)
	if len(rows) != len(outs)*nl {
		t.Fatalf("%d rows, want %d outputs × %d leaders", len(rows), len(outs), nl)
	}
	for i, r := range rows {
		if r.Output != outs[i/nl].Name || r.Parameter != in.Leaders[i%nl].Name() {
			t.Fatalf("row %d is (%s, %s), want (%s, %s)", i, r.Output, r.Parameter, outs[i/nl].Name, in.Leaders[i%nl].Name())
		}
		// No case of this study is rejected.
		if r.N != n {
			t.Errorf("%s/%s: N = %d, want %d", r.Output, r.Parameter, r.N, n)
		}
	}
	by := sobolRowsOf(rows)

	// Bit-identical for any worker count (STYLE §7).
	for _, workers := range []int{3, 0} {
		again, err := Sobol(context.Background(), in, pvi, cut, n, seed, workers, bootstrap, nil)
		if err != nil {
			t.Fatal(err)
		}
		for i := range rows {
			a, b := rows[i], again[i]
			for _, v := range [][2]float64{{a.First, b.First}, {a.FirstLow, b.FirstLow}, {a.FirstHigh, b.FirstHigh},
				{a.Total, b.Total}, {a.TotalLow, b.TotalLow}, {a.TotalHigh, b.TotalHigh}} {
				if !sameBits(v[0], v[1]) {
					t.Fatalf("workers %d: row %d (%s, %s) differs from 1 worker: %+v vs %+v", workers, i, a.Output, a.Parameter, b, a)
				}
			}
		}
	}

	// breakthrough_pvi: mu2_cp, the only wide range, has the largest
	// first-order and total index; the first-order indices of any model
	// sum to at most 1 (Saltelli et al. 2010, §2: Σ S_i + Σ S_ij + … = 1),
	// allowing the sampling error of the estimate, taken as the width of
	// mu2_cp's bootstrap interval.
	bt := by[[2]string{engine.ColBreakthroughPVI, "mu2_cp"}]
	sum := 0.0
	for _, l := range in.Leaders {
		r := by[[2]string{engine.ColBreakthroughPVI, l.Name()}]
		sum += r.First
		if l.Name() != "mu2_cp" && !(r.First < bt.First && r.Total < bt.Total) {
			t.Errorf("breakthrough_pvi: %s (S %v, ST %v) not below mu2_cp (S %v, ST %v)", l.Name(), r.First, r.Total, bt.First, bt.Total)
		}
	}
	if tol := bt.FirstHigh - bt.FirstLow; !(sum <= 1+tol) {
		t.Errorf("breakthrough_pvi: Σ S_i = %v > 1 + %v", sum, tol)
	}

	// dip_deg changes no output (G ≡ 0, see narrowStudy), so
	// f(A_B^dip) = f(A) row by row and both estimators' sums vanish
	// identically (SobolIndices formulas): exactly 0, bounds included.
	for _, o := range outs {
		r := by[[2]string{o.Name, "dip_deg"}]
		if math.IsNaN(r.First) { // a constant output, e.g. gravity_number
			continue
		}
		if r.First != 0 || r.Total != 0 || !within(0, r.FirstLow, r.FirstHigh) || !within(0, r.TotalLow, r.TotalHigh) {
			t.Errorf("%s: dip_deg %+v, want indices 0 within their bounds", o.Name, r)
		}
	}
	// gravity_number is 0 in every case: zero variance, NaN indices.
	if r := by[[2]string{engine.ColGravityNumber, "mu2_cp"}]; !math.IsNaN(r.First) || !math.IsNaN(r.Total) {
		t.Errorf("gravity_number (constant): %+v, want NaN indices", r)
	}

	// recovery_at_0.25pvi = 0.25/(1 − s1_init) before breakthrough (see
	// TestTornado): a function of s1_init alone, so S = ST = 1 for s1_init
	// and exactly 0 for every other leader (by the definitions of the
	// indices, Sobol' 1993, Math. Model. Comput. Exp. 1, from memory; the
	// zeros are exact because f(A_B^i) = f(A) row by row).
	rec := engine.CheckpointColumn("recovery", 0.25)
	for _, l := range in.Leaders {
		r := by[[2]string{rec, l.Name()}]
		if l.Name() == "s1_init" {
			lo, hi := widened(r.FirstLow, r.FirstHigh)
			tlo, thi := widened(r.TotalLow, r.TotalHigh)
			if !within(1, lo, hi) || !within(1, tlo, thi) {
				t.Errorf("%s: s1_init %+v, want S = ST = 1 within the (widened) bounds", rec, r)
			}
		} else if r.First != 0 || r.Total != 0 {
			t.Errorf("%s: %s S %v ST %v, want 0", rec, l.Name(), r.First, r.Total)
		}
	}

	// max_recovery = 1 − s2r·W with W = 1/(1 − s1_init), s1_init ~ U(a, b)
	// and s2r ~ U(c, e) independent (DESIGN §2, no strong gravity). Derived
	// here: E[W] = ln((1−a)/(1−b))/(b−a), E[W²] = (1/(1−b) − 1/(1−a))/(b−a),
	// E[s2r] = (c+e)/2, Var s2r = (e−c)²/12, and
	//	V1 = Var E[Y|s1_init] = E[s2r]² Var W
	//	V2 = Var E[Y|s2r]     = Var s2r · E[W]²
	//	V  = Var(s2r W)       = E[s2r²] E[W²] − E[s2r]² E[W]²
	// S_s1 = V1/V, S_s2r = V2/V, ST_s1 = 1 − S_s2r, ST_s2r = 1 − S_s1
	// (two inputs: ST_i = 1 − S_other; Saltelli et al. 2010, §2).
	a, b, c, e := 0.10, 0.12, 0.20, 0.21
	ew := math.Log((1-a)/(1-b)) / (b - a)
	ew2 := (1/(1-b) - 1/(1-a)) / (b - a)
	es, vs := (c+e)/2, (e-c)*(e-c)/12
	v1, v2 := es*es*(ew2-ew*ew), vs*ew*ew
	v := (vs+es*es)*ew2 - es*es*ew*ew
	for _, w := range []struct {
		name        string
		first, tot  float64
		otherIsZero bool
	}{
		{"s1_init", v1 / v, 1 - v2/v, false},
		{"s2r", v2 / v, 1 - v1/v, false},
		{"mu2_cp", 0, 0, true},
	} {
		r := by[[2]string{engine.ColMaxRecovery, w.name}]
		if w.otherIsZero {
			if r.First != 0 || r.Total != 0 {
				t.Errorf("max_recovery: %s %+v, want exactly 0", w.name, r)
			}
			continue
		}
		lo, hi := widened(r.FirstLow, r.FirstHigh)
		tlo, thi := widened(r.TotalLow, r.TotalHigh)
		if !within(w.first, lo, hi) || !within(w.tot, tlo, thi) {
			t.Errorf("max_recovery: %s S %v [%v, %v] ST %v [%v, %v], closed form S %v ST %v",
				w.name, r.First, r.FirstLow, r.FirstHigh, r.Total, r.TotalLow, r.TotalHigh, w.first, w.tot)
		}
	}
}

// rejectSobolStudy rejects a case exactly when s2r ≥ 0.8 (s1_init = 0.2 <
// 1 − s2r fails; DESIGN §2), probability 1/4 under U(0.5, 0.9).
const rejectSobolStudy = `name: reject-sobol
cases: 10
parameters:
  s1_init: 0.2
  s1r: 0
  s2r: {dist: uniform, min: 0.5, max: 0.9}
  kr1_max: 0.5
  kr2_max: 0.9
  n1: 2
  n2: 2
  mu1_cp: 0.5
  mu2_cp: {dist: uniform, min: 1, max: 5}
`

func TestSobolRejected(t *testing.T) {
	t.Parallel()
	st, _, in := mustInputs(t, rejectSobolStudy)
	const n = 512
	rows, err := Sobol(context.Background(), in, st.Report.PVI, st.Report.CutLimit, n, 3, 2, 50, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Row r's runs all use s2r from A_r or B_r, so the row is complete
	// exactly when both are below 0.8: N ~ Binomial(n, (3/4)²).
	p := 0.75 * 0.75
	mean, sd := n*p, math.Sqrt(n*p*(1-p))
	for _, r := range rowsFor(rows, engine.ColMaxRecovery) {
		if math.Abs(float64(r.N)-mean) > 5*sd {
			t.Errorf("max_recovery/%s: N = %d, want %v ± 5·%v", r.Parameter, r.N, mean, sd)
		}
		if math.IsNaN(r.First) || math.IsNaN(r.Total) {
			t.Errorf("max_recovery/%s: NaN indices %+v", r.Parameter, r)
		}
	}
}

func rowsFor(rows []SobolRow, output string) []SobolRow {
	var out []SobolRow
	for _, r := range rows {
		if r.Output == output {
			out = append(out, r)
		}
	}
	return out
}

func TestSobolProgressAndCancel(t *testing.T) {
	t.Parallel()
	st, _, in := mustInputs(t, narrowStudy)
	pvi, cut := st.Report.PVI, st.Report.CutLimit
	const n = 300 // not a multiple of the task size
	runs := SobolPlan{N: n, D: len(in.Leaders)}.Runs()

	var mu sync.Mutex
	var seen []int
	_, err := Sobol(context.Background(), in, pvi, cut, n, 1, 3, 0, func(done int) {
		mu.Lock()
		seen = append(seen, done)
		mu.Unlock()
	})
	if err != nil {
		t.Fatal(err)
	}
	for i := 1; i < len(seen); i++ {
		if seen[i] <= seen[i-1] {
			t.Fatalf("progress not increasing: %v", seen)
		}
	}
	if len(seen) == 0 || seen[len(seen)-1] != runs {
		t.Errorf("progress ends at %v, want %d runs", seen, runs)
	}

	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Sobol(ctx, in, pvi, cut, n, 1, 2, 0, nil); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled before start: err = %v, want context.Canceled", err)
	}
	ctx, cancel = context.WithCancel(context.Background())
	defer cancel()
	calls := 0
	_, err = Sobol(ctx, in, pvi, cut, 20*n, 1, 2, 0, func(done int) {
		calls++
		cancel()
	})
	if !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled during the run: err = %v, want context.Canceled", err)
	}
	// Two workers may each finish the task they were on: a handful of
	// progress calls, not the run's 20·n/task ≈ 750.
	if calls > 8 {
		t.Errorf("%d progress calls after cancelling", calls)
	}
}

func TestSobolArguments(t *testing.T) {
	t.Parallel()
	in := &Inputs{Base: engine.DefaultParams(), Leaders: []Leader{{Param: engine.Mu2CP, Quantile: func(p float64) float64 { return 1 + p }}}}
	for _, c := range []struct {
		name         string
		n, bootstrap int
	}{{"n = 1", 1, 0}, {"n = 0", 0, 0}, {"bootstrap < 0", 10, -1}} {
		if _, err := Sobol(context.Background(), in, nil, 0.98, c.n, 1, 1, c.bootstrap, nil); err == nil {
			t.Errorf("%s: no error", c.name)
		}
	}
	rows, err := Sobol(context.Background(), &Inputs{Base: engine.DefaultParams()}, nil, 0.98, 10, 1, 1, 0, nil)
	if err != nil || rows != nil {
		t.Errorf("no leaders: %v, %v; want nil, nil", rows, err)
	}
	bad := &Inputs{Base: engine.DefaultParams(), Leaders: []Leader{{Param: engine.Mu2CP}}}
	if _, err := Sobol(context.Background(), bad, nil, 0.98, 10, 1, 1, 0, nil); err == nil {
		t.Error("leader without Quantile: no error")
	}
}

// TestSobolStreams checks the design's uniforms: strictly inside (0, 1),
// mean 1/2 and variance 1/12 within 5 standard errors, and uncorrelated
// between the matrices and between columns, as independent U(0, 1) draws
// are.
func TestSobolStreams(t *testing.T) {
	t.Parallel()
	const d, rows = 3, 20000
	in := identityInputs(d)
	cols := make([][]float64, 2*d)
	a, b := make([]float64, d), make([]float64, d)
	for r := range rows {
		sobolPoint(a, in, 9, sobolMatrixA, r)
		sobolPoint(b, in, 9, sobolMatrixB, r)
		for k := range d {
			cols[k] = append(cols[k], a[k])
			cols[d+k] = append(cols[d+k], b[k])
		}
	}
	se := 1 / math.Sqrt(rows)
	for k, x := range cols {
		var s, ss float64
		for _, u := range x {
			if !(u > 0 && u < 1) {
				t.Fatalf("column %d: u = %v outside (0, 1)", k, u)
			}
			s += u
			ss += (u - 0.5) * (u - 0.5)
		}
		// sd of the mean √(1/12/n); of the variance estimate √(1/180/n)
		// (U(0,1): E(u−½)⁴ = 1/80, so Var (u−½)² = 1/80 − 1/144 = 1/180).
		if m := s / rows; math.Abs(m-0.5) > 5*se*math.Sqrt(1.0/12) {
			t.Errorf("column %d mean %v", k, m)
		}
		if v := ss / rows; math.Abs(v-1.0/12) > 5*se*math.Sqrt(1.0/180) {
			t.Errorf("column %d variance %v", k, v)
		}
		for j := k + 1; j < len(cols); j++ {
			// Pearson of independent columns: sd ≈ 1/√n.
			if rho := pearson(x, cols[j]); math.Abs(rho) > 5*se {
				t.Errorf("columns %d, %d correlated: %v", k, j, rho)
			}
		}
	}
}

func identityInputs(d int) *Inputs {
	in := &Inputs{}
	for k := range d {
		in.Leaders = append(in.Leaders, Leader{Param: engine.Param(k), Quantile: func(p float64) float64 { return p }})
	}
	return in
}

func pearson(x, y []float64) float64 {
	var mx, my float64
	for i := range x {
		mx += x[i]
		my += y[i]
	}
	mx /= float64(len(x))
	my /= float64(len(y))
	var sxy, sxx, syy float64
	for i := range x {
		sxy += (x[i] - mx) * (y[i] - my)
		sxx += (x[i] - mx) * (x[i] - mx)
		syy += (y[i] - my) * (y[i] - my)
	}
	return sxy / math.Sqrt(sxx*syy)
}

// TestSobolGolden freezes the Sobol design's streams (STYLE §7): the
// uniforms of a few rows of A and B, as exact hexadecimal floats. A change
// here changes every study's Sobol indices; never regenerate the file to
// make the test pass without saying why. Regenerate with
// go test ./summarize -run TestSobolGolden -update.
func TestSobolGolden(t *testing.T) {
	t.Parallel()
	type sample struct {
		Seed   uint64
		Matrix string
		Row    int
		Values []string
	}
	in := identityInputs(4)
	var got []sample
	for _, seed := range []uint64{0, 7} {
		for _, m := range []struct {
			name    string
			purpose uint64
		}{{"A", sobolMatrixA}, {"B", sobolMatrixB}} {
			for _, r := range []int{0, 1, 123456} {
				x := make([]float64, len(in.Leaders))
				sobolPoint(x, in, seed, m.purpose, r)
				s := sample{Seed: seed, Matrix: m.name, Row: r}
				for _, v := range x {
					s.Values = append(s.Values, strconv.FormatFloat(v, 'x', -1, 64))
				}
				got = append(got, s)
			}
		}
	}
	path := filepath.Join("testdata", "sobol_streams.json")
	if *update {
		buf, err := json.MarshalIndent(got, "", "  ")
		if err != nil {
			t.Fatal(err)
		}
		if err := os.MkdirAll("testdata", 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, append(buf, '\n'), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	buf, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var want []sample
	if err := json.Unmarshal(buf, &want); err != nil {
		t.Fatal(err)
	}
	if len(want) != len(got) {
		t.Fatalf("golden file has %d samples, the test makes %d", len(want), len(got))
	}
	for i := range got {
		g, w := got[i], want[i]
		if g.Seed != w.Seed || g.Matrix != w.Matrix || g.Row != w.Row || len(g.Values) != len(w.Values) {
			t.Fatalf("sample %d is %+v, golden %+v", i, g, w)
		}
		for k := range g.Values {
			if g.Values[k] != w.Values[k] {
				t.Errorf("seed %d matrix %s row %d value %d: %s, golden %s", g.Seed, g.Matrix, g.Row, k, g.Values[k], w.Values[k])
			}
		}
	}
}

// TestSobolSolveSplit: solving the design's rows in pieces (as shards do)
// and reducing once gives exactly the indices of one Sobol call.
func TestSobolSolveSplit(t *testing.T) {
	t.Parallel()
	st, _, in := mustInputs(t, narrowStudy)
	pvi, cut := st.Report.PVI, st.Report.CutLimit
	const n, seed = 64, 11
	want, err := Sobol(context.Background(), in, pvi, cut, n, seed, 2, 50, nil)
	if err != nil {
		t.Fatal(err)
	}
	f := NewSobolRuns(in, pvi, n)
	for _, r := range [][2]int{{40, 64}, {0, 13}, {13, 40}} {
		if err := SobolSolve(context.Background(), in, pvi, cut, n, seed, 1, r[0], r[1], f, nil); err != nil {
			t.Fatal(err)
		}
	}
	got, err := SobolReduce(context.Background(), in, pvi, n, seed, 3, 50, f)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(want) {
		t.Fatalf("%d rows, want %d", len(got), len(want))
	}
	for i := range got {
		g, w := got[i], want[i]
		if !sameBits(g.First, w.First) || !sameBits(g.Total, w.Total) || !sameBits(g.FirstLow, w.FirstLow) || !sameBits(g.TotalHigh, w.TotalHigh) || g.N != w.N {
			t.Errorf("row %d: split %+v, one call %+v", i, g, w)
		}
	}
}
