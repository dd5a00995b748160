package cli

import (
	"context"
	"errors"
	"testing"
)

// When merge or report exists, setting Factory.Merge or Factory.Report is
// all the wiring it needs.
func TestDirCommandsCallTheirFunc(t *testing.T) {
	t.Parallel()
	tests := []struct {
		cmd  string
		err  error
		code int
	}{
		{"merge", nil, 0},
		{"report", nil, 0},
		{"merge", errors.New("shard 2 missing"), 1},
	}
	for _, tc := range tests {
		f, _, errOut := testFactory()
		var gotDir string
		var gotOpt DirOptions
		fn := func(ctx context.Context, dir string, opt DirOptions) error {
			gotDir, gotOpt = dir, opt
			return tc.err
		}
		if tc.cmd == "merge" {
			f.Merge = fn
		} else {
			f.Report = fn
		}
		if code := execute(f, tc.cmd, "--workers", "2", "results"); code != tc.code {
			t.Errorf("%s: exit %d, want %d (%s)", tc.cmd, code, tc.code, errOut)
		}
		if gotDir != "results" || gotOpt.Workers != 2 || gotOpt.Version != "1.2.3-test" || gotOpt.Progress == nil {
			t.Errorf("%s: called with %q %+v", tc.cmd, gotDir, gotOpt)
		}
	}
}
