package summarize

import (
	"errors"
	"fmt"
)

// Convention says which tail a percentile label P<x> counts from.
//
// The zero value is [Exceedance], the reserves convention and the default of
// a study's `report.percentiles`.
type Convention int

const (
	// Exceedance is the reserves convention (SPE-PRMS 2018): P<x> is the
	// value exceeded with probability x %, so P90 is the low estimate, the
	// 10th percentile of the distribution, and P10 the high one.
	Exceedance Convention = iota
	// Cumulative is the statistics convention: P<x> is the x-th percentile,
	// so P90 is the high estimate.
	Cumulative
)

// ErrConvention is the cause of every error returned by [ParseConvention];
// test for it with errors.Is.
var ErrConvention = errors.New("unknown percentile convention")

// ParseConvention returns the convention named by s, which must be exactly
// "exceedance" or "cumulative" (the study file's spelling, as returned by
// [Convention.String]). Any other string, including "", gives an error
// wrapping [ErrConvention].
func ParseConvention(s string) (Convention, error) {
	switch s {
	case "exceedance":
		return Exceedance, nil
	case "cumulative":
		return Cumulative, nil
	}
	return Exceedance, fmt.Errorf("%w %q (want exceedance or cumulative)", ErrConvention, s)
}

// String returns "exceedance" or "cumulative", or "Convention(k)" for a value
// that is neither.
func (c Convention) String() string {
	switch c {
	case Exceedance:
		return "exceedance"
	case Cumulative:
		return "cumulative"
	}
	return fmt.Sprintf("Convention(%d)", int(c))
}

// MarshalText implements encoding.TextMarshaler with the names of
// [Convention.String]. It fails for a value that is neither convention.
func (c Convention) MarshalText() ([]byte, error) {
	if c != Exceedance && c != Cumulative {
		return nil, fmt.Errorf("%w %d", ErrConvention, int(c))
	}
	return []byte(c.String()), nil
}

// UnmarshalText implements encoding.TextUnmarshaler with [ParseConvention].
func (c *Convention) UnmarshalText(text []byte) error {
	v, err := ParseConvention(string(text))
	if err != nil {
		return err
	}
	*c = v
	return nil
}

// Prob returns the cumulative probability q at which the percentile labelled
// P<label> lies under c, so that P<label> is the q-quantile:
//
//	Exceedance.Prob(90) = 0.10, Exceedance.Prob(10) = 0.90
//	Cumulative.Prob(90) = 0.90, Cumulative.Prob(10) = 0.10
//
// Prob panics if label is outside [0, 100] or c is neither convention.
func (c Convention) Prob(label float64) float64 {
	if !(label >= 0 && label <= 100) {
		panic("summarize: percentile label outside [0, 100]")
	}
	switch c {
	case Exceedance:
		return (100 - label) / 100
	case Cumulative:
		return label / 100
	}
	panic("summarize: invalid Convention")
}
