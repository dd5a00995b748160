package batch

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow/go/v17/arrow/memory"

	"github.com/sweepstat/sweepstat/studies"
)

// writeStudyFile writes the demo study with the given cases, seed and Sobol
// base size as study.yaml under dir and loads it, so that the study a
// shard stores parses back to the same study.
func writeStudyFile(t *testing.T, dir string, cases, seed, sobol int) *studies.Study {
	t.Helper()
	return writeNamedStudy(t, dir, "demo-updip-waterflood", cases, seed, sobol)
}

// writeNamedStudy is writeStudyFile for a study of the given name.
func writeNamedStudy(t *testing.T, dir, name string, cases, seed, sobol int) *studies.Study {
	t.Helper()
	src := string(studies.DemoSource())
	for _, r := range [][2]string{
		{"name: demo-updip-waterflood", "name: " + name},
		{"cases: 20000", "cases: " + strconv.Itoa(cases)},
		{"seed: 7919", "seed: " + strconv.Itoa(seed)},
		{"sensitivity: {sobol: 1024}", "sensitivity: {sobol: " + strconv.Itoa(sobol) + "}"},
	} {
		if !strings.Contains(src, r[0]) {
			t.Fatalf("demo study has no %q", r[0])
		}
		src = strings.Replace(src, r[0], r[1], 1)
	}
	path := filepath.Join(dir, "study.yaml")
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	st, err := studies.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	return st
}

// TestShardRange checks the shard arithmetic against its definition (see
// Shard): the ranges of 1/N … N/N tile [0, cases) in order, every range
// starts on a record-batch boundary, every range but the last shard's
// holds whole batches, and the shard sizes in batches differ by at most
// one (⌊K·B/N⌋ − ⌊(K−1)·B/N⌋ is ⌊B/N⌋ or ⌈B/N⌉).
func TestShardRange(t *testing.T) {
	t.Parallel()
	tests := []struct{ cases, rows int }{
		{1, 8192}, {8192, 8192}, {8193, 8192}, {20000, 8192}, {5000, 500}, {4999, 500}, {7, 3}, {1000, 1},
	}
	for _, tc := range tests {
		b := (tc.cases + tc.rows - 1) / tc.rows
		for _, n := range []int{1, 2, 3, 4, 7, 10, 13, 100} {
			next := 0
			minB, maxB := b, 0
			for k := 1; k <= n; k++ {
				lo, hi := Shard{K: k, N: n}.Range(tc.cases, tc.rows)
				if lo != next || hi < lo {
					t.Fatalf("cases %d rows %d: shard %d/%d = [%d, %d), want it to start at %d", tc.cases, tc.rows, k, n, lo, hi, next)
				}
				if lo%tc.rows != 0 || (hi != tc.cases && hi%tc.rows != 0) {
					t.Errorf("cases %d rows %d: shard %d/%d = [%d, %d) is not batch-aligned", tc.cases, tc.rows, k, n, lo, hi)
				}
				nb := (hi - lo + tc.rows - 1) / tc.rows
				minB, maxB = min(minB, nb), max(maxB, nb)
				next = hi
			}
			if next != tc.cases {
				t.Errorf("cases %d rows %d N %d: shards end at %d", tc.cases, tc.rows, n, next)
			}
			if maxB-minB > 1 {
				t.Errorf("cases %d rows %d N %d: shards of %d to %d batches", tc.cases, tc.rows, n, minB, maxB)
			}
		}
	}
	if lo, hi := (Shard{}).Range(123, 10); lo != 0 || hi != 123 {
		t.Errorf("zero shard range [%d, %d)", lo, hi)
	}
}

func TestParseShard(t *testing.T) {
	t.Parallel()
	tests := []struct {
		in   string
		want Shard
		err  string // substring; "" for success
	}{
		{"1/1", Shard{1, 1}, ""},
		{"3/7", Shard{3, 7}, ""},
		{" 7 / 7 ", Shard{7, 7}, ""},
		{"100000/100000", Shard{100000, 100000}, ""},
		{"0/4", Shard{}, "the shard must be 1 to 4"},
		{"5/4", Shard{}, "the shard must be 1 to 4"},
		{"-1/4", Shard{}, "the shard must be 1 to 4"},
		{"1/0", Shard{}, "number of shards must be 1 to"},
		{"1/100001", Shard{}, "number of shards must be 1 to"},
		{"3", Shard{}, "is not K/N"},
		{"a/b", Shard{}, "whole numbers"},
		{"1.5/4", Shard{}, "whole numbers"},
		{"", Shard{}, "is not K/N"},
	}
	for _, tc := range tests {
		got, err := ParseShard(tc.in)
		if tc.err == "" {
			if err != nil || got != tc.want {
				t.Errorf("ParseShard(%q) = %v, %v; want %v", tc.in, got, err, tc.want)
			}
			continue
		}
		if err == nil || !errors.Is(err, ErrShard) || !strings.Contains(err.Error(), tc.err) {
			t.Errorf("ParseShard(%q) error %v; want ErrShard with %q", tc.in, err, tc.err)
		}
	}
}

// TestShardFromEnv: the variables Slurm sets for `sbatch --array` and
// Kubernetes for an Indexed Job (from memory: Slurm's sbatch(1) "OUTPUT
// ENVIRONMENT VARIABLES", Kubernetes' Job "Completion mode" docs).
func TestShardFromEnv(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name  string
		env   map[string]string
		count int
		want  Shard
		err   string
	}{
		{"slurm 1-4 first", map[string]string{"SLURM_ARRAY_TASK_ID": "1", "SLURM_ARRAY_TASK_COUNT": "4", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "4"}, 0, Shard{1, 4}, ""},
		{"slurm 1-4 last", map[string]string{"SLURM_ARRAY_TASK_ID": "4", "SLURM_ARRAY_TASK_COUNT": "4", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "4"}, 0, Shard{4, 4}, ""},
		{"slurm 0-7", map[string]string{"SLURM_ARRAY_TASK_ID": "0", "SLURM_ARRAY_TASK_COUNT": "8", "SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "7"}, 0, Shard{1, 8}, ""},
		{"slurm min/max without count", map[string]string{"SLURM_ARRAY_TASK_ID": "12", "SLURM_ARRAY_TASK_MIN": "10", "SLURM_ARRAY_TASK_MAX": "14"}, 0, Shard{3, 5}, ""},
		{"slurm step 2", map[string]string{"SLURM_ARRAY_TASK_ID": "4", "SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "6", "SLURM_ARRAY_TASK_STEP": "2"}, 0, Shard{3, 4}, ""},
		{"slurm count without min, from 0", map[string]string{"SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_COUNT": "3"}, 0, Shard{3, 3}, ""},
		{"slurm count without min, from 1", map[string]string{"SLURM_ARRAY_TASK_ID": "3", "SLURM_ARRAY_TASK_COUNT": "3"}, 0, Shard{}, "number the array from SLURM_ARRAY_TASK_MIN"},
		{"slurm count agrees", map[string]string{"SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_COUNT": "3", "SLURM_ARRAY_TASK_MIN": "1"}, 3, Shard{2, 3}, ""},
		{"slurm count disagrees", map[string]string{"SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_COUNT": "3", "SLURM_ARRAY_TASK_MIN": "1"}, 4, Shard{}, "--shard-count 4 disagrees"},
		{"slurm no count", map[string]string{"SLURM_ARRAY_TASK_ID": "2"}, 0, Shard{}, "cannot tell the number of shards"},
		{"slurm bad id", map[string]string{"SLURM_ARRAY_TASK_ID": "two", "SLURM_ARRAY_TASK_COUNT": "3"}, 0, Shard{}, `SLURM_ARRAY_TASK_ID="two" is not a whole number`},
		{"slurm below min", map[string]string{"SLURM_ARRAY_TASK_ID": "0", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "4"}, 0, Shard{}, "is not SLURM_ARRAY_TASK_MIN=1 plus"},
		{"slurm wins over k8s", map[string]string{"SLURM_ARRAY_TASK_ID": "1", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "2", "JOB_COMPLETION_INDEX": "0"}, 0, Shard{1, 2}, ""},
		{"k8s flag count", map[string]string{"JOB_COMPLETION_INDEX": "0"}, 4, Shard{1, 4}, ""},
		{"k8s variable count", map[string]string{"JOB_COMPLETION_INDEX": "3", "SWEEPSTAT_SHARD_COUNT": "4"}, 0, Shard{4, 4}, ""},
		{"k8s flag over variable", map[string]string{"JOB_COMPLETION_INDEX": "4", "SWEEPSTAT_SHARD_COUNT": "4"}, 5, Shard{5, 5}, ""},
		{"k8s no count", map[string]string{"JOB_COMPLETION_INDEX": "1"}, 0, Shard{}, "give --shard-count or set SWEEPSTAT_SHARD_COUNT"},
		{"k8s index too big", map[string]string{"JOB_COMPLETION_INDEX": "4", "SWEEPSTAT_SHARD_COUNT": "4"}, 0, Shard{}, "JOB_COMPLETION_INDEX=4 is not in 0 to 3"},
		{"k8s bad count", map[string]string{"JOB_COMPLETION_INDEX": "1", "SWEEPSTAT_SHARD_COUNT": "many"}, 0, Shard{}, "not a whole number"},
		{"nothing", map[string]string{}, 0, Shard{}, "no array-task variable is set (SLURM_ARRAY_TASK_ID"},
		{"nothing but a count", map[string]string{"SWEEPSTAT_SHARD_COUNT": "4"}, 4, Shard{}, "no array-task variable"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got, err := ShardFromEnv(func(k string) string { return tc.env[k] }, tc.count)
			if tc.err == "" {
				if err != nil || got != tc.want {
					t.Errorf("ShardFromEnv(%v, %d) = %v, %v; want %v", tc.env, tc.count, got, err, tc.want)
				}
				return
			}
			if err == nil || !errors.Is(err, ErrShard) || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("ShardFromEnv(%v, %d) error %v; want ErrShard with %q", tc.env, tc.count, err, tc.err)
			}
		})
	}
}

func TestShardFileNames(t *testing.T) {
	t.Parallel()
	tests := []struct {
		s               Shard
		cases, manifest string
	}{
		{Shard{1, 1}, "cases.1-of-1.arrow", "manifest.1-of-1.json"},
		{Shard{3, 7}, "cases.3-of-7.arrow", "manifest.3-of-7.json"},
		{Shard{3, 12}, "cases.03-of-12.arrow", "manifest.03-of-12.json"},
		{Shard{42, 100}, "cases.042-of-100.arrow", "manifest.042-of-100.json"},
	}
	for _, tc := range tests {
		if g := tc.s.CasesFile(); g != tc.cases {
			t.Errorf("%v.CasesFile() = %q, want %q", tc.s, g, tc.cases)
		}
		if g := tc.s.ManifestFile(); g != tc.manifest {
			t.Errorf("%v.ManifestFile() = %q, want %q", tc.s, g, tc.manifest)
		}
		if g, ok := parseTag(tc.manifest, "manifest.", ".json"); !ok || g != tc.s {
			t.Errorf("parseTag(%q) = %v, %v", tc.manifest, g, ok)
		}
	}
}

// TestRunShardExistsAndResume: a shard's outputs are not replaced without
// Force or Resume; Resume keeps a complete shard and redoes a partial or
// damaged one; shards of one study do not block each other.
func TestRunShardExistsAndResume(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	st := writeStudyFile(t, filepath.Join(dir, "src"), 900, 11, 0)
	out := filepath.Join(dir, "out")
	opt := func(k int, mod func(*Options)) Options {
		o := Options{Out: out, Workers: 1, BatchRows: 100, Version: "v1", Shard: Shard{K: k, N: 3}}
		if mod != nil {
			mod(&o)
		}
		return o
	}
	ctx := context.Background()
	for k := 1; k <= 3; k++ {
		if _, err := RunShard(ctx, st, opt(k, nil)); err != nil {
			t.Fatalf("shard %d/3: %v", k, err)
		}
	}
	shards := filepath.Join(out, st.Name, ShardsDir)
	casesPath := filepath.Join(shards, Shard{2, 3}.CasesFile())
	manPath := filepath.Join(shards, Shard{2, 3}.ManifestFile())
	orig, err := os.ReadFile(casesPath)
	if err != nil {
		t.Fatal(err)
	}

	if _, err := RunShard(ctx, st, opt(2, nil)); !errors.Is(err, ErrExists) || !strings.Contains(err.Error(), "shard output exists") {
		t.Fatalf("second run of shard 2/3: %v, want ErrExists", err)
	}
	m, err := RunShard(ctx, st, opt(2, func(o *Options) { o.Resume = true }))
	if err != nil || !m.Skipped {
		t.Fatalf("resume of a complete shard: skipped=%v, %v", m != nil && m.Skipped, err)
	}
	// Run reports a shard through an Info.
	info, err := Run(ctx, st, opt(2, func(o *Options) { o.Resume = true }))
	if err != nil || !info.Skipped || info.Shard != "2/3" || info.Cases != 300 {
		t.Fatalf("Run resume of shard 2/3: %+v, %v", info, err)
	}

	damage := []struct {
		name string
		do   func() error
	}{
		{"truncated cases file", func() error { return os.Truncate(casesPath, int64(len(orig)/2)) }},
		{"cases file without manifest", func() error { return os.Remove(manPath) }},
		{"manifest without cases file", func() error { return os.Remove(casesPath) }},
		{"manifest cut short", func() error { return os.Truncate(manPath, 40) }},
		{"manifest of another version", func() error {
			_, err := RunShard(ctx, st, opt(2, func(o *Options) { o.Force, o.Version = true, "v0" }))
			return err
		}},
	}
	for _, d := range damage {
		if err := d.do(); err != nil {
			t.Fatalf("%s: %v", d.name, err)
		}
		m, err := RunShard(ctx, st, opt(2, func(o *Options) { o.Resume = true }))
		if err != nil || m.Skipped {
			t.Fatalf("%s: resume gave skipped=%v, %v; want redone", d.name, m != nil && m.Skipped, err)
		}
		got, _ := os.ReadFile(casesPath)
		if !bytes.Equal(got, orig) {
			t.Fatalf("%s: redone shard differs from the first", d.name)
		}
	}
	if m, err := RunShard(ctx, st, opt(2, func(o *Options) { o.Force = true })); err != nil || m.Skipped {
		t.Fatalf("forced shard: %v", err)
	}
	if tmps, _ := filepath.Glob(filepath.Join(shards, "*"+tmpSuffix)); len(tmps) > 0 {
		t.Errorf("temporary files left: %v", tmps)
	}
	// The shards did not make the study folder look like a finished run,
	// and resuming the whole study does not throw them away.
	if _, err := os.Stat(filepath.Join(out, st.Name, RunFile)); !os.IsNotExist(err) {
		t.Errorf("run.json in a folder of shards: %v", err)
	}
	if _, err := Run(ctx, st, Options{Out: out, Workers: 1, Version: "v1", Resume: true}); !errors.Is(err, ErrExists) ||
		!strings.Contains(err.Error(), "holds shards not merged yet") {
		t.Errorf("Resume of the whole study over unmerged shards: %v", err)
	}
	if _, err := os.Stat(casesPath); err != nil {
		t.Errorf("shard gone: %v", err)
	}
}

// TestRunShardChecksSource: a shard stores the study file's bytes for the
// merge, so a study that no longer matches them is refused.
func TestRunShardChecksSource(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	st := writeStudyFile(t, filepath.Join(dir, "src"), 300, 11, 0)
	opt := Options{Out: filepath.Join(dir, "out"), Workers: 1, BatchRows: 100, Shard: Shard{K: 1, N: 2}}
	ctx := context.Background()

	changed := *st
	changed.Cases = 200 // as a test that edits a parsed study would
	if _, err := RunShard(ctx, &changed, opt); err == nil || !strings.Contains(err.Error(), "differs from its file") {
		t.Errorf("study changed in memory: %v", err)
	}
	o := opt
	o.Source = []byte("name: something-else\n")
	if _, err := RunShard(ctx, st, o); err == nil || !strings.Contains(err.Error(), "changed since it was loaded") {
		t.Errorf("other source bytes: %v", err)
	}
	if err := os.WriteFile(st.Source, []byte("# edited\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := RunShard(ctx, st, opt); err == nil || !strings.Contains(err.Error(), "changed since it was loaded") {
		t.Errorf("study file edited after loading: %v", err)
	}
	if _, err := RunShard(ctx, st, Options{Out: opt.Out, Shard: Shard{K: 3, N: 2}}); !errors.Is(err, ErrShard) {
		t.Errorf("shard 3/2: %v", err)
	}
}

// TestRunResume: Resume keeps a complete run and redoes one whose files
// no longer match run.json, or that another version wrote.
func TestRunResume(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	st := writeStudyFile(t, filepath.Join(dir, "src"), 400, 5, 0)
	out := filepath.Join(dir, "out")
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	opt := Options{Out: out, Workers: 1, BatchRows: 100, Version: "v1", Alloc: mem, Resume: true}
	ctx := context.Background()
	info, err := Run(ctx, st, opt)
	if err != nil || info.Skipped {
		t.Fatalf("first run: %v", err)
	}
	if len(info.SHA256) != len(info.Files)-1 {
		t.Errorf("run.json lists %d files and %d checksums", len(info.Files), len(info.SHA256))
	}
	final := filepath.Join(out, st.Name)
	summary := filepath.Join(final, SummaryFile)
	orig, _ := os.ReadFile(summary)
	if info, err := Run(ctx, st, opt); err != nil || !info.Skipped {
		t.Fatalf("resume of a complete run: %+v, %v", info, err)
	}
	steps := []struct {
		name string
		do   func() error
		opt  Options
	}{
		{"summary truncated", func() error { return os.Truncate(summary, 10) }, opt},
		{"cases file removed", func() error { return os.Remove(filepath.Join(final, CasesFile)) }, opt},
		{"run.json removed", func() error { return os.Remove(filepath.Join(final, RunFile)) }, opt},
		{"another version", func() error { return nil }, func() Options { o := opt; o.Version = "v2"; return o }()},
	}
	for _, s := range steps {
		if err := s.do(); err != nil {
			t.Fatal(err)
		}
		info, err := Run(ctx, st, s.opt)
		if err != nil || info.Skipped {
			t.Fatalf("%s: skipped=%v, %v; want redone", s.name, info != nil && info.Skipped, err)
		}
		if got, _ := os.ReadFile(summary); !bytes.Equal(got, orig) {
			t.Fatalf("%s: redone summary differs", s.name)
		}
	}
}
