package summarize

import (
	"errors"
	"math"
	"slices"
	"testing"

	"github.com/sweepstat/sweepstat/engine"
)

// errNoColumn is the fake column source's error for an unknown name.
var errNoColumn = errors.New("no such column")

// fakeColumns is a column source over a map: each call returns a fresh
// copy, as the table functions' contract says, and counts the reads.
type fakeColumns struct {
	cols  map[string][]float64
	reads map[string]int
}

func (f *fakeColumns) column(name string) ([]float64, error) {
	c, ok := f.cols[name]
	if !ok {
		return nil, errNoColumn
	}
	if f.reads == nil {
		f.reads = make(map[string]int)
	}
	f.reads[name]++
	return slices.Clone(c), nil
}

// shuffled returns 1, 2, …, n times scale plus offset in a seeded random
// order.
func shuffled(n int, scale, offset float64, seed uint64) []float64 {
	x := make([]float64, n)
	for i := range x {
		x[i] = offset + scale*float64(i+1)
	}
	rng := newRand(seed)
	rng.Shuffle(n, func(i, j int) { x[i], x[j] = x[j], x[i] })
	return x
}

func TestSummaryTable(t *testing.T) {
	t.Parallel()
	rng := newRand(31)
	a := make([]float64, 1000)
	for i := range a {
		a[i] = rng.NormFloat64()
	}
	a[3], a[500] = math.NaN(), math.NaN()
	src := &fakeColumns{cols: map[string][]float64{
		"a": a,
		"b": shuffled(101, 1, 0, 2),
		"c": {math.NaN(), math.NaN()},
	}}
	for _, conv := range []Convention{Exceedance, Cumulative} {
		rows, err := SummaryTable([]string{"b", "a", "c"}, src.column, conv, 0.9)
		if err != nil {
			t.Fatal(err)
		}
		if len(rows) != 3 {
			t.Fatalf("%d rows, want 3", len(rows))
		}
		for i, name := range []string{"b", "a", "c"} {
			want := DescribeLevel(slices.Clone(src.cols[name]), conv, 0.9)
			if rows[i].Output != name || !statsClose(rows[i].Stats, want, 0) {
				t.Errorf("%v row %d: %+v, want %s %+v", conv, i, rows[i], name, want)
			}
		}
		// b is 1…101: under definition 7 the q-quantile is 1 + 100q
		// (Hyndman & Fan 1996), so P90 is 11 under exceedance, 91 cumulative.
		p90 := map[Convention]float64{Exceedance: 11, Cumulative: 91}[conv]
		if b := rows[0]; b.P90 != p90 || b.P50 != 51 || b.N != 101 || b.NRejected != 0 {
			t.Errorf("%v: b %+v, want P90 %v, P50 51, N 101", conv, b.Stats, p90)
		}
		if r := rows[1]; r.N != 998 || r.NRejected != 2 {
			t.Errorf("a: N %d rejected %d, want 998, 2", r.N, r.NRejected)
		}
		if r := rows[2]; r.N != 0 || r.NRejected != 2 || !math.IsNaN(r.P50) {
			t.Errorf("c (all rejected): %+v", r.Stats)
		}
	}
	if !slices.Equal(src.cols["b"], shuffled(101, 1, 0, 2)) {
		t.Error("SummaryTable changed the source's column (it must only reorder its copy)")
	}

	if _, err := SummaryTable([]string{"a", "missing"}, src.column, Exceedance, 0.95); !errors.Is(err, errNoColumn) {
		t.Errorf("missing column: err = %v, want the source's error", err)
	}
	if _, err := SummaryTable([]string{"a"}, src.column, Convention(7), 0.95); !errors.Is(err, ErrConvention) {
		t.Errorf("bad convention: err = %v, want ErrConvention", err)
	}
	for _, level := range []float64{0, 1, math.NaN()} {
		if _, err := SummaryTable([]string{"a"}, src.column, Exceedance, level); err == nil {
			t.Errorf("level %v: no error", level)
		}
	}
}

func TestCurves(t *testing.T) {
	t.Parallel()
	// Column "<kind>_at_<x>pvi" holds base + 1…101 with a distinct base per
	// column, so each percentile names the column it came from. Under
	// definition 7 (Hyndman & Fan 1996) the q-quantile of 1…101 is 1 + 100q:
	// 11, 51, 91 at q = 0.1, 0.5, 0.9; NaNs (rejected cases) are left out.
	pvi := []float64{0.25, 1, 2.5}
	src := &fakeColumns{cols: map[string][]float64{}}
	base := func(kind string, i int) float64 {
		if kind == "recovery" {
			return float64(1000 * (i + 1))
		}
		return float64(-1000 * (i + 1))
	}
	for i, x := range pvi {
		for _, kind := range []string{"recovery", "cut"} {
			col := shuffled(101, 1, base(kind, i), uint64(10+i))
			col = append(col, math.NaN(), math.NaN())
			src.cols[engine.CheckpointColumn(kind, x)] = col
		}
	}
	src.cols["recovery_at_0.25pvi_decoy"] = []float64{1}
	for _, conv := range []Convention{Exceedance, Cumulative} {
		rows, err := Curves(pvi, src.column, conv)
		if err != nil {
			t.Fatal(err)
		}
		if len(rows) != len(pvi) {
			t.Fatalf("%d rows, want %d", len(rows), len(pvi))
		}
		lo, hi := 11.0, 91.0 // P90, P10 under exceedance
		if conv == Cumulative {
			lo, hi = hi, lo
		}
		for i, r := range rows {
			rb, cb := base("recovery", i), base("cut", i)
			want := CurveRow{PVI: pvi[i],
				RecoveryP90: rb + lo, RecoveryP50: rb + 51, RecoveryP10: rb + hi,
				CutP90: cb + lo, CutP50: cb + 51, CutP10: cb + hi}
			if r != want {
				t.Errorf("%v row %d: %+v, want %+v", conv, i, r, want)
			}
		}
	}
	for _, x := range pvi {
		for _, kind := range []string{"recovery", "cut"} {
			if n := src.reads[engine.CheckpointColumn(kind, x)]; n != 2 {
				t.Errorf("%s read %d times for two conventions", engine.CheckpointColumn(kind, x), n)
			}
		}
	}
	if _, err := Curves([]float64{0.5}, src.column, Exceedance); !errors.Is(err, errNoColumn) {
		t.Errorf("missing checkpoint: err = %v, want the source's error", err)
	}
	if _, err := Curves(pvi, src.column, Convention(-1)); !errors.Is(err, ErrConvention) {
		t.Errorf("bad convention: err = %v, want ErrConvention", err)
	}
	// An all-rejected checkpoint gives NaN percentiles.
	src.cols[engine.CheckpointColumn("recovery", 9)] = []float64{math.NaN()}
	src.cols[engine.CheckpointColumn("cut", 9)] = []float64{math.NaN()}
	rows, err := Curves([]float64{9}, src.column, Exceedance)
	if err != nil || !math.IsNaN(rows[0].RecoveryP50) || !math.IsNaN(rows[0].CutP10) {
		t.Errorf("all rejected: %+v, %v; want NaN percentiles", rows, err)
	}
}

func TestSpearmanTable(t *testing.T) {
	t.Parallel()
	const n = 500
	rng := newRand(41)
	x1, x2 := make([]float64, n), make([]float64, n)
	up, down, mixed := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		x1[i], x2[i] = rng.Float64(), rng.NormFloat64()
		up[i] = math.Exp(3 * x1[i]) // increasing in x1: ρ = 1
		down[i] = -x2[i] * x2[i] * x2[i]
		mixed[i] = x1[i] + 0.3*x2[i]
	}
	mixed[7], mixed[100] = math.NaN(), math.NaN() // rejected cases
	x2[50] = math.NaN()
	fixed := make([]float64, n) // a fixed parameter: constant
	src := &fakeColumns{cols: map[string][]float64{"x1": x1, "x2": x2, "fixed": fixed, "up": up, "down": down, "mixed": mixed}}
	outputs, params := []string{"up", "down", "mixed"}, []string{"x1", "x2", "fixed"}
	rows, err := SpearmanTable(outputs, params, src.column)
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != len(outputs)*len(params) {
		t.Fatalf("%d rows, want %d", len(rows), len(outputs)*len(params))
	}
	for i, r := range rows {
		o, p := outputs[i/len(params)], params[i%len(params)]
		if r.Output != o || r.Parameter != p {
			t.Fatalf("row %d is (%s, %s), want (%s, %s)", i, r.Output, r.Parameter, o, p)
		}
		if want := Spearman(src.cols[p], src.cols[o]); !sameBits(r.Spearman, want) {
			t.Errorf("(%s, %s): %v, Spearman %v", o, p, r.Spearman, want)
		}
		m := 0
		for k := range n {
			if !math.IsNaN(src.cols[p][k]) && !math.IsNaN(src.cols[o][k]) {
				m++
			}
		}
		if r.N != m {
			t.Errorf("(%s, %s): N = %d, want %d", o, p, r.N, m)
		}
	}
	// A strictly monotone function of one column has rank correlation ±1
	// with it: its ranks are those of the column or their reverse (Kendall &
	// Gibbons 1990, Rank Correlation Methods, from memory).
	if rows[0].Spearman != 1 || rows[4].Spearman != -1 {
		t.Errorf("monotone: ρ(up, x1) = %v, ρ(down, x2) = %v, want 1, −1", rows[0].Spearman, rows[4].Spearman)
	}
	if !math.IsNaN(rows[2].Spearman) {
		t.Errorf("ρ with a constant column = %v, want NaN", rows[2].Spearman)
	}
	for _, p := range params {
		if src.reads[p] != 1 {
			t.Errorf("parameter column %s read %d times, want once", p, src.reads[p])
		}
	}

	src.cols["short"] = []float64{1, 2, 3}
	if _, err := SpearmanTable([]string{"short"}, params, src.column); err == nil {
		t.Error("columns of different lengths: no error")
	}
	if _, err := SpearmanTable([]string{"nope"}, params, src.column); !errors.Is(err, errNoColumn) {
		t.Errorf("missing output: err = %v, want the source's error", err)
	}
	if rows, err := SpearmanTable(outputs, nil, src.column); rows != nil || err != nil {
		t.Errorf("no parameters: %v, %v; want nil, nil", rows, err)
	}
}
