package studies

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
)

// Values of [Study.Sampling] and [Report.Percentiles].
const (
	SamplingLHS    = "lhs"    // Latin hypercube (McKay, Beckman & Conover 1979)
	SamplingRandom = "random" // independent uniform draws

	PercentilesExceedance = "exceedance" // P90 is exceeded with 90 % probability (the low value)
	PercentilesCumulative = "cumulative" // P90 is the 90th percentile (the high value)
)

// Defaults applied to keys a study leaves out.
const (
	DefaultSeed        = 1
	DefaultSampling    = SamplingLHS
	DefaultCutLimit    = 0.98
	DefaultPercentiles = PercentilesExceedance
	DefaultTornadoLow  = 0.1
	DefaultTornadoHigh = 0.9
	DefaultInjected    = "phase 1"
	DefaultDisplaced   = "phase 2"
)

// Limits of a study file.
const (
	// MaxCases is the largest `cases`: 2³¹−1 keeps case indices within an
	// int on every platform, and is far beyond what a file of results can
	// usefully hold (at ~40 columns of 8 bytes, about 0.7 TB).
	MaxCases = math.MaxInt32
	// MaxSobol is the largest `sensitivity.sobol` base sample size. The
	// Saltelli (2010) design costs sobol·(k+2) solves for k uncertain
	// parameters, so at most 1.6·10⁸ with all 14 uncertain: within MaxCases.
	MaxSobol = 10_000_000
	// MinSobol is the smallest non-zero `sensitivity.sobol`: one base sample
	// cannot estimate a variance.
	MinSobol = 2
	// MaxCheckpoints is the largest number of `report.pvi` checkpoints.
	MaxCheckpoints = 100
	// MaxNameLen is the longest study name, in bytes.
	MaxNameLen = 100
	// MaxLabelLen is the longest phase label, in bytes.
	MaxLabelLen = 64
	// MaxFileSize is the largest study file Parse and Load accept, in bytes.
	MaxFileSize = 4 << 20
	// MaxErrors is the most errors Parse lists one by one.
	MaxErrors = 100
)

// DefaultPVI returns the report checkpoints used when a study gives no
// `report.pvi`: 0.25, 0.5, 1, 2 and 3 pore volumes injected. The slice is
// new on each call.
func DefaultPVI() []float64 { return []float64{0.25, 0.5, 1, 2, 3} }

// Study is a validated study file. [Parse] and [Load] fill every field,
// applying the defaults of DESIGN §4 and the Default constants for keys the
// file leaves out.
type Study struct {
	Name     string // usable as a folder name: letters, digits, '-', '_', '.', not starting with '.'
	Phases   Phases
	Cases    int    // 1 … MaxCases
	Seed     uint64 // DefaultSeed when not given
	Sampling string // SamplingLHS or SamplingRandom

	// Parameters holds the parameters the file gives, in engine.Param
	// order whatever their order in the file: reordering a file's keys
	// never changes a result.
	Parameters []Parameter
	// Correlations holds the rank correlations in file order. A caller
	// passes them to the sampler in this order, so that the sampler's entry
	// k is Correlations[k] (see [Study.CorrelationError]).
	Correlations []Correlation

	// Relperm is the relperm section: the relative-permeability model
	// and, for measured curves, the table read.
	Relperm Relperm
	// Volumes holds the volumes section's own keys; the dimensions are
	// among Parameters.
	Volumes VolumeSettings

	Report      Report
	Tornado     Tornado
	Sensitivity Sensitivity

	Source string // the file name given to Parse or Load
	// Hash identifies the study's inputs (run.json's study_hash): the
	// SHA-256 of the file's bytes, or for a table study of the file's
	// bytes, a separator and the table's bytes; lower-case hex.
	Hash string
	// FileHash is the SHA-256 of the study file's bytes alone.
	FileHash string

	model *engine.Model

	correlationsPos Pos // position of the correlations key
	parametersPos   Pos // position of the parameters key
}

// Phases holds the report labels of the two phases (DESIGN §2: phase 1 is
// injected, phase 2 resident). They default to [DefaultInjected] and
// [DefaultDisplaced].
type Phases struct {
	Injected, Displaced string
}

// Parameter is one entry of a study's `parameters` mapping.
type Parameter struct {
	Name  string       // the contract name, Param.String()
	Param engine.Param // which engine input it sets
	// Spec is the specification as written. Spec.Name is Name. For a
	// same_as parameter Spec.SameAs is the name written in the file; see
	// [Study.Specs] for chains resolved.
	Spec     sampler.Spec
	Pos      Pos // position of the parameter's key
	ValuePos Pos // position of its value (the number or the mapping)

	fields                map[string]Pos // value positions of the mapping's keys
	valuesPos, weightsPos []Pos          // positions of the list items
}

// FieldPos returns the position of one field of the parameter's value
// mapping, named as [sampler.FieldError.Field] names it: "dist", "min",
// "mode", "max", "mean", "sd", "values", "weights", "values[2]",
// "same_as". For a field the file does not have, or for a fixed value, it
// returns ValuePos, so a caller can map any sampler.FieldError to a place.
func (p *Parameter) FieldPos(field string) Pos {
	if pos, ok := p.fields[field]; ok {
		return pos
	}
	for _, l := range []struct {
		name string
		pos  []Pos
	}{{"values", p.valuesPos}, {"weights", p.weightsPos}} {
		rest, ok := strings.CutPrefix(field, l.name+"[")
		if !ok {
			continue
		}
		idx, ok := strings.CutSuffix(rest, "]")
		if i, err := strconv.Atoi(idx); ok && err == nil && i >= 0 && i < len(l.pos) {
			return l.pos[i]
		}
	}
	return p.ValuePos
}

// Correlation is one `correlations` entry: the rank correlation Rho
// between parameters A and B (names as in the file, both uncertain
// parameters of the study, A ≠ B, |Rho| < 1).
type Correlation struct {
	A, B string
	Rho  float64
	Pos  Pos // position of the entry ([a, b, rho])
}

// Report holds the `report` section.
type Report struct {
	// PVI lists the checkpoints (pore volumes injected) of the
	// recovery_at_<X>pvi and cut_at_<X>pvi columns: positive, finite and
	// strictly increasing; [DefaultPVI] when not given.
	PVI []float64
	// CutLimit is the outlet cut of pvi_at_cut_limit, in (0, 1];
	// DefaultCutLimit when not given.
	CutLimit float64
	// Percentiles is PercentilesExceedance (default) or PercentilesCumulative.
	Percentiles string
}

// Tornado holds the quantiles a parameter is moved to in the tornado
// chart: 0 < Low < High < 1, defaults DefaultTornadoLow and
// DefaultTornadoHigh.
type Tornado struct {
	Low, High float64
}

// Sensitivity holds the `sensitivity` section. Sobol is the base sample
// size of the Sobol indices, 0 (the default) for none; otherwise
// MinSobol ≤ Sobol ≤ MaxSobol.
type Sensitivity struct {
	Sobol int
}

// Lookup returns the study's entry for p, or false if the file does not
// give p.
func (s *Study) Lookup(p engine.Param) (*Parameter, bool) {
	for i := range s.Parameters {
		if s.Parameters[i].Param == p {
			return &s.Parameters[i], true
		}
	}
	return nil, false
}

// Default returns the value a parameter takes when a study leaves it out:
// 1 for rock_sample (the first sample of a table), 0 for every other
// parameter (a parameter its model does not read stays 0, and is not a
// column of cases.arrow). Of the parameters a Corey study reads, only dip_deg and, while the dip is zero, rho1,
// rho2, perm_md and velocity_m_per_day may be left out; with no dip those
// four do not enter the solution, and 0 is what cases.arrow shows for them.
func Default(p engine.Param) float64 {
	if p == engine.RockSample {
		return 1
	}
	return 0
}

// root follows same_as links from p to the parameter that is not a
// follower. It returns false for a parameter the study does not give or a
// chain that does not end (which Parse rejects).
func (s *Study) root(p engine.Param) (*Parameter, bool) {
	q, ok := s.Lookup(p)
	for n := 0; ok && q.Spec.Kind == sampler.SameAs; n++ {
		if n > int(engine.NumParams) {
			return nil, false
		}
		leader, known := engine.ParamByName(q.Spec.SameAs)
		if !known {
			return nil, false
		}
		q, ok = s.Lookup(leader)
	}
	return q, ok
}

// Fixed reports whether p takes the same value in every case, and that
// value: a plain number in the file, a parameter the file leaves out (its
// [Default]), a same_as of a fixed parameter, or a discrete distribution
// whose values of positive weight are all equal.
func (s *Study) Fixed(p engine.Param) (float64, bool) {
	if p < 0 || p >= engine.NumParams {
		return 0, false
	}
	if _, given := s.Lookup(p); !given {
		return Default(p), true
	}
	q, ok := s.root(p)
	if !ok {
		return 0, false
	}
	return fixedValue(&q.Spec)
}

// fixedValue reports whether a resolved (non-same_as) spec has one value.
func fixedValue(sp *sampler.Spec) (float64, bool) {
	switch sp.Kind {
	case sampler.Fixed:
		return sp.Value, true
	case sampler.Discrete:
		pts := discretePoints(sp)
		if len(pts) == 0 {
			return 0, false
		}
		for _, v := range pts[1:] {
			if v != pts[0] {
				return 0, false
			}
		}
		return pts[0], true
	}
	return 0, false
}

// discretePoints returns the values of a discrete spec that have positive
// weight (all of them when Weights is nil).
func discretePoints(sp *sampler.Spec) []float64 {
	if sp.Weights == nil {
		return sp.Values
	}
	var pts []float64
	for i, v := range sp.Values {
		if i < len(sp.Weights) && sp.Weights[i] > 0 {
			pts = append(pts, v)
		}
	}
	return pts
}

// Uncertain returns the parameters that vary between cases (those for
// which [Study.Fixed] is false), in engine.Param order.
func (s *Study) Uncertain() []engine.Param {
	var ps []engine.Param
	for p := engine.Param(0); p < engine.NumParams; p++ {
		if _, fixed := s.Fixed(p); !fixed {
			ps = append(ps, p)
		}
	}
	return ps
}

// Specs returns the specifications the sampler should draw, one per
// engine parameter in engine.Param order: Specs()[j] is for
// ParamIndex()[j] = engine.Param(j), so a sampled row of length
// engine.NumParams is an engine.Params as it stands (see [Study.Case]).
// A parameter the file leaves out is Fixed at its [Default]. Every
// same_as chain is resolved to its root: Spec.SameAs always names a
// parameter that is not itself a follower. The slice is new on each call.
func (s *Study) Specs() []sampler.Spec {
	specs := make([]sampler.Spec, engine.NumParams)
	for p := engine.Param(0); p < engine.NumParams; p++ {
		q, given := s.Lookup(p)
		if !given {
			specs[p] = sampler.Spec{Name: p.String(), Kind: sampler.Fixed, Value: Default(p)}
			continue
		}
		sp := q.Spec
		sp.Values = append([]float64(nil), q.Spec.Values...)
		if q.Spec.Weights != nil {
			sp.Weights = append([]float64(nil), q.Spec.Weights...)
		}
		if sp.Kind == sampler.SameAs {
			if r, ok := s.root(p); ok {
				sp.SameAs = r.Name
			}
		}
		specs[p] = sp
	}
	return specs
}

// ParamIndex returns, for each column j of [Study.Specs], the engine
// parameter it fills. It is the identity today (column j is
// engine.Param(j)); a caller that maps through it keeps working should
// Specs ever leave fixed parameters out.
func (s *Study) ParamIndex() []engine.Param {
	idx := make([]engine.Param, engine.NumParams)
	for j := range idx {
		idx[j] = engine.Param(j)
	}
	return idx
}

// Case returns the engine inputs of one sampled row, the row holding one
// value per column of [Study.Specs]. It panics if len(row) is not
// engine.NumParams.
func (s *Study) Case(row []float64) engine.Params {
	if len(row) != int(engine.NumParams) {
		panic(fmt.Sprintf("studies: row has %d values, want %d", len(row), engine.NumParams))
	}
	var p engine.Params
	for j, q := range s.ParamIndex() {
		p[q] = row[j]
	}
	return p
}

// CorrelationPos returns the position of Correlations[k] in the file, or
// the position of the `correlations` key when k is out of range (use -1
// for a problem with the matrix as a whole, such as one that is not
// positive definite).
func (s *Study) CorrelationPos(k int) Pos {
	if k >= 0 && k < len(s.Correlations) {
		return s.Correlations[k].Pos
	}
	return s.correlationsPos
}

// CorrelationError turns an error the sampler reports about correlation
// entry k (0-based, Correlations order; -1 or out of range for the whole
// matrix) into a study error at that entry's position, with the path
// "correlations[k]" (or "correlations"). Err is cause, so errors.Is and
// errors.As still see the sampler's own error; the message is cause's
// text without a leading "correlations[k]: ", which the path already says.
func (s *Study) CorrelationError(k int, cause error) *Error {
	path := "correlations"
	if k >= 0 && k < len(s.Correlations) {
		path = fmt.Sprintf("correlations[%d]", k)
	}
	pos := s.CorrelationPos(k)
	return &Error{File: s.Source, Line: pos.Line, Column: pos.Column, Path: path, Err: cause, Msg: trimPrefixes(cause.Error(), path)}
}

// ParameterError turns an error found later about parameter p (for
// example a sampler error about its field, "" for the parameter as a
// whole) into a study error at the field's position, or the parameter's,
// with the path "parameters.<name>[.field]". Err is cause; the message is
// its text without a leading "<name>.<field>: ", "<name>: " or
// "<field>: ", which the path already says.
func (s *Study) ParameterError(p engine.Param, field string, cause error) *Error {
	name := p.String()
	path := paramPath(p)
	prefixes := []string{path, name}
	if field != "" {
		path += "." + field
		prefixes = []string{path, name + "." + field, field, name}
	}
	pos := s.parametersPos
	if q, ok := s.Lookup(p); ok {
		pos = q.Pos
		if field != "" {
			pos = q.FieldPos(field)
		}
	}
	return &Error{File: s.Source, Line: pos.Line, Column: pos.Column, Path: path, Err: cause, Msg: trimPrefixes(cause.Error(), prefixes...)}
}

// trimPrefixes removes the first of "<prefix>: " that msg starts with.
func trimPrefixes(msg string, prefixes ...string) string {
	for _, p := range prefixes {
		if rest, ok := strings.CutPrefix(msg, p+": "); ok {
			return rest
		}
	}
	return msg
}
