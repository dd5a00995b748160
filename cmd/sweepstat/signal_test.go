package main

import (
	"bytes"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/sweepstat/sweepstat/studies"
)

// signalCases is the size of the study the signal test interrupts: a few
// seconds of solving on two cores, so that a signal sent after the first
// record batch lands mid-run.
const signalCases = 24000

// buildBinary builds this command into a temporary folder.
func buildBinary(t *testing.T) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "sweepstat")
	cmd := exec.Command("go", "build", "-o", bin, ".")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// signalStudy writes the demo study cut to signalCases cases, without
// Sobol indices, and returns its path and output folder name.
func signalStudy(t *testing.T) (path, name string) {
	t.Helper()
	demo, err := studies.Demo()
	if err != nil {
		t.Fatal(err)
	}
	text := string(studies.DemoSource())
	for old, repl := range map[string]string{"cases: 20000": "cases: " + strconv.Itoa(signalCases), "sobol: 1024": "sobol: 0"} {
		if !strings.Contains(text, old) {
			t.Fatalf("demo study has no %q", old)
		}
		text = strings.Replace(text, old, repl, 1)
	}
	path = filepath.Join(t.TempDir(), "signal.yaml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return path, demo.Name
}

// runBinary runs the binary to completion and returns its stderr.
func runBinary(t *testing.T, bin string, args ...string) string {
	t.Helper()
	cmd := exec.Command(bin, args...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("%s: %v\n%s", strings.Join(args, " "), err, stderr.String())
	}
	return stderr.String()
}

// arrowFiles returns the content of every .arrow file of a study folder.
func arrowFiles(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	paths, _ := filepath.Glob(filepath.Join(dir, "*.arrow"))
	if len(paths) == 0 {
		t.Fatalf("no .arrow files in %s", dir)
	}
	files := map[string][]byte{}
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		files[filepath.Base(p)] = data
	}
	return files
}

// waitFor polls until ok returns true, the process exits (done closes) or
// 60 s pass, and reports whether ok became true.
func waitFor(ok func() bool, done <-chan struct{}) bool {
	deadline := time.Now().Add(60 * time.Second)
	for time.Now().Before(deadline) {
		if ok() {
			return true
		}
		select {
		case <-done:
			return ok()
		case <-time.After(2 * time.Millisecond):
		}
	}
	return false
}

// TestSignalMidRun builds the binary, starts `sweepstat run` on a study of
// signalCases cases and sends SIGINT or SIGTERM once the staging folder
// holds the first record batch of cases.arrow (or, in the last case,
// once cases.arrow is complete and the summaries are being computed). The
// process must exit 1 (an interrupted run, cli.ExitFailure) saying it was
// interrupted, with no stack trace, and leave nothing in the output
// folder: no study folder (outputs are staged, then swapped in whole) and
// no staging folder. A rerun into the same folder must then give .arrow
// files byte-identical to an uninterrupted run's.
func TestSignalMidRun(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary and runs a study several times")
	}
	bin := buildBinary(t)
	study, name := signalStudy(t)
	ref := t.TempDir()
	runBinary(t, bin, "run", study, "--out", ref, "--workers", "2", "-q")
	want := arrowFiles(t, filepath.Join(ref, name))

	stage := func(out string) string { return filepath.Join(out, "."+name+".partial") }
	tests := []struct {
		name   string
		sig    syscall.Signal
		when   func(out string) bool // the moment to send the signal
		rerun  bool
		strict bool // the run must still be going when the signal is sent
	}{
		{"SIGINT while solving", syscall.SIGINT, func(out string) bool {
			fi, err := os.Stat(filepath.Join(stage(out), "cases.arrow.tmp"))
			return err == nil && fi.Size() > 0
		}, true, true},
		{"SIGTERM while solving", syscall.SIGTERM, func(out string) bool {
			fi, err := os.Stat(filepath.Join(stage(out), "cases.arrow.tmp"))
			return err == nil && fi.Size() > 0
		}, true, true},
		{"SIGTERM during the summaries", syscall.SIGTERM, func(out string) bool {
			_, err := os.Stat(filepath.Join(stage(out), "cases.arrow"))
			return err == nil
		}, false, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			out := t.TempDir()
			cmd := exec.Command(bin, "run", study, "--out", out, "--workers", "2")
			var stderr bytes.Buffer
			cmd.Stderr = &stderr
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			done := make(chan struct{})
			var werr error
			go func() { werr = cmd.Wait(); close(done) }()
			reached := waitFor(func() bool { return tc.when(out) }, done)
			select {
			case <-done:
				if tc.strict {
					t.Fatalf("the run ended (%v) before the signal could be sent; raise signalCases\n%s", werr, stderr.String())
				}
				t.Logf("the run ended (%v) before the signal; nothing to check", werr)
				return
			default:
			}
			if !reached {
				cmd.Process.Kill()
				<-done
				t.Fatalf("the staging folder never reached the signal point\n%s", stderr.String())
			}
			if err := cmd.Process.Signal(tc.sig); err != nil {
				t.Fatal(err)
			}
			select {
			case <-done:
			case <-time.After(60 * time.Second):
				cmd.Process.Kill()
				<-done
				t.Fatalf("no exit within 60 s of %v", tc.sig)
			}
			var ee *exec.ExitError
			if !errors.As(werr, &ee) || ee.ExitCode() != 1 {
				t.Errorf("exit: %v, want exit status 1", werr)
			}
			msg := stderr.String()
			if !strings.Contains(msg, "sweepstat: interrupted") || strings.Contains(msg, "goroutine ") || strings.Contains(msg, "panic") {
				t.Errorf("stderr should say interrupted, without a stack trace:\n%s", msg)
			}
			if ents, _ := os.ReadDir(out); len(ents) != 0 {
				var names []string
				for _, e := range ents {
					names = append(names, e.Name())
				}
				t.Errorf("the interrupted run left %v in the output folder", names)
			}
			if !tc.rerun {
				return
			}
			runBinary(t, bin, "run", study, "--out", out, "--workers", "2", "-q")
			got := arrowFiles(t, filepath.Join(out, name))
			if len(got) != len(want) {
				t.Errorf("rerun wrote %d .arrow files, the uninterrupted run %d", len(got), len(want))
			}
			for f, data := range want {
				if !bytes.Equal(got[f], data) {
					t.Errorf("rerun %s differs from the uninterrupted run's", f)
				}
			}
		})
	}
}
