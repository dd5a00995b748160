package engine

import (
	"strconv"
)

// Output column names of cases.arrow (DESIGN §2). They are part of the
// output contract; the checkpoint columns are built by [CheckpointColumn].
const (
	ColCase                   = "case"
	ColStatus                 = "status"
	ColGravityNumber          = "gravity_number"
	ColFrontSaturation        = "front_saturation"
	ColFrontSpeed             = "front_speed"
	ColBreakthroughPVI        = "breakthrough_pvi"
	ColRecoveryAtBreakthrough = "recovery_at_breakthrough"
	ColPVIAtCutLimit          = "pvi_at_cut_limit"
	ColRecoveryAtCutLimit     = "recovery_at_cut_limit"
	ColMaxRecovery            = "max_recovery"
)

// PVIName formats a PVI checkpoint the shortest way that reads back to the
// same number: 0.5, 1, 2.25.
func PVIName(x float64) string {
	return strconv.FormatFloat(x, 'f', -1, 64)
}

// CheckpointColumn returns the recovery or cut column name at checkpoint
// x: recovery_at_<X>pvi or cut_at_<X>pvi.
func CheckpointColumn(kind string, x float64) string {
	return kind + "_at_" + PVIName(x) + "pvi"
}

// Output describes one numeric output column of a case.
type Output struct {
	Name string
	Unit string                // "fraction", "PVI", "-" (dimensionless), …
	Get  func(*Result) float64 // the column's value in a Result
}

// Outputs returns the numeric output columns for the PVI checkpoints pvi,
// in their cases.arrow order: gravity number, front, breakthrough,
// recovery and cut at each checkpoint, the cut-limit pair and the 1-D
// limit. The status column is not included.
func Outputs(pvi []float64) []Output {
	out := []Output{
		{ColGravityNumber, "-", func(r *Result) float64 { return r.GravityNumber }},
		{ColFrontSaturation, "fraction", func(r *Result) float64 { return r.FrontSaturation }},
		{ColFrontSpeed, "-", func(r *Result) float64 { return r.FrontSpeed }},
		{ColBreakthroughPVI, "PVI", func(r *Result) float64 { return r.BreakthroughPVI }},
		{ColRecoveryAtBreakthrough, "fraction", func(r *Result) float64 { return r.RecoveryAtBreakthrough }},
	}
	for i, x := range pvi {
		out = append(out,
			Output{CheckpointColumn("recovery", x), "fraction", func(r *Result) float64 { return r.RecoveryAt[i] }},
			Output{CheckpointColumn("cut", x), "fraction", func(r *Result) float64 { return r.CutAt[i] }},
		)
	}
	return append(out,
		Output{ColPVIAtCutLimit, "PVI", func(r *Result) float64 { return r.PVIAtCutLimit }},
		Output{ColRecoveryAtCutLimit, "fraction", func(r *Result) float64 { return r.RecoveryAtCutLimit }},
		Output{ColMaxRecovery, "fraction", func(r *Result) float64 { return r.MaxRecovery }},
	)
}
