package cluster

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"go.yaml.in/yaml/v3"

	"github.com/sweepstat/sweepstat/studies"
)

// Bounds of the Slurm test: the cluster's answer, the build, and the
// array plus merge (about 5 s on a 2-core machine).
const (
	slurmProbe = 10 * time.Second
	buildLimit = 3 * time.Minute
	jobsLimit  = 2 * time.Minute
)

// slurmOrSkip returns when a Slurm cluster answers; otherwise it skips,
// or fails when SWEEPSTAT_REQUIRE_SLURM is set (as .ci/run sets it).
func slurmOrSkip(t *testing.T) {
	t.Helper()
	unavailable := func(why string) {
		t.Helper()
		if os.Getenv("SWEEPSTAT_REQUIRE_SLURM") != "" {
			t.Fatalf("SWEEPSTAT_REQUIRE_SLURM is set, but %s", why)
		}
		t.Skipf("no Slurm cluster here (%s). To run this test: sudo studies/cluster/slurm-local.sh install; "+
			"sudo studies/cluster/slurm-local.sh up; export SLURM_CONF=/tmp/sweepstat-slurm/etc/slurm.conf", why)
	}
	for _, tool := range []string{"slurmd", "sbatch", "squeue", "scontrol", "sinfo", "scancel"} {
		if _, err := exec.LookPath(tool); err != nil {
			unavailable(tool + " is not on PATH")
		}
	}
	ctx, cancel := context.WithTimeout(context.Background(), slurmProbe)
	defer cancel()
	out, err := exec.CommandContext(ctx, "sinfo", "-h", "-o", "%t").CombinedOutput()
	states := strings.Fields(string(out))
	if err != nil || !slices.ContainsFunc(states, func(s string) bool { return s == "idle" || s == "mix" }) {
		unavailable(fmt.Sprintf("sinfo: %v %q: no idle node", err, out))
	}
}

// run runs a command with a time limit and returns its stdout; it fails
// the test with stderr on error.
func run(t *testing.T, limit time.Duration, env []string, name string, args ...string) string {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), limit)
	defer cancel()
	cmd := exec.CommandContext(ctx, name, args...)
	cmd.Env = append(os.Environ(), env...)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("%s %s: %v\n%s%s", name, strings.Join(args, " "), err, stdout.String(), stderr.String())
	}
	return stdout.String()
}

// TestSlurmArrayMergeMatchesOneRun submits the Slurm recipe
// (slurm-submit.sh) as an array of 4 shards plus the merge that depends
// on it, waits for both, and compares the merged outputs with a single
// run of the same binary: cases.arrow, the summary, curves, tornado and
// sensitivity tables (Sobol indices included) and the study copy must be
// identical byte for byte. The single run is the oracle.
func TestSlurmArrayMergeMatchesOneRun(t *testing.T) {
	slurmOrSkip(t)
	dir := t.TempDir()
	goTool, err := exec.LookPath("go")
	if err != nil {
		t.Fatalf("go is not on PATH: %v", err)
	}
	bin := filepath.Join(dir, "sweepstat")
	began := time.Now()
	run(t, buildLimit, nil, goTool, "build", "-o", bin, "github.com/sweepstat/sweepstat/cmd/sweepstat")
	t.Logf("build: %.1f s", time.Since(began).Seconds())

	// 30,000 cases: four record batches of 8192 rows (the last short), one
	// per shard; a small Sobol design, which the merge solves.
	src := string(studies.DemoSource())
	for old, repl := range map[string]string{
		"name: demo-updip-waterflood": "name: slurm-recipe-check",
		"cases: 20000":                "cases: 30000",
		"sensitivity: {sobol: 1024}":  "sensitivity: {sobol: 32}",
	} {
		if !strings.Contains(src, old) {
			t.Fatalf("demo study has no %q", old)
		}
		src = strings.Replace(src, old, repl, 1)
	}
	study := filepath.Join(dir, "study.yaml")
	if err := os.WriteFile(study, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	single, sharded, logs := filepath.Join(dir, "single"), filepath.Join(dir, "sharded"), filepath.Join(dir, "logs")
	run(t, jobsLimit, nil, bin, "run", "--quiet", "--out", single, study)

	began = time.Now()
	ids := strings.Fields(run(t, slurmProbe, []string{"SWEEPSTAT=" + bin, "LOGS=" + logs},
		"bash", "slurm-submit.sh", "4", sharded, study))
	if len(ids) != 2 {
		t.Fatalf("slurm-submit.sh printed %q, want two job ids", ids)
	}
	array, merge := ids[0], ids[1]
	t.Cleanup(func() { exec.Command("scancel", array, merge).Run() })
	deadline := time.Now().Add(jobsLimit)
	for {
		out, err := exec.Command("squeue", "-h", "-j", array+","+merge, "-o", "%i").Output()
		if err == nil && strings.TrimSpace(string(out)) == "" {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("jobs %s and %s not done after %v: %s\n%s", array, merge, jobsLimit, out, dumpLogs(logs))
		}
		time.Sleep(200 * time.Millisecond)
	}
	cycle := time.Since(began)
	state := func(id string) []string {
		out, _ := exec.Command("scontrol", "-o", "show", "job", id).Output()
		var st []string
		for _, f := range strings.Fields(string(out)) {
			if s, ok := strings.CutPrefix(f, "JobState="); ok {
				st = append(st, s)
			}
		}
		return st
	}
	if st := state(array); len(st) != 4 || slices.ContainsFunc(st, func(s string) bool { return s != "COMPLETED" }) {
		t.Fatalf("array %s tasks: %v, want 4 COMPLETED\n%s", array, st, dumpLogs(logs))
	}
	if st := state(merge); !slices.Equal(st, []string{"COMPLETED"}) {
		t.Fatalf("merge job %s: %v, want COMPLETED\n%s", merge, st, dumpLogs(logs))
	}
	t.Logf("Slurm cycle (submit, 4 shards, dependent merge): %.1f s", cycle.Seconds())

	name := "slurm-recipe-check"
	for _, f := range []string{"cases.arrow", "summary.arrow", "curves.arrow", "tornado.arrow", "sensitivity.arrow", "study.yaml"} {
		a, err1 := os.ReadFile(filepath.Join(single, name, f))
		b, err2 := os.ReadFile(filepath.Join(sharded, name, f))
		if err1 != nil || err2 != nil || !bytes.Equal(a, b) {
			t.Errorf("%s: merged (%d bytes, %v) differs from one run's (%d bytes, %v)", f, len(b), err2, len(a), err1)
		}
	}
	var info struct {
		Shards int `json:"shards"`
		Cases  int `json:"cases"`
	}
	js, err := os.ReadFile(filepath.Join(sharded, name, "run.json"))
	if err != nil || json.Unmarshal(js, &info) != nil || info.Shards != 4 || info.Cases != 30000 {
		t.Errorf("merged run.json: %v %+v", err, info)
	}
	for k := 1; k <= 4; k++ {
		if _, err := os.Stat(filepath.Join(sharded, name, "shards", fmt.Sprintf("manifest.%d-of-4.json", k))); err != nil {
			t.Errorf("shard %d/4: %v", k, err)
		}
	}
}

func dumpLogs(dir string) string {
	var b strings.Builder
	files, _ := filepath.Glob(filepath.Join(dir, "*"))
	for _, f := range files {
		data, _ := os.ReadFile(f)
		fmt.Fprintf(&b, "--- %s\n%s", filepath.Base(f), data)
	}
	return b.String()
}

// TestSlurmSubmitUsage: the submit script refuses a bad shard count
// before it calls sbatch (exit 2).
func TestSlurmSubmitUsage(t *testing.T) {
	t.Parallel()
	for _, args := range [][]string{{}, {"4"}, {"0", "out"}, {"four", "out"}} {
		cmd := exec.Command("bash", append([]string{"slurm-submit.sh"}, args...)...)
		cmd.Env = append(os.Environ(), "PATH=/nonexistent") // no sbatch reachable
		out, err := cmd.CombinedOutput()
		if ee, ok := err.(*exec.ExitError); !ok || ee.ExitCode() != 2 {
			t.Errorf("slurm-submit.sh %q: %v %s; want exit 2", args, err, out)
		}
	}
}

// TestKubernetesRecipe checks the manifests against the command line:
// an Indexed Job whose pods run `run --shard auto` with
// SWEEPSTAT_SHARD_COUNT equal to the Job's completions (the count
// --shard auto needs on Kubernetes), writing into the volume the merge
// Job reads with `merge`.
func TestKubernetesRecipe(t *testing.T) {
	t.Parallel()
	type container struct {
		Args []string `yaml:"args"`
		Env  []struct {
			Name, Value string
		} `yaml:"env"`
		VolumeMounts []struct {
			Name      string `yaml:"name"`
			MountPath string `yaml:"mountPath"`
		} `yaml:"volumeMounts"`
	}
	type doc struct {
		Kind string `yaml:"kind"`
		Spec struct {
			CompletionMode string `yaml:"completionMode"`
			Completions    int    `yaml:"completions"`
			Template       struct {
				Spec struct {
					RestartPolicy string      `yaml:"restartPolicy"`
					Containers    []container `yaml:"containers"`
				} `yaml:"spec"`
			} `yaml:"template"`
		} `yaml:"spec"`
	}
	jobs := func(file string) []doc {
		data, err := os.ReadFile(file)
		if err != nil {
			t.Fatal(err)
		}
		var out []doc
		dec := yaml.NewDecoder(bytes.NewReader(data))
		for {
			var d doc
			if err := dec.Decode(&d); err != nil {
				if errors.Is(err, io.EOF) {
					break
				}
				t.Fatalf("%s: %v", file, err)
			}
			if d.Kind == "Job" {
				out = append(out, d)
			}
		}
		if len(out) != 1 || len(out[0].Spec.Template.Spec.Containers) != 1 {
			t.Fatalf("%s: want one Job with one container, got %+v", file, out)
		}
		return out
	}
	flag := func(args []string, name string) string {
		i := slices.Index(args, name)
		if i < 0 || i+1 >= len(args) {
			return ""
		}
		return args[i+1]
	}
	mount := func(c container, name string) string {
		for _, m := range c.VolumeMounts {
			if m.Name == name {
				return m.MountPath
			}
		}
		return ""
	}

	shards := jobs("k8s-shards.yaml")[0]
	c := shards.Spec.Template.Spec.Containers[0]
	if shards.Spec.CompletionMode != "Indexed" || shards.Spec.Completions < 1 {
		t.Errorf("shards Job: completionMode %q, completions %d", shards.Spec.CompletionMode, shards.Spec.Completions)
	}
	if len(c.Args) == 0 || c.Args[0] != "run" || flag(c.Args, "--shard") != "auto" || !slices.Contains(c.Args, "--resume") {
		t.Errorf("shard container args %q", c.Args)
	}
	count := ""
	for _, e := range c.Env {
		if e.Name == "SWEEPSTAT_SHARD_COUNT" {
			count = e.Value
		}
	}
	if count != fmt.Sprint(shards.Spec.Completions) {
		t.Errorf("SWEEPSTAT_SHARD_COUNT %q, completions %d", count, shards.Spec.Completions)
	}
	out := flag(c.Args, "--out")
	if out == "" || mount(c, "out") != out {
		t.Errorf("shards write to --out %q, the volume is at %q", out, mount(c, "out"))
	}

	m := jobs("k8s-merge.yaml")[0].Spec.Template.Spec.Containers[0]
	if len(m.Args) < 2 || m.Args[0] != "merge" || m.Args[1] != out || mount(m, "out") != out {
		t.Errorf("merge container args %q, volume at %q; want merge %s", m.Args, mount(m, "out"), out)
	}
}
