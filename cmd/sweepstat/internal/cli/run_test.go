package cli

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/sweepstat/sweepstat/batch"
	"github.com/sweepstat/sweepstat/studies"
)

// fakeRunner records the studies and options it is given, reports
// progress like a run of st.Cases cases, and fails the studies named in
// fail with the given errors.
type fakeRunner struct {
	mu    sync.Mutex
	names []string
	srcs  []string
	opts  []batch.Options
	fail  map[string]error
	clock *fakeClock      // advanced 3 s per study when set
	hook  func(st string) // called before returning, when set
}

func (r *fakeRunner) run(ctx context.Context, st *studies.Study, opt batch.Options) (*batch.Info, error) {
	r.mu.Lock()
	r.names = append(r.names, st.Name)
	r.srcs = append(r.srcs, st.Source)
	r.opts = append(r.opts, opt)
	r.mu.Unlock()
	if p := opt.Progress; p != nil {
		p.Start(st.Name, "solving", st.Cases)
		p.Add(st.Cases)
		p.Finish()
	}
	if r.clock != nil {
		r.clock.Advance(3 * time.Second)
	}
	if r.hook != nil {
		r.hook(st.Name)
	}
	if err := r.fail[st.Name]; err != nil {
		return nil, err
	}
	return &batch.Info{
		Study: st.Name, Cases: st.Cases, Rejected: 7, CasesPerSec: 1234,
		Files: []string{"cases.arrow", "run.json"},
	}, nil
}

func runFactory(r *fakeRunner) (*Factory, *bytes.Buffer, *bytes.Buffer) {
	f, out, errOut := testFactory()
	r.clock = newFakeClock()
	f.Now = r.clock.Now
	f.Run = r.run
	return f, out, errOut
}

func TestRunDemoWithoutArgs(t *testing.T) {
	t.Parallel()
	r := &fakeRunner{}
	f, out, errOut := runFactory(r)
	outDir := t.TempDir()
	if code := execute(f, "run", "--out", outDir, "--workers", "3", "--force"); code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	demo, err := studies.Demo()
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(r.names, []string{demo.Name}) || r.srcs[0] != studies.DemoSourceName {
		t.Fatalf("runner got %q from %q, want the demo study", r.names, r.srcs)
	}
	o := r.opts[0]
	if o.Out != outDir || o.Workers != 3 || !o.Force || o.Version != "1.2.3-test" || o.Progress == nil || o.Now == nil {
		t.Errorf("batch options %+v", o)
	}
	dir := filepath.Join(outDir, demo.Name)
	for _, want := range []string{
		fmt.Sprintf("%s: solving 100%% (%d/%d cases)\n", demo.Name, demo.Cases, demo.Cases),
		// 3 s on the fake clock.
		fmt.Sprintf("%s: %d cases, 7 rejected, 3.0 s, %s\n", demo.Name, demo.Cases, dir),
	} {
		if !strings.Contains(errOut.String(), want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	for _, want := range []string{dir, "cases.arrow, run.json", "7 rejected", "1234 cases/s", batch.Caution} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("stdout lacks %q:\n%s", want, out)
		}
	}
}

func TestRunQuiet(t *testing.T) {
	t.Parallel()
	r := &fakeRunner{}
	f, out, errOut := runFactory(r)
	if code := execute(f, "run", "--quiet", "--out", t.TempDir()); code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if r.opts[0].Progress != nil {
		t.Errorf("quiet: progress %T, want nil", r.opts[0].Progress)
	}
	if errOut.Len() != 0 {
		t.Errorf("quiet: stderr %q, want nothing", errOut)
	}
	if !strings.Contains(out.String(), batch.Caution) {
		t.Errorf("quiet: stdout summary missing:\n%s", out)
	}
}

func TestRunFolderSorted(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	writeFile(t, filepath.Join(dir, "b.yaml"), studyText(t, "study-b"))
	writeFile(t, filepath.Join(dir, "a.yml"), studyText(t, "study-a"))
	writeFile(t, filepath.Join(dir, "c.YAML"), studyText(t, "study-c"))
	writeFile(t, filepath.Join(dir, "notes.txt"), "not a study")
	writeFile(t, filepath.Join(dir, "sub", "d.yaml"), studyText(t, "study-d")) // not searched
	single := writeFile(t, filepath.Join(t.TempDir(), "z.yaml"), studyText(t, "study-z"))

	r := &fakeRunner{}
	f, _, errOut := runFactory(r)
	if code := execute(f, "run", "-q", "--out", t.TempDir(), single, dir); code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	want := []string{single, filepath.Join(dir, "a.yml"), filepath.Join(dir, "b.yaml"), filepath.Join(dir, "c.YAML")}
	if !slices.Equal(r.srcs, want) {
		t.Errorf("ran %q, want %q", r.srcs, want)
	}
}

func TestRunBadStudyRunsNothing(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	good := writeFile(t, filepath.Join(dir, "a.yaml"), studyText(t, "study-a"))
	text, pos := marked(strings.Replace(studyText(t, "study-b"), "seed:", "§sede:", 1), "§")
	bad := writeFile(t, filepath.Join(dir, "b.yaml"), text)
	good2 := writeFile(t, filepath.Join(dir, "c.yaml"), studyText(t, "study-c"))

	r := &fakeRunner{}
	f, out, errOut := runFactory(r)
	if code := execute(f, "run", "--out", t.TempDir(), good, bad, good2); code != 2 {
		t.Errorf("exit %d, want 2", code)
	}
	if len(r.names) != 0 {
		t.Errorf("runner called for %q", r.names)
	}
	if want := fmt.Sprintf("%s:%d:%d: sede: ", bad, pos[0][0], pos[0][1]); !strings.Contains(errOut.String(), want) {
		t.Errorf("stderr lacks %q:\n%s", want, errOut)
	}
	if !strings.Contains(errOut.String(), "nothing was run") || out.Len() != 0 {
		t.Errorf("stdout %q stderr %q", out, errOut)
	}
}

func TestRunDuplicateNames(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	a := writeFile(t, filepath.Join(dir, "a.yaml"), studyText(t, "same"))
	b := writeFile(t, filepath.Join(dir, "b.yaml"), studyText(t, "same"))
	r := &fakeRunner{}
	f, _, errOut := runFactory(r)
	if code := execute(f, "run", a, b); code != 2 || len(r.names) != 0 {
		t.Errorf("exit %d, runner called for %q; want 2 and none", code, r.names)
	}
	if !strings.Contains(errOut.String(), `"same" is also the name of `+a) {
		t.Errorf("stderr %q", errOut)
	}
}

func TestRunFailureDoesNotStopOthers(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		err  error
		code int
	}{
		{"run failure exits 1", errors.New("disk full"), 1},
		{"existing folder exits 2", fmt.Errorf("out/study-b: %w", batch.ErrExists), 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			dir := t.TempDir()
			for _, n := range []string{"a", "b", "c"} {
				writeFile(t, filepath.Join(dir, n+".yaml"), studyText(t, "study-"+n))
			}
			r := &fakeRunner{fail: map[string]error{"study-b": tc.err}}
			f, out, errOut := runFactory(r)
			if code := execute(f, "run", "--out", t.TempDir(), dir); code != tc.code {
				t.Errorf("exit %d, want %d", code, tc.code)
			}
			if !slices.Equal(r.names, []string{"study-a", "study-b", "study-c"}) {
				t.Errorf("ran %q, want all three", r.names)
			}
			for _, want := range []string{
				"sweepstat: study-b: " + tc.err.Error() + "\n",
				"sweepstat: 1 of 3 studies failed: study-b\n",
				"study-c: 20000 cases, 7 rejected",
			} {
				if !strings.Contains(errOut.String(), want) {
					t.Errorf("stderr lacks %q:\n%s", want, errOut)
				}
			}
			if !strings.Contains(out.String(), "study-a: outputs in") || !strings.Contains(out.String(), "study-c: outputs in") ||
				strings.Contains(out.String(), "study-b: outputs") {
				t.Errorf("stdout:\n%s", out)
			}
		})
	}
}

func TestRunInterrupted(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	for _, n := range []string{"a", "b", "c"} {
		writeFile(t, filepath.Join(dir, n+".yaml"), studyText(t, "study-"+n))
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	r := &fakeRunner{fail: map[string]error{"study-b": context.Canceled}}
	r.hook = func(name string) {
		if name == "study-b" {
			cancel() // as SIGINT would, through signal.NotifyContext
		}
	}
	f, _, errOut := runFactory(r)
	if code := Execute(ctx, f, []string{"run", "-q", "--out", t.TempDir(), dir}); code != 1 {
		t.Errorf("exit %d, want 1", code)
	}
	if !slices.Equal(r.names, []string{"study-a", "study-b"}) {
		t.Errorf("ran %q, want a and b only", r.names)
	}
	if !strings.HasPrefix(errOut.String(), "sweepstat: interrupted") || strings.Count(errOut.String(), "\n") != 1 {
		t.Errorf("stderr %q, want one line sweepstat: interrupted…", errOut)
	}
}

func TestRunBadFlags(t *testing.T) {
	t.Parallel()
	tests := []struct {
		args   []string
		stderr string
	}{
		{[]string{"run", "--workers", "-1"}, "--workers must be 0"},
		{[]string{"run", "--out", ""}, "--out must name a folder"},
	}
	for _, tc := range tests {
		r := &fakeRunner{}
		f, _, errOut := runFactory(r)
		if code := execute(f, tc.args...); code != 2 || len(r.names) != 0 {
			t.Errorf("%q: exit %d, runner called for %q", tc.args, code, r.names)
		}
		if !strings.Contains(errOut.String(), tc.stderr) {
			t.Errorf("%q: stderr %q lacks %q", tc.args, errOut, tc.stderr)
		}
	}
}
