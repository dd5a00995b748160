package batch

import (
	"context"
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"slices"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"gonum.org/v1/gonum/stat"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// MaxCurvePoints is the most probabilities an exceedance curve is sampled
// at. A study with fewer valid cases is drawn through every order
// statistic, exactly; a larger one at MaxCurvePoints evenly spaced
// probabilities plus those of P90, P50 and P10.
const MaxCurvePoints = 500

// CorrelationMaxRows is the most cases the report's rank-correlation
// matrix of the inputs uses: the first CorrelationMaxRows of a larger run
// (their sampling error, about 1/√n, is then near 0.002). It bounds the
// memory of the matrix, which needs every uncertain input at once.
const CorrelationMaxRows = 200_000

// percentileLabels returns the labels of the three percentiles, in the
// order of the report's marks.
func percentileLabels() [3]float64 { return [3]float64{90, 50, 10} }

// chartData is what the report's charts show, computed from a study's
// output files.
type chartData struct {
	Conv summarize.Convention

	Tornado []tornadoChart
	// Exceed holds the exceedance curves of breakthrough and of the
	// recovery the P cases are chosen on; Checkpoints those of recovery at
	// each PVI checkpoint.
	Exceed      []exceedance
	Checkpoints []exceedance

	// KeyRecovery is the recovery column the P90, P50 and P10 cases are
	// chosen on: recovery at the cut limit, or at the last checkpoint when
	// no case reaches the cut limit.
	KeyRecovery string
	Cases       []pCase
	ProfilePVI  [2]float64

	Hist []histogram
	Corr *rankMatrix
}

// tornadoChart is one output's tornado: bars in rank order.
type tornadoChart struct {
	Output string
	Base   float64
	Bars   []summarize.TornadoRow
}

// exceedance is the curve of the probability that an output exceeds a
// value, with the P90, P50 and P10 marks.
type exceedance struct {
	Output      string
	N, Rejected int
	// Curve holds (value, probability of exceeding it) in increasing value:
	// the quantile function Q(q) of the valid values at probabilities q
	// (summarize.Quantile), drawn against 1 − q.
	Curve []point
	Marks []mark
}

// mark is one percentile on an exceedance curve.
type mark struct {
	Label  string  // "P90", "P50", "P10"
	Value  float64 // the percentile (summarize.Percentiles)
	Exceed float64 // its probability of being exceeded
}

// pCase is the case nearest one percentile of the key recovery, solved
// again with the engine for its fractional flow and profiles.
type pCase struct {
	Label  string  // "P90", "P50", "P10"
	Target float64 // the percentile
	Case   int     // row of cases.arrow (the case index)
	Value  float64 // the case's recovery
	Params engine.Params
	Sol    *engine.Solution
}

// histogram counts the sampled values of one uncertain input against the
// probability its specified distribution gives each bin.
type histogram struct {
	Param engine.Param
	Spec  sampler.Spec
	// Discrete histograms have one bin per value of the distribution,
	// Edges holding the values; continuous ones len(Counts)+1 edges of
	// equal bins.
	Discrete bool
	Edges    []float64
	Counts   []int64
	// Expected is each bin's probability under the specified
	// distribution: differences of its CDF at the edges, the first and
	// last bins taking the tails (so the probabilities sum to 1).
	Expected []float64
	N        int64 // values counted: every case, rejected ones too
	// Tails is set when the outer bins also count the values beyond
	// them (see HistogramTail).
	Tails bool
}

// rankMatrix is the achieved Spearman rank correlation of the uncertain
// inputs.
type rankMatrix struct {
	Names  []string
	Rho    [][]float64
	Target map[[2]int]float64 // the study's target, by (i, j), i < j
	N      int                // cases used
	Total  int                // cases in the run
}

// keyOutputList returns the outputs whose tornado the report draws, in
// the report's order: breakthrough, recovery at the cut limit, recovery at
// each checkpoint, and with a volumes section the breakthrough day and
// the volume produced by the cut limit.
func keyOutputList(st *studies.Study) []string {
	list := []string{engine.ColBreakthroughPVI, engine.ColRecoveryAtCutLimit}
	for _, x := range st.Report.PVI {
		list = append(list, engine.CheckpointColumn("recovery", x))
	}
	if st.Model().Volumes != nil {
		list = append(list, engine.ColBreakthroughDays, engine.ColProducedAtCutLimit)
	}
	return list
}

// tornadoCharts groups the tornado rows of the key outputs into charts,
// each with its bars sorted by rank (ties, which Tornado does not make,
// would keep the rows' order).
func tornadoCharts(rows []summarize.TornadoRow, st *studies.Study) []tornadoChart {
	var charts []tornadoChart
	for _, out := range keyOutputList(st) {
		c := tornadoChart{Output: out, Base: math.NaN()}
		for _, r := range rows {
			if r.Output == out {
				c.Bars = append(c.Bars, r)
				c.Base = r.OutputBase
			}
		}
		if len(c.Bars) == 0 {
			continue
		}
		slices.SortStableFunc(c.Bars, func(a, b summarize.TornadoRow) int { return a.Rank - b.Rank })
		charts = append(charts, c)
	}
	return charts
}

// newExceedance returns the exceedance curve of an output column. It
// reorders col (summarize.Describe sorts the valid values to its front).
func newExceedance(name string, col []float64, conv summarize.Convention) exceedance {
	s := summarize.Describe(col, conv)
	return newExceedanceSorted(name, col[:s.N], s.NRejected, conv)
}

// newExceedanceSorted returns the exceedance curve of an output column
// from its valid values sorted in increasing order and its count of
// rejected (NaN) values.
func newExceedanceSorted(name string, sorted []float64, rejected int, conv summarize.Convention) exceedance {
	n := len(sorted)
	e := exceedance{Output: name, N: n, Rejected: rejected}
	if n == 0 {
		return e
	}
	p90, p50, p10 := summarize.Percentiles(sorted, conv)
	var qs []float64
	labels := percentileLabels()
	for k, v := range []float64{p90, p50, p10} {
		q := conv.Prob(labels[k])
		e.Marks = append(e.Marks, mark{Label: pName(labels[k]), Value: v, Exceed: 1 - q})
		qs = append(qs, q)
	}
	m := min(n, MaxCurvePoints)
	for k := range m {
		if m == 1 {
			qs = append(qs, 0)
			break
		}
		qs = append(qs, float64(k)/float64(m-1))
	}
	slices.Sort(qs)
	qs = slices.Compact(qs)
	e.Curve = make([]point, len(qs))
	for i, q := range qs {
		e.Curve[i] = point{summarize.Quantile(sorted, q), 1 - q}
	}
	return e
}

func pName(label float64) string { return fmt.Sprintf("P%g", label) }

// histogramBins returns the number of equal bins of a continuous histogram
// of n values: the Rice rule ⌈2·n^(1/3)⌉ (common practice), kept within
// [5, 40] so that 10 cases still show a shape and 10 million do not turn
// into noise.
func histogramBins(n int64) int {
	k := int(math.Ceil(2 * math.Cbrt(float64(n))))
	return min(max(k, 5), 40)
}

// HistogramTail is the probability in each tail of a normal or lognormal
// input that its histogram folds into the outer bins: the bins span the
// HistogramTail and 1 − HistogramTail quantiles, so that a long tail
// sampled by millions of cases does not squeeze the body of the
// distribution into a few bins.
const HistogramTail = 0.001

// newHistogram sets up the bins of input p with distribution dist and
// specification sp for n cases. Bounded distributions are binned over
// their support, so that the bins line up with its ends; normal and
// lognormal ones between their HistogramTail quantiles.
func newHistogram(p engine.Param, sp sampler.Spec, dist sampler.Dist, n int64) histogram {
	h := histogram{Param: p, Spec: sp}
	if sp.Kind == sampler.Discrete {
		h.Discrete = true
		prev := 0.0
		vals := slices.Clone(sp.Values)
		slices.Sort(vals)
		vals = slices.Compact(vals)
		for _, v := range vals {
			c := dist.CDF(v)
			if c-prev <= 0 {
				continue // a zero-weight value
			}
			h.Edges = append(h.Edges, v)
			h.Expected = append(h.Expected, c-prev)
			prev = c
		}
		h.Counts = make([]int64, len(h.Edges))
		return h
	}
	lo, hi := dist.Quantile(0), dist.Quantile(1)
	if sp.Kind == sampler.Normal || sp.Kind == sampler.LogNormal {
		lo, hi = dist.Quantile(HistogramTail), dist.Quantile(1-HistogramTail)
		h.Tails = true
	}
	k := histogramBins(n)
	if !(hi > lo) || math.IsInf(hi-lo, 0) {
		k = 1
		lo, hi = lo-0.5, lo+0.5
	}
	h.Edges = make([]float64, k+1)
	for i := range h.Edges {
		h.Edges[i] = lo + (hi-lo)*float64(i)/float64(k)
	}
	h.Edges[k] = hi
	h.Counts = make([]int64, k)
	h.Expected = make([]float64, k)
	prev := 0.0
	for i := range k {
		c := 1.0
		if i < k-1 {
			c = dist.CDF(h.Edges[i+1])
		}
		h.Expected[i] = c - prev
		prev = c
	}
	return h
}

// add counts value v.
func (h *histogram) add(v float64) {
	if math.IsNaN(v) {
		return
	}
	h.N++
	if h.Discrete {
		k, found := slices.BinarySearch(h.Edges, v)
		if !found {
			// Not a value of the distribution (cannot happen for sampled
			// values): the nearest one.
			if k == len(h.Edges) || (k > 0 && v-h.Edges[k-1] < h.Edges[k]-v) {
				k--
			}
		}
		h.Counts[k]++
		return
	}
	k := len(h.Counts)
	lo, hi := h.Edges[0], h.Edges[k]
	i := int((v - lo) / (hi - lo) * float64(k))
	h.Counts[min(max(i, 0), k-1)]++
}

// errStopScan ends a scanFloat64 early without an error.
var errStopScan = errors.New("stop")

// scanFloat64 calls fn for each record batch of the Arrow file at path
// with the named float64 columns of that batch and the row index of its
// first row. The slices are valid only during the call. fn may return
// errStopScan to end the scan early.
func scanFloat64(path string, mem memory.Allocator, names []string, fn func(start int, cols [][]float64) error) error {
	var idx []int
	start := 0
	cols := make([][]float64, len(names))
	err := forEachRecord(path, mem, func(rec arrow.Record) error {
		if idx == nil {
			for _, n := range names {
				is := rec.Schema().FieldIndices(n)
				if len(is) != 1 {
					return fmt.Errorf("reading %s: no column %q", path, n)
				}
				idx = append(idx, is[0])
			}
		}
		for k, i := range idx {
			c, ok := rec.Column(i).(*array.Float64)
			if !ok {
				return fmt.Errorf("reading %s: column %q is %s, not float64", path, names[k], rec.Column(i).DataType())
			}
			cols[k] = c.Float64Values()
		}
		n := int(rec.NumRows())
		if err := fn(start, cols); err != nil {
			return err
		}
		start += n
		return nil
	})
	if errors.Is(err, errStopScan) {
		return nil
	}
	return err
}

// computeCharts reads the cases file of dir and the summary tables of d
// and returns the data behind every chart. The column statistics come
// from d.stats when the summaries computed them in the same run;
// otherwise they are computed here from the cases file, one column at a
// time (see computeCaseStats), holding one column plus the first
// CorrelationMaxRows cases of each uncertain input.
func computeCharts(ctx context.Context, dir string, st *studies.Study, design *sampler.Design, d *reportData, mem memory.Allocator, progress func()) (*chartData, error) {
	conv, err := summarize.ParseConvention(st.Report.Percentiles)
	if err != nil {
		return nil, err
	}
	cf, err := openColumnFile(filepath.Join(dir, CasesFile), mem)
	if err != nil {
		return nil, err
	}
	defer cf.close()
	in, err := summarize.NewInputs(st, design)
	if err != nil {
		return nil, err
	}
	stats := d.stats
	if stats == nil {
		rows, err := cf.numRows()
		if err != nil {
			return nil, err
		}
		plan := reportPlan(st, design, in, conv, rows)
		if stats, err = computeCaseStats(ctx, cf, plan, 1, func() {}); err != nil {
			return nil, err
		}
	}
	// Progress: one step per exceedance curve and two for the inputs.
	pvi := st.Report.PVI
	cd := &chartData{Conv: conv, Tornado: tornadoCharts(d.Tornado, st)}
	bt := stats.exceed[engine.ColBreakthroughPVI]
	cd.Exceed = append(cd.Exceed, bt)
	if st.Model().Volumes != nil {
		cd.Exceed = append(cd.Exceed, stats.exceed[engine.ColBreakthroughDays], stats.exceed[engine.ColProducedAtCutLimit])
	}
	progress()
	// The key recovery: at the cut limit, unless no case reaches it.
	key := engine.ColRecoveryAtCutLimit
	if len(pvi) > 0 && stats.exceed[key].N == 0 {
		key = engine.CheckpointColumn("recovery", pvi[len(pvi)-1])
	}
	cd.KeyRecovery = key
	rec := stats.exceed[key]
	cd.Exceed = append(cd.Exceed, rec)
	if err := cd.nearestCases(cf, key, rec.Marks); err != nil {
		return nil, err
	}
	progress()
	for _, x := range checkpointsShown(pvi) {
		cd.Checkpoints = append(cd.Checkpoints, stats.exceed[engine.CheckpointColumn("recovery", x)])
		progress()
	}
	if names := in.Names(); len(names) >= 2 {
		cd.Corr = rankCorrelations(names, stats.corrRanks, st, stats.rows)
	}
	cd.Hist = stats.hist
	params := st.Model().Params()
	all := make([]string, len(params))
	for j, p := range params {
		all[j] = p.String()
	}
	for i := range cd.Cases {
		c := &cd.Cases[i]
		vals, err := cf.at(all, c.Case)
		if err != nil {
			return nil, err
		}
		for j, p := range params {
			c.Params[p] = vals[j]
		}
	}
	progress()
	progress()
	cd.solveCases(st.Model(), bt)
	return cd, ctx.Err()
}

// nearestCases sets cd.Cases to the first case of column key nearest each
// mark's value (NaN values never chosen), in one pass over the column.
func (cd *chartData) nearestCases(cf *columnFile, key string, marks []mark) error {
	best := make([]int, len(marks))
	bestD := make([]float64, len(marks))
	value := make([]float64, len(marks))
	for k := range marks {
		best[k], bestD[k] = -1, math.Inf(1)
	}
	err := cf.scan(key, 0, func(start int, vals []float64) error {
		for k, m := range marks {
			t := m.Value
			for i, v := range vals {
				if d := math.Abs(v - t); d < bestD[k] {
					best[k], bestD[k], value[k] = start+i, d, v
				}
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	for k, m := range marks {
		if best[k] >= 0 {
			cd.Cases = append(cd.Cases, pCase{Label: m.Label, Target: m.Value, Case: best[k], Value: value[k]})
		}
	}
	return nil
}

// checkpointsShown returns the checkpoints whose recovery exceedance
// curves are drawn: all of them, or numSeriesColours spread evenly from
// the first to the last.
func checkpointsShown(pvi []float64) []float64 {
	if len(pvi) <= numSeriesColours {
		return pvi
	}
	out := make([]float64, numSeriesColours)
	for k := range out {
		out[k] = pvi[k*(len(pvi)-1)/(numSeriesColours-1)]
	}
	return slices.Compact(out)
}

// rankCorrelations returns the Spearman matrix of columns from their
// mid-ranks (summarize.Ranks of each): Pearson correlations (gonum
// stat.Correlation) of the ranks.
func rankCorrelations(names []string, ranks [][]float64, st *studies.Study, total int) *rankMatrix {
	d := len(names)
	m := &rankMatrix{Names: names, Rho: make([][]float64, d), Target: map[[2]int]float64{}, Total: total}
	for _, r := range ranks {
		m.N = len(r)
	}
	for i := range d {
		m.Rho[i] = make([]float64, d)
		for j := range d {
			switch {
			case i == j:
				m.Rho[i][j] = 1
			case j < i:
				m.Rho[i][j] = m.Rho[j][i]
			default:
				m.Rho[i][j] = stat.Correlation(ranks[i], ranks[j], nil)
			}
		}
	}
	at := func(name string) int { return slices.Index(names, name) }
	for _, c := range st.Correlations {
		i, j := at(c.A), at(c.B)
		if i < 0 || j < 0 {
			continue
		}
		if i > j {
			i, j = j, i
		}
		m.Target[[2]int{i, j}] = c.Rho
	}
	return m
}

// solveCases solves the P cases again and chooses the two PVIs of the
// saturation profiles: half and twice the P50 breakthrough, rounded to
// two significant digits, so that one profile shows the front inside the
// model and one after breakthrough.
func (cd *chartData) solveCases(m *engine.Model, bt exceedance) {
	for i := range cd.Cases {
		c := &cd.Cases[i]
		c.Sol, _ = engine.SolveModel(m, c.Params)
	}
	t := math.NaN()
	for _, m := range bt.Marks {
		if m.Label == "P50" {
			t = m.Value
		}
	}
	if !(t > 0) || math.IsInf(t, 0) {
		t = 1
	}
	cd.ProfilePVI = [2]float64{roundSig(t/2, 2), roundSig(2*t, 2)}
}

// roundSig rounds v to n significant digits.
func roundSig(v float64, n int) float64 {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return v
	}
	e := math.Pow(10, float64(n)-math.Ceil(math.Log10(math.Abs(v))))
	return math.Round(v*e) / e
}

// fracFlowCurve samples f(S) of sol over [0, 1] at n+1 saturations.
func fracFlowCurve(sol *engine.Solution, n int) []point {
	pts := make([]point, 0, n+1)
	for k := 0; k <= n; k++ {
		s := float64(k) / float64(n)
		pts = append(pts, point{s, sol.Flow.F(s)})
	}
	return pts
}

// envelopeCurve returns the upper concave envelope of sol as a polyline:
// the chord of each shock, and f sampled along each fan.
func envelopeCurve(sol *engine.Solution) []point {
	var pts []point
	for _, p := range sol.Pieces() {
		if p.Shock {
			pts = append(pts, point{p.Lo, p.FLo}, point{p.Hi, p.FHi})
			continue
		}
		const m = 48
		pts = append(pts, point{p.Lo, p.FLo})
		for k := 1; k < m; k++ {
			s := p.Lo + (p.Hi-p.Lo)*float64(k)/m
			pts = append(pts, point{s, sol.Flow.F(s)})
		}
		pts = append(pts, point{p.Hi, p.FHi})
	}
	return pts
}

// profileCurve returns the saturation profile S(xD) of sol after tD pore
// volumes, xD in [0, 1], built from the envelope: each shock is a jump at
// xD = tD·speed, each fan the states S at xD = tD·f'(S) (sampled), the
// inlet state behind the slowest wave and the initial state ahead of the
// front.
func profileCurve(sol *engine.Solution, tD float64) []point {
	pieces := sol.Pieces()
	if len(pieces) == 0 || !(tD > 0) {
		return nil
	}
	raw := []point{{0, sol.Inlet}}
	for k := len(pieces) - 1; k >= 0; k-- {
		p := pieces[k]
		if p.Shock {
			x := tD * p.Speed()
			raw = append(raw, point{x, p.Hi}, point{x, p.Lo})
			continue
		}
		const m = 64
		raw = append(raw, point{tD * p.SpeedHi, p.Hi})
		for j := m - 1; j > 0; j-- {
			s := p.Lo + (p.Hi-p.Lo)*float64(j)/m
			raw = append(raw, point{tD * sol.Flow.Slope(s), s})
		}
		raw = append(raw, point{tD * p.SpeedLo, p.Lo})
	}
	raw = append(raw, point{math.Inf(1), sol.Init})
	// Clip to xD ≤ 1.
	var pts []point
	for i, p := range raw {
		if p.X <= 1 {
			pts = append(pts, point{max(p.X, 0), p.Y})
			continue
		}
		q := raw[i-1]
		y := q.Y
		if !math.IsInf(p.X, 1) && p.X > q.X {
			y = q.Y + (p.Y-q.Y)*(1-q.X)/(p.X-q.X)
		}
		pts = append(pts, point{1, y})
		break
	}
	return pts
}
