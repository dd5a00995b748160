package batch

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"maps"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow/go/v17/arrow/memory"

	"github.com/sweepstat/sweepstat/studies"
)

// shardClock returns a clock that says t0 and moves 1 s per call, so that
// runs and merges write the same timings.
func shardClock() func() time.Time {
	t := time.Date(2025, 3, 4, 5, 6, 7, 0, time.UTC)
	return func() time.Time { t = t.Add(time.Second); return t }
}

// runAllShards runs shards 1/n … n/n of st into out, alternating 1 and 2
// workers.
func runAllShards(t *testing.T, st *studies.Study, out string, n, batchRows int, mod func(*Options)) {
	t.Helper()
	for k := 1; k <= n; k++ {
		o := Options{Out: out, Workers: 1 + k%2, BatchRows: batchRows, Version: "v1", Shard: Shard{K: k, N: n}, Now: shardClock()}
		if mod != nil {
			mod(&o)
		}
		if _, err := RunShard(context.Background(), st, o); err != nil {
			t.Fatalf("shard %d/%d: %v", k, n, err)
		}
	}
}

// treeSHA256 returns the SHA-256 of every file under dir by relative path.
func treeSHA256(t *testing.T, dir string) map[string][32]byte {
	t.Helper()
	sums := map[string][32]byte{}
	err := filepath.WalkDir(dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		data, err := os.ReadFile(path)
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(dir, path)
		sums[rel] = sha256.Sum256(data)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return sums
}

// TestMergeMatchesOneRun: the shards of 1, 3, 7 and 12 (more shards than
// record batches, so some are empty) merge into files identical byte for
// byte to one run of the whole study: cases.arrow and every summary table,
// Sobol indices included. The single run is the oracle: it never shards.
func TestMergeMatchesOneRun(t *testing.T) {
	t.Parallel()
	const cases, rows = 4321, 500 // 9 record batches, the last of 321 rows
	dir := t.TempDir()
	st := writeStudyFile(t, filepath.Join(dir, "src"), cases, 7, 16)
	single := filepath.Join(dir, "single")
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	want, err := Run(context.Background(), st, Options{Out: single, Workers: 2, BatchRows: rows, Version: "v1", Alloc: mem, Now: shardClock()})
	if err != nil {
		t.Fatal(err)
	}
	// Every file one run writes but run.json (timings) and the report
	// (which shows them): the tables, the study copy, the charts.
	var compared []string
	for _, f := range want.Files {
		if f != RunFile && f != ReportFile {
			compared = append(compared, f)
		}
	}
	for _, f := range []string{CasesFile, SummaryFile, CurvesFile, TornadoFile, SensitivityFile} {
		if !slices.Contains(compared, f) {
			t.Fatalf("one run did not write %s: %v", f, want.Files)
		}
	}
	for _, n := range []int{1, 3, 7, 12} {
		out := filepath.Join(dir, fmt.Sprint("shards-", n))
		runAllShards(t, st, out, n, rows, nil)
		mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
		infos, err := Merge(context.Background(), out, Options{Workers: 2, Alloc: mem, Now: shardClock()})
		mem.AssertSize(t, 0)
		if err != nil {
			t.Fatalf("%d shards: Merge: %v", n, err)
		}
		if len(infos) != 1 {
			t.Fatalf("%d shards: %d studies merged", n, len(infos))
		}
		got := infos[0]
		for _, name := range compared {
			a, _ := os.ReadFile(filepath.Join(single, st.Name, name))
			b, err := os.ReadFile(filepath.Join(out, st.Name, name))
			if err != nil || !bytes.Equal(a, b) {
				t.Errorf("%d shards: %s differs from one run's (%d vs %d bytes, %v)", n, name, len(a), len(b), err)
			}
			if got.SHA256[name] != want.SHA256[name] {
				t.Errorf("%d shards: run.json sha256 of %s differs", n, name)
			}
		}
		if got.Cases != want.Cases || got.Rejected != want.Rejected || !maps.Equal(got.RejectedBy, want.RejectedBy) ||
			got.StudyHash != want.StudyHash || got.Seed != want.Seed || got.Version != want.Version || got.Shards != n {
			t.Errorf("%d shards: run.json %+v\nwant like %+v", n, got, want)
		}
		if !slices.Equal(got.Files, want.Files) {
			t.Errorf("%d shards: files %v, one run %v", n, got.Files, want.Files)
		}
		var onDisk Info
		js, err := os.ReadFile(filepath.Join(out, st.Name, RunFile))
		if err != nil || json.Unmarshal(js, &onDisk) != nil || onDisk.Shards != n {
			t.Errorf("%d shards: run.json on disk: %v %s", n, err, js)
		}
		if _, err := os.Stat(filepath.Join(out, st.Name, ReportFile)); err != nil {
			t.Errorf("%d shards: %v", n, err)
		}
		if left, _ := filepath.Glob(filepath.Join(out, ".*")); len(left) > 0 {
			t.Errorf("%d shards: staging left: %v", n, left)
		}
		// Merging again replaces the merged outputs (the charts folder
		// included) with the same files.
		if _, err := Merge(context.Background(), out, Options{Workers: 1, Now: shardClock()}); err != nil {
			t.Fatalf("%d shards: second Merge: %v", n, err)
		}
		for _, name := range compared {
			a, _ := os.ReadFile(filepath.Join(single, st.Name, name))
			b, _ := os.ReadFile(filepath.Join(out, st.Name, name))
			if !bytes.Equal(a, b) {
				t.Errorf("%d shards: %s differs after a second merge", n, name)
			}
		}
		// A merged folder is complete for Resume as a run's is.
		if info, err := Run(context.Background(), st, Options{Out: out, Version: "v1", Resume: true}); err != nil || !info.Skipped {
			t.Errorf("%d shards: Resume after the merge: %v, %v", n, info, err)
		}
	}
}

// TestMergeRefuses: a missing, incomplete, duplicated, mislabelled,
// truncated, corrupted or foreign shard, or shards of two splits, make
// Merge fail with a message naming the problem and leave every file as it
// was.
func TestMergeRefuses(t *testing.T) {
	t.Parallel()
	const cases, rows = 900, 100
	dir := t.TempDir()
	st := writeStudyFile(t, filepath.Join(dir, "src"), cases, 7, 0)
	other := writeStudyFile(t, filepath.Join(dir, "other"), cases, 8, 0) // same name, another seed
	pristine := filepath.Join(dir, "pristine")
	runAllShards(t, st, pristine, 3, rows, nil)
	rel := func(s Shard, f func(Shard) string) string { return filepath.Join(st.Name, ShardsDir, f(s)) }
	s2, s3 := Shard{K: 2, N: 3}, Shard{K: 3, N: 3}

	tests := []struct {
		name   string
		damage func(t *testing.T, out string)
		want   string
	}{
		{"missing", func(t *testing.T, out string) {
			removeRel(t, out, rel(s2, Shard.ManifestFile))
			removeRel(t, out, rel(s2, Shard.CasesFile))
		}, "shard 2/3 is missing (no shards/manifest.2-of-3.json)"},
		{"incomplete", func(t *testing.T, out string) {
			removeRel(t, out, rel(s2, Shard.ManifestFile))
		}, "shard 2/3 is incomplete: shards/cases.2-of-3.arrow has no shards/manifest.2-of-3.json"},
		{"duplicated", func(t *testing.T, out string) {
			copyRel(t, out, rel(s2, Shard.ManifestFile), filepath.Join(st.Name, ShardsDir, "manifest.02-of-3.json"))
		}, "shard 2/3 appears twice: shards/manifest.02-of-3.json and shards/manifest.2-of-3.json"},
		{"mislabelled", func(t *testing.T, out string) {
			copyRel(t, out, rel(s2, Shard.ManifestFile), rel(s3, Shard.ManifestFile))
		}, "shards/manifest.3-of-3.json describes shard 2/3, not 3/3"},
		{"truncated", func(t *testing.T, out string) {
			p := filepath.Join(out, rel(s2, Shard.CasesFile))
			fi, _ := os.Stat(p)
			if err := os.Truncate(p, fi.Size()-100); err != nil {
				t.Fatal(err)
			}
		}, "shard 2/3: shards/cases.2-of-3.arrow is truncated ("},
		{"corrupted", func(t *testing.T, out string) {
			p := filepath.Join(out, rel(s2, Shard.CasesFile))
			data, _ := os.ReadFile(p)
			data[len(data)/2] ^= 1
			if err := os.WriteFile(p, data, 0o644); err != nil {
				t.Fatal(err)
			}
		}, "shard 2/3: shards/cases.2-of-3.arrow does not match its manifest's checksum"},
		{"manifest cut short", func(t *testing.T, out string) {
			if err := os.Truncate(filepath.Join(out, rel(s2, Shard.ManifestFile)), 100); err != nil {
				t.Fatal(err)
			}
		}, "shards/manifest.2-of-3.json is not a complete manifest (unexpected end of JSON input)"},
		{"foreign seed", func(t *testing.T, out string) {
			runOneShard(t, other, out, s3, rows, "v1")
		}, "shard 3/3 is from another run: study file SHA-256 "},
		{"foreign version", func(t *testing.T, out string) {
			runOneShard(t, st, out, s2, rows, "v0")
		}, `shard 2/3 is from another run: version "v0" (the others: "v1")`},
		{"two splits", func(t *testing.T, out string) {
			runOneShard(t, st, out, Shard{K: 4, N: 4}, rows, "v1")
		}, "shards of different splits (1/3, 2/3, 3/3, 4/4)"},
		{"other batch size", func(t *testing.T, out string) {
			runOneShard(t, st, out, s2, 50, "v1")
		}, "shard 2/3 was written in batches of 50 rows, shard 1/3 of 100"},
		{"folder renamed", func(t *testing.T, out string) {
			if err := os.Rename(filepath.Join(out, st.Name), filepath.Join(out, "renamed")); err != nil {
				t.Fatal(err)
			}
		}, `the shards are of study "demo-updip-waterflood", but the folder is renamed`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			out := t.TempDir()
			copyShardTree(t, pristine, out)
			// A second, valid study beside the damaged one is not merged
			// either: nothing is written until every study checks.
			runAllShards(t, writeNamedStudy(t, t.TempDir(), "second", 300, 3, 0), out, 2, rows, nil)
			tc.damage(t, out)
			before := treeSHA256(t, out)
			_, err := Merge(context.Background(), out, Options{Workers: 2})
			var me *MergeError
			if !errors.As(err, &me) || !errors.Is(err, ErrShards) {
				t.Fatalf("Merge: %v, want a *MergeError", err)
			}
			t.Log(err)
			if !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "nothing was written") {
				t.Errorf("Merge error:\n%v\nwant it to contain %q", err, tc.want)
			}
			if after := treeSHA256(t, out); !maps.Equal(before, after) {
				t.Errorf("Merge changed the folder: %d files before, %d after", len(before), len(after))
			}
		})
	}
}

// TestMergeSeveralStudies merges every study with shards under the
// folder, in folder order, and leaves other folders alone.
func TestMergeSeveralStudies(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	out := filepath.Join(dir, "out")
	a := writeStudyFile(t, filepath.Join(dir, "a"), 500, 1, 0)
	b := writeNamedStudy(t, filepath.Join(dir, "b"), "second-study", 300, 2, 0)
	runAllShards(t, a, out, 2, 100, nil)
	runAllShards(t, b, out, 3, 100, nil)
	// A finished single run and a hidden folder beside them are left alone.
	if err := os.MkdirAll(filepath.Join(out, "done-run"), 0o755); err != nil {
		t.Fatal(err)
	}
	infos, err := Merge(context.Background(), out, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, in := range infos {
		names = append(names, in.Study)
	}
	if !slices.Equal(names, []string{a.Name, b.Name}) {
		t.Errorf("merged %v", names)
	}
	if _, err := Merge(context.Background(), filepath.Join(out, "done-run"), Options{}); !errors.Is(err, ErrShards) ||
		!strings.Contains(err.Error(), "no shard outputs under") {
		t.Errorf("Merge of a folder without shards: %v", err)
	}
}

func runOneShard(t *testing.T, st *studies.Study, out string, s Shard, rows int, version string) {
	t.Helper()
	o := Options{Out: out, Workers: 1, BatchRows: rows, Version: version, Shard: s, Force: true}
	if _, err := RunShard(context.Background(), st, o); err != nil {
		t.Fatalf("shard %v: %v", s, err)
	}
}

func removeRel(t *testing.T, root, rel string) {
	t.Helper()
	if err := os.Remove(filepath.Join(root, rel)); err != nil {
		t.Fatal(err)
	}
}

func copyRel(t *testing.T, root, from, to string) {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(root, from))
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(root, to), data, 0o644); err != nil {
		t.Fatal(err)
	}
}

func copyShardTree(t *testing.T, from, to string) {
	t.Helper()
	if err := os.CopyFS(to, os.DirFS(from)); err != nil {
		t.Fatal(err)
	}
}
