package sampler

import (
	"fmt"
	"math"
)

// Kind names the form of a parameter specification.
type Kind int

// The specification kinds of a study file's parameters.
const (
	Fixed      Kind = iota // a plain number
	Uniform                // uniform{min, max}
	Triangular             // triangular{min, mode, max}
	Normal                 // normal{mean, sd}, optionally truncated to [min, max]
	LogNormal              // lognormal{mean, sd} of the variable itself, optionally truncated
	PERT                   // pert{min, mode, max}
	Discrete               // discrete{values, weights}
	SameAs                 // {same_as: name}: another parameter's sampled value
)

var kindNames = [...]string{
	Fixed: "fixed", Uniform: "uniform", Triangular: "triangular", Normal: "normal",
	LogNormal: "lognormal", PERT: "pert", Discrete: "discrete", SameAs: "same_as",
}

// String returns the kind's name as written after `dist:` in a study file
// ("fixed" and "same_as" for the two forms that have no `dist:`).
func (k Kind) String() string {
	if k < 0 || int(k) >= len(kindNames) {
		return fmt.Sprintf("Kind(%d)", int(k))
	}
	return kindNames[k]
}

// KindByName returns the distribution kind named after `dist:`. Fixed and
// SameAs are not distributions and are not returned.
func KindByName(name string) (Kind, bool) {
	for k := Uniform; k <= Discrete; k++ {
		if kindNames[k] == name {
			return k, true
		}
	}
	return 0, false
}

// Spec is one parameter's specification. Which fields are used depends on
// Kind; HasMin and HasMax say whether Min and Max were given (they are
// required for Uniform, Triangular and PERT, optional truncation bounds for
// Normal and LogNormal, and unused otherwise).
type Spec struct {
	Name string // parameter name
	Kind Kind

	Value           float64 // Fixed
	Min, Mode, Max  float64 // Uniform, Triangular, PERT; Min/Max truncate Normal, LogNormal
	HasMin, HasMax  bool
	Mean, SD        float64   // Normal, LogNormal (of the variable itself)
	Values, Weights []float64 // Discrete; nil Weights means all ones
	SameAs          string    // SameAs: the leader's name
}

// FieldError says which field of a [Spec] is wrong and why. Field is the
// study-file key ("min", "mode", "sd", "weights", …) so that callers can
// point at its position.
type FieldError struct {
	Field  string
	Reason string
}

func (e FieldError) Error() string { return e.Field + ": " + e.Reason }

// Validate returns every problem with the specification's own fields, in
// field order; nil when it is valid. It does not resolve SameAs names.
func (s *Spec) Validate() []FieldError {
	var errs []FieldError
	add := func(field, format string, args ...any) {
		errs = append(errs, FieldError{Field: field, Reason: fmt.Sprintf(format, args...)})
	}
	finite := func(field string, v float64) bool {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			add(field, "must be a finite number, not %v", v)
			return false
		}
		return true
	}
	switch s.Kind {
	case Fixed:
		finite("value", s.Value)
	case Uniform:
		okMin := s.HasMin && finite("min", s.Min)
		okMax := s.HasMax && finite("max", s.Max)
		if !s.HasMin {
			add("min", "uniform needs min")
		}
		if !s.HasMax {
			add("max", "uniform needs max")
		}
		if okMin && okMax && !(s.Min < s.Max) {
			add("max", "must be greater than min (%g ≤ %g)", s.Max, s.Min)
		} else if okMin && okMax && math.IsInf(s.Max-s.Min, 0) {
			add("max", "max − min must be a finite number (%g − %g overflows)", s.Max, s.Min)
		}
	case Triangular, PERT:
		okMin := s.HasMin && finite("min", s.Min)
		okMax := s.HasMax && finite("max", s.Max)
		okMode := finite("mode", s.Mode)
		if !s.HasMin {
			add("min", "%s needs min", s.Kind)
		}
		if !s.HasMax {
			add("max", "%s needs max", s.Kind)
		}
		if okMin && okMax && !(s.Min < s.Max) {
			add("max", "must be greater than min (%g ≤ %g)", s.Max, s.Min)
		} else if okMin && okMax && math.IsInf(s.Max-s.Min, 0) {
			add("max", "max − min must be a finite number (%g − %g overflows)", s.Max, s.Min)
		} else if okMin && okMax && okMode && (s.Mode < s.Min || s.Mode > s.Max) {
			add("mode", "must lie in [min, max] = [%g, %g], got %g", s.Min, s.Max, s.Mode)
		}
	case Normal, LogNormal:
		okMean := finite("mean", s.Mean)
		okSD := finite("sd", s.SD)
		if okSD && !(s.SD > 0) {
			add("sd", "must be positive, got %g", s.SD)
			okSD = false
		}
		if s.Kind == LogNormal && okMean && !(s.Mean > 0) {
			add("mean", "a lognormal variable's mean must be positive, got %g", s.Mean)
		}
		okMin := !s.HasMin || finite("min", s.Min)
		okMax := !s.HasMax || finite("max", s.Max)
		if s.HasMin && s.HasMax && okMin && okMax && !(s.Min < s.Max) {
			add("max", "must be greater than min (%g ≤ %g)", s.Max, s.Min)
		}
		okMax = okMax && !(s.HasMin && s.HasMax && okMin && !(s.Min < s.Max))
		if s.Kind == LogNormal && s.HasMax && okMax && !(s.Max > 0) {
			add("max", "a lognormal variable is positive: max must be > 0, got %g", s.Max)
			okMax = false
		}
		// The truncation range must hold a probability that floating point can
		// represent and invert accurately (about 37 standard deviations into a
		// tail); anything beyond that is a typing mistake, not a distribution.
		if okMean && okSD && okMin && okMax && (s.HasMin || s.HasMax) &&
			(s.Kind == Normal || s.Mean > 0) {
			if nd := newNormalDist(*s); !(nd.mass >= minTruncMass) {
				field := "min"
				if !s.HasMin || (s.HasMax && nd.b < 0) {
					field = "max"
				}
				add(field, "the truncation range [%s, %s] lies too far in the tail: it holds probability %.3g (< %g) of %s(mean %g, sd %g)",
					boundText(s.HasMin, s.Min, "-inf"), boundText(s.HasMax, s.Max, "+inf"), nd.mass, minTruncMass, s.Kind, s.Mean, s.SD)
			}
		}
	case Discrete:
		if len(s.Values) == 0 {
			add("values", "discrete needs at least one value")
		}
		for i, v := range s.Values {
			finite(fmt.Sprintf("values[%d]", i), v)
		}
		if s.Weights != nil {
			if len(s.Weights) != len(s.Values) {
				add("weights", "has %d entries for %d values", len(s.Weights), len(s.Values))
			}
			sum := 0.0
			for i, w := range s.Weights {
				if !finite(fmt.Sprintf("weights[%d]", i), w) {
					continue
				}
				if w < 0 {
					add(fmt.Sprintf("weights[%d]", i), "must not be negative, got %g", w)
				}
				sum += w
			}
			if !(sum > 0) {
				add("weights", "must sum to more than zero")
			}
		}
	case SameAs:
		if s.SameAs == "" {
			add("same_as", "needs a parameter name")
		} else if s.SameAs == s.Name {
			add("same_as", "%s cannot follow itself", s.Name)
		}
	default:
		add("dist", "unknown kind %v", s.Kind)
	}
	return errs
}
