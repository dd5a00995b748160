package cli

import (
	"errors"
	"slices"
	"testing"

	"github.com/sweepstat/sweepstat/studies"
)

// Flag parsing is checked by capturing the options through runF, as gh's
// close_test.go does: nothing runs.

func TestRunFlags(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		args []string
		want RunOptions
	}{
		{"defaults", nil, RunOptions{Out: "out"}},
		{"files and folders", []string{"a.yaml", "dir"}, RunOptions{Args: []string{"a.yaml", "dir"}, Out: "out"}},
		{"out force", []string{"--out", "res", "--force", "a.yaml"}, RunOptions{Args: []string{"a.yaml"}, Out: "res", Force: true}},
		{"short out", []string{"-o", "res"}, RunOptions{Out: "res"}},
		{"workers after", []string{"--workers", "3"}, RunOptions{Out: "out", Workers: 3}},
		{"quiet", []string{"-q", "a.yaml"}, RunOptions{Args: []string{"a.yaml"}, Out: "out", Quiet: true}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f, _, _ := testFactory()
			var got *RunOptions
			root := withGlobals(f, NewCmdRun(f, func(o *RunOptions) error { got = o; return nil }))
			root.SetArgs(append([]string{"run"}, tc.args...))
			if _, err := root.ExecuteC(); err != nil {
				t.Fatalf("run %q: %v", tc.args, err)
			}
			if !slices.Equal(got.Args, tc.want.Args) || got.Out != tc.want.Out || got.Force != tc.want.Force ||
				got.Workers != tc.want.Workers || got.Quiet != tc.want.Quiet {
				t.Errorf("run %q: got args %q out %q force %v workers %d quiet %v, want %q %q %v %d %v",
					tc.args, got.Args, got.Out, got.Force, got.Workers, got.Quiet,
					tc.want.Args, tc.want.Out, tc.want.Force, tc.want.Workers, tc.want.Quiet)
			}
			if got.Version != f.Version || got.IO != f.IO || got.Ctx == nil {
				t.Errorf("run %q: version %q, IO %p, ctx %v not passed down", tc.args, got.Version, got.IO, got.Ctx)
			}
		})
	}
}

func TestRunGlobalWorkersBeforeCommand(t *testing.T) {
	t.Parallel()
	f, _, _ := testFactory()
	var got *RunOptions
	root := withGlobals(f, NewCmdRun(f, func(o *RunOptions) error { got = o; return nil }))
	root.SetArgs([]string{"--workers", "5", "--quiet", "run"})
	if _, err := root.ExecuteC(); err != nil {
		t.Fatal(err)
	}
	if got.Workers != 5 || !got.Quiet {
		t.Errorf("got workers %d quiet %v, want 5 true", got.Workers, got.Quiet)
	}
}

func TestSolveFlags(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name    string
		args    []string
		want    SolveOptions
		wantErr bool
	}{
		{name: "defaults", want: SolveOptions{PVI: studies.DefaultPVI(), CutLimit: studies.DefaultCutLimit}},
		{name: "sets in order", args: []string{"--set", "mu1_cp=0.5", "--set", "n1=3"},
			want: SolveOptions{Set: []string{"mu1_cp=0.5", "n1=3"}, PVI: studies.DefaultPVI(), CutLimit: studies.DefaultCutLimit}},
		{name: "pvi list replaces default", args: []string{"--pvi", "0.5,1,2"},
			want: SolveOptions{PVI: []float64{0.5, 1, 2}, CutLimit: studies.DefaultCutLimit}},
		{name: "pvi repeated appends", args: []string{"--pvi", "1", "--pvi", "2,4"},
			want: SolveOptions{PVI: []float64{1, 2, 4}, CutLimit: studies.DefaultCutLimit}},
		{name: "cut limit json", args: []string{"--cut-limit", "0.9", "--json"},
			want: SolveOptions{PVI: studies.DefaultPVI(), CutLimit: 0.9, JSON: true}},
		{name: "pvi not a number", args: []string{"--pvi", "1,x"}, wantErr: true},
		{name: "cut limit not a number", args: []string{"--cut-limit", "high"}, wantErr: true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f, _, _ := testFactory()
			var got *SolveOptions
			root := withGlobals(f, NewCmdSolve(f, func(o *SolveOptions) error { got = o; return nil }))
			root.SetArgs(append([]string{"solve"}, tc.args...))
			_, err := root.ExecuteC()
			if tc.wantErr {
				var ue *UsageError
				if !errors.As(err, &ue) {
					t.Fatalf("solve %q: error %v, want a *UsageError", tc.args, err)
				}
				return
			}
			if err != nil {
				t.Fatalf("solve %q: %v", tc.args, err)
			}
			if !slices.Equal(got.Set, tc.want.Set) || !slices.Equal(got.PVI, tc.want.PVI) ||
				got.CutLimit != tc.want.CutLimit || got.JSON != tc.want.JSON {
				t.Errorf("solve %q: got %+v, want %+v", tc.args, *got, tc.want)
			}
		})
	}
}

func TestInitFlags(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name  string
		args  []string
		file  string
		force bool
	}{
		{"default file", nil, "study.yaml", false},
		{"named", []string{"block.yaml"}, "block.yaml", false},
		{"stdout", []string{"-"}, "-", false},
		{"force", []string{"--force", "block.yaml"}, "block.yaml", true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f, _, _ := testFactory()
			var got *InitOptions
			root := withGlobals(f, NewCmdInit(f, func(o *InitOptions) error { got = o; return nil }))
			root.SetArgs(append([]string{"init"}, tc.args...))
			if _, err := root.ExecuteC(); err != nil {
				t.Fatalf("init %q: %v", tc.args, err)
			}
			if got.File != tc.file || got.Force != tc.force {
				t.Errorf("init %q: got file %q force %v, want %q %v", tc.args, got.File, got.Force, tc.file, tc.force)
			}
		})
	}
}
