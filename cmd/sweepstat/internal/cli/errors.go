package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/sweepstat/sweepstat/batch"
	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/studies"
)

// Exit codes of the command line.
const (
	ExitOK       = 0 // success
	ExitFailure  = 1 // a run failed or was interrupted
	ExitBadInput = 2 // bad input or usage
)

// UsageError is a flag or argument error of the command Cmd (its path,
// e.g. "sweepstat run"). It exits with [ExitBadInput].
type UsageError struct {
	Cmd string
	Err error
}

func (e *UsageError) Error() string { return e.Err.Error() }

// Unwrap returns the cause.
func (e *UsageError) Unwrap() error { return e.Err }

// InputError is bad input found by a command itself: an unknown --set
// name, a file that must not be overwritten, a missing format flag. It
// exits with [ExitBadInput].
type InputError struct{ Err error }

func (e *InputError) Error() string { return e.Err.Error() }

// Unwrap returns the cause.
func (e *InputError) Unwrap() error { return e.Err }

func badInput(format string, args ...any) error {
	return &InputError{Err: fmt.Errorf(format, args...)}
}

// StudyErrors reports the study files that failed to load or validate.
// Each entry of Lists is the error of one file, normally a
// [studies.ErrorList]. It exits with [ExitBadInput].
type StudyErrors struct {
	Lists   []error
	Files   int  // how many files were given
	Checked bool // from check, which runs nothing anyway
}

func (e *StudyErrors) Error() string {
	n := 0
	for _, l := range e.Lists {
		n += len(entries(l))
	}
	errs := "errors"
	if n == 1 {
		errs = "error"
	}
	msg := fmt.Sprintf("%d %s in %d of %d study files", n, errs, len(e.Lists), e.Files)
	if !e.Checked {
		msg += "; nothing was run"
	}
	return msg
}

// Unwrap returns the per-file errors.
func (e *StudyErrors) Unwrap() []error { return e.Lists }

// RunErrors reports the studies of a `run` that failed; the others ran.
type RunErrors struct {
	Failed map[string]error // by study name
	Order  []string         // study names in run order
	Total  int              // studies run
}

func (e *RunErrors) Error() string {
	return fmt.Sprintf("%d of %d studies failed: %s", len(e.Order), e.Total, strings.Join(e.Order, ", "))
}

// Unwrap returns the studies' errors in run order.
func (e *RunErrors) Unwrap() []error {
	errs := make([]error, len(e.Order))
	for i, n := range e.Order {
		errs[i] = e.Failed[n]
	}
	return errs
}

// errInterrupted is the error of a command whose context was cancelled
// by a signal.
var errInterrupted = errors.New("interrupted")

// ExitCode maps an error returned by a command to the process exit code:
// 0 for nil; 2 for usage, input and study errors, invalid engine
// parameters and an existing output folder ([batch.ErrExists]); for a
// [*RunErrors], 2 when every failed study failed on bad input and 1
// otherwise; 1 for everything else, interrupts included.
func ExitCode(err error) int {
	if err == nil {
		return ExitOK
	}
	var re *RunErrors
	if errors.As(err, &re) {
		for _, e := range re.Failed {
			if !isBadInput(e) {
				return ExitFailure
			}
		}
		return ExitBadInput
	}
	if isBadInput(err) {
		return ExitBadInput
	}
	return ExitFailure
}

func isBadInput(err error) bool {
	if errors.Is(err, errInterrupted) || errors.Is(err, context.Canceled) {
		return false
	}
	var (
		ue *UsageError
		ie *InputError
		se *StudyErrors
		sl studies.ErrorList
		sv *studies.Error
	)
	return errors.As(err, &ue) || errors.As(err, &ie) || errors.As(err, &se) ||
		errors.As(err, &sl) || errors.As(err, &sv) ||
		errors.Is(err, engine.ErrInvalid) || errors.Is(err, batch.ErrExists)
}

// PrintError writes err to w once. Study errors print every entry on its
// own line as the entry prints (file:line:col: key.path: message), then a
// "sweepstat: " summary line; a usage error adds where to find help; any
// other error prints as "sweepstat: <message>".
func PrintError(w io.Writer, err error) {
	var se *StudyErrors
	var sl studies.ErrorList
	var ue *UsageError
	var re *RunErrors
	switch {
	case errors.As(err, &se):
		for _, l := range se.Lists {
			printEntries(w, l)
		}
		fmt.Fprintf(w, "sweepstat: %v\n", se)
	case errors.As(err, &sl):
		printEntries(w, sl)
	case errors.As(err, &ue):
		fmt.Fprintf(w, "sweepstat: %v\nRun '%s --help' for usage.\n", ue.Err, ue.Cmd)
	case errors.As(err, &re):
		// Each study's error was printed when it failed; with more than
		// one study, say which failed.
		if re.Total > 1 {
			fmt.Fprintf(w, "sweepstat: %v\n", re)
		}
	default:
		fmt.Fprintf(w, "sweepstat: %v\n", err)
	}
}

func printEntries(w io.Writer, err error) {
	for _, e := range entries(err) {
		fmt.Fprintln(w, e)
	}
}

// entries returns the errors of a study error list, or err alone.
func entries(err error) []error {
	var sl studies.ErrorList
	if errors.As(err, &sl) && len(sl) > 0 {
		out := make([]error, len(sl))
		for i, e := range sl {
			out[i] = e
		}
		return out
	}
	return []error{err}
}
