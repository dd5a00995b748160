package cli

import (
	"strings"
	"testing"
)

func TestRootExitCodes(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name    string
		args    []string
		code    int
		stdout  string // fragment, "" for no check
		stderr  string // fragment, "" for no check
		noStdio bool   // both streams empty
	}{
		{name: "version", args: []string{"--version"}, code: 0, stdout: "sweepstat 1.2.3-test\n"},
		{name: "help", args: []string{"--help"}, code: 0, stdout: "Examples:"},
		{name: "no command shows help", args: nil, code: 0, stdout: "Available Commands:"},
		{name: "unknown flag", args: []string{"--bogus"}, code: 2, stderr: "sweepstat: unknown flag: --bogus"},
		{name: "unknown flag of a command", args: []string{"run", "--bogus"}, code: 2, stderr: "Run 'sweepstat run --help' for usage."},
		{name: "bad flag value", args: []string{"run", "--workers", "many"}, code: 2, stderr: "invalid argument"},
		{name: "unknown command", args: []string{"rnu"}, code: 2, stderr: `unknown command "rnu" for "sweepstat" (did you mean "run"?)`},
		{name: "too many args", args: []string{"init", "a.yaml", "b.yaml"}, code: 2, stderr: "accepts at most 1 arg(s)"},
		{name: "check needs a file", args: []string{"check"}, code: 2, stderr: "requires at least 1 arg(s)"},
		{name: "solve takes no args", args: []string{"solve", "x"}, code: 2, stderr: "unknown command"},
		{name: "merge not available", args: []string{"merge", "out"}, code: 1, stderr: "sweepstat: merge is not available yet"},
		{name: "report not available", args: []string{"report", "out"}, code: 1, stderr: "sweepstat: report is not available yet"},
		{name: "merge needs a folder", args: []string{"merge"}, code: 2},
		{name: "completion", args: []string{"completion", "bash"}, code: 0, stdout: "bash completion"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f, out, errOut := testFactory()
			code := execute(f, tc.args...)
			if code != tc.code {
				t.Errorf("sweepstat %q: exit %d, want %d\nstdout: %s\nstderr: %s", tc.args, code, tc.code, out, errOut)
			}
			if !strings.Contains(out.String(), tc.stdout) {
				t.Errorf("sweepstat %q: stdout %q lacks %q", tc.args, out, tc.stdout)
			}
			if !strings.Contains(errOut.String(), tc.stderr) {
				t.Errorf("sweepstat %q: stderr %q lacks %q", tc.args, errOut, tc.stderr)
			}
			if tc.code != 0 && strings.Count(errOut.String(), "sweepstat: ") != 1 {
				t.Errorf("sweepstat %q: error not printed exactly once: %q", tc.args, errOut)
			}
		})
	}
}

// Every command has examples in its help.
func TestEveryCommandHasExamples(t *testing.T) {
	t.Parallel()
	f, _, _ := testFactory()
	root := NewCmdRoot(f)
	if root.Example == "" {
		t.Error("root command has no examples")
	}
	for _, c := range root.Commands() {
		if c.Example == "" {
			t.Errorf("%s has no examples", c.CommandPath())
		}
		if c.Short == "" || c.Long == "" {
			t.Errorf("%s lacks Short or Long help", c.CommandPath())
		}
	}
}

func TestBuildVersion(t *testing.T) {
	t.Parallel()
	// A test binary's main module has no release version.
	if v := BuildVersion(); !strings.HasPrefix(v, "devel") && !strings.HasPrefix(v, "v") {
		t.Errorf("BuildVersion() = %q, want devel… or v…", v)
	}
}
