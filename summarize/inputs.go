package summarize

import (
	"errors"
	"fmt"
	"math"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
)

// Inputs describes the uncertain inputs of a study for the one-at-a-time
// ([Tornado]) and variance-based ([Sobol]) studies: a base case, and the
// uncertain leaders, each with its marginal distribution and the same_as
// followers that take its value.
//
// [NewInputs] builds it from a study and its sampling design; a caller may
// also fill the fields directly (tests do). Inputs is read-only for the
// functions of this package and safe for concurrent use when its Quantile
// functions are.
type Inputs struct {
	// Base is the base case: every uncertain parameter at its median
	// (its marginal 0.5-quantile), a follower at its leader's median, and
	// every fixed parameter at its value. The base case need not be a valid
	// case (medians of s1_init and s2r can break s1_init < 1 − s2r); a
	// [Tornado] then reports NaN as its base output.
	Base engine.Params
	// Leaders lists the uncertain parameters that have a distribution of
	// their own, in engine.Param order. Fixed parameters and same_as
	// followers are not in it.
	Leaders []Leader
	// Model is the study's engine model the cases are solved under; nil
	// is plain Corey.
	Model *engine.Model
}

// Leader is one uncertain input of [Inputs]: a parameter with a
// distribution of its own, moved together with its same_as followers.
type Leader struct {
	Param engine.Param
	// Followers are the parameters whose value is the leader's in every
	// case (same_as, chains resolved), in engine.Param order; nil if none.
	Followers []engine.Param
	// Quantile is the leader's marginal quantile function, called with p
	// strictly inside (0, 1). It must be safe for concurrent use.
	Quantile func(p float64) float64
}

// Name returns the leader's parameter name (engine.Param.String).
func (l *Leader) Name() string { return l.Param.String() }

// ErrInputs is the cause of every error returned by [NewInputs].
var ErrInputs = errors.New("summarize: study and design do not match")

// NewInputs returns the [Inputs] of study st sampled by design d, which
// must have been built from st.Specs(): one design parameter per
// engine.Param in engine order, so design index j is engine.Param(j). This
// is checked through d.Names(); a mismatch, or a median that is not a
// finite number, is an error wrapping [ErrInputs].
//
// The leaders are the parameters of st.Uncertain() that are not same_as
// followers; each follower of st.Uncertain() is attached to the leader its
// same_as chain ends at. A leader's Quantile is d.Dist(j).Quantile, the
// marginal the cases are drawn from; the rank correlations of the design
// play no part in Inputs.
func NewInputs(st *studies.Study, d *sampler.Design) (*Inputs, error) {
	if st == nil || d == nil {
		return nil, fmt.Errorf("%w: nil study or design", ErrInputs)
	}
	names := d.Names()
	if len(names) != int(engine.NumParams) {
		return nil, fmt.Errorf("%w: the design has %d parameters, want %d (one per engine parameter)", ErrInputs, len(names), engine.NumParams)
	}
	for j, name := range names {
		if want := engine.Param(j).String(); name != want {
			return nil, fmt.Errorf("%w: design parameter %d is %q, want %q (build the design from Study.Specs)", ErrInputs, j, name, want)
		}
	}
	specs := st.Specs()
	in := &Inputs{Model: st.Model()}
	leaderOf := make(map[engine.Param]int) // leader parameter → index in in.Leaders
	uncertain := make([]bool, engine.NumParams)
	for _, p := range st.Uncertain() {
		uncertain[p] = true
	}
	// Fixed values and leaders first, so that followers find their leader.
	for p := engine.Param(0); p < engine.NumParams; p++ {
		if !uncertain[p] {
			v, _ := st.Fixed(p)
			in.Base[p] = v
			continue
		}
		if specs[p].Kind == sampler.SameAs {
			continue
		}
		med := d.Quantile(int(p), 0.5)
		if math.IsNaN(med) || math.IsInf(med, 0) {
			return nil, fmt.Errorf("%w: the median of %s is %v", ErrInputs, p, med)
		}
		in.Base[p] = med
		leaderOf[p] = len(in.Leaders)
		in.Leaders = append(in.Leaders, Leader{Param: p, Quantile: d.Dist(int(p)).Quantile})
	}
	for p := engine.Param(0); p < engine.NumParams; p++ {
		if !uncertain[p] || specs[p].Kind != sampler.SameAs {
			continue
		}
		root, ok := engine.ParamByName(specs[p].SameAs)
		k, isLeader := leaderOf[root]
		if !ok || !isLeader {
			return nil, fmt.Errorf("%w: %s follows %q, which is not an uncertain parameter", ErrInputs, p, specs[p].SameAs)
		}
		l := &in.Leaders[k]
		l.Followers = append(l.Followers, p)
		in.Base[p] = in.Base[root]
	}
	return in, nil
}

// Names returns the names of the leaders, in order (a new slice): the
// parameter columns a sensitivity table ranks against ([SpearmanTable]).
func (in *Inputs) Names() []string {
	names := make([]string, len(in.Leaders))
	for k := range in.Leaders {
		names[k] = in.Leaders[k].Name()
	}
	return names
}

// BaseResult solves the base case and returns its result: Status says
// whether the base case is valid (a tornado's OutputBase is NaN when it is
// not), and StatusText why.
func (in *Inputs) BaseResult(pvi []float64, cutLimit float64) engine.Result {
	s := engine.Solver{Model: in.Model}
	var r engine.Result
	p := in.Base
	s.SolveCase(&p, pvi, cutLimit, &r)
	return r
}

// set puts leader k and its followers at value v in p.
func (in *Inputs) set(p *engine.Params, k int, v float64) {
	l := &in.Leaders[k]
	p[l.Param] = v
	for _, f := range l.Followers {
		p[f] = v
	}
}
