package cli

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"strings"
	"testing"
)

func TestExport(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		args   []string
		err    error // what the fake export returns
		code   int
		stdout string
		stderr string
	}{
		{name: "csv", args: []string{"x.arrow", "--csv"}, code: 0, stdout: "csv of x.arrow"},
		{name: "no format", args: []string{"x.arrow"}, code: 2, stderr: "sweepstat: choose a format: --csv\n"},
		{name: "no file", args: []string{"--csv"}, code: 2, stderr: "accepts 1 arg(s)"},
		{name: "missing file", args: []string{"x.arrow", "--csv"}, err: fmt.Errorf("open x.arrow: %w", fs.ErrNotExist), code: 2, stderr: "open x.arrow"},
		{name: "read failure", args: []string{"x.arrow", "--csv"}, err: errors.New("bad footer"), code: 1, stderr: "sweepstat: exporting x.arrow: bad footer\n"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f, out, errOut := testFactory()
			f.Export = func(w io.Writer, path string) error {
				if tc.err != nil {
					return tc.err
				}
				_, err := fmt.Fprintf(w, "csv of %s", path)
				return err
			}
			if code := execute(f, append([]string{"export"}, tc.args...)...); code != tc.code {
				t.Errorf("export %q: exit %d, want %d (stderr %q)", tc.args, code, tc.code, errOut)
			}
			if !strings.Contains(out.String(), tc.stdout) || !strings.Contains(errOut.String(), tc.stderr) {
				t.Errorf("export %q: stdout %q stderr %q, want %q %q", tc.args, out, errOut, tc.stdout, tc.stderr)
			}
		})
	}
}
