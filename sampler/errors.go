package sampler

import (
	"fmt"
	"strings"
)

// ParamError is a problem with one parameter specification given to [New]:
// a field that fails [Spec.Validate], an unknown or cyclic same_as leader,
// a duplicated name.
type ParamError struct {
	Index  int    // position of the parameter in the specs given to New; -1 from NewDist
	Name   string // the parameter's name
	Field  string // study-file key ("min", "same_as", …); "" for the parameter as a whole
	Reason string
}

// Error returns "name.field: reason" ("name: reason" when Field is empty,
// "parameters[index]: reason" when the parameter has no name).
func (e *ParamError) Error() string {
	if e.Name == "" {
		return fmt.Sprintf("parameters[%d]: %s", e.Index, e.Reason)
	}
	if e.Field == "" {
		return e.Name + ": " + e.Reason
	}
	return e.Name + "." + e.Field + ": " + e.Reason
}

// CorrelationError is a problem with one entry of the correlation list given
// to [New]. Index is the entry's position in that list, so that a caller can
// point at its place in the study file; Others lists the other entries
// involved (ascending), when there are any: the earlier entry a duplicate
// repeats, or the entries that together with this one make a matrix that is
// not positive definite.
type CorrelationError struct {
	Index  int
	Others []int
	Reason string
}

// Error returns "correlations[index]: reason" (index counted from 0).
func (e *CorrelationError) Error() string {
	return fmt.Sprintf("correlations[%d]: %s", e.Index, e.Reason)
}

// ErrorList is every problem [New] found, in the order parameters, then
// correlations. Its elements are [*ParamError], [*CorrelationError] or, for
// the case count and method, plain errors.
type ErrorList []error

// Error joins the messages with newlines.
func (l ErrorList) Error() string {
	msgs := make([]string, len(l))
	for i, e := range l {
		msgs[i] = e.Error()
	}
	return strings.Join(msgs, "\n")
}

// Unwrap returns the elements, for [errors.Is] and [errors.As].
func (l ErrorList) Unwrap() []error { return l }

// Err returns l, or nil when l is empty.
func (l ErrorList) Err() error {
	if len(l) == 0 {
		return nil
	}
	return l
}
