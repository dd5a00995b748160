package batch

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/ipc"
	"github.com/apache/arrow/go/v17/arrow/memory"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// rejectingStudy has invalid cases (s1_init above 1 − s2r, about 8 %,
// rejected with NaN outputs) and a discrete input (ties): paths of
// computeCaseStats that the demo's clean columns miss.
const rejectingStudy = `name: some-rejected
cases: 3000
seed: 11
parameters:
  s1_init: {dist: uniform, min: 0.1, max: 0.7}
  s1r: 0.1
  s2r: 0.35
  kr1_max: {dist: pert, min: 0.2, mode: 0.3, max: 0.5}
  kr2_max: {dist: discrete, values: [0.8, 0.9, 1]}
  n1: {dist: uniform, min: 1.5, max: 3}
  n2: 2
  mu1_cp: 0.5
  mu2_cp: {dist: lognormal, mean: 3, sd: 1}
report: {cut_limit: 1}
`

// runCases runs st with record batches of 700 cases and returns its
// output folder.
func runCases(t *testing.T, st *studies.Study) string {
	t.Helper()
	out := t.TempDir()
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	if _, err := Run(context.Background(), st, Options{Out: out, Workers: 2, Version: "test", Alloc: mem, BatchRows: 700}); err != nil {
		t.Fatal(err)
	}
	return filepath.Join(out, st.Name)
}

// TestColumnFile reads every float64 column of a cases file through the
// index of its value buffers and compares it with what the Arrow library
// reads: whole, cut short, batch by batch and at single rows.
func TestColumnFile(t *testing.T) {
	t.Parallel()
	st := smallStudy(t, 2500)
	dir := runCases(t, st)
	path := filepath.Join(dir, CasesFile)
	schema, want, _ := readCases(t, path)
	cf, err := openColumnFile(path, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer cf.close()
	if cf.fields == nil {
		t.Fatal("cases.arrow is read through the Arrow library, not indexed")
	}
	n, err := cf.numRows()
	if err != nil || n != 2500 {
		t.Fatalf("numRows = %d, %v; want 2500", n, err)
	}
	var names []string
	for _, f := range schema.Fields() {
		if f.Type.ID() == arrow.FLOAT64 {
			names = append(names, f.Name)
		}
	}
	rows := []int{0, 699, 700, 1401, 2499}
	at := make([][]float64, len(rows))
	for k, r := range rows {
		if at[k], err = cf.at(names, r); err != nil {
			t.Fatal(err)
		}
	}
	for j, name := range names {
		got, err := cf.read(name, 0, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.EqualFunc(got, want[name], sameFloat) {
			t.Errorf("%s: read differs from the Arrow library", name)
		}
		head, err := cf.read(name, 1234, got)
		if err != nil || !slices.EqualFunc(head, want[name][:1234], sameFloat) {
			t.Errorf("%s: first 1234 rows differ (%v)", name, err)
		}
		seen := 0
		err = cf.scan(name, 1500, func(start int, vals []float64) error {
			if start != seen || !slices.EqualFunc(vals, want[name][start:start+len(vals)], sameFloat) {
				return fmt.Errorf("batch at %d (expected %d) differs", start, seen)
			}
			seen += len(vals)
			return nil
		})
		if err != nil || seen != 1500 {
			t.Errorf("%s: scan of 1500 rows: %d rows, %v", name, seen, err)
		}
		for k, r := range rows {
			if !sameFloat(at[k][j], want[name][r]) {
				t.Errorf("%s row %d: at gives %v, want %v", name, r, at[k][j], want[name][r])
			}
		}
	}
	for _, bad := range []string{"no_such_column", engine.ColCase, engine.ColStatus} {
		if _, err := cf.read(bad, 0, nil); err == nil {
			t.Errorf("reading %q: no error", bad)
		}
	}
}

func sameFloat(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || (math.IsNaN(a) && math.IsNaN(b))
}

// TestColumnFileFallback: files the index does not cover (compressed
// buffers, a column with nulls) are read through the Arrow library, with
// the same values; a damaged file is an error wrapping ErrCorrupt.
func TestColumnFileFallback(t *testing.T) {
	t.Parallel()
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "x", Type: arrow.PrimitiveTypes.Float64},
		{Name: "y", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
	}, nil)
	for _, tc := range []struct {
		name  string
		nulls bool
		opts  []ipc.Option
	}{
		{"lz4", false, []ipc.Option{ipc.WithLZ4()}},
		{"nulls", true, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			path := filepath.Join(t.TempDir(), "x.arrow")
			var want []float64
			writeTestIPC(t, path, memory.NewGoAllocator(), schema, tc.opts, 3, func(b *array.RecordBuilder, batch int) {
				for i := range 400 {
					v := float64(batch*1000 + i)
					want = append(want, v)
					b.Field(0).(*array.Float64Builder).Append(v)
					if tc.nulls && i%7 == 0 {
						b.Field(1).(*array.Float64Builder).AppendNull()
					} else {
						b.Field(1).(*array.Float64Builder).Append(-v)
					}
				}
			})
			cf, err := openColumnFile(path, nil)
			if err != nil {
				t.Fatal(err)
			}
			defer cf.close()
			if cf.fields != nil {
				t.Error("indexed a file the index does not cover")
			}
			got, err := cf.read("x", 0, nil)
			if err != nil || !slices.Equal(got, want) {
				t.Errorf("x read through the fallback differs (%v)", err)
			}
			if n, err := cf.numRows(); n != 1200 || err != nil {
				t.Errorf("numRows = %d, %v", n, err)
			}
			v, err := cf.at([]string{"x"}, 801)
			if err != nil || v[0] != want[801] {
				t.Errorf("at row 801: %v, %v", v, err)
			}
		})
	}
	t.Run("damaged", func(t *testing.T) {
		t.Parallel()
		path := filepath.Join(t.TempDir(), "x.arrow")
		if err := os.WriteFile(path, []byte("ARROW1\x00\x00 not a file ARROW1"), 0o644); err != nil {
			t.Fatal(err)
		}
		if _, err := openColumnFile(path, nil); !errors.Is(err, ErrCorrupt) {
			t.Errorf("error %v, want ErrCorrupt", err)
		}
	})
}

// TestCaseStatsAgainstReference computes the summaries, the Spearman
// table and the report's column statistics in one pass per column
// (computeCaseStats) and compares them bit for bit with the functions
// they replace, applied to the columns as the Arrow library reads them:
// summarize.DescribeLevel, summarize.Curves, summarize.SpearmanTable,
// newExceedance, histogram.add and summarize.Ranks. Each of those is
// checked against independent references in its own tests. Both the whole
// run and Spearman/correlation heads shorter than the run are covered,
// with 1 and 3 workers.
func TestCaseStatsAgainstReference(t *testing.T) {
	t.Parallel()
	rejecting, err := studies.Parse("rejecting.yaml", []byte(rejectingStudy))
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name        string
		st          *studies.Study
		spear, corr int // heads; 0 for the defaults
	}{
		{"demo", smallStudy(t, 2500), 0, 0},
		{"demo heads", smallStudy(t, 2500), 1100, 900},
		{"rejected cases", rejecting, 0, 0},
		{"rejected cases heads", rejecting, 1777, 333},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			st := tc.st
			dir := runCases(t, st)
			path := filepath.Join(dir, CasesFile)
			_, cols, _ := readCases(t, path)
			design, err := NewDesign(st)
			if err != nil {
				t.Fatal(err)
			}
			in, err := summarize.NewInputs(st, design)
			if err != nil {
				t.Fatal(err)
			}
			conv, _ := summarize.ParseConvention(st.Report.Percentiles)
			var outputs []string
			for _, o := range engine.Outputs(st.Report.PVI) {
				outputs = append(outputs, o.Name)
			}
			rows := len(cols[engine.ColCase])
			plan := reportPlan(st, design, in, conv, rows)
			plan.level = PercentileLevel
			plan.summary = outputs
			plan.spearmanOutputs, plan.spearmanParams = outputs, in.Names()
			plan.spearmanRows, plan.corrRows = tc.spear, tc.corr
			spearRows, corrRows := rows, min(rows, CorrelationMaxRows)
			if tc.spear > 0 {
				spearRows, corrRows = tc.spear, tc.corr
			}

			cf, err := openColumnFile(path, nil)
			if err != nil {
				t.Fatal(err)
			}
			defer cf.close()
			var results []*caseStats
			for _, workers := range []int{1, 3} {
				steps := 0
				s, err := computeCaseStats(context.Background(), cf, plan, workers, func() { steps++ })
				if err != nil {
					t.Fatal(err)
				}
				if steps != plan.numColumns() {
					t.Errorf("%d steps, plan reads %d columns", steps, plan.numColumns())
				}
				results = append(results, s)
			}
			got := results[0]
			if !sameCaseStats(got, results[1]) {
				t.Error("1 and 3 workers give different statistics")
			}
			if tc.spear == 0 {
				// With the design's strata, as Run passes them: the inputs
				// ranked from their strata, the same statistics.
				plan.strata = runStrata(t, st, design, cols)
				s, err := computeCaseStats(context.Background(), cf, plan, 2, func() {})
				if err != nil {
					t.Fatal(err)
				}
				if !sameCaseStats(got, s) {
					t.Error("ranking the inputs from their strata gives different statistics")
				}
				plan.strata = nil
			}
			if got.rows != rows {
				t.Errorf("rows = %d, want %d", got.rows, rows)
			}
			if st == rejecting {
				// The path this study is here for.
				if s := got.summary[engine.ColBreakthroughPVI]; s.NRejected == 0 || s.N == 0 {
					t.Errorf("breakthrough: %d valid, %d rejected; want both", s.N, s.NRejected)
				}
			}

			// Summaries and curves.
			for _, name := range outputs {
				want := summarize.DescribeLevel(slices.Clone(cols[name]), conv, PercentileLevel)
				if !sameStats(got.summary[name], want) {
					t.Errorf("%s: summary\n%+v\nwant\n%+v", name, got.summary[name], want)
				}
			}
			column := func(name string) ([]float64, error) { return slices.Clone(cols[name]), nil }
			wantCurves, err := summarize.Curves(st.Report.PVI, column, conv)
			if err != nil {
				t.Fatal(err)
			}
			curves, ok := curvesFromSummary(st.Report.PVI, got.summary)
			if !ok || fmt.Sprint(curves) != fmt.Sprint(wantCurves) {
				t.Errorf("curves\n%v\nwant\n%v", curves, wantCurves)
			}

			// Spearman over the first spearRows cases.
			head := func(name string) ([]float64, error) { return slices.Clone(cols[name][:spearRows]), nil }
			wantSp, err := summarize.SpearmanTable(outputs, in.Names(), head)
			if err != nil {
				t.Fatal(err)
			}
			if len(got.spearman) != len(wantSp) {
				t.Fatalf("%d Spearman rows, want %d", len(got.spearman), len(wantSp))
			}
			for i, w := range wantSp {
				g := got.spearman[i]
				if g.Output != w.Output || g.Parameter != w.Parameter || g.N != w.N || !sameFloat(g.Spearman, w.Spearman) {
					t.Errorf("Spearman row %d = %+v, want %+v", i, g, w)
				}
			}

			// The report's columns.
			for _, name := range plan.exceed {
				want := newExceedance(name, slices.Clone(cols[name]), conv)
				if fmt.Sprint(got.exceed[name]) != fmt.Sprint(want) {
					t.Errorf("%s: exceedance curve differs from newExceedance", name)
				}
			}
			for i, h := range got.hist {
				want := plan.hist[i]
				want.Counts = make([]int64, len(want.Counts))
				for _, v := range cols[want.Param.String()] {
					want.add(v)
				}
				if !slices.Equal(h.Counts, want.Counts) || h.N != want.N {
					t.Errorf("%s: histogram %v (N %d), want %v (N %d)", want.Param, h.Counts, h.N, want.Counts, want.N)
				}
				if plan.hist[i].N != 0 {
					t.Errorf("%s: the plan's histogram was counted into", want.Param)
				}
			}
			for k, name := range plan.corr {
				want := summarize.Ranks(cols[name][:corrRows])
				if !slices.EqualFunc(got.corrRanks[k], want, sameFloat) {
					t.Errorf("%s: correlation ranks differ from summarize.Ranks", name)
				}
			}
		})
	}
}

// runStrata returns the strata Run keeps for st (caseStrata, filled as
// writeCases fills them) by input name, after checking that every input
// but a discrete one (whose values tie) is ranked from them: cols are the
// columns of st's cases file.
func runStrata(t *testing.T, st *studies.Study, d *sampler.Design, cols map[string][]float64) map[string][]int32 {
	t.Helper()
	strata := caseStrata(st, d)
	if strata == nil {
		t.Fatal("no strata kept for an LHS study")
	}
	d.NewFiller().FillStrata(0, d.N(), newDesignCols(d), strata)
	specs := st.Specs()
	byName := map[string][]int32{}
	var rk summarize.Ranker
	for j, s := range strata {
		if s == nil {
			continue
		}
		name := engine.Param(j).String()
		byName[name] = s
		_, ok := rk.RankStrata(cols[name], slices.Clone(s))
		if want := specs[j].Kind != sampler.Discrete; ok != want {
			t.Errorf("%s (%v): ranked from its strata %v, want %v", name, specs[j].Kind, ok, want)
		}
	}
	return byName
}

func newDesignCols(d *sampler.Design) [][]float64 {
	cols := make([][]float64, d.NumParams())
	for j := range cols {
		cols[j] = make([]float64, d.N())
	}
	return cols
}

// TestCaseStatsEdgeColumns describes columns of every awkward kind (both
// zeros' signs, infinities, NaN, ties, constants) and lengths 0, 1, 2 and
// a few thousand, written in several record batches, bit for bit as
// summarize.DescribeLevel, with Spearman between them as
// summarize.SpearmanTable.
func TestCaseStatsEdgeColumns(t *testing.T) {
	t.Parallel()
	negZero := math.Copysign(0, -1)
	inf := math.Inf(1)
	kinds := map[string]func(i int) float64{
		"zeros":    func(i int) float64 { return []float64{0, negZero, 1, -1}[i%4] },
		"infinity": func(i int) float64 { return []float64{inf, -inf, 2, 3, math.NaN()}[i%5] },
		"nan":      func(i int) float64 { return math.NaN() },
		"ties":     func(i int) float64 { return float64(i % 3) },
		"constant": func(int) float64 { return 0.25 },
		"spread":   func(i int) float64 { return math.Exp(float64(i%97) - 40) },
	}
	names := slices.Sorted(func(yield func(string) bool) {
		for k := range kinds {
			if !yield(k) {
				return
			}
		}
	})
	for _, n := range []int{0, 1, 2, 3001} {
		t.Run(fmt.Sprint(n), func(t *testing.T) {
			t.Parallel()
			fields := make([]arrow.Field, len(names))
			for k, name := range names {
				fields[k] = arrow.Field{Name: name, Type: arrow.PrimitiveTypes.Float64}
			}
			mem := memory.NewGoAllocator()
			path := filepath.Join(t.TempDir(), "edge.arrow")
			schema := arrow.NewSchema(fields, nil)
			w, err := newIPCWriter(path, schema, mem)
			if err != nil {
				t.Fatal(err)
			}
			b := array.NewRecordBuilder(mem, schema)
			defer b.Release()
			flush := func() { // the rows appended so far as one record batch
				rec := b.NewRecord()
				defer rec.Release()
				if err := w.write(rec); err != nil {
					t.Fatal(err)
				}
			}
			cols := map[string][]float64{}
			for i := range n {
				for k, name := range names {
					v := kinds[name](i)
					cols[name] = append(cols[name], v)
					b.Field(k).(*array.Float64Builder).Append(v)
				}
				if i%1000 == 999 {
					flush()
				}
			}
			flush()
			if err := w.commit(nil); err != nil {
				t.Fatal(err)
			}
			cf, err := openColumnFile(path, nil)
			if err != nil {
				t.Fatal(err)
			}
			defer cf.close()
			plan := &statsPlan{conv: summarize.Exceedance, level: 0.9, summary: names, exceed: names,
				spearmanOutputs: names, spearmanParams: []string{"spread", "ties", "zeros"}}
			got, err := computeCaseStats(context.Background(), cf, plan, 2, func() {})
			if err != nil {
				t.Fatal(err)
			}
			for _, name := range names {
				want := summarize.DescribeLevel(slices.Clone(cols[name]), summarize.Exceedance, 0.9)
				if !sameStats(got.summary[name], want) {
					t.Errorf("%s: summary\n%+v\nwant\n%+v", name, got.summary[name], want)
				}
			}
			column := func(name string) ([]float64, error) { return slices.Clone(cols[name]), nil }
			wantSp, err := summarize.SpearmanTable(names, plan.spearmanParams, column)
			if err != nil {
				t.Fatal(err)
			}
			for i, w := range wantSp {
				if g := got.spearman[i]; g.N != w.N || !sameFloat(g.Spearman, w.Spearman) {
					t.Errorf("Spearman %s–%s = %v (n %d), want %v (n %d)", w.Output, w.Parameter, g.Spearman, g.N, w.Spearman, w.N)
				}
			}
		})
	}
}

// sameStats compares two Stats field by field, floats bit for bit.
func sameStats(a, b summarize.Stats) bool {
	fa := []float64{a.Level, a.Mean, a.SD, a.Min, a.Max, a.P90, a.P50, a.P10, a.SwansonMean,
		a.P90Low, a.P90High, a.P50Low, a.P50High, a.P10Low, a.P10High}
	fb := []float64{b.Level, b.Mean, b.SD, b.Min, b.Max, b.P90, b.P50, b.P10, b.SwansonMean,
		b.P90Low, b.P90High, b.P50Low, b.P50High, b.P10Low, b.P10High}
	return a.Convention == b.Convention && a.N == b.N && a.NRejected == b.NRejected && slices.EqualFunc(fa, fb, sameFloat)
}

// sameCaseStats compares two results of computeCaseStats, floats bit for
// bit.
func sameCaseStats(a, b *caseStats) bool {
	if a.rows != b.rows || len(a.summary) != len(b.summary) || len(a.spearman) != len(b.spearman) {
		return false
	}
	for k, s := range a.summary {
		if !sameStats(s, b.summary[k]) {
			return false
		}
	}
	for i := range a.spearman {
		p, q := a.spearman[i], b.spearman[i]
		if p.Output != q.Output || p.Parameter != q.Parameter || p.N != q.N || !sameFloat(p.Spearman, q.Spearman) {
			return false
		}
	}
	for k := range a.corrRanks {
		if !slices.EqualFunc(a.corrRanks[k], b.corrRanks[k], sameFloat) {
			return false
		}
	}
	return fmt.Sprint(a.exceed) == fmt.Sprint(b.exceed) && fmt.Sprint(a.hist) == fmt.Sprint(b.hist)
}
