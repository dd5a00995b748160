package engine

import (
	"math"
	"testing"
)

// TestUnitConstants checks the conversion factors against their published
// definitions (NIST SP 811, 2008 edition, appendix B): the oil barrel is
// 42 US gallons of 231 in³ each, the inch exactly 0.0254 m; the darcy is
// 9.869233e-13 m²; the centipoise 1e-3 Pa·s; g is the CGPM 1901 standard
// value.
func TestUnitConstants(t *testing.T) {
	t.Parallel()
	inch := 0.0254
	gallon := 231 * inch * inch * inch
	for _, c := range []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"barrel = 42 US gal", Barrel, 42 * gallon, 1e-15},
		{"barrel (SP 811 table value)", Barrel, 1.589873e-1, 1e-7},
		{"millidarcy", MilliDarcy, 9.869233e-13 / 1000, 0},
		{"centipoise", CentiPoise, 1e-3, 0},
		{"standard gravity", StandardGravity, 9.80665, 0},
		{"day", SecondsPerDay, 24 * 3600, 0},
	} {
		if math.Abs(c.got-c.want) > c.tol*math.Abs(c.want) {
			t.Errorf("%s: %.15g, want %.15g", c.name, c.got, c.want)
		}
	}
}

// TestVolumesByHand solves one case with a volumes block and checks the
// dimensional outputs against a hand calculation.
//
// The case is the closed form of TestQuadraticCoreyClosedForm (n1 = n2 = 2, equal
// viscosities, no residuals, s1_init = 0): breakthrough at 2(√2 − 1) PVI
// with front saturation 1/√2 and, before breakthrough, recovery = tD.
// Dimensions: length 500 m, area 20 m × 10 m = 200 m², porosity 0.25, so
// PV = 500·200·0.25 = 25,000 m³; b2 = 1.25 rm³/sm³.
//
// Constant rate 100 m³/day: tD = 0.5 PVI (before breakthrough at 0.828)
// takes 0.5·25,000/100 = 125 days and has produced 0.5·25,000 = 12,500
// reservoir m³ of phase 2 = 12,500/1.25 = 10,000 surface m³ =
// 10,000/0.158987294928 = 62,898.1 bbl. Breakthrough: 2(√2−1)·250 =
// 207.107 days, 2(√2−1)·20,000 sm³ = 16,568.5 sm³.
//
// Schedule [[0, 50], [100, 200]]: by day 100, 5,000 m³ are in (0.2 PVI);
// 0.5 PVI = 12,500 m³ needs 7,500 more at 200 m³/day = 37.5 days, so day
// 137.5. 2 PVI = 50,000 m³: 45,000 after day 100 → 100 + 225 = day 325.
func TestVolumesByHand(t *testing.T) {
	t.Parallel()
	p := DefaultParams()
	p[LengthM], p[WidthM], p[ThicknessM], p[Porosity], p[B2], p[RateM3PerDay] = 500, 20, 10, 0.25, 1.25, 100
	pvi := []float64{0.5, 2}
	near := func(name string, got, want, tol float64) {
		t.Helper()
		if math.Abs(got-want) > tol*math.Abs(want) {
			t.Errorf("%s = %.10g, want %.10g", name, got, want)
		}
	}

	m := &Model{Volumes: &Volumes{AreaFromWidth: true, FieldUnits: true}}
	s := Solver{Model: m}
	var r Result
	s.SolveCase(&p, pvi, 0.98, &r)
	if r.Status != StatusOK {
		t.Fatalf("status %v", r.StatusText())
	}
	near("pore volume", r.PoreVolume, 25000, 1e-15)
	near("days at 0.5", r.DaysAt[0], 125, 1e-15)
	near("produced at 0.5", r.ProducedAt[0], 10000, 1e-12)
	bt := 2 * (math.Sqrt2 - 1)
	near("breakthrough days", r.BreakthroughDays, bt*250, 1e-12)
	near("produced at breakthrough", r.ProducedAtBreakthrough, bt*20000, 1e-12)
	near("days at cut limit", r.DaysAtCutLimit, r.PVIAtCutLimit*250, 1e-15)
	outs := m.Outputs(pvi)
	got := map[string]float64{}
	for _, o := range outs {
		got[o.Name] = o.Get(&r)
	}
	near("bbl at 0.5", got["produced_volume_at_0.5pvi_bbl"], 62898.10, 1e-6)
	near("m3 column at 0.5", got["produced_volume_at_0.5pvi_m3"], 10000, 1e-12)
	near("days column at 2", got["days_at_2pvi"], 500, 1e-15)

	m.Volumes.Schedule = []RateStep{{0, 50}, {100, 200}}
	s.SolveCase(&p, pvi, 0.98, &r)
	near("scheduled days at 0.5", r.DaysAt[0], 137.5, 1e-15)
	near("scheduled days at 2", r.DaysAt[1], 325, 1e-15)

	// Before the first step ends: 0.1 PVI = 2,500 m³ at 50 m³/day.
	near("inside the first step", injectionDays(m.Volumes.Schedule, 0, 2500), 50, 1e-15)
	// A shut-in step (rate 0) is skipped over.
	shut := []RateStep{{0, 100}, {10, 0}, {30, 100}}
	near("after a shut-in", injectionDays(shut, 0, 1500), 35, 1e-15)
	if d := injectionDays(shut, 0, math.NaN()); !math.IsNaN(d) {
		t.Errorf("NaN volume gives %v days", d)
	}
}

// TestVelocityFromRate: with a constant rate and no velocity given, the
// gravity number uses the Darcy flux rate/area (m/day), so doubling the
// area halves the flux and doubles G (G ∝ 1/u, DESIGN §2).
func TestVelocityFromRate(t *testing.T) {
	t.Parallel()
	p := DefaultParams()
	p[DipDeg], p[Rho1], p[Rho2], p[PermMD] = 10, 1040, 860, 200
	p[LengthM], p[AreaM2], p[Porosity], p[B2], p[RateM3PerDay] = 300, 1000, 0.2, 1, 300
	m := &Model{Volumes: &Volumes{VelocityFromRate: true}}
	q := p
	m.Resolve(&q)
	if q[VelocityMPerDay] != 0.3 {
		t.Fatalf("velocity %v, want 300/1000 = 0.3 m/day", q[VelocityMPerDay])
	}
	g1 := GravityNumber(&q)
	p[AreaM2] = 2000
	q = p
	m.Resolve(&q)
	if g2 := GravityNumber(&q); math.Abs(g2-2*g1) > 1e-14*math.Abs(g2) {
		t.Errorf("G = %v with twice the area, want 2×%v", g2, g1)
	}
}

// TestModelValidity: each model reads its own parameters and checks them.
func TestModelValidity(t *testing.T) {
	t.Parallel()
	p := DefaultParams()
	let := &Model{Family: FamilyLET}
	p[N1] = -1 // not read by LET
	if err := let.Validate(&p); err != nil {
		t.Errorf("LET case rejected for n1: %v", err)
	}
	p[LetE2] = 0
	if err := let.Validate(&p); err == nil || err.(*ValidityError).Param != LetE2 {
		t.Errorf("let_e2 = 0 accepted or blamed wrongly: %v", err)
	}
	tab := &Model{Family: FamilyTable, Tables: make([]*Table, 2)}
	for _, k := range []float64{0, 3, 1.5, math.NaN()} {
		q := DefaultParams()
		q[RockSample] = k
		if err := tab.Validate(&q); err == nil {
			t.Errorf("rock_sample %v accepted with two samples", k)
		}
	}
	vol := &Model{Volumes: &Volumes{}}
	q := DefaultParams()
	q[LengthM], q[AreaM2], q[Porosity], q[B2], q[RateM3PerDay] = 1, 1, 1.2, 1, 1
	if err := vol.Validate(&q); err == nil || err.(*ValidityError).Param != Porosity {
		t.Errorf("porosity 1.2 accepted: %v", err)
	}
	if got := (*Model)(nil).Params(); len(got) != int(VelocityMPerDay)+1 {
		t.Errorf("Corey reads %v", got)
	}
}
