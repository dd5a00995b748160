package batch

import "github.com/sweepstat/sweepstat/summarize"

// floatField is one float64 column of a summary table: its name and unit
// in the Arrow file and where its value lives in a row. The lists below are
// the one place the tables' float columns are named; the writers
// (summaries.go) and the readers (report_read.go) both go through them.
type floatField[R any] struct {
	name, unit string
	ptr        func(*R) *float64
}

// summaryFields are the float columns of summary.arrow, after output, n
// and n_rejected.
var summaryFields = []floatField[summarize.SummaryRow]{
	{"mean", "", func(r *summarize.SummaryRow) *float64 { return &r.Mean }},
	{"sd", "", func(r *summarize.SummaryRow) *float64 { return &r.SD }},
	{"min", "", func(r *summarize.SummaryRow) *float64 { return &r.Min }},
	{"max", "", func(r *summarize.SummaryRow) *float64 { return &r.Max }},
	{"p90", "", func(r *summarize.SummaryRow) *float64 { return &r.P90 }},
	{"p50", "", func(r *summarize.SummaryRow) *float64 { return &r.P50 }},
	{"p10", "", func(r *summarize.SummaryRow) *float64 { return &r.P10 }},
	{"swanson_mean", "", func(r *summarize.SummaryRow) *float64 { return &r.SwansonMean }},
	{"p90_low", "", func(r *summarize.SummaryRow) *float64 { return &r.P90Low }},
	{"p90_high", "", func(r *summarize.SummaryRow) *float64 { return &r.P90High }},
	{"p50_low", "", func(r *summarize.SummaryRow) *float64 { return &r.P50Low }},
	{"p50_high", "", func(r *summarize.SummaryRow) *float64 { return &r.P50High }},
	{"p10_low", "", func(r *summarize.SummaryRow) *float64 { return &r.P10Low }},
	{"p10_high", "", func(r *summarize.SummaryRow) *float64 { return &r.P10High }},
}

// curveFields are the columns of curves.arrow.
var curveFields = []floatField[summarize.CurveRow]{
	{"pvi", "PVI", func(r *summarize.CurveRow) *float64 { return &r.PVI }},
	{"recovery_p90", "fraction", func(r *summarize.CurveRow) *float64 { return &r.RecoveryP90 }},
	{"recovery_p50", "fraction", func(r *summarize.CurveRow) *float64 { return &r.RecoveryP50 }},
	{"recovery_p10", "fraction", func(r *summarize.CurveRow) *float64 { return &r.RecoveryP10 }},
	{"cut_p90", "fraction", func(r *summarize.CurveRow) *float64 { return &r.CutP90 }},
	{"cut_p50", "fraction", func(r *summarize.CurveRow) *float64 { return &r.CutP50 }},
	{"cut_p10", "fraction", func(r *summarize.CurveRow) *float64 { return &r.CutP10 }},
}

// tornadoFields are the float columns of tornado.arrow, between parameter
// and rank.
var tornadoFields = []floatField[summarize.TornadoRow]{
	{"input_low", "", func(r *summarize.TornadoRow) *float64 { return &r.InputLow }},
	{"input_base", "", func(r *summarize.TornadoRow) *float64 { return &r.InputBase }},
	{"input_high", "", func(r *summarize.TornadoRow) *float64 { return &r.InputHigh }},
	{"output_base", "", func(r *summarize.TornadoRow) *float64 { return &r.OutputBase }},
	{"output_at_low", "", func(r *summarize.TornadoRow) *float64 { return &r.OutputAtLow }},
	{"output_at_high", "", func(r *summarize.TornadoRow) *float64 { return &r.OutputAtHigh }},
	{"swing", "", func(r *summarize.TornadoRow) *float64 { return &r.Swing }},
}

// addFields adds the float columns fs of rows to t.
func addFields[R any](t *Table, rows []R, fs []floatField[R]) {
	for _, f := range fs {
		col := make([]float64, len(rows))
		for i := range rows {
			col[i] = *f.ptr(&rows[i])
		}
		t.Add(f.name, f.unit, col)
	}
}

// fieldNames returns the column names of fs.
func fieldNames[R any](fs []floatField[R]) []string {
	names := make([]string, len(fs))
	for k, f := range fs {
		names[k] = f.name
	}
	return names
}

// setFields stores the values v, in the order of fs, into row r.
func setFields[R any](r *R, fs []floatField[R], v []float64) {
	for k, f := range fs {
		*f.ptr(r) = v[k]
	}
}
