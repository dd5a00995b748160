package sampler

import (
	"cmp"
	"math"
	"slices"
	"strconv"

	"gonum.org/v1/gonum/stat/distuv"
)

// Dist is the marginal distribution of one parameter, used through its
// inverse: every draw is Quantile(u) for a u in (0, 1). Implementations are
// immutable and safe for concurrent use; none holds a random source.
type Dist interface {
	// Quantile returns the smallest x with CDF(x) ≥ p. It returns NaN if p is
	// NaN or outside [0, 1]. Quantile(0) and Quantile(1) are the ends of the
	// support (±Inf for an untruncated normal, 0 and +Inf for a lognormal).
	Quantile(p float64) float64
	// CDF returns P(X ≤ x).
	CDF(x float64) float64
}

// minTruncMass is the least probability a truncation range of a normal or
// lognormal distribution must hold (about 37 standard deviations into a
// tail): below it the normal tail probabilities approach the subnormal range
// and their inverse loses its accuracy.
const minTruncMass = 1e-300

// NewDist returns the marginal distribution of s. For a Fixed specification
// it is the point mass at s.Value. It returns an [ErrorList] of [*ParamError]
// (Index -1) if s is invalid (see [Spec.Validate]) or is a SameAs
// specification, which has no distribution of its own.
func NewDist(s Spec) (Dist, error) {
	if errs := s.Validate(); len(errs) > 0 {
		list := make(ErrorList, len(errs))
		for i, fe := range errs {
			list[i] = &ParamError{Index: -1, Name: s.Name, Field: fe.Field, Reason: fe.Reason}
		}
		return nil, list
	}
	if s.Kind == SameAs {
		return nil, ErrorList{&ParamError{Index: -1, Name: s.Name, Field: "same_as",
			Reason: "a same_as parameter takes its leader's distribution and has none of its own"}}
	}
	return newDist(s), nil
}

// newDist builds the distribution of a valid, non-SameAs specification.
func newDist(s Spec) Dist {
	switch s.Kind {
	case Fixed:
		return pointMass{s.Value}
	case Uniform:
		return uniformDist{distuv.Uniform{Min: s.Min, Max: s.Max}}
	case Triangular:
		// Src stays nil: only Quantile and CDF are ever called.
		return triangularDist{t: distuv.NewTriangle(s.Min, s.Max, s.Mode, nil), min: s.Min, max: s.Max}
	case PERT:
		return newPERT(s.Min, s.Mode, s.Max)
	case Normal, LogNormal:
		nd := newNormalDist(s)
		return &nd
	case Discrete:
		return newDiscrete(s.Values, s.Weights)
	}
	panic("sampler: newDist called with kind " + s.Kind.String())
}

func badP(p float64) bool { return !(p >= 0 && p <= 1) }

// clamp limits x to [lo, hi]; NaN passes through.
func clamp(x, lo, hi float64) float64 {
	if x < lo {
		return lo
	}
	if x > hi {
		return hi
	}
	return x
}

// pointMass is a fixed value.
type pointMass struct{ v float64 }

func (d pointMass) Quantile(p float64) float64 {
	if badP(p) {
		return math.NaN()
	}
	return d.v
}

func (d pointMass) CDF(x float64) float64 {
	if x < d.v {
		return 0
	}
	return 1
}

// uniformDist is uniform{min, max}.
type uniformDist struct{ u distuv.Uniform }

func (d uniformDist) Quantile(p float64) float64 {
	if badP(p) {
		return math.NaN()
	}
	return clamp(d.u.Quantile(p), d.u.Min, d.u.Max)
}

func (d uniformDist) CDF(x float64) float64 { return d.u.CDF(x) }

// triangularDist is triangular{min, mode, max}.
type triangularDist struct {
	t        distuv.Triangle
	min, max float64
}

func (d triangularDist) Quantile(p float64) float64 {
	if badP(p) {
		return math.NaN()
	}
	return clamp(d.t.Quantile(p), d.min, d.max)
}

func (d triangularDist) CDF(x float64) float64 { return d.t.CDF(x) }

// pertDist is pert{min, mode, max}: standard PERT (λ = 4), a beta
// distribution scaled to [min, max],
//
//	α = 1 + 4(mode − min)/(max − min),  β = 1 + 4(max − mode)/(max − min),
//
// whose quantile comes from a [betaQuantile] table (α, β ≥ 1 always).
type pertDist struct {
	q        betaQuantile
	min, max float64
}

func newPERT(min, mode, max float64) pertDist {
	r := max - min
	return pertDist{q: newBetaQuantile(1+4*(mode-min)/r, 1+4*(max-mode)/r), min: min, max: max}
}

func (d pertDist) Quantile(p float64) float64 {
	if badP(p) {
		return math.NaN()
	}
	return clamp(d.min+(d.max-d.min)*d.q.Quantile(p), d.min, d.max)
}

func (d pertDist) CDF(x float64) float64 { return d.q.CDF((x - d.min) / (d.max - d.min)) }

// normalDist is a normal distribution, or a lognormal one (log set) whose
// logarithm is normal(mu, sigma), truncated to the standardized range [a, b]
// of the normal variable (±Inf when a side is open).
//
// Both tails are handled through the lower-tail function Φ(z), computed with
// erfc, which keeps full relative accuracy far into the tail: Φ(a), Φ(−b)
// and the mass of [a, b] are stored, and the quantile inverts whichever side
// of the median the target lies on, so a truncation many standard
// deviations out is as accurate as one near the mean.
type normalDist struct {
	mu, sigma float64
	log       bool
	a, b      float64 // standardized truncation bounds
	pa, qb    float64 // Φ(a) and 1 − Φ(b) = Φ(−b)
	mass      float64 // Φ(b) − Φ(a)
	lo, hi    float64 // bounds of the variable itself, for clamping
}

// phi is the standard normal CDF Φ, from distuv (erfc based).
func phi(z float64) float64 { return distuv.UnitNormal.CDF(z) }

// phiInv is the standard normal quantile, from distuv (Wichura's AS 241).
func phiInv(p float64) float64 { return distuv.UnitNormal.Quantile(p) }

// newNormalDist builds the distribution of a Normal or LogNormal spec whose
// mean and sd are valid. For LogNormal, mean and sd are those of the variable
// itself:
//
//	σ² = ln(1 + sd²/mean²),  μ = ln(mean) − σ²/2.
func newNormalDist(s Spec) normalDist {
	d := normalDist{mu: s.Mean, sigma: s.SD, a: math.Inf(-1), b: math.Inf(1),
		lo: math.Inf(-1), hi: math.Inf(1)}
	if s.Kind == LogNormal {
		cv := s.SD / s.Mean
		s2 := math.Log1p(cv * cv)
		d.log, d.mu, d.sigma, d.lo = true, math.Log(s.Mean)-s2/2, math.Sqrt(s2), 0
	}
	if s.HasMin {
		d.lo = math.Max(d.lo, s.Min)
		if !d.log {
			d.a = (s.Min - d.mu) / d.sigma
		} else if s.Min > 0 {
			d.a = (math.Log(s.Min) - d.mu) / d.sigma
		}
	}
	if s.HasMax {
		d.hi = s.Max
		if !d.log {
			d.b = (s.Max - d.mu) / d.sigma
		} else if s.Max > 0 {
			d.b = (math.Log(s.Max) - d.mu) / d.sigma
		} else {
			d.b = math.Inf(-1)
		}
	}
	d.pa, d.qb = phi(d.a), phi(-d.b)
	switch {
	case d.b <= 0: // both bounds in the lower tail
		d.mass = phi(d.b) - d.pa
	case d.a >= 0: // both bounds in the upper tail
		d.mass = phi(-d.a) - d.qb
	default:
		d.mass = 1 - d.pa - d.qb
	}
	return d
}

// z returns the standardized quantile of p in (0, 1], between a and b.
func (d *normalDist) z(p float64) float64 {
	var z float64
	if lower := d.pa + p*d.mass; lower <= 0.5 {
		z = phiInv(lower)
	} else {
		// Same point from the upper side: 1 − lower = Φ(−b) + (1 − p)·mass.
		z = -phiInv(d.qb + (1-p)*d.mass)
	}
	return clamp(z, d.a, d.b)
}

func (d *normalDist) Quantile(p float64) float64 {
	if badP(p) {
		return math.NaN()
	}
	z := d.z(p)
	switch {
	case p == 0 || z <= d.a:
		return d.lo
	case p == 1 || z >= d.b:
		return d.hi
	}
	x := d.mu + d.sigma*z
	if d.log {
		x = math.Exp(x)
	}
	return clamp(x, d.lo, d.hi)
}

func (d *normalDist) CDF(x float64) float64 {
	if math.IsNaN(x) {
		return math.NaN()
	}
	if d.log {
		if x <= 0 {
			return 0
		}
		x = math.Log(x)
	}
	z := (x - d.mu) / d.sigma
	switch {
	case z <= d.a:
		return 0
	case z >= d.b:
		return 1
	case z <= 0:
		return (phi(z) - d.pa) / d.mass
	default:
		return 1 - (phi(-z)-d.qb)/d.mass
	}
}

// discreteDist is discrete{values, weights}: values ascending with their
// cumulative probabilities, zero-weight values dropped.
type discreteDist struct {
	values []float64
	cum    []float64 // cum[k] = P(X ≤ values[k]); the last is exactly 1
}

func newDiscrete(values, weights []float64) discreteDist {
	type vw struct{ v, w float64 }
	pairs := make([]vw, 0, len(values))
	for i, v := range values {
		w := 1.0
		if weights != nil {
			w = weights[i]
		}
		if w > 0 {
			pairs = append(pairs, vw{v, w})
		}
	}
	slices.SortStableFunc(pairs, func(x, y vw) int { return cmp.Compare(x.v, y.v) })
	d := discreteDist{values: make([]float64, len(pairs)), cum: make([]float64, len(pairs))}
	total := 0.0
	for _, p := range pairs {
		total += p.w
	}
	run := 0.0
	for k, p := range pairs {
		run += p.w
		d.values[k], d.cum[k] = p.v, run/total
	}
	d.cum[len(d.cum)-1] = 1
	return d
}

func (d discreteDist) Quantile(p float64) float64 {
	if badP(p) {
		return math.NaN()
	}
	k, _ := slices.BinarySearch(d.cum, p) // first k with cum[k] ≥ p
	return d.values[min(k, len(d.values)-1)]
}

func (d discreteDist) CDF(x float64) float64 {
	if math.IsNaN(x) {
		return math.NaN()
	}
	// Number of values ≤ x.
	k, found := slices.BinarySearch(d.values, x)
	for found && k < len(d.values) && d.values[k] == x {
		k++
	}
	if k == 0 {
		return 0
	}
	return d.cum[k-1]
}

// boundText formats an optional bound for messages.
func boundText(has bool, v float64, open string) string {
	if !has {
		return open
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}
