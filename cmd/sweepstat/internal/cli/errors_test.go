package cli

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"testing"

	"github.com/sweepstat/sweepstat/batch"
	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/studies"
)

func TestExitCode(t *testing.T) {
	t.Parallel()
	studyErr := studies.ErrorList{{File: "s.yaml", Line: 3, Column: 5, Path: "cases", Err: studies.ErrValue}}
	tests := []struct {
		name string
		err  error
		want int
	}{
		{"nil", nil, 0},
		{"plain", errors.New("disk full"), 1},
		{"usage", &UsageError{Cmd: "sweepstat", Err: errors.New("unknown flag")}, 2},
		{"input", badInput("choose a format: --csv"), 2},
		{"study list", studyErr, 2},
		{"wrapped study error", fmt.Errorf("loading: %w", studyErr[0]), 2},
		{"study errors", &StudyErrors{Lists: []error{studyErr}, Files: 2}, 2},
		{"engine validity", fmt.Errorf("invalid parameters: %w", &engine.ValidityError{Param: engine.S2r, Rule: "s1r + s2r < 1"}), 2},
		{"exists", fmt.Errorf("out/x: %w", batch.ErrExists), 2},
		{"interrupted", fmt.Errorf("%w: x is not finished", errInterrupted), 1},
		{"canceled", context.Canceled, 1},
		{"run errors all bad input", &RunErrors{Failed: map[string]error{"a": batch.ErrExists}, Order: []string{"a"}, Total: 2}, 2},
		{"run errors mixed", &RunErrors{Failed: map[string]error{"a": batch.ErrExists, "b": errors.New("x")}, Order: []string{"a", "b"}, Total: 2}, 1},
	}
	for _, tc := range tests {
		if got := ExitCode(tc.err); got != tc.want {
			t.Errorf("ExitCode(%s: %v) = %d, want %d", tc.name, tc.err, got, tc.want)
		}
	}
}

func TestPrintError(t *testing.T) {
	t.Parallel()
	list := studies.ErrorList{
		{File: "s.yaml", Line: 3, Column: 5, Path: "cases", Msg: "cases must be at least 1", Err: studies.ErrValue},
		{File: "s.yaml", Line: 9, Column: 3, Path: "parameters.n3", Msg: `unknown parameter "n3"`, Err: studies.ErrUnknownKey},
	}
	tests := []struct {
		name string
		err  error
		want string
	}{
		{"plain", errors.New("disk full"), "sweepstat: disk full\n"},
		{"study list", list, "s.yaml:3:5: cases: cases must be at least 1\ns.yaml:9:3: parameters.n3: unknown parameter \"n3\"\n"},
		{"study errors", &StudyErrors{Lists: []error{list}, Files: 3},
			"s.yaml:3:5: cases: cases must be at least 1\ns.yaml:9:3: parameters.n3: unknown parameter \"n3\"\n" +
				"sweepstat: 2 errors in 1 of 3 study files; nothing was run\n"},
		{"usage", &UsageError{Cmd: "sweepstat run", Err: errors.New("unknown flag: --x")},
			"sweepstat: unknown flag: --x\nRun 'sweepstat run --help' for usage.\n"},
		{"one failed study printed already", &RunErrors{Failed: map[string]error{"a": errors.New("x")}, Order: []string{"a"}, Total: 1}, ""},
	}
	for _, tc := range tests {
		var b bytes.Buffer
		PrintError(&b, tc.err)
		if b.String() != tc.want {
			t.Errorf("PrintError(%s) printed %q, want %q", tc.name, b.String(), tc.want)
		}
	}
}
