package engine

import (
	"errors"
	"math"
)

// Solver solves cases one after another, reusing its scratch space. A zero
// Solver is ready to use. It is not safe for concurrent use: give each
// goroutine its own.
type Solver struct {
	// Model is the study-level model the cases belong to; nil is plain
	// Corey with dimensionless outputs. Set it before the first Solve.
	Model *Model

	sc  scan
	sol Solution
}

// Solve solves the Corey case p into a new Solution. Invalid parameters
// give a Solution with StatusInvalid and the *[ValidityError] as the
// error. [SolveModel] solves a case of any model.
func Solve(p Params) (*Solution, error) {
	return SolveModel(nil, p)
}

// SolveModel solves the case p of model m into a new Solution, like
// [Solve].
func SolveModel(m *Model, p Params) (*Solution, error) {
	s := Solver{Model: m}
	sol := new(Solution)
	err := s.Solve(&p, sol)
	return sol, err
}

// Solve solves the case p into sol, overwriting it. It returns the
// validity error of p, if any; a counter-current initial state is no error
// but sets sol.Status to StatusCounterCurrent. Solve does not allocate for
// valid parameters.
//
// The parameters the model derives (see [Model.Resolve]) are resolved in
// sol.Params; p itself is not changed.
func (s *Solver) Solve(p *Params, sol *Solution) error {
	return s.solve(p, nil, sol)
}

// solveRel is Solve with the relative permeabilities rel in place of the
// curves the model builds from p: the residuals, initial state and inlet
// state come from rel, everything else (s1_init, viscosities, gravity)
// from p, which must still pass the model's validity rules. rel must stay
// unchanged while sol is in use.
func (s *Solver) solveRel(p *Params, rel RelPerm, sol *Solution) error {
	return s.solve(p, rel, sol)
}

// solve is Solve with the curves rel, or the model's when rel is nil.
func (s *Solver) solve(p *Params, rel RelPerm, sol *Solution) error {
	sol.Params = *p
	sol.n = 0
	sol.Err = nil
	m := s.Model
	m.Resolve(&sol.Params)
	p = &sol.Params
	if err := p.validate(m); err != nil {
		sol.Status = StatusInvalid
		sol.Err = err
		return err
	}
	if rel == nil {
		rel = sol.curves(m)
	}
	sol.Flow = FracFlow{Rel: rel, R: p[Mu1CP] / p[Mu2CP], G: GravityNumber(p)}
	sol.cf.set(&sol.Flow)
	sol.Init = p[S1Init]
	if s1r, _ := rel.Residuals(); sol.Init < s1r && s1r-sol.Init <= initSnap {
		// Below s1r by less than double precision can resolve against the
		// curves' end-point slope: the same case as s1_init = s1r.
		sol.Init = s1r
	}
	sol.FInit = sol.cf.f(&sol.Flow, sol.Init)
	if !(sol.FInit >= 0 && sol.FInit < 1) {
		sol.Status = StatusCounterCurrent
		sol.Inlet = math.NaN()
		return nil
	}
	sol.Inlet = InletSaturation(p, &sol.Flow)
	if !(sol.Inlet > sol.Init+4*eps*max(sol.Init, 1)) {
		// Gravity lifts f to 1 at (or, to rounding, at) s1_init itself:
		// there is nothing between the two states for a front to cross.
		sol.Status = StatusNoFront
		return nil
	}
	sol.Status = StatusOK
	s.sc.envelope(sol)
	return nil
}

// Inputs returns the inputs of the case solved last, as the model
// resolved them (see [Model.Resolve]): what the case actually used. The
// pointer aliases the Solver and is overwritten by the next Solve.
func (s *Solver) Inputs() *Params { return &s.sol.Params }

// Result is the flat per-case output of [Solver.SolveCase], one field per
// output column of DESIGN §2. RecoveryAt and CutAt hold one value per PVI
// checkpoint. For a case that is not StatusOK every number is NaN except
// GravityNumber, which is computed whenever the parameters are valid.
type Result struct {
	Status                 Status
	Rule                   string // the failed validity rule when Status is StatusInvalid
	GravityNumber          float64
	FrontSaturation        float64
	FrontSpeed             float64
	BreakthroughPVI        float64
	RecoveryAtBreakthrough float64
	PVIAtCutLimit          float64
	RecoveryAtCutLimit     float64
	MaxRecovery            float64
	RecoveryAt             []float64
	CutAt                  []float64

	// The dimensional outputs, filled only when the Solver's model has
	// Volumes (NaN otherwise): pore volume in m³, times in days, produced
	// phase-2 volumes at surface conditions in m³.
	PoreVolume             float64
	BreakthroughDays       float64
	ProducedAtBreakthrough float64
	DaysAt                 []float64
	ProducedAt             []float64
	DaysAtCutLimit         float64
	ProducedAtCutLimit     float64
}

// StatusText returns the text of the status column: "ok", or the reason
// the case was rejected.
func (r *Result) StatusText() string {
	switch r.Status {
	case StatusInvalid:
		return "invalid: " + r.Rule
	case StatusCounterCurrent:
		return "counter-current initial state: f(s1_init) outside [0, 1)"
	case StatusNoFront:
		return "no front: gravity lifts f to 1 at s1_init (S_b = s1_init to rounding)"
	}
	return r.Status.String()
}

// SolveCase solves p and fills r with the outputs at the PVI checkpoints
// pvi and the cut limit. r.RecoveryAt and r.CutAt are resliced to len(pvi),
// reusing their storage when it is large enough, so a Result reused across
// calls makes SolveCase allocation-free for valid cases.
func (s *Solver) SolveCase(p *Params, pvi []float64, cutLimit float64, r *Result) {
	err := s.Solve(p, &s.sol)
	s.fillResult(err, pvi, cutLimit, r)
}

// solveCaseRel is SolveCase with the curves rel (see [Solver.solveRel]).
func (s *Solver) solveCaseRel(p *Params, rel RelPerm, pvi []float64, cutLimit float64, r *Result) {
	err := s.solveRel(p, rel, &s.sol)
	s.fillResult(err, pvi, cutLimit, r)
}

// fillResult fills r from the solution in s.sol, whose Solve returned err.
func (s *Solver) fillResult(err error, pvi []float64, cutLimit float64, r *Result) {
	r.RecoveryAt = resize(r.RecoveryAt, len(pvi))
	r.CutAt = resize(r.CutAt, len(pvi))
	sol := &s.sol
	defer s.volumes(pvi, r)
	r.Status = sol.Status
	r.Rule = ""
	r.GravityNumber = math.NaN()
	if err == nil {
		r.GravityNumber = sol.Flow.G
	}
	if sol.Status != StatusOK {
		var ve *ValidityError
		if errors.As(err, &ve) {
			r.Rule = ve.Rule
		}
		nan := math.NaN()
		r.FrontSaturation, r.FrontSpeed, r.BreakthroughPVI = nan, nan, nan
		r.RecoveryAtBreakthrough, r.PVIAtCutLimit, r.RecoveryAtCutLimit, r.MaxRecovery = nan, nan, nan, nan
		for i := range pvi {
			r.RecoveryAt[i], r.CutAt[i] = nan, nan
		}
		return
	}
	r.FrontSaturation = sol.FrontSaturation()
	r.FrontSpeed = sol.FrontSpeed()
	r.BreakthroughPVI = 1 / r.FrontSpeed
	r.RecoveryAtBreakthrough = r.BreakthroughPVI * (1 - sol.FInit) / (1 - sol.Init)
	r.MaxRecovery = sol.MaxRecovery()
	scale := 1 / (1 - sol.Init)
	for i, t := range pvi {
		avg, cut := sol.averageAndCut(t, &s.sc)
		r.RecoveryAt[i] = (avg - sol.Init) * scale
		r.CutAt[i] = cut
	}
	tc, sCut, inFan := sol.pviAtCut(cutLimit, &s.sc)
	r.PVIAtCutLimit = tc
	r.RecoveryAtCutLimit = math.NaN()
	switch {
	case inFan:
		// The outlet state at the cut limit is known, f(sCut) = cutLimit:
		// Welge's average from it, bounded as in averageAndCut.
		avg := min(sCut+tc*(1-cutLimit), sol.Inlet)
		r.RecoveryAtCutLimit = (avg - sol.Init) * scale
	case !math.IsNaN(tc):
		avg, _ := sol.averageAndCut(tc, &s.sc)
		r.RecoveryAtCutLimit = (avg - sol.Init) * scale
	}
}

// initSnap is how far below s1r an initial saturation is still taken as
// s1r itself.
const initSnap = 1e-12

// eps is the spacing of doubles just above 1.
const eps = 0x1p-52

func resize(x []float64, n int) []float64 {
	if cap(x) < n {
		return make([]float64, n)
	}
	return x[:n]
}
