package summarize

import (
	"fmt"
	"math"

	"github.com/sweepstat/sweepstat/engine"
)

// SummaryRow is one row of summary.arrow (DESIGN §6): the [Stats] of one
// output column.
type SummaryRow struct {
	Output string
	Stats
}

// SummaryTable returns the summary of each output column named in outputs,
// in that order: [DescribeLevel] of the column under conv with percentile
// intervals at level. Columns are read one at a time and described in
// place, so memory is that of one column.
//
// It returns an error if conv is neither convention, level is outside
// (0, 1), or a column cannot be read.
func SummaryTable(outputs []string, column func(name string) ([]float64, error), conv Convention, level float64) ([]SummaryRow, error) {
	if err := checkConvention(conv); err != nil {
		return nil, err
	}
	if !(level > 0 && level < 1) {
		return nil, fmt.Errorf("summary table: confidence level %v outside (0, 1)", level)
	}
	rows := make([]SummaryRow, 0, len(outputs))
	for _, name := range outputs {
		col, err := column(name)
		if err != nil {
			return nil, fmt.Errorf("reading column %s: %w", name, err)
		}
		rows = append(rows, SummaryRow{Output: name, Stats: DescribeLevel(col, conv, level)})
	}
	return rows, nil
}

// CurveRow holds the percentiles of recovery and of the outlet cut at one
// PVI checkpoint (a point of each P90/P50/P10 curve against pore volumes
// injected), labelled under the table's [Convention].
type CurveRow struct {
	PVI                                   float64
	RecoveryP90, RecoveryP50, RecoveryP10 float64 // of recovery_at_<PVI>pvi
	CutP90, CutP50, CutP10                float64 // of cut_at_<PVI>pvi
}

// Curves returns one [CurveRow] per checkpoint of pvi, in that order, with
// the [Percentiles] under conv of the columns
// engine.CheckpointColumn("recovery", x) and engine.CheckpointColumn("cut", x).
// Rejected cases (NaN) are left out; a column with no valid value gives NaN
// percentiles. Columns are read one at a time and sorted in place, so
// memory is that of one column.
//
// It returns an error if conv is neither convention or a column cannot be
// read.
func Curves(pvi []float64, column func(name string) ([]float64, error), conv Convention) ([]CurveRow, error) {
	if err := checkConvention(conv); err != nil {
		return nil, err
	}
	rows := make([]CurveRow, len(pvi))
	for i, x := range pvi {
		row := CurveRow{PVI: x}
		for _, c := range []struct {
			kind          string
			p90, p50, p10 *float64
		}{
			{"recovery", &row.RecoveryP90, &row.RecoveryP50, &row.RecoveryP10},
			{"cut", &row.CutP90, &row.CutP50, &row.CutP10},
		} {
			name := engine.CheckpointColumn(c.kind, x)
			col, err := column(name)
			if err != nil {
				return nil, fmt.Errorf("reading column %s: %w", name, err)
			}
			*c.p90, *c.p50, *c.p10 = Percentiles(sortValid(col), conv)
		}
		rows[i] = row
	}
	return rows, nil
}

// SpearmanRow is one rank correlation of sensitivity.arrow (DESIGN §6).
type SpearmanRow struct {
	Output    string
	Parameter string
	Spearman  float64 // [Spearman] of the output and parameter columns
	N         int     // cases in which both values are non-NaN
}

// SpearmanTable returns the Spearman rank correlation ([Spearman]) of each
// output column with each parameter column, ordered by output (as in
// outputs) and then parameter (as in params). Each output is ranked once
// ([SpearmanEach]). A pair is NaN where Spearman is: fewer than two
// complete cases, or a column constant over them, such as a fixed
// parameter or an output that never changes.
//
// Memory: the parameter columns are all held at once, 8·len(params) bytes
// per case, plus one output column and the ranking scratch of
// [SpearmanEach] (about 48 bytes per case); at 10⁷ cases and 12
// parameters, about 1.4 GB.
//
// It returns an error if a column cannot be read or the columns differ in
// length.
func SpearmanTable(outputs []string, params []string, column func(name string) ([]float64, error)) ([]SpearmanRow, error) {
	if len(outputs) == 0 || len(params) == 0 {
		return nil, nil
	}
	xs := make([][]float64, len(params))
	n := -1
	read := func(name string) ([]float64, error) {
		col, err := column(name)
		if err != nil {
			return nil, fmt.Errorf("reading column %s: %w", name, err)
		}
		if n < 0 {
			n = len(col)
		} else if len(col) != n {
			return nil, fmt.Errorf("column %s has %d values, %s has %d", name, len(col), params[0], n)
		}
		return col, nil
	}
	for k, name := range params {
		col, err := read(name)
		if err != nil {
			return nil, err
		}
		xs[k] = col
	}
	// Rank each complete parameter column once. For an output without NaN
	// the correlation of those ranks with the output's is Spearman's ρ
	// exactly (the same mid-ranks Spearman computes), which saves ranking
	// every parameter again for every output.
	rxs := make([][]float64, len(params))
	for k, x := range xs {
		if !hasNaN(x) {
			rxs[k] = make([]float64, len(x))
			ranksInto(rxs[k], x)
		}
	}
	rows := make([]SpearmanRow, 0, len(outputs)*len(params))
	ry := make([]float64, max(n, 0))
	for _, name := range outputs {
		y, err := read(name)
		if err != nil {
			return nil, err
		}
		var rho []float64
		if len(y) >= 2 && !hasNaN(y) {
			ranksInto(ry, y)
			rho = make([]float64, len(xs))
			for k, x := range xs {
				if rxs[k] != nil {
					rho[k] = rankCorrelation(rxs[k], ry)
				} else {
					rho[k] = Spearman(x, y)
				}
			}
		} else {
			rho = SpearmanEach(xs, y)
		}
		for k, x := range xs {
			m := 0
			for i, v := range y {
				if !math.IsNaN(v) && !math.IsNaN(x[i]) {
					m++
				}
			}
			rows = append(rows, SpearmanRow{Output: name, Parameter: params[k], Spearman: rho[k], N: m})
		}
	}
	return rows, nil
}

// sortValid moves the non-NaN values of x to its front, sorts them in
// increasing order and returns them (a prefix of x).
func sortValid(x []float64) []float64 {
	n := 0
	for i, v := range x {
		if !math.IsNaN(v) {
			x[n], x[i] = v, x[n]
			n++
		}
	}
	sortFloats(x[:n])
	return x[:n]
}

// checkConvention returns an error wrapping [ErrConvention] unless c is
// [Exceedance] or [Cumulative].
func checkConvention(c Convention) error {
	if c != Exceedance && c != Cumulative {
		return fmt.Errorf("%w %d", ErrConvention, int(c))
	}
	return nil
}

func hasNaN(x []float64) bool {
	for _, v := range x {
		if math.IsNaN(v) {
			return true
		}
	}
	return false
}
