package engine

import (
	"errors"
	"fmt"
	"math"
)

// Param indexes one input of a displacement case. The names returned by
// [Param.String] are the parameter names of the study file and the column
// names of cases.arrow; they are part of the output contract.
type Param int

// The inputs of one case, in the order they appear in cases.arrow.
const (
	S1Init          Param = iota // initial phase-1 saturation, fraction
	S1r                          // residual (critical) phase-1 saturation, fraction
	S2r                          // residual phase-2 saturation, fraction
	Kr1Max                       // phase-1 end-point relative permeability, fraction
	Kr2Max                       // phase-2 end-point relative permeability, fraction
	N1                           // phase-1 Corey exponent
	N2                           // phase-2 Corey exponent
	Mu1CP                        // phase-1 viscosity, mPa·s
	Mu2CP                        // phase-2 viscosity, mPa·s
	DipDeg                       // dip of the flow direction, degrees, positive up-dip
	Rho1                         // phase-1 density, kg/m³
	Rho2                         // phase-2 density, kg/m³
	PermMD                       // absolute permeability, mD
	VelocityMPerDay              // total Darcy flux, m/day

	// LET curve parameters (Lomeland, Ebeltoft & Thomas 2005), used by the
	// LET model in place of N1 and N2.
	LetL1 // phase-1 L
	LetE1 // phase-1 E
	LetT1 // phase-1 T
	LetL2 // phase-2 L
	LetE2 // phase-2 E
	LetT2 // phase-2 T

	// RockSample selects the measured curves of the tabulated model: the
	// 1-based position of a rock sample in the study's table.
	RockSample

	// Dimensions and rates of the volumes block, used only when a study
	// asks for outputs in days and surface volumes.
	LengthM      // length of the flow path, m
	AreaM2       // cross-section, m²
	WidthM       // width, m (cross-section = width·thickness when no area is given)
	ThicknessM   // thickness, m
	Porosity     // porosity, fraction
	B2           // formation volume factor of phase 2, reservoir m³ per surface m³
	RateM3PerDay // injection rate of phase 1 at reservoir conditions, m³/day

	NumParams // number of parameters
)

// paramNames holds the contract names of the parameters, indexed by Param.
var paramNames = [NumParams]string{
	S1Init:          "s1_init",
	S1r:             "s1r",
	S2r:             "s2r",
	Kr1Max:          "kr1_max",
	Kr2Max:          "kr2_max",
	N1:              "n1",
	N2:              "n2",
	Mu1CP:           "mu1_cp",
	Mu2CP:           "mu2_cp",
	DipDeg:          "dip_deg",
	Rho1:            "rho1",
	Rho2:            "rho2",
	PermMD:          "perm_md",
	VelocityMPerDay: "velocity_m_per_day",
	LetL1:           "let_l1",
	LetE1:           "let_e1",
	LetT1:           "let_t1",
	LetL2:           "let_l2",
	LetE2:           "let_e2",
	LetT2:           "let_t2",
	RockSample:      "rock_sample",
	LengthM:         "length_m",
	AreaM2:          "area_m2",
	WidthM:          "width_m",
	ThicknessM:      "thickness_m",
	Porosity:        "porosity",
	B2:              "b2",
	RateM3PerDay:    "rate_m3_per_day",
}

// String returns the parameter's name in study files and output columns.
func (p Param) String() string {
	if p < 0 || p >= NumParams {
		return fmt.Sprintf("Param(%d)", int(p))
	}
	return paramNames[p]
}

// Unit returns the parameter's unit as printed in reports and column
// metadata; "fraction" and "-" mark dimensionless inputs.
func (p Param) Unit() string {
	switch p {
	case S1Init, S1r, S2r, Kr1Max, Kr2Max, Porosity:
		return "fraction"
	case N1, N2, LetL1, LetE1, LetT1, LetL2, LetE2, LetT2, RockSample:
		return "-"
	case LengthM, WidthM, ThicknessM:
		return "m"
	case AreaM2:
		return "m²"
	case B2:
		return "rm³/sm³"
	case RateM3PerDay:
		return "m³/day"
	case Mu1CP, Mu2CP:
		return "mPa·s"
	case DipDeg:
		return "degree"
	case Rho1, Rho2:
		return "kg/m³"
	case PermMD:
		return "mD"
	case VelocityMPerDay:
		return "m/day"
	}
	return ""
}

// Required reports whether a Corey study must give the parameter (see
// [Model.Required] for the other models). Dip defaults to zero;
// densities, permeability and velocity are needed only when the dip is
// not zero (see [Params.Validate]).
func (p Param) Required() bool {
	return p <= Mu2CP
}

// ParamByName returns the parameter with the given contract name.
func ParamByName(name string) (Param, bool) {
	for i, n := range paramNames {
		if n == name {
			return Param(i), true
		}
	}
	return 0, false
}

// Params holds one case's inputs, indexed by [Param].
type Params [NumParams]float64

// DefaultParams returns the parameter set used by `sweepstat solve` for
// anything not given: a horizontal, unit-mobility-ratio Corey case with
// quadratic curves and no residual saturations, plus densities,
// permeability and velocity that only matter once a dip is set.
//
//	s1_init 0, s1r 0, s2r 0, kr1_max 1, kr2_max 1, n1 2, n2 2,
//	mu1_cp 1, mu2_cp 1, dip_deg 0, rho1 1000, rho2 800,
//	perm_md 100, velocity_m_per_day 0.3,
//
// and for the other models LET curves with L = 2, E = 1, T = 1.5 for
// both phases and the first rock sample of a table.
func DefaultParams() Params {
	var p Params
	p[LetL1], p[LetE1], p[LetT1] = 2, 1, 1.5
	p[LetL2], p[LetE2], p[LetT2] = 2, 1, 1.5
	p[RockSample] = 1
	p[Kr1Max], p[Kr2Max] = 1, 1
	p[N1], p[N2] = 2, 2
	p[Mu1CP], p[Mu2CP] = 1, 1
	p[Rho1], p[Rho2] = 1000, 800
	p[PermMD] = 100
	p[VelocityMPerDay] = 0.3
	return p
}

// ErrInvalid is the cause of every [ValidityError].
var ErrInvalid = errors.New("invalid case parameters")

// ValidityError reports which validity rule of a parameter set failed.
type ValidityError struct {
	Param Param  // the parameter the rule is about
	Rule  string // the rule, e.g. "s1r + s2r < 1"
	Value float64
}

func (e *ValidityError) Error() string {
	return fmt.Sprintf("%s = %g breaks %s", e.Param, e.Value, e.Rule)
}

// Unwrap returns [ErrInvalid].
func (e *ValidityError) Unwrap() error { return ErrInvalid }

// Validate checks the validity rules of a Corey displacement case:
//
//	all values finite; 0 ≤ s1r, 0 ≤ s2r, s1r + s2r < 1;
//	0 ≤ s1_init < 1 − s2r;
//	0 < kr1_max, kr2_max ≤ 1; n1, n2 > 0; mu1_cp, mu2_cp > 0;
//	|dip_deg| ≤ 90; and, when dip_deg ≠ 0 and rho1 ≠ rho2,
//	perm_md > 0 and velocity_m_per_day > 0.
//
// Densities must be non-negative. It returns the first rule that fails as a
// *[ValidityError], or nil. A valid set may still describe an initial state
// that flows backwards; [Solve] reports that as a status, not an error.
// [Model.Validate] checks a case of any model.
func (p *Params) Validate() error { return p.validate(nil) }

func (p *Params) validate(m *Model) error {
	bad := func(q Param, rule string) error {
		return &ValidityError{Param: q, Rule: rule, Value: p[q]}
	}
	for q := Param(0); q < NumParams; q++ {
		// x − x is 0 for a finite x and NaN for NaN and ±Inf; a value the
		// model does not read may be anything.
		if x := p[q]; x-x != 0 && m.Uses(q) {
			return bad(q, "a finite value")
		}
	}
	switch {
	case p[S1r] < 0:
		return bad(S1r, "s1r ≥ 0")
	case p[S2r] < 0:
		return bad(S2r, "s2r ≥ 0")
	case p[S1r]+p[S2r] >= 1:
		return bad(S2r, "s1r + s2r < 1")
	case p[S1Init] < 0:
		return bad(S1Init, "s1_init ≥ 0")
	case p[S1Init] >= 1-p[S2r]:
		return bad(S1Init, "s1_init < 1 − s2r")
	case !(p[Kr1Max] > 0 && p[Kr1Max] <= 1):
		return bad(Kr1Max, "0 < kr1_max ≤ 1")
	case !(p[Kr2Max] > 0 && p[Kr2Max] <= 1):
		return bad(Kr2Max, "0 < kr2_max ≤ 1")
	}
	switch m.family() {
	case FamilyCorey:
		switch {
		case !(p[N1] > 0):
			return bad(N1, "n1 > 0")
		case !(p[N2] > 0):
			return bad(N2, "n2 > 0")
		}
	case FamilyLET:
		for _, q := range [...]Param{LetL1, LetE1, LetT1, LetL2, LetE2, LetT2} {
			if !(p[q] > 0) {
				return bad(q, q.String()+" > 0")
			}
		}
	case FamilyTable:
		if m.table(p) == nil {
			return bad(RockSample, fmt.Sprintf("rock_sample a whole number from 1 to %d", len(m.Tables)))
		}
	}
	switch {
	case !(p[Mu1CP] > 0):
		return bad(Mu1CP, "mu1_cp > 0")
	case !(p[Mu2CP] > 0):
		return bad(Mu2CP, "mu2_cp > 0")
	case math.Abs(p[DipDeg]) > 90:
		return bad(DipDeg, "|dip_deg| ≤ 90")
	case p[Rho1] < 0:
		return bad(Rho1, "rho1 ≥ 0")
	case p[Rho2] < 0:
		return bad(Rho2, "rho2 ≥ 0")
	}
	if p[DipDeg] != 0 && p[Rho1] != p[Rho2] {
		switch {
		case !(p[PermMD] > 0):
			return bad(PermMD, "perm_md > 0 when dipping")
		case !(p[VelocityMPerDay] > 0):
			return bad(VelocityMPerDay, "velocity_m_per_day > 0 when dipping")
		}
	}
	if m == nil || m.Volumes == nil {
		return nil
	}
	v := m.Volumes
	if v.AreaFromWidth {
		switch {
		case !(p[WidthM] > 0):
			return bad(WidthM, "width_m > 0")
		case !(p[ThicknessM] > 0):
			return bad(ThicknessM, "thickness_m > 0")
		}
	}
	switch {
	case !(p[LengthM] > 0):
		return bad(LengthM, "length_m > 0")
	case !(p[AreaM2] > 0) || math.IsInf(p[AreaM2], 0):
		return bad(AreaM2, "0 < area_m2 < ∞")
	case !(p[Porosity] > 0 && p[Porosity] <= 1):
		return bad(Porosity, "0 < porosity ≤ 1")
	case !(p[B2] > 0):
		return bad(B2, "b2 > 0")
	case v.Schedule == nil && !(p[RateM3PerDay] > 0):
		return bad(RateM3PerDay, "rate_m3_per_day > 0")
	}
	return nil
}
