package cli

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/batch"
)

// TestRunShardFlags captures the batch options `run` passes for --shard,
// --shard-count and --resume, and the bad-input exits of bad uses.
func TestRunShardFlags(t *testing.T) {
	t.Parallel()
	slurm := map[string]string{"SLURM_ARRAY_TASK_ID": "3", "SLURM_ARRAY_TASK_COUNT": "4", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "4"}
	k8s := map[string]string{"JOB_COMPLETION_INDEX": "6"}
	tests := []struct {
		name   string
		args   []string
		env    map[string]string
		shard  batch.Shard
		resume bool
		err    string // on stderr, with exit 2 and nothing run; "" for success
	}{
		{"whole study", nil, nil, batch.Shard{}, false, ""},
		{"K/N", []string{"--shard", "2/5"}, nil, batch.Shard{K: 2, N: 5}, false, ""},
		{"resume", []string{"--resume"}, nil, batch.Shard{}, true, ""},
		{"K/N resume", []string{"--shard", "5/5", "--resume"}, nil, batch.Shard{K: 5, N: 5}, true, ""},
		{"auto slurm", []string{"--shard", "auto"}, slurm, batch.Shard{K: 3, N: 4}, false, ""},
		{"auto k8s", []string{"--shard", "auto", "--shard-count", "8"}, k8s, batch.Shard{K: 7, N: 8}, false, ""},
		{"auto nothing set", []string{"--shard", "auto"}, nil, batch.Shard{}, false, "--shard: bad shard: --shard auto: no array-task variable is set"},
		{"auto k8s no count", []string{"--shard", "auto"}, k8s, batch.Shard{}, false, "give --shard-count or set SWEEPSTAT_SHARD_COUNT"},
		{"K above N", []string{"--shard", "5/4"}, nil, batch.Shard{}, false, "--shard: bad shard: 5/4: the shard must be 1 to 4"},
		{"not K/N", []string{"--shard", "half"}, nil, batch.Shard{}, false, `"half" is not K/N`},
		{"count without auto", []string{"--shard", "1/4", "--shard-count", "4"}, nil, batch.Shard{}, false, "--shard-count goes with --shard auto"},
		{"count alone", []string{"--shard-count", "4"}, nil, batch.Shard{}, false, "--shard-count goes with --shard auto"},
		{"negative count", []string{"--shard", "auto", "--shard-count", "-1"}, k8s, batch.Shard{}, false, "--shard-count must be 1 or more"},
		{"force and resume", []string{"--force", "--resume"}, nil, batch.Shard{}, false, "--force and --resume exclude each other"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r := &fakeRunner{}
			f, _, errOut := runFactory(r)
			f.Getenv = func(k string) string { return tc.env[k] }
			code := execute(f, append([]string{"run", "--out", t.TempDir()}, tc.args...)...)
			if tc.err != "" {
				if code != ExitBadInput || len(r.opts) != 0 || !strings.Contains(errOut.String(), tc.err) {
					t.Errorf("exit %d, ran %d; stderr %q; want exit 2, nothing run, %q", code, len(r.opts), errOut, tc.err)
				}
				return
			}
			if code != 0 || len(r.opts) != 1 {
				t.Fatalf("exit %d, ran %d: %s", code, len(r.opts), errOut)
			}
			if o := r.opts[0]; o.Shard != tc.shard || o.Resume != tc.resume {
				t.Errorf("options shard %v resume %v; want %v %v", o.Shard, o.Resume, tc.shard, tc.resume)
			}
		})
	}
}

// TestShardRunAndMerge runs a study as three shards and merges them
// through the command line with the real batch functions: the merged
// cases.arrow is the one a single run writes; a shard run twice is
// refused (exit 2) unless --resume, which keeps it; a missing shard makes
// merge exit 2 with its name and write nothing.
func TestShardRunAndMerge(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	// 20,000 cases: three record batches of cases.arrow, one per shard.
	text := strings.Replace(studyText(t, "cli-shards"), "sensitivity: {sobol: 1024}", "sensitivity: {sobol: 0}", 1)
	study := writeFile(t, filepath.Join(dir, "study.yaml"), text)
	newF := func() (*Factory, *bytes.Buffer, *bytes.Buffer) {
		f, out, errOut := testFactory()
		f.Run = batch.Run
		f.Merge = MergeStudies(f.IO, f.Now)
		return f, out, errOut
	}
	single, sharded := filepath.Join(dir, "single"), filepath.Join(dir, "sharded")
	if f, _, errOut := newF(); execute(f, "run", "-q", "--out", single, study) != 0 {
		t.Fatalf("single run: %s", errOut)
	}
	for _, k := range []string{"1/3", "2/3", "3/3"} {
		f, _, errOut := newF()
		if code := execute(f, "run", "--workers", "1", "--out", sharded, "--shard", k, study); code != 0 {
			t.Fatalf("shard %s: exit %d: %s", k, code, errOut)
		}
		if !strings.Contains(errOut.String(), "cli-shards: shard "+k+", ") {
			t.Errorf("shard %s: stderr %q", k, errOut)
		}
	}
	f, _, errOut := newF()
	if code := execute(f, "run", "--out", sharded, "--shard", "2/3", study); code != ExitBadInput ||
		!strings.Contains(errOut.String(), "shard output exists") {
		t.Errorf("shard run twice: exit %d: %s", code, errOut)
	}
	f, _, errOut = newF()
	if code := execute(f, "run", "--out", sharded, "--shard", "2/3", "--resume", study); code != 0 ||
		!strings.Contains(errOut.String(), "cli-shards: shard 2/3, complete, kept (--resume)") {
		t.Errorf("shard resumed: exit %d: %s", code, errOut)
	}

	// A missing shard: exit 2, named, nothing written.
	broken := filepath.Join(dir, "broken")
	if err := os.CopyFS(broken, os.DirFS(sharded)); err != nil {
		t.Fatal(err)
	}
	if err := os.Remove(filepath.Join(broken, "cli-shards", batch.ShardsDir, "manifest.3-of-3.json")); err != nil {
		t.Fatal(err)
	}
	f, out, errOut := newF()
	if code := execute(f, "merge", broken); code != ExitBadInput ||
		!strings.Contains(errOut.String(), "cli-shards: shard 3/3 is incomplete") || out.Len() != 0 {
		t.Errorf("merge with a missing shard: exit %d\nstdout %q\nstderr %s", code, out, errOut)
	}
	if _, err := os.Stat(filepath.Join(broken, "cli-shards", batch.CasesFile)); !os.IsNotExist(err) {
		t.Errorf("merge wrote %s: %v", batch.CasesFile, err)
	}

	f, out, errOut = newF()
	if code := execute(f, "merge", sharded); code != 0 {
		t.Fatalf("merge: exit %d: %s", code, errOut)
	}
	if !strings.Contains(errOut.String(), "cli-shards: merged 3 shards, 20000 cases") ||
		!strings.Contains(out.String(), "(merged from 3 shards)") || !strings.Contains(out.String(), batch.Caution) {
		t.Errorf("merge output:\nstdout %s\nstderr %s", out, errOut)
	}
	a, _ := os.ReadFile(filepath.Join(single, "cli-shards", batch.CasesFile))
	b, _ := os.ReadFile(filepath.Join(sharded, "cli-shards", batch.CasesFile))
	if len(a) == 0 || !bytes.Equal(a, b) {
		t.Errorf("merged cases.arrow (%d bytes) differs from one run's (%d bytes)", len(b), len(a))
	}
	f, _, errOut = newF()
	if code := execute(f, "merge", filepath.Join(dir, "nothing-here")); code != ExitBadInput {
		t.Errorf("merge of a missing folder: exit %d: %s", code, errOut)
	}
}
