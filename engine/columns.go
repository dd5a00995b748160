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

// Dimensional output columns, written when a study has a volumes block.
const (
	ColPoreVolume             = "pore_volume_m3"
	ColBreakthroughDays       = "breakthrough_days"
	ColProducedAtBreakthrough = "produced_volume_at_breakthrough_m3"
	ColDaysAtCutLimit         = "days_at_cut_limit"
	ColProducedAtCutLimit     = "produced_volume_at_cut_limit_m3"
)

// DaysColumn returns the name of the days_at_<X>pvi column: the day at
// which checkpoint x is reached.
func DaysColumn(x float64) string { return "days_at_" + PVIName(x) + "pvi" }

// ProducedColumn returns the name of the produced-volume column at
// checkpoint x in the given unit suffix ("m3" or "bbl"):
// produced_volume_at_<X>pvi_m3.
func ProducedColumn(x float64, unit string) string {
	return "produced_volume_at_" + PVIName(x) + "pvi_" + unit
}

// Units of the dimensional columns: reservoir and surface cubic metres,
// days and surface barrels.
const (
	UnitReservoirM3 = "m³ (reservoir)"
	UnitSurfaceM3   = "m³ (surface)"
	UnitDay         = "day"
	UnitBarrel      = "bbl (surface)"
)

// Outputs returns the numeric output columns of the model's cases for
// the PVI checkpoints pvi: those of the package-level [Outputs], then,
// when the model has Volumes, the pore volume, the days and produced
// surface volumes at breakthrough, at each checkpoint and at the cut
// limit, and with FieldUnits the produced volumes again in barrels.
func (m *Model) Outputs(pvi []float64) []Output {
	out := Outputs(pvi)
	if m == nil || m.Volumes == nil {
		return out
	}
	out = append(out,
		Output{ColPoreVolume, UnitReservoirM3, func(r *Result) float64 { return r.PoreVolume }},
		Output{ColBreakthroughDays, UnitDay, func(r *Result) float64 { return r.BreakthroughDays }},
		Output{ColProducedAtBreakthrough, UnitSurfaceM3, func(r *Result) float64 { return r.ProducedAtBreakthrough }},
	)
	for i, x := range pvi {
		out = append(out,
			Output{DaysColumn(x), UnitDay, func(r *Result) float64 { return r.DaysAt[i] }},
			Output{ProducedColumn(x, "m3"), UnitSurfaceM3, func(r *Result) float64 { return r.ProducedAt[i] }},
		)
	}
	out = append(out,
		Output{ColDaysAtCutLimit, UnitDay, func(r *Result) float64 { return r.DaysAtCutLimit }},
		Output{ColProducedAtCutLimit, UnitSurfaceM3, func(r *Result) float64 { return r.ProducedAtCutLimit }},
	)
	if !m.Volumes.FieldUnits {
		return out
	}
	bbl := func(v float64) float64 { return v / Barrel }
	out = append(out, Output{"produced_volume_at_breakthrough_bbl", UnitBarrel, func(r *Result) float64 { return bbl(r.ProducedAtBreakthrough) }})
	for i, x := range pvi {
		out = append(out, Output{ProducedColumn(x, "bbl"), UnitBarrel, func(r *Result) float64 { return bbl(r.ProducedAt[i]) }})
	}
	return append(out, Output{"produced_volume_at_cut_limit_bbl", UnitBarrel, func(r *Result) float64 { return bbl(r.ProducedAtCutLimit) }})
}
