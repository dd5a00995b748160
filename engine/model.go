package engine

import (
	"fmt"
	"math"
)

// Family is a relative-permeability model family.
type Family uint8

// The relative-permeability families.
const (
	// FamilyCorey: Corey (1954) power laws with exponents n1, n2.
	FamilyCorey Family = iota
	// FamilyLET: the LET correlation (Lomeland, Ebeltoft & Thomas 2005)
	// with let_l1 … let_t2.
	FamilyLET
	// FamilyTable: measured curves of one or more rock samples, selected
	// by rock_sample and re-scaled to the case's end points.
	FamilyTable
)

var familyNames = [...]string{FamilyCorey: "corey", FamilyLET: "let", FamilyTable: "table"}

// String returns the family's name in study files: corey, let or table.
func (f Family) String() string {
	if int(f) < len(familyNames) {
		return familyNames[f]
	}
	return fmt.Sprintf("Family(%d)", uint8(f))
}

// FamilyNames returns the study-file names of the families in Family
// order (a new slice).
func FamilyNames() []string { return append([]string(nil), familyNames[:]...) }

// FamilyByName returns the family with the given study-file name.
func FamilyByName(name string) (Family, bool) {
	for i, n := range familyNames {
		if n == name {
			return Family(i), true
		}
	}
	return 0, false
}

// Model is what one study fixes for all its cases besides their Params:
// the relative-permeability family, the measured curves of a tabulated
// study, and whether outputs in days and surface volumes are wanted. The
// nil *Model is the plain Corey model with dimensionless outputs only, so
// callers that never heard of models keep working.
//
// A Model is read-only once built and safe for concurrent use.
type Model struct {
	Family Family
	// Tables holds the rock samples of FamilyTable; rock_sample k selects
	// Tables[k−1].
	Tables []*Table
	// TableEnds marks the end points (s1r, s2r, kr1_max, kr2_max, in that
	// order) that a tabulated case takes from its rock sample instead of
	// from its Params; see [Model.Resolve].
	TableEnds [4]bool
	// Volumes switches on the outputs in days and surface volumes; nil
	// for none.
	Volumes *Volumes
}

// Volumes describes the dimensional side of a study: how pore volumes
// injected become days and how recovery becomes produced surface volume.
// The dimensions themselves (length_m, area_m2 or width_m and
// thickness_m, porosity, b2, rate_m3_per_day) are case parameters, so
// they can be uncertain like any other input.
type Volumes struct {
	// Schedule is the injection rate against time, in increasing FromDay
	// starting at day 0; each rate holds until the next step and the last
	// one forever. Nil means the constant rate_m3_per_day of each case.
	Schedule []RateStep
	// AreaFromWidth takes the cross-section as width_m·thickness_m
	// instead of area_m2.
	AreaFromWidth bool
	// VelocityFromRate takes the total Darcy flux of the gravity number
	// as rate_m3_per_day / cross-section instead of velocity_m_per_day
	// (constant rate only).
	VelocityFromRate bool
	// FieldUnits adds the produced volumes in barrels.
	FieldUnits bool
}

// RateStep is one step of an injection schedule: from day FromDay on,
// phase 1 is injected at M3PerDay reservoir m³ per day.
type RateStep struct {
	FromDay  float64
	M3PerDay float64
}

// Barrel is one oil barrel (42 US gallons) in m³, exactly 0.158987294928
// (NIST SP 811, appendix B).
const Barrel = 0.158987294928

// Uses reports whether the model reads parameter p: the physics
// parameters always; n1, n2 only for Corey; the LET parameters only for
// LET; rock_sample only for tables; the dimensions only with Volumes (and
// area_m2 or width_m and thickness_m, rate_m3_per_day or a schedule, as
// the Volumes says).
func (m *Model) Uses(p Param) bool {
	fam := m.family()
	switch p {
	case N1, N2:
		return fam == FamilyCorey
	case LetL1, LetE1, LetT1, LetL2, LetE2, LetT2:
		return fam == FamilyLET
	case RockSample:
		return fam == FamilyTable
	case LengthM, AreaM2, Porosity, B2:
		return m != nil && m.Volumes != nil
	case WidthM, ThicknessM:
		return m != nil && m.Volumes != nil && m.Volumes.AreaFromWidth
	case RateM3PerDay:
		return m != nil && m.Volumes != nil && m.Volumes.Schedule == nil
	}
	return p >= 0 && p < NumParams
}

// Params returns the parameters the model reads, in engine.Param order:
// the columns of cases.arrow. area_m2 is among them with Volumes even when
// it is computed from width and thickness, so that the cross-section of
// every case is on record.
func (m *Model) Params() []Param {
	var ps []Param
	for p := Param(0); p < NumParams; p++ {
		if m.Uses(p) {
			ps = append(ps, p)
		}
	}
	return ps
}

// Required reports whether a study must give parameter p under this
// model. Dip defaults to zero, and the gravity inputs are needed only with
// a dip (see [Model.Validate]); a tabulated study may leave out the end
// points (they come from the rock sample) and rock_sample when the table
// holds one sample; area_m2 is computed when AreaFromWidth; the velocity
// is computed when VelocityFromRate.
func (m *Model) Required(p Param) bool {
	if !m.Uses(p) {
		return false
	}
	fam := m.family()
	switch p {
	case S1r, S2r, Kr1Max, Kr2Max:
		return fam != FamilyTable
	case DipDeg, Rho1, Rho2, PermMD, VelocityMPerDay:
		return false
	case RockSample:
		return len(m.Tables) > 1
	case AreaM2:
		return !m.Volumes.AreaFromWidth
	}
	return true
}

func (m *Model) family() Family {
	if m == nil {
		return FamilyCorey
	}
	return m.Family
}

// Resolve fills in the parameters of p that the model derives: the end
// points a tabulated case takes from its rock sample, the cross-section
// from width and thickness, and the velocity from the rate. It leaves
// everything else alone and is idempotent. A rock_sample outside the
// table leaves the end points as they are; [Model.Validate] reports it.
func (m *Model) Resolve(p *Params) {
	if m == nil {
		return
	}
	if m.Family == FamilyTable {
		if t := m.table(p); t != nil {
			var ends [4]float64
			ends[0], ends[1], ends[2], ends[3] = t.EndPoints()
			for i, q := range [4]Param{S1r, S2r, Kr1Max, Kr2Max} {
				if m.TableEnds[i] {
					p[q] = ends[i]
				}
			}
		}
	}
	if v := m.Volumes; v != nil {
		if v.AreaFromWidth {
			p[AreaM2] = p[WidthM] * p[ThicknessM]
		}
		if v.VelocityFromRate && v.Schedule == nil {
			p[VelocityMPerDay] = p[RateM3PerDay] / p[AreaM2]
		}
	}
}

// table returns the rock sample p selects, or nil if rock_sample is not a
// position in the table.
func (m *Model) table(p *Params) *Table {
	k := p[RockSample]
	if !(k >= 1 && k <= float64(len(m.Tables))) || k != math.Trunc(k) {
		return nil
	}
	return m.Tables[int(k)-1]
}

// Validate checks p, already resolved (see [Model.Resolve]), against the
// validity rules of DESIGN §2 for the parameters the model reads, and the
// model's own: LET parameters positive; rock_sample a position in the
// table; with Volumes, length, cross-section, porosity, b2 and rate
// positive, porosity at most 1. It returns the first rule that fails as a
// *[ValidityError], or nil.
func (m *Model) Validate(p *Params) error {
	return p.validate(m)
}

// curves builds the relative permeabilities of the resolved, valid case
// sol.Params under model m in sol's own storage and returns them.
func (sol *Solution) curves(m *Model) RelPerm {
	p := &sol.Params
	switch m.family() {
	case FamilyLET:
		sol.let = LET{S1r: p[S1r], S2r: p[S2r], Kr1Max: p[Kr1Max], Kr2Max: p[Kr2Max],
			L1: p[LetL1], E1: p[LetE1], T1: p[LetT1], L2: p[LetL2], E2: p[LetE2], T2: p[LetT2]}
		return &sol.let
	case FamilyTable:
		sol.scaled = ScaledTable{T: m.table(p), S1r: p[S1r], S2r: p[S2r], Kr1Max: p[Kr1Max], Kr2Max: p[Kr2Max]}
		return &sol.scaled
	}
	sol.corey = coreyOf(p)
	return &sol.corey
}
