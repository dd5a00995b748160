package batch

import (
	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// reportPlan returns what the report's charts need from the columns of a
// cases file of rows cases (computeCharts): the exceedance curves of
// breakthrough, of both candidates for the key recovery, of the
// checkpoints shown and, with a volumes section, of the breakthrough day
// and the volume produced by the cut limit; a histogram of every uncertain input; and, with two
// inputs or more, their ranks for the rank-correlation matrix.
func reportPlan(st *studies.Study, design *sampler.Design, in *summarize.Inputs, conv summarize.Convention, rows int) *statsPlan {
	pvi := st.Report.PVI
	plan := &statsPlan{conv: conv, level: summarize.DefaultLevel}
	plan.exceed = []string{engine.ColBreakthroughPVI, engine.ColRecoveryAtCutLimit}
	if len(pvi) > 0 {
		plan.exceed = append(plan.exceed, engine.CheckpointColumn("recovery", pvi[len(pvi)-1]))
	}
	for _, x := range checkpointsShown(pvi) {
		plan.exceed = append(plan.exceed, engine.CheckpointColumn("recovery", x))
	}
	if st.Model().Volumes != nil {
		plan.exceed = append(plan.exceed, engine.ColBreakthroughDays, engine.ColProducedAtCutLimit)
	}
	specs := st.Specs()
	for _, l := range in.Leaders {
		plan.hist = append(plan.hist, newHistogram(l.Param, specs[l.Param], design.Dist(int(l.Param)), int64(rows)))
	}
	if names := in.Names(); len(names) >= 2 {
		plan.corr = names
	}
	return plan
}

// curvesFromSummary returns the rows of curves.arrow from the summary
// statistics of the checkpoint columns: summarize.Curves takes the same
// percentiles of the same sorted values. It returns false when a
// checkpoint column has no summary.
func curvesFromSummary(pvi []float64, summary map[string]summarize.Stats) ([]summarize.CurveRow, bool) {
	rows := make([]summarize.CurveRow, len(pvi))
	for i, x := range pvi {
		r, okr := summary[engine.CheckpointColumn("recovery", x)]
		c, okc := summary[engine.CheckpointColumn("cut", x)]
		if !okr || !okc {
			return nil, false
		}
		rows[i] = summarize.CurveRow{PVI: x, RecoveryP90: r.P90, RecoveryP50: r.P50, RecoveryP10: r.P10,
			CutP90: c.P90, CutP50: c.P50, CutP10: c.P10}
	}
	return rows, true
}
