package batch

import (
	"context"
	"fmt"
	"math"
	"path/filepath"

	"github.com/apache/arrow/go/v17/arrow/memory"

	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// SpearmanMaxRows is the most cases the Spearman table uses: the first
// SpearmanMaxRows of a larger run (their sampling error, about 1/√n, is
// then below 0.001). It bounds the table's memory, which holds the ranks
// of every uncertain parameter at once (4 bytes per case each).
const SpearmanMaxRows = 1_000_000

// SobolBootstrap is the number of bootstrap resamples of the Sobol
// confidence bounds.
const SobolBootstrap = 200

// PercentileLevel is the confidence level of the order-statistic
// intervals of P90/P50/P10 in summary.arrow.
const PercentileLevel = 0.95

// sobolSeed derives the Sobol design's seed from the study seed, so that
// the Sobol streams differ from the sampling ones.
func sobolSeed(seed uint64) uint64 { return seed*0x9e3779b97f4a7c15 + 0x5b01 }

// writeSummaries computes every summary table from the cases file in dir
// (in one pass per column, in parallel: see computeCaseStats), writes
// them, and renders the report. strata, when not nil, are the design's
// strata of the cases file's rows by design column (see caseStrata).
func writeSummaries(ctx context.Context, st *studies.Study, d *sampler.Design, dir string, workers int, opt Options, mem memory.Allocator, info *Info, strata [][]int32) error {
	casesPath := filepath.Join(dir, CasesFile)
	conv, err := summarize.ParseConvention(st.Report.Percentiles)
	if err != nil {
		return err
	}
	pvi, cut := st.Report.PVI, st.Report.CutLimit
	var outputs []string
	for _, o := range st.Model().Outputs(pvi) {
		outputs = append(outputs, o.Name)
	}
	data := &reportData{Info: info, Study: st, Convention: st.Report.Percentiles, Keys: keyOutputs(st)}
	phase := func(name string, total int) func() {
		if opt.Progress == nil {
			return func() {}
		}
		opt.Progress.Start(st.Name, name, total)
		return opt.Progress.Finish
	}
	in, err := summarize.NewInputs(st, d)
	if err != nil {
		return err
	}

	cf, err := openColumnFile(casesPath, mem)
	if err != nil {
		return fmt.Errorf("summaries: %w", err)
	}
	defer cf.close()
	rows, err := cf.numRows()
	if err != nil {
		return fmt.Errorf("summaries: %w", err)
	}
	// The summaries, Spearman's ρ and the report's column statistics, one
	// pass per column.
	plan := reportPlan(st, d, in, conv, rows)
	plan.level = PercentileLevel
	plan.summary = outputs
	plan.spearmanOutputs, plan.spearmanParams = outputs, in.Names()
	for _, l := range in.Leaders {
		if j := int(l.Param); j < len(strata) && len(strata[j]) == rows {
			if plan.strata == nil {
				plan.strata = map[string][]int32{}
			}
			plan.strata[l.Name()] = strata[j]
		}
	}
	done := phase("summaries", plan.numColumns())
	step := func() {
		if opt.Progress != nil {
			opt.Progress.Add(1)
		}
	}
	stats, err := computeCaseStats(ctx, cf, plan, workers, step)
	done()
	if err != nil {
		return fmt.Errorf("summaries: %w", err)
	}
	data.stats = stats
	for _, name := range outputs {
		data.Summary = append(data.Summary, summarize.SummaryRow{Output: name, Stats: stats.summary[name]})
	}
	var ok bool
	if data.Curves, ok = curvesFromSummary(pvi, stats.summary); !ok {
		column := func(name string) ([]float64, error) { return cf.read(name, 0, nil) }
		if data.Curves, err = summarize.Curves(pvi, column, conv); err != nil {
			return fmt.Errorf("summaries: %w", err)
		}
	}
	data.Spearman = stats.spearman
	if err := ctx.Err(); err != nil {
		return err
	}

	done = phase("tornado", 2*len(in.Leaders)+1)
	data.Tornado = summarize.Tornado(in, pvi, cut, st.Tornado.Low, st.Tornado.High)
	if opt.Progress != nil {
		opt.Progress.Add(2*len(in.Leaders) + 1)
	}
	done()

	if n := st.Sensitivity.Sobol; n > 0 && len(in.Leaders) > 0 {
		runs := n * (len(in.Leaders) + 2)
		var progress func(int)
		if opt.Progress != nil {
			opt.Progress.Start(st.Name, "sobol", runs)
			last := 0
			progress = func(k int) { opt.Progress.Add(k - last); last = k }
		}
		if opt.sobolRuns != nil {
			data.Sobol, err = summarize.SobolReduce(ctx, in, pvi, n, sobolSeed(st.Seed), workers, SobolBootstrap, opt.sobolRuns)
		} else {
			data.Sobol, err = summarize.Sobol(ctx, in, pvi, cut, n, sobolSeed(st.Seed), workers, SobolBootstrap, progress)
		}
		if opt.Progress != nil {
			opt.Progress.Finish()
		}
		if err != nil {
			return err
		}
	}

	if err := writeTable(filepath.Join(dir, SummaryFile), summaryTable(data.Summary), mem); err != nil {
		return err
	}
	if err := writeTable(filepath.Join(dir, CurvesFile), curvesTable(data.Curves), mem); err != nil {
		return err
	}
	if err := writeTable(filepath.Join(dir, TornadoFile), tornadoTable(data.Tornado), mem); err != nil {
		return err
	}
	if err := writeTable(filepath.Join(dir, SensitivityFile), sensitivityTable(data.Spearman, data.Sobol), mem); err != nil {
		return err
	}
	info.Files = append(info.Files, SummaryFile, CurvesFile, TornadoFile, SensitivityFile)
	study, err := writeStudySource(dir, st, opt.Source)
	if err != nil {
		return err
	}
	report, err := writeReport(ctx, dir, st, d, data, mem, opt.Progress, opt.Version)
	if err != nil {
		return err
	}
	info.Files = append(append(info.Files, study...), report...)
	return nil
}

// keyOutputs are the outputs the report shows rankings for: those of
// [keyOutputList].
func keyOutputs(st *studies.Study) map[string]bool {
	keys := map[string]bool{}
	for _, name := range keyOutputList(st) {
		keys[name] = true
	}
	return keys
}

func summaryTable(rows []summarize.SummaryRow) *Table {
	n := len(rows)
	names := make([]string, n)
	counts, rejected := make([]int64, n), make([]int64, n)
	for i, r := range rows {
		names[i] = r.Output
		counts[i], rejected[i] = int64(r.N), int64(r.NRejected)
	}
	t := &Table{}
	t.Add("output", "", names)
	t.Add("n", "", counts)
	t.Add("n_rejected", "", rejected)
	addFields(t, rows, summaryFields)
	return t
}

func curvesTable(rows []summarize.CurveRow) *Table {
	t := &Table{}
	addFields(t, rows, curveFields)
	return t
}

func tornadoTable(rows []summarize.TornadoRow) *Table {
	n := len(rows)
	out, par := make([]string, n), make([]string, n)
	rank := make([]int64, n)
	for i, r := range rows {
		out[i], par[i], rank[i] = r.Output, r.Parameter, int64(r.Rank)
	}
	t := &Table{}
	t.Add("output", "", out)
	t.Add("parameter", "", par)
	addFields(t, rows, tornadoFields)
	t.Add("rank", "", rank)
	return t
}

// sensitivityTable joins the Spearman rows with the Sobol rows of the same
// output and parameter (NaN where Sobol indices were not asked for).
func sensitivityTable(sp []summarize.SpearmanRow, sobol []summarize.SobolRow) *Table {
	type key struct{ o, p string }
	idx := make(map[key]int, len(sobol))
	for i, r := range sobol {
		idx[key{r.Output, r.Parameter}] = i
	}
	n := len(sp)
	out, par := make([]string, n), make([]string, n)
	nsp, nsob := make([]int64, n), make([]int64, n)
	rho := make([]float64, n)
	vals := make([][]float64, 6)
	for k := range vals {
		vals[k] = make([]float64, n)
	}
	for i, r := range sp {
		out[i], par[i], rho[i], nsp[i] = r.Output, r.Parameter, r.Spearman, int64(r.N)
		j, ok := idx[key{r.Output, r.Parameter}]
		for k := range vals {
			vals[k][i] = math.NaN()
		}
		if ok {
			s := sobol[j]
			for k, v := range []float64{s.First, s.FirstLow, s.FirstHigh, s.Total, s.TotalLow, s.TotalHigh} {
				vals[k][i] = v
			}
			nsob[i] = int64(s.N)
		}
	}
	t := &Table{}
	t.Add("output", "", out)
	t.Add("parameter", "", par)
	t.Add("spearman", "", rho)
	t.Add("n_spearman", "", nsp)
	for k, name := range []string{"sobol_first", "sobol_first_low", "sobol_first_high", "sobol_total", "sobol_total_low", "sobol_total_high"} {
		t.Add(name, "", vals[k])
	}
	t.Add("n_sobol", "", nsob)
	return t
}
